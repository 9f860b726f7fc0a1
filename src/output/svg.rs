//! SVG plots (the only place plotters appears).

use super::OutputError;
use crate::results::{Field, SteadyReport};
use crate::scenario::TransientReport;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use std::path::Path;

const HOT: RGBColor = RGBColor(200, 40, 30);
const COLD: RGBColor = RGBColor(30, 90, 200);
const WALL: RGBColor = RGBColor(90, 90, 90);
const SIZE: (u32, u32) = (900, 560);

/// At most this many snapshot profiles are drawn in snapshots.svg (all are in snapshots.csv).
const SNAPSHOT_CURVES: usize = 40;

/// At most this many points are drawn on one curve: beyond a few thousand a curve looks the
/// same and the file only grows (a 10⁶-cell profile would make a 100 MB SVG).
pub const PLOT_POINTS: usize = 4000;

/// Every k-th point (first and last kept) so that at most [`PLOT_POINTS`] remain.
fn thin(pts: Vec<(f64, f64)>) -> Vec<(f64, f64)> {
    let n = pts.len();
    if n <= PLOT_POINTS {
        return pts;
    }
    let stride = n.div_ceil(PLOT_POINTS - 1);
    pts.into_iter().enumerate().filter(|(i, _)| i % stride == 0 || i + 1 == n).map(|(_, p)| p).collect()
}

/// Points of one curve, (x, y).
type Points = Vec<(f64, f64)>;

fn plot_err(path: &Path) -> impl Fn(String) -> OutputError + '_ {
    move |message| OutputError::Plot { path: path.display().to_string(), message }
}

type Chart<'a, 'b> = ChartContext<'a, SVGBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;
type Area<'b> = DrawingArea<SVGBackend<'b>, plotters::coord::Shift>;

/// Major and minor grid lines: light, so that curves stand out.
const GRID_MAJOR: RGBColor = RGBColor(210, 210, 210);
const GRID_MINOR: RGBColor = RGBColor(240, 240, 240);

/// A tick label: as many decimals as the tick step `step` needs, no trailing zeros ("20",
/// not "20.0"), and powers of ten for very large or very small values.
pub(crate) fn tick_label(v: f64, step: f64) -> String {
    if v == 0.0 || v.abs() < 1e-12 * step.abs() {
        return "0".into();
    }
    if v.abs() >= 1e7 || v.abs() < 1e-4 {
        let s = format!("{v:.2e}");
        let (m, e) = s.split_once('e').unwrap_or((&s, "0"));
        let m = m.trim_end_matches('0').trim_end_matches('.');
        return format!("{m}e{e}");
    }
    let decimals = if step > 0.0 { (-step.log10().floor()).clamp(0.0, 10.0) as usize } else { 3 };
    let s = format!("{v:.decimals$}");
    let s = if s.contains('.') { s.trim_end_matches('0').trim_end_matches('.').to_string() } else { s };
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

/// The tick step plotters' mesh uses for about `labels` labels over `range` (its raw step).
fn tick_step((lo, hi): (f64, f64), labels: usize) -> f64 {
    (hi - lo).abs() / labels.max(1) as f64
}

/// Room for the y tick labels of `range` and the axis title, px.
fn y_area((lo, hi): (f64, f64)) -> u32 {
    let step = tick_step((lo, hi), 10);
    let chars = [lo, hi, 0.5 * (lo + hi)].iter().map(|&v| tick_label(v, step).chars().count()).max().unwrap_or(4) as u32;
    30 + 8 * chars.max(3)
}

/// Grid, tick labels (see [`tick_label`]) and axis titles.
fn axes(chart: &mut Chart, x_desc: &str, y_desc: &str, e: &dyn Fn(String) -> OutputError) -> Result<(), OutputError> {
    let (xr, yr) = (chart.x_range(), chart.y_range());
    let (xs, ys) = (tick_step((xr.start, xr.end), 10), tick_step((yr.start, yr.end), 10));
    let xf = move |v: &f64| tick_label(*v, xs);
    let yf = move |v: &f64| tick_label(*v, ys);
    chart
        .configure_mesh()
        .x_desc(x_desc)
        .y_desc(y_desc)
        .label_style(("sans-serif", 14))
        .bold_line_style(GRID_MAJOR)
        .light_line_style(GRID_MINOR)
        .x_label_formatter(&xf)
        .y_label_formatter(&yf)
        .draw()
        .map_err(|x| e(x.to_string()))
}

/// Padded range of a set of values. A variation under 2 % of the values' magnitude is drawn
/// as what it is, nearly flat, instead of filling the axis (a constant U must not look like
/// a curve over 301.5073–301.5078).
fn span(values: impl Iterator<Item = f64>) -> (f64, f64) {
    let (lo, hi) = values.filter(|v| v.is_finite()).fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(v), b.max(v)));
    if lo > hi {
        return (0.0, 1.0);
    }
    let least = (0.02 * lo.abs().max(hi.abs())).max(1e-9);
    let (lo, hi) = if hi - lo < least {
        let mid = 0.5 * (lo + hi);
        (mid - 0.5 * least, mid + 0.5 * least)
    } else {
        (lo, hi)
    };
    let pad = (hi - lo) * 0.06;
    (lo - pad, hi + pad)
}

/// How a curve is drawn.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Look {
    /// A solid line of this width.
    Line(u32),
    /// A dashed line of this width.
    Dashed(u32),
    /// Markers only (crosses).
    Marks,
}

/// One labelled curve of a line panel.
struct Curve {
    label: String,
    color: RGBColor,
    look: Look,
    pts: Points,
}

impl Curve {
    fn new(label: impl Into<String>, color: RGBColor, look: Look, pts: Points) -> Self {
        Curve { label: label.into(), color, look, pts }
    }
}

/// The corner whose legend box (a share `box_w` × `box_h` of the plot) covers the fewest
/// points; ties go to the upper right. Returns the corner and how many points it covers.
fn emptiest(points: &[&Points], (x0, x1): (f64, f64), (y0, y1): (f64, f64), box_w: f64, box_h: f64) -> (SeriesLabelPosition, usize) {
    // Upper right, upper left, lower right, lower left (the order of preference on a tie).
    let corners = [(true, true), (false, true), (true, false), (false, false)];
    let covered = |right: bool, upper: bool| {
        points
            .iter()
            .flat_map(|p| p.iter())
            .filter(|&&(x, y)| {
                let (u, v) = ((x - x0) / (x1 - x0), (y - y0) / (y1 - y0));
                (if right { u > 1.0 - box_w } else { u < box_w }) && (if upper { v > 1.0 - box_h } else { v < box_h })
            })
            .count()
    };
    let (k, n) = corners.iter().map(|&(right, upper)| covered(right, upper)).enumerate().min_by_key(|c| c.1).unwrap_or((0, 0));
    let pos = match k {
        0 => SeriesLabelPosition::UpperRight,
        1 => SeriesLabelPosition::UpperLeft,
        2 => SeriesLabelPosition::LowerRight,
        _ => SeriesLabelPosition::LowerLeft,
    };
    (pos, n)
}

/// Where the legend goes for curves over `xr` × `yr` on a plot of `px` pixels: the emptiest
/// corner, or None when every corner holds data (the legend then goes beside the plot).
fn place_legend(curves: &[Curve], xr: (f64, f64), yr: (f64, f64), px: (u32, u32)) -> Option<SeriesLabelPosition> {
    let labelled: Vec<&Curve> = curves.iter().filter(|c| !c.label.is_empty()).collect();
    let longest = labelled.iter().map(|c| c.label.chars().count()).max().unwrap_or(0) as f64;
    let box_w = ((longest * 7.5 + 50.0) / px.0 as f64).min(0.9);
    let box_h = ((labelled.len() as f64 * 20.0 + 16.0) / px.1 as f64).min(0.9);
    let pts: Vec<&Points> = curves.iter().map(|c| &c.pts).collect();
    let (pos, n) = emptiest(&pts, xr, yr, box_w, box_h);
    (n == 0).then_some(pos)
}

/// Width of a legend drawn beside a plot, px.
fn side_legend_width(curves: &[Curve]) -> u32 {
    let longest = curves.iter().filter(|c| !c.label.is_empty()).map(|c| c.label.chars().count()).max().unwrap_or(0) as u32;
    (longest * 7 + 50).min(320)
}

/// A legend drawn in `area` beside the plot, from the top, each sample drawn as its curve is.
fn side_legend(area: &Area, curves: &[Curve], e: &dyn Fn(String) -> OutputError) -> Result<(), OutputError> {
    let mut y = 60;
    for c in curves.iter().filter(|c| !c.label.is_empty()) {
        let style = |w: u32| c.color.stroke_width(w);
        match c.look {
            Look::Line(w) => area.draw(&PathElement::new(vec![(6, y), (28, y)], style(w))),
            Look::Dashed(w) => {
                area.draw(&PathElement::new(vec![(6, y), (13, y)], style(w))).and_then(|_| area.draw(&PathElement::new(vec![(17, y), (28, y)], style(w))))
            }
            Look::Marks => area.draw(&Cross::new((17, y), 5, style(2))),
        }
        .map_err(|x| e(x.to_string()))?;
        area.draw(&Text::new(c.label.clone(), (34, y - 7), ("sans-serif", 13))).map_err(|x| e(x.to_string()))?;
        y += 20;
    }
    Ok(())
}

/// The legend box.
fn legend<'a, 'b: 'a>(chart: &mut Chart<'a, 'b>, position: SeriesLabelPosition, size: u32, e: &dyn Fn(String) -> OutputError) -> Result<(), OutputError> {
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.9))
        .border_style(RGBColor(160, 160, 160))
        .position(position)
        .label_font(("sans-serif", size))
        .draw()
        .map_err(|x| e(x.to_string()))
}

/// Draw one curve, its legend sample drawn as the curve is (dashed lines dashed).
fn draw_curve<'a, 'b: 'a>(chart: &mut Chart<'a, 'b>, c: &Curve, e: &dyn Fn(String) -> OutputError) -> Result<(), OutputError> {
    let color = c.color;
    let pts = thin(c.pts.clone());
    let anno = match c.look {
        Look::Line(w) => chart.draw_series(LineSeries::new(pts, color.stroke_width(w))),
        Look::Dashed(w) => chart.draw_series(DashedLineSeries::new(pts, 7, 5, color.stroke_width(w))),
        Look::Marks => chart.draw_series(pts.into_iter().map(|p| Cross::new(p, 6, color.stroke_width(2)))),
    }
    .map_err(|x| e(x.to_string()))?;
    if c.label.is_empty() {
        return Ok(());
    }
    let anno = anno.label(c.label.clone());
    match c.look {
        Look::Line(w) => {
            anno.legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], color.stroke_width(w)));
        }
        Look::Dashed(w) => {
            anno.legend(move |(x, y)| {
                EmptyElement::at((x, y))
                    + PathElement::new(vec![(0, 0), (7, 0)], color.stroke_width(w))
                    + PathElement::new(vec![(11, 0), (22, 0)], color.stroke_width(w))
            });
        }
        Look::Marks => {
            anno.legend(move |(x, y)| Cross::new((x + 11, y), 5, color.stroke_width(2)));
        }
    }
    Ok(())
}

/// What is drawn under the curves of a panel (shaded bands, marker lines).
type Underlay<'u> = &'u dyn Fn(&mut Chart) -> Result<(), OutputError>;

/// A panel of curves on `area`: axes, the `under` drawing, the curves, and a legend placed
/// where it covers no data. `yr` None: the curves' own padded range.
#[allow(clippy::too_many_arguments)]
fn panel(
    area: &Area,
    caption: &str,
    (x_desc, y_desc): (&str, &str),
    xr: (f64, f64),
    yr: Option<(f64, f64)>,
    curves: &[Curve],
    under: Underlay,
    e: &dyn Fn(String) -> OutputError,
) -> Result<(), OutputError> {
    let yr = yr.unwrap_or_else(|| span(curves.iter().flat_map(|c| c.pts.iter().map(|p| p.1))));
    let (w, h) = area.dim_in_pixel();
    let y_px = y_area(yr);
    let labelled = curves.iter().any(|c| !c.label.is_empty());
    let corner = place_legend(curves, xr, yr, (w.saturating_sub(y_px + 36).max(100), h.saturating_sub(90).max(100)));
    // No empty corner: the plot gives up a strip on its right for the legend.
    let (plot, beside) = match (&corner, labelled) {
        (None, true) => {
            let (p, b) = area.split_horizontally(w.saturating_sub(side_legend_width(curves)));
            (p, Some(b))
        }
        _ => (area.clone(), None),
    };
    let mut builder = ChartBuilder::on(&plot);
    builder.margin(12).margin_right(24).x_label_area_size(50).y_label_area_size(y_px);
    if !caption.is_empty() {
        builder.caption(caption, ("sans-serif", 18));
    }
    let mut chart = builder.build_cartesian_2d(xr.0..xr.1, yr.0..yr.1).map_err(|x| e(x.to_string()))?;
    axes(&mut chart, x_desc, y_desc, e)?;
    under(&mut chart)?;
    for c in curves {
        draw_curve(&mut chart, c, e)?;
    }
    match (corner, beside) {
        (Some(pos), None) if labelled => legend(&mut chart, pos, 13, e)?,
        (_, Some(b)) => side_legend(&b, curves, e)?,
        _ => {}
    }
    Ok(())
}

/// Nothing under the curves.
fn nothing(_: &mut Chart) -> Result<(), OutputError> {
    Ok(())
}

/// A white drawing of `size` at `path`.
fn canvas(path: &Path, size: (u32, u32)) -> Result<Area<'_>, OutputError> {
    let root = SVGBackend::new(path, size).into_drawing_area();
    root.fill(&WHITE).map_err(|x| plot_err(path)(x.to_string()))?;
    Ok(root)
}

/// A title across the top of `root`; returns the area below it.
fn titled<'b>(root: &Area<'b>, title: &str, path: &Path) -> Result<Area<'b>, OutputError> {
    root.titled(title, ("sans-serif", 20)).map_err(|x| plot_err(path)(x.to_string()))
}

/// A vertical colour bar for `lo`–`hi` (`unit` its title) on `area`, coloured by `colour`.
fn colour_bar(area: &Area, (lo, hi): (f64, f64), unit: &str, colour: &dyn Fn(f64) -> RGBColor, e: &dyn Fn(String) -> OutputError) -> Result<(), OutputError> {
    let mut chart = ChartBuilder::on(area)
        .margin(20)
        .margin_left(4)
        .margin_right(40)
        .y_label_area_size(y_area((lo, hi)) + 16)
        .build_cartesian_2d(0.0..1.0, lo..hi)
        .map_err(|x| e(x.to_string()))?;
    let ys = tick_step((lo, hi), 10);
    let yf = move |v: &f64| tick_label(*v, ys);
    chart
        .configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_desc(unit)
        .y_label_formatter(&yf)
        .label_style(("sans-serif", 12))
        .draw()
        .map_err(|x| e(x.to_string()))?;
    let steps = 100;
    chart
        .draw_series((0..steps).map(|i| {
            let (a, b) = (lo + (hi - lo) * i as f64 / steps as f64, lo + (hi - lo) * (i + 1) as f64 / steps as f64);
            Rectangle::new([(0.0, a), (1.0, b)], colour(0.5 * (a + b)).filled())
        }))
        .map_err(|x| e(x.to_string()))?;
    Ok(())
}

/// Hot, cold and wall temperature along the length, with the lumped hand method's outlets
/// marked; for a network, heat maps over its face.
pub fn temperatures(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    if let Some(f) = &r.fields {
        let title = format!("{}: temperatures over the {} network (°C)", r.case, r.arrangement);
        let panels = [("hot stream", &f.hot_c), ("cold stream", &f.cold_c), ("wall", &f.wall_c)];
        return heat_maps(&title, &panels, &f.x_label, &f.y_label, "°C", path);
    }
    let e = plot_err(path);
    let root = canvas(path, SIZE)?;
    let faces = |v: &[f64]| -> Points { r.faces_m.iter().copied().zip(v.iter().copied()).collect() };
    // The lumped outlets: hot at x = L, cold at x = 0 in counterflow and at L in parallel flow.
    let cold_out_x = if r.arrangement == "counterflow" { 0.0 } else { r.length_m };
    let curves = [
        Curve::new("hot stream", HOT, Look::Line(2), faces(&r.hot_faces_c)),
        Curve::new("cold stream", COLD, Look::Line(2), faces(&r.cold_faces_c)),
        Curve::new("wall (mid-thickness)", WALL, Look::Line(1), r.profile.iter().map(|p| (p.x_m, p.wall_c)).collect()),
        Curve::new("hot wetted surface", HOT, Look::Dashed(1), r.profile.iter().map(|p| (p.x_m, p.hot_surface_c)).collect()),
        Curve::new("cold wetted surface", COLD, Look::Dashed(1), r.profile.iter().map(|p| (p.x_m, p.cold_surface_c)).collect()),
        Curve::new("lumped hand method outlets", BLACK, Look::Marks, vec![(r.length_m, r.lumped.hot_outlet_c), (cold_out_x, r.lumped.cold_outlet_c)]),
    ];
    let caption = format!("{}: temperatures along the exchanger ({})", r.case, r.arrangement);
    panel(&root, &caption, (r.position_label, "temperature (°C)"), (0.0, r.length_m), None, &curves, &nothing, &e)?;
    root.present().map_err(|x| e(x.to_string()))
}

/// The T–Q diagram of an axial line: both streams' temperatures against the heat given up
/// by the hot stream from its inlet, with the minimum approach (the pinch) marked.
pub fn temperature_duty(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    let e = plot_err(path);
    let root = canvas(path, SIZE)?;
    let q: Vec<f64> = r.duty_faces_w.iter().map(|q| q * 1e-3).collect();
    let along = |v: &[f64]| -> Points { q.iter().copied().zip(v.iter().copied()).collect() };
    // The pinch face: where the summary found the minimum approach.
    let j = r.faces_m.iter().position(|&x| x == r.minimum_approach.at_m).unwrap_or(0);
    let at = |v: &[f64]| v.get(j).copied().unwrap_or(0.0);
    let (pinch_q, th, tc) = (at(&q), at(&r.hot_faces_c), at(&r.cold_faces_c));
    let curves = [
        Curve::new("hot stream", HOT, Look::Line(2), along(&r.hot_faces_c)),
        Curve::new("cold stream", COLD, Look::Line(2), along(&r.cold_faces_c)),
        Curve::new(format!("minimum approach {:.2} K", r.minimum_approach.minimum_K), BLACK, Look::Dashed(2), vec![(pinch_q, tc), (pinch_q, th)]),
    ];
    let q_max = q.iter().copied().fold(0.0, f64::max).max(1e-9);
    let caption = format!("{}: T–Q diagram ({})", r.case, r.arrangement);
    panel(&root, &caption, ("heat given up by the hot stream from its inlet, Q (kW)", "temperature (°C)"), (0.0, q_max), None, &curves, &nothing, &e)?;
    root.present().map_err(|x| e(x.to_string()))
}

/// Reynolds number of each stream (one panel each, the correlation's validity range shaded
/// in the stream's colour) and both film coefficients (lower panel, with the cells outside
/// the correlation's range shaded) along an axial line.
pub fn flow(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    let e = plot_err(path);
    let root = canvas(path, (SIZE.0, SIZE.1 + 440))?;
    let root = titled(&root, &format!("{}: Reynolds number and film coefficient along the exchanger", r.case), path)?;
    let panels = root.split_evenly((3, 1));
    let xr = (0.0, r.length_m);
    for (k, (name, color)) in [("hot stream", HOT), ("cold stream", COLD)].into_iter().enumerate() {
        let pts: Points = r.profile.iter().filter_map(|p| if k == 0 { p.re_hot } else { p.re_cold }.map(|v| (p.x_m, v))).collect();
        if pts.is_empty() {
            let caption = format!("{name}: no flow geometry, Reynolds number not computed");
            panel(&panels[k], &caption, (r.position_label, "Reynolds number"), xr, Some((0.0, 1.0)), &[], &nothing, &e)?;
            continue;
        }
        let bands = |chart: &mut Chart| -> Result<(), OutputError> {
            let yr = chart.y_range();
            for &(lo, hi) in &r.reynolds_bands[k] {
                let (lo, hi) = (lo.max(yr.start), hi.min(yr.end));
                if lo < hi {
                    chart.draw_series([Rectangle::new([(xr.0, lo), (xr.1, hi)], color.mix(0.10).filled())]).map_err(|x| e(x.to_string()))?;
                }
            }
            Ok(())
        };
        let caption = if r.reynolds_bands[k].is_empty() {
            format!("{name}: Reynolds number (its film model states no Re range)")
        } else {
            format!("{name}: Reynolds number (shaded: inside the correlation's published range)")
        };
        panel(&panels[k], &caption, (r.position_label, "Reynolds number"), xr, None, &[Curve::new("", color, Look::Line(2), pts)], &bands, &e)?;
    }
    let h_curves = [
        Curve::new("hot film", HOT, Look::Line(2), r.profile.iter().map(|p| (p.x_m, p.h_hot_w_m2k)).collect()),
        Curve::new("cold film", COLD, Look::Line(2), r.profile.iter().map(|p| (p.x_m, p.h_cold_w_m2k)).collect()),
    ];
    // Cells outside their correlation's range, shaded over their length: one rectangle per
    // run of such cells (a million-cell profile must not make a million rectangles).
    let dx = r.length_m / r.profile.len().max(1) as f64;
    let runs = |hot: bool| -> Vec<(f64, f64)> {
        let mut out: Vec<(f64, f64)> = Vec::new();
        for p in r.profile.iter().filter(|p| !if hot { p.hot_in_range } else { p.cold_in_range }) {
            let (a, b) = (p.x_m - 0.5 * dx, p.x_m + 0.5 * dx);
            match out.last_mut() {
                Some(last) if a <= last.1 + 1e-9 * dx => last.1 = b,
                _ => out.push((a, b)),
            }
        }
        out
    };
    let outside = |chart: &mut Chart| -> Result<(), OutputError> {
        let yr = chart.y_range();
        let (h, w) = (yr.end - yr.start, yr.start);
        for (k, color) in [HOT, COLD].into_iter().enumerate() {
            let (lo, hi) = (w + h * 0.5 * k as f64, w + h * 0.5 * (k + 1) as f64);
            chart
                .draw_series(runs(k == 0).into_iter().map(|(a, b)| Rectangle::new([(a, lo), (b, hi)], color.mix(0.10).filled())))
                .map_err(|x| e(x.to_string()))?;
        }
        Ok(())
    };
    let caption = "film coefficients (shaded: cells outside the correlation's range; upper half cold, lower half hot)";
    panel(&panels[2], caption, (r.position_label, "h (W/m²·K)"), xr, None, &h_curves, &outside, &e)?;
    root.present().map_err(|x| e(x.to_string()))
}

/// Panels of heat maps over a network's face, one colour scale (viridis, perceptually
/// uniform) shared by all panels and drawn as a bar on the right. At most 64 × 64 blocks
/// are drawn per panel (finer grids are averaged into blocks), so a large network still
/// makes a file of about 1 MB at most.
fn heat_maps(title: &str, panels: &[(&str, &Field)], x_label: &str, y_label: &str, unit: &str, path: &Path) -> Result<(), OutputError> {
    use plotters::style::colors::colormaps::{ColorMap, ViridisRGB};
    let e = plot_err(path);
    let width = 340 * panels.len() as u32 + 170;
    let root = canvas(path, (width, 480))?;
    let root = titled(&root, title, path)?;
    let (maps, bar) = root.split_horizontally(width - 160);
    let (lo, hi) = span(panels.iter().flat_map(|(_, f)| f.values.iter().copied().filter(|v| v.is_finite())));
    let colour = |v: f64| ViridisRGB.get_color_normalized(v as f32, lo as f32, hi as f32);
    let fraction = |v: &f64| tick_label(*v, 0.1);
    for ((label, field), area) in panels.iter().zip(maps.split_evenly((1, panels.len()))) {
        let blocks = coarsened(field, 64);
        let mut chart = ChartBuilder::on(&area)
            .caption(*label, ("sans-serif", 16))
            .margin(8)
            .x_label_area_size(40)
            .y_label_area_size(50)
            .build_cartesian_2d(0.0..1.0, 0.0..1.0)
            .map_err(|x| e(x.to_string()))?;
        chart
            .configure_mesh()
            .disable_mesh()
            .x_desc(x_label)
            .y_desc(y_label)
            .x_label_formatter(&fraction)
            .y_label_formatter(&fraction)
            .label_style(("sans-serif", 11))
            .draw()
            .map_err(|x| e(x.to_string()))?;
        let (cols, rows) = (blocks.columns as f64, blocks.rows as f64);
        chart
            .draw_series(blocks.values.iter().enumerate().filter(|(_, v)| v.is_finite()).map(|(k, &v)| {
                let (r, c) = ((k / blocks.columns) as f64, (k % blocks.columns) as f64);
                Rectangle::new([(c / cols, r / rows), ((c + 1.0) / cols, (r + 1.0) / rows)], colour(v).filled())
            }))
            .map_err(|x| e(x.to_string()))?;
    }
    colour_bar(&bar, (lo, hi), unit, &colour, &e)?;
    root.present().map_err(|x| e(x.to_string()))
}

/// A field averaged into at most `max` × `max` blocks.
fn coarsened(f: &Field, max: usize) -> Field {
    let (bx, by) = (f.columns.div_ceil(max).max(1), f.rows.div_ceil(max).max(1));
    if bx == 1 && by == 1 {
        return f.clone();
    }
    let (columns, rows) = (f.columns.div_ceil(bx), f.rows.div_ceil(by));
    let mut sum = vec![(0.0, 0usize); columns * rows];
    for r in 0..f.rows {
        for c in 0..f.columns {
            let v = f.values[r * f.columns + c];
            if v.is_finite() {
                let slot = &mut sum[(r / by) * columns + c / bx];
                slot.0 += v;
                slot.1 += 1;
            }
        }
    }
    Field { columns, rows, values: sum.into_iter().map(|(s, n)| if n > 0 { s / n as f64 } else { f64::NAN }).collect() }
}

/// A network's outlet temperatures across each stream's outlet face (lane by lane) with the
/// mixed-mean outlets and the lumped hand method's.
pub fn outlets(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    let e = plot_err(path);
    let Some(f) = &r.fields else { return Err(e("not a network result".into())) };
    let root = canvas(path, SIZE)?;
    let lanes = |v: &[f64]| -> Points {
        let n = v.len().max(1) as f64;
        v.iter().enumerate().map(|(i, &t)| ((i as f64 + 0.5) / n, t)).collect()
    };
    let flat = |v: f64| vec![(0.0, v), (1.0, v)];
    let curves = [
        Curve::new("hot outlet, lane by lane", HOT, Look::Line(2), lanes(&f.hot_outlet_lanes_c)),
        Curve::new("cold outlet, lane by lane", COLD, Look::Line(2), lanes(&f.cold_outlet_lanes_c)),
        Curve::new(format!("hot mixed-mean {:.2} °C", r.hot_outlet_C), HOT, Look::Dashed(1), flat(r.hot_outlet_C)),
        Curve::new(format!("cold mixed-mean {:.2} °C", r.cold_outlet_C), COLD, Look::Dashed(1), flat(r.cold_outlet_C)),
        Curve::new("lumped hand method outlets", BLACK, Look::Marks, vec![(0.5, r.lumped.hot_outlet_c), (0.5, r.lumped.cold_outlet_c)]),
    ];
    let caption = format!("{}: outlet temperature across each outlet face", r.case);
    panel(&root, &caption, ("position across the outlet face (fraction)", "outlet temperature (°C)"), (0.0, 1.0), None, &curves, &nothing, &e)?;
    root.present().map_err(|x| e(x.to_string()))
}

/// Local heat flux (upper panel) and local U (lower panel) along the length, each beside
/// the lumped method's single value; for a network, the heat flux over its face.
pub fn heat_flux(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    if let Some(f) = &r.fields {
        let title = format!("{}: local heat flux over the {} network", r.case, r.arrangement);
        return heat_maps(&title, &[("heat flux, hot to cold", &f.heat_flux_w_m2)], &f.x_label, &f.y_label, "W/m²", path);
    }
    let e = plot_err(path);
    let root = canvas(path, (SIZE.0, SIZE.1 + 160))?;
    let root = titled(&root, &format!("{}: local heat flux and overall coefficient (on the reference wall area)", r.case), path)?;
    let panels = root.split_evenly((2, 1));
    // The lumped method's single U and mean flux on the same reference area.
    let area = r.reference_area_m2;
    let lumped = |v: f64| -> Vec<Curve> {
        if v.is_finite() && area > 0.0 {
            vec![Curve::new("lumped hand method (one value)", BLACK, Look::Dashed(1), vec![(0.0, v / area), (r.length_m, v / area)])]
        } else {
            Vec::new()
        }
    };
    let data = [
        ("local heat flux", "heat flux q'' (W/m²)", HOT, r.profile.iter().map(|p| (p.x_m, p.heat_flux_w_m2)).collect::<Points>(), r.lumped.duty_w),
        ("local overall coefficient", "U (W/m²·K)", COLD, r.profile.iter().map(|p| (p.x_m, p.u_w_m2k)).collect(), r.lumped.ua_w_k),
    ];
    for (area_px, (title, ylabel, color, pts, lumped_total)) in panels.iter().zip(data) {
        let mut curves = vec![Curve::new("grid (local)", color, Look::Line(2), pts)];
        curves.extend(lumped(lumped_total));
        panel(area_px, title, (r.position_label, ylabel), (0.0, r.length_m), None, &curves, &nothing, &e)?;
    }
    root.present().map_err(|x| e(x.to_string()))
}

/// Absolute pressure along each stream (one panel each), with the fluid's saturation
/// pressure at the local temperature where it comes within a tenth of the local pressure
/// (a liquid near flashing); streams without a friction model say so.
pub fn pressure(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    let e = plot_err(path);
    let root = canvas(path, (SIZE.0, SIZE.1 + 160))?;
    let root = titled(&root, &format!("{}: absolute pressure along each stream", r.case), path)?;
    let panels = root.split_evenly((2, 1));
    let streams = [
        ("hot stream", HOT, &r.hot_faces_pa, r.hot_inlet_pressure_Pa, &r.saturation_faces_pa[0]),
        ("cold stream", COLD, &r.cold_faces_pa, r.cold_inlet_pressure_Pa, &r.saturation_faces_pa[1]),
    ];
    let kpa = |v: &[f64]| -> Points { r.faces_m.iter().zip(v.iter()).map(|(&x, &p)| (x, p * 1e-3)).collect() };
    for (area, (name, color, faces, p_in, sat)) in panels.iter().zip(streams) {
        if faces.is_empty() {
            let caption = format!("{name}: pressure not computed (no friction model for this surface); inlet {} kPa", crate::text::num(p_in * 1e-3));
            panel(area, &caption, (r.position_label, "pressure (kPa, absolute)"), (0.0, r.length_m), Some((0.0, 1.0)), &[], &nothing, &e)?;
            continue;
        }
        let p_min = faces.iter().copied().fold(f64::INFINITY, f64::min);
        let drop = p_in - p_min;
        let mut curves = vec![Curve::new(format!("{name} (Δp {} kPa)", crate::text::sig(drop * 1e-3, 4)), color, Look::Line(2), kpa(faces))];
        let sat_max = sat.iter().copied().fold(0.0, f64::max);
        let shown = !sat.is_empty() && sat_max >= 0.1 * p_min;
        if shown {
            curves.push(Curve::new("saturation pressure at the local temperature", color, Look::Dashed(1), kpa(sat)));
        }
        let note = if sat.is_empty() {
            String::new()
        } else if shown {
            format!("; saturation up to {} kPa", crate::text::sig(sat_max * 1e-3, 4))
        } else {
            format!("; saturation at most {} kPa, far below", crate::text::sig((sat_max * 1e-3).max(0.001), 3))
        };
        let caption = format!("{name}: inlet {} kPa{note}", crate::text::num(p_in * 1e-3));
        panel(area, &caption, (r.position_label, "pressure (kPa, absolute)"), (0.0, r.length_m), None, &curves, &nothing, &e)?;
    }
    root.present().map_err(|x| e(x.to_string()))
}

/// Where a short start-up or change ends inside a long run: the latest time at which an
/// outlet is still more than 5 % of its swing from where it settles after the first change
/// (None when that is over a fifth of the run, so the full time axis already shows it).
fn start_up_window(r: &TransientReport) -> Option<f64> {
    let s = &r.samples;
    let (t0, t_end) = (s.first()?.time_s, s.last()?.time_s);
    // The first window: up to the first input change after the start (or the end).
    let first_change = r.input_changes.iter().map(|c| c.start_s).find(|&t| t > t0 + 1e-9).unwrap_or(t_end);
    let window: Vec<_> = s.iter().filter(|p| p.time_s <= first_change + 1e-9).collect();
    let settle = |f: fn(&crate::solve::transient::Sample) -> f64| -> f64 {
        let last = f(window.last().expect("a sample"));
        let swing = window.iter().map(|p| (f(p) - last).abs()).fold(0.0, f64::max);
        window.iter().rev().find(|p| (f(p) - last).abs() > 0.05 * swing).map_or(t0, |p| p.time_s)
    };
    let until = settle(|p| p.hot_outlet_C).max(settle(|p| p.cold_outlet_C));
    let zoom = (2.0 * (until - t0)).max(1e-9);
    (zoom < 0.2 * (t_end - t0) && window.len() > 4).then_some(t0 + zoom)
}

/// Outlet and inlet temperatures and the hottest wall against time (upper panel; with a
/// second panel over the first part when a short start-up sits inside a long run) and the
/// mass flows (lower panel).
pub fn response(r: &TransientReport, path: &Path) -> Result<(), OutputError> {
    let e = plot_err(path);
    let zoom = start_up_window(r);
    let rows = if zoom.is_some() { 3 } else { 2 };
    let root = canvas(path, (SIZE.0, 240 + 300 * rows))?;
    let root = titled(&root, &format!("{}: outlet response ({} cells, {} scheme)", r.case, r.cells, r.scheme), path)?;
    let t_end = r.duration_s.max(1e-9);
    let s = &r.samples;
    let series = |f: fn(&crate::solve::transient::Sample) -> f64| -> Points { s.iter().map(|p| (p.time_s, f(p))).collect() };
    // The enlarged start-up panel has the same curves: its legend is the one above.
    let temps = |until: f64, labelled: bool| -> Vec<Curve> {
        let cut = |p: Points| -> Points { p.into_iter().filter(|q| q.0 <= until + 1e-9).collect() };
        let l = |s: &str| if labelled { s.to_string() } else { String::new() };
        vec![
            Curve::new(l("hot outlet"), HOT, Look::Line(2), cut(series(|p| p.hot_outlet_C))),
            Curve::new(l("hot inlet (schedule)"), HOT, Look::Dashed(1), cut(series(|p| p.hot_inlet_C))),
            Curve::new(l("cold outlet"), COLD, Look::Line(2), cut(series(|p| p.cold_outlet_C))),
            Curve::new(l("cold inlet (schedule)"), COLD, Look::Dashed(1), cut(series(|p| p.cold_inlet_C))),
            Curve::new(l("hottest wall cell"), WALL, Look::Line(1), cut(series(|p| p.max_wall_C))),
        ]
    };
    let areas = root.split_evenly((rows as usize, 1));
    panel(&areas[0], "temperatures over the whole run", ("time, t (s)", "temperature (°C)"), (0.0, t_end), None, &temps(t_end, true), &nothing, &e)?;
    if let Some(z) = zoom {
        let caption = format!("the first {} s (start-up), enlarged (same curves as above)", crate::text::num(z));
        panel(&areas[1], &caption, ("time, t (s)", "temperature (°C)"), (0.0, z), None, &temps(z, false), &nothing, &e)?;
    }
    let flows = [
        Curve::new("hot mass flow", HOT, Look::Line(2), series(|p| p.hot_flow_kg_s)),
        Curve::new("cold mass flow", COLD, Look::Line(2), series(|p| p.cold_flow_kg_s)),
    ];
    let (lo, hi) = span(flows.iter().flat_map(|c| c.pts.iter().map(|p| p.1)).chain([0.0]));
    panel(&areas[rows as usize - 1], "mass flows", ("time, t (s)", "mass flow (kg/s)"), (0.0, t_end), Some((lo, hi)), &flows, &nothing, &e)?;
    root.present().map_err(|x| e(x.to_string()))
}

/// Hot (upper panel) and cold (lower panel) temperature profiles at the snapshot times,
/// each curve coloured by its time on one sequential scale (shown as a bar); for a network,
/// its fields at the last snapshot.
pub fn snapshots(r: &TransientReport, path: &Path) -> Result<(), OutputError> {
    use plotters::style::colors::colormaps::{ColorMap, ViridisRGB};
    if let (Some(net), Some(snap)) = (&r.network, r.snapshots.last()) {
        // A network: its fields at the last snapshot as heat maps.
        let field = |values: &[f64]| Field::of_network(net, values);
        let (hot, cold, wall) = (field(&snap.hot_faces_c), field(&snap.cold_faces_c), field(&snap.wall_c));
        let title = format!("{}: temperatures over the {} network at t = {} s (°C)", r.case, r.arrangement, snap.time_s);
        return heat_maps(
            &title,
            &[("hot stream", &hot), ("cold stream", &cold), ("wall", &wall)],
            "first direction (fraction)",
            "second direction (fraction)",
            "°C",
            path,
        );
    }
    let e = plot_err(path);
    let root = canvas(path, (SIZE.0, SIZE.1 + 240))?;
    let note = if r.snapshots.len() > SNAPSHOT_CURVES { format!(", {SNAPSHOT_CURVES} of {} drawn", r.snapshots.len()) } else { String::new() };
    let root = titled(&root, &format!("{}: temperature profiles at chosen times (later darker{note})", r.case), path)?;
    let length = r.faces_m.last().copied().unwrap_or(1.0).max(1e-9);
    // One sequential scale in time order, evenly spread over the snapshots so that close
    // times stay apart; viridis from its light end (early) to its dark end (late), stopping
    // short of its palest tenth, which is too faint on white.
    // At most SNAPSHOT_CURVES profiles are drawn (evenly chosen, the first and last kept):
    // more cannot be told apart, and the file would only grow.
    let all = r.snapshots.len();
    let shown: Vec<&crate::solve::transient::Snapshot> = if all <= SNAPSHOT_CURVES {
        r.snapshots.iter().collect()
    } else {
        (0..SNAPSHOT_CURVES).map(|k| &r.snapshots[k * (all - 1) / (SNAPSHOT_CURVES - 1)]).collect()
    };
    let n = shown.len().max(1);
    let colour = |k: usize| ViridisRGB.get_color_normalized((0.9 - 0.9 * k as f64 / (n - 1).max(1) as f64) as f32, 0.0, 1.0);
    // At most ten legend entries: every k-th time, the first and last always.
    let every = n.div_ceil(10).max(1);
    let (lo, hi) = span(r.snapshots.iter().flat_map(|s| s.hot_faces_c.iter().chain(&s.cold_faces_c).copied()));
    let areas = root.split_evenly((2, 1));
    for (area, (name, hot)) in areas.iter().zip([("hot stream", true), ("cold stream", false)]) {
        let curves: Vec<Curve> = shown
            .iter()
            .enumerate()
            .map(|(k, snap)| {
                let v = if hot { &snap.hot_faces_c } else { &snap.cold_faces_c };
                let label = if k % every == 0 || k + 1 == n { format!("t = {} s", crate::text::num(snap.time_s)) } else { String::new() };
                Curve::new(label, colour(k), Look::Line(2), r.faces_m.iter().copied().zip(v.iter().copied()).collect())
            })
            .collect();
        panel(area, name, (r.position_label, "temperature (°C)"), (0.0, length), Some((lo, hi)), &curves, &nothing, &e)?;
    }
    root.present().map_err(|x| e(x.to_string()))
}

/// One curve of a study plot: label (empty: not in the legend), colour index, line width
/// and points.
pub type StudyCurve = (String, usize, u32, Vec<(f64, f64)>);

/// Stacked panels of curves against one input (sweeps): each panel a y label and its curves;
/// points are drawn as markers joined by lines; the legend sits where it covers no data.
pub fn study_panels(path: &Path, title: &str, x_label: &str, panels: &[(String, Vec<StudyCurve>)]) -> Result<(), OutputError> {
    const PALETTE: [RGBColor; 8] = [
        RGBColor(31, 119, 180),
        RGBColor(214, 39, 40),
        RGBColor(44, 160, 44),
        RGBColor(148, 103, 189),
        RGBColor(255, 127, 14),
        RGBColor(140, 86, 75),
        RGBColor(227, 119, 194),
        RGBColor(23, 190, 207),
    ];
    let e = plot_err(path);
    let root = canvas(path, (SIZE.0, 80 + 300 * panels.len().max(1) as u32))?;
    let root = titled(&root, title, path)?;
    let xr = span(panels.iter().flat_map(|(_, c)| c.iter().flat_map(|c| c.3.iter().map(|q| q.0))));
    for ((y_label, curves), area) in panels.iter().zip(root.split_evenly((panels.len().max(1), 1))) {
        let lines: Vec<Curve> =
            curves.iter().map(|(label, k, width, pts)| Curve::new(label.clone(), PALETTE[k % PALETTE.len()], Look::Line(*width), pts.clone())).collect();
        let markers = |chart: &mut Chart| -> Result<(), OutputError> {
            for (_, k, width, pts) in curves {
                let color = PALETTE[k % PALETTE.len()];
                chart.draw_series(thin(pts.clone()).into_iter().map(|p| Circle::new(p, 2 + width.min(&2), color.filled()))).map_err(|x| e(x.to_string()))?;
            }
            Ok(())
        };
        panel(&area, "", (x_label, y_label), xr, None, &lines, &markers, &e)?;
    }
    root.present().map_err(|x| e(x.to_string()))
}
