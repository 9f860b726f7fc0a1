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
/// A labelled, coloured curve.
type Series = (&'static str, RGBColor, Points);
/// One panel of a two-panel plot: title, y label, colour, local curve, lumped value.
type Panel = (&'static str, &'static str, RGBColor, Points, Option<f64>);

fn plot_err(path: &Path) -> impl Fn(String) -> OutputError + '_ {
    move |message| OutputError::Plot { path: path.display().to_string(), message }
}

type Chart<'a, 'b> = ChartContext<'a, SVGBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Grid, tick labels and axis titles.
fn axes(chart: &mut Chart, x_desc: &str, y_desc: &str, e: &dyn Fn(String) -> OutputError) -> Result<(), OutputError> {
    chart.configure_mesh().x_desc(x_desc).y_desc(y_desc).label_style(("sans-serif", 14)).draw().map_err(|x| e(x.to_string()))
}

/// The legend box.
fn legend<'a, 'b: 'a>(chart: &mut Chart<'a, 'b>, position: SeriesLabelPosition, size: u32, e: &dyn Fn(String) -> OutputError) -> Result<(), OutputError> {
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .position(position)
        .label_font(("sans-serif", size))
        .draw()
        .map_err(|x| e(x.to_string()))
}

/// A labelled solid line.
fn line<'a, 'b: 'a>(
    chart: &mut Chart<'a, 'b>,
    pts: Vec<(f64, f64)>,
    style: ShapeStyle,
    label: String,
    e: &dyn Fn(String) -> OutputError,
) -> Result<(), OutputError> {
    chart
        .draw_series(LineSeries::new(thin(pts), style))
        .map_err(|x| e(x.to_string()))?
        .label(label)
        .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], style));
    Ok(())
}

/// Padded range of a set of values.
fn span(values: impl Iterator<Item = f64>) -> (f64, f64) {
    let (lo, hi) = values.fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| (a.min(v), b.max(v)));
    if lo > hi {
        return (0.0, 1.0);
    }
    let pad = ((hi - lo) * 0.06).max(1e-6 * hi.abs().max(1.0));
    (lo - pad, hi + pad)
}

/// Hot, cold and wall temperature along the length.
pub fn temperatures(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    if let Some(f) = &r.fields {
        let title = format!("{}: temperatures over the {} network (°C)", r.case, r.arrangement);
        let panels = [("hot stream", &f.hot_c), ("cold stream", &f.cold_c), ("wall", &f.wall_c)];
        return heat_maps(&title, &panels, &f.x_label, &f.y_label, "°C", path);
    }
    let e = plot_err(path);
    let root = SVGBackend::new(path, SIZE).into_drawing_area();
    root.fill(&WHITE).map_err(|x| e(x.to_string()))?;
    let (lo, hi) = span(r.hot_faces_c.iter().chain(&r.cold_faces_c).copied());
    let mut chart = ChartBuilder::on(&root)
        .caption(format!("{}: temperatures along the exchanger ({})", r.case, r.arrangement), ("sans-serif", 20))
        .margin(12)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..r.length_m, lo..hi)
        .map_err(|x| e(x.to_string()))?;
    axes(&mut chart, "position along the hot stream's flow, x (m)", "temperature (°C)", &e)?;
    let series: [Series; 3] = [
        ("hot stream", HOT, r.faces_m.iter().copied().zip(r.hot_faces_c.iter().copied()).collect()),
        ("cold stream", COLD, r.faces_m.iter().copied().zip(r.cold_faces_c.iter().copied()).collect()),
        ("wall (mid-thickness)", WALL, r.profile.iter().map(|p| (p.x_m, p.wall_c)).collect()),
    ];
    for (label, color, pts) in series {
        line(&mut chart, pts, color.stroke_width(2), label.to_string(), &e)?;
    }
    legend(&mut chart, SeriesLabelPosition::UpperRight, 14, &e)?;
    root.present().map_err(|x| e(x.to_string()))
}

/// Panels of heat maps over a network's face, one colour scale (viridis, perceptually
/// uniform) shared by all panels and drawn as a bar on the right. At most 64 × 64 blocks
/// are drawn per panel (finer grids are averaged into blocks), so a large network still
/// makes a file of about 1 MB at most.
fn heat_maps(title: &str, panels: &[(&str, &Field)], x_label: &str, y_label: &str, unit: &str, path: &Path) -> Result<(), OutputError> {
    use plotters::style::colors::colormaps::{ColorMap, ViridisRGB};
    let e = plot_err(path);
    let width = 340 * panels.len() as u32 + 140;
    let root = SVGBackend::new(path, (width, 480)).into_drawing_area();
    root.fill(&WHITE).map_err(|x| e(x.to_string()))?;
    let root = root.titled(title, ("sans-serif", 20)).map_err(|x| e(x.to_string()))?;
    let (maps, bar) = root.split_horizontally(width - 130);
    let (lo, hi) = span(panels.iter().flat_map(|(_, f)| f.values.iter().copied().filter(|v| v.is_finite())));
    let colour = |v: f64| ViridisRGB.get_color_normalized(v as f32, lo as f32, hi as f32);
    for ((label, field), area) in panels.iter().zip(maps.split_evenly((1, panels.len()))) {
        let blocks = coarsened(field, 64);
        let mut chart = ChartBuilder::on(&area)
            .caption(*label, ("sans-serif", 16))
            .margin(8)
            .x_label_area_size(40)
            .y_label_area_size(50)
            .build_cartesian_2d(0.0..1.0, 0.0..1.0)
            .map_err(|x| e(x.to_string()))?;
        chart.configure_mesh().disable_mesh().x_desc(x_label).y_desc(y_label).label_style(("sans-serif", 11)).draw().map_err(|x| e(x.to_string()))?;
        let (cols, rows) = (blocks.columns as f64, blocks.rows as f64);
        chart
            .draw_series(blocks.values.iter().enumerate().filter(|(_, v)| v.is_finite()).map(|(k, &v)| {
                let (r, c) = ((k / blocks.columns) as f64, (k % blocks.columns) as f64);
                Rectangle::new([(c / cols, r / rows), ((c + 1.0) / cols, (r + 1.0) / rows)], colour(v).filled())
            }))
            .map_err(|x| e(x.to_string()))?;
    }
    let mut chart = ChartBuilder::on(&bar)
        .margin(20)
        .margin_left(10)
        .margin_right(30)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..1.0, lo..hi)
        .map_err(|x| e(x.to_string()))?;
    chart.configure_mesh().disable_mesh().disable_x_axis().y_desc(unit).label_style(("sans-serif", 12)).draw().map_err(|x| e(x.to_string()))?;
    let steps = 100;
    chart
        .draw_series((0..steps).map(|i| {
            let (a, b) = (lo + (hi - lo) * i as f64 / steps as f64, lo + (hi - lo) * (i + 1) as f64 / steps as f64);
            Rectangle::new([(0.0, a), (0.4, b)], colour(0.5 * (a + b)).filled())
        }))
        .map_err(|x| e(x.to_string()))?;
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
/// mixed-mean outlets.
pub fn outlets(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    let e = plot_err(path);
    let Some(f) = &r.fields else { return Err(e("not a network result".into())) };
    let root = SVGBackend::new(path, SIZE).into_drawing_area();
    root.fill(&WHITE).map_err(|x| e(x.to_string()))?;
    let (lo, hi) = span(f.hot_outlet_lanes_c.iter().chain(&f.cold_outlet_lanes_c).copied().chain([r.hot_outlet_C, r.cold_outlet_C]));
    let mut chart = ChartBuilder::on(&root)
        .caption(format!("{}: outlet temperature across each outlet face", r.case), ("sans-serif", 20))
        .margin(12)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..1.0, lo..hi)
        .map_err(|x| e(x.to_string()))?;
    axes(&mut chart, "position across the outlet face (fraction)", "outlet temperature (°C)", &e)?;
    let lanes = |v: &[f64]| -> Points {
        let n = v.len().max(1) as f64;
        v.iter().enumerate().map(|(i, &t)| ((i as f64 + 0.5) / n, t)).collect()
    };
    line(&mut chart, lanes(&f.hot_outlet_lanes_c), HOT.stroke_width(2), "hot outlet, lane by lane".into(), &e)?;
    line(&mut chart, lanes(&f.cold_outlet_lanes_c), COLD.stroke_width(2), "cold outlet, lane by lane".into(), &e)?;
    line(&mut chart, vec![(0.0, r.hot_outlet_C), (1.0, r.hot_outlet_C)], HOT.stroke_width(1), format!("hot mixed-mean {:.2} °C", r.hot_outlet_C), &e)?;
    line(&mut chart, vec![(0.0, r.cold_outlet_C), (1.0, r.cold_outlet_C)], COLD.stroke_width(1), format!("cold mixed-mean {:.2} °C", r.cold_outlet_C), &e)?;
    legend(&mut chart, SeriesLabelPosition::UpperRight, 14, &e)?;
    root.present().map_err(|x| e(x.to_string()))
}

/// Local heat flux (upper panel) and local U (lower panel) along the length; for a network,
/// the heat flux over its face.
pub fn heat_flux(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    if let Some(f) = &r.fields {
        let title = format!("{}: local heat flux over the {} network", r.case, r.arrangement);
        return heat_maps(&title, &[("heat flux, hot to cold", &f.heat_flux_w_m2)], &f.x_label, &f.y_label, "W/m²", path);
    }
    let e = plot_err(path);
    let root = SVGBackend::new(path, (SIZE.0, SIZE.1 + 160)).into_drawing_area();
    root.fill(&WHITE).map_err(|x| e(x.to_string()))?;
    let panels = root.split_evenly((2, 1));
    // The lumped method's single U and mean flux on the same reference area, for comparison.
    let area = r.length_m * r.profile.first().map(|p| p.heat_rate_per_length_w_m / p.heat_flux_w_m2).unwrap_or(1.0);
    let lumped_u = r.lumped.ua_w_k / area;
    let lumped_flux = r.lumped.duty_w / area;
    let data: [Panel; 2] = [
        (
            "local heat flux",
            "heat flux q'' (W/m²)",
            HOT,
            r.profile.iter().map(|p| (p.x_m, p.heat_flux_w_m2)).collect(),
            Some(lumped_flux).filter(|v| v.is_finite()),
        ),
        ("local overall coefficient", "U (W/m²·K)", COLD, r.profile.iter().map(|p| (p.x_m, p.u_w_m2k)).collect(), Some(lumped_u).filter(|v| v.is_finite())),
    ];
    for (panel, (title, ylabel, color, pts, lumped)) in panels.iter().zip(data) {
        let (lo, hi) = span(pts.iter().map(|p| p.1).chain(lumped));
        let mut chart = ChartBuilder::on(panel)
            .caption(format!("{}: {title} (on the reference wall area)", r.case), ("sans-serif", 18))
            .margin(12)
            .x_label_area_size(45)
            .y_label_area_size(80)
            .build_cartesian_2d(0.0..r.length_m, lo..hi)
            .map_err(|x| e(x.to_string()))?;
        axes(&mut chart, "position along the hot stream's flow, x (m)", ylabel, &e)?;
        line(&mut chart, pts, color.stroke_width(2), "grid (local)".to_string(), &e)?;
        if let Some(v) = lumped {
            chart
                .draw_series(DashedLineSeries::new(vec![(0.0, v), (r.length_m, v)], 8, 5, BLACK.stroke_width(1)))
                .map_err(|x| e(x.to_string()))?
                .label("lumped hand method (one value)")
                .legend(|(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], BLACK.stroke_width(1)));
        }
        legend(&mut chart, SeriesLabelPosition::UpperRight, 13, &e)?;
    }
    root.present().map_err(|x| e(x.to_string()))
}

/// Pressure drop from each stream's inlet along the length (streams without a friction
/// model are left out, and the plot says so).
pub fn pressure(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    let e = plot_err(path);
    let root = SVGBackend::new(path, SIZE).into_drawing_area();
    root.fill(&WHITE).map_err(|x| e(x.to_string()))?;
    let mut series: Vec<(String, RGBColor, Points)> = Vec::new();
    for (name, color, faces, p_in) in
        [("hot stream", HOT, &r.hot_faces_pa, r.hot_inlet_pressure_Pa), ("cold stream", COLD, &r.cold_faces_pa, r.cold_inlet_pressure_Pa)]
    {
        if !faces.is_empty() {
            let pts = r.faces_m.iter().zip(faces.iter()).map(|(&x, &p)| (x, (p_in - p) * 1e-3)).collect();
            series.push((name.to_string(), color, pts));
        }
    }
    let (lo, hi) = if series.is_empty() { (0.0, 1.0) } else { span(series.iter().flat_map(|s| s.2.iter().map(|p| p.1)).chain([0.0])) };
    let missing: Vec<&str> = [("hot", r.hot_faces_pa.is_empty()), ("cold", r.cold_faces_pa.is_empty())].iter().filter(|(_, m)| *m).map(|(n, _)| *n).collect();
    let note = if missing.is_empty() { String::new() } else { format!(" — not computed for the {} stream", missing.join(" and ")) };
    let mut chart = ChartBuilder::on(&root)
        .caption(format!("{}: pressure drop from each inlet{note}", r.case), ("sans-serif", 20))
        .margin(12)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..r.length_m, lo..hi)
        .map_err(|x| e(x.to_string()))?;
    axes(&mut chart, "position along the hot stream's flow, x (m)", "pressure drop from inlet, Δp (kPa)", &e)?;
    let any = !series.is_empty();
    for (label, color, pts) in series {
        line(&mut chart, pts, color.stroke_width(2), label.to_string(), &e)?;
    }
    if any {
        legend(&mut chart, SeriesLabelPosition::UpperLeft, 14, &e)?;
    }
    root.present().map_err(|x| e(x.to_string()))
}

/// Outlet and inlet temperatures against time (upper panel) and mass flows (lower panel).
pub fn response(r: &TransientReport, path: &Path) -> Result<(), OutputError> {
    let e = plot_err(path);
    let root = SVGBackend::new(path, (SIZE.0, SIZE.1 + 200)).into_drawing_area();
    root.fill(&WHITE).map_err(|x| e(x.to_string()))?;
    let (upper, lower) = root.split_vertically(SIZE.1 - 20);
    let t_end = r.duration_s.max(1e-9);
    let s = &r.samples;
    let lines: [(&str, RGBColor, bool, Points); 4] = [
        ("hot outlet", HOT, false, s.iter().map(|p| (p.time_s, p.hot_outlet_C)).collect()),
        ("hot inlet (schedule)", HOT, true, s.iter().map(|p| (p.time_s, p.hot_inlet_C)).collect()),
        ("cold outlet", COLD, false, s.iter().map(|p| (p.time_s, p.cold_outlet_C)).collect()),
        ("cold inlet (schedule)", COLD, true, s.iter().map(|p| (p.time_s, p.cold_inlet_C)).collect()),
    ];
    let (lo, hi) = span(lines.iter().flat_map(|l| l.3.iter().map(|p| p.1)));
    let mut chart = ChartBuilder::on(&upper)
        .caption(format!("{}: outlet response ({} cells, {} scheme)", r.case, r.cells, r.scheme), ("sans-serif", 20))
        .margin(12)
        .x_label_area_size(45)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..t_end, lo..hi)
        .map_err(|x| e(x.to_string()))?;
    axes(&mut chart, "time, t (s)", "temperature (°C)", &e)?;
    for (label, color, dashed, pts) in lines {
        let style = color.stroke_width(if dashed { 1 } else { 2 });
        let anno = if dashed {
            chart.draw_series(DashedLineSeries::new(thin(pts), 6, 4, style)).map_err(|x| e(x.to_string()))?
        } else {
            chart.draw_series(LineSeries::new(thin(pts), style)).map_err(|x| e(x.to_string()))?
        };
        anno.label(label).legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], style));
    }
    legend(&mut chart, SeriesLabelPosition::UpperRight, 13, &e)?;
    let flows: [Series; 2] = [
        ("hot mass flow", HOT, s.iter().map(|p| (p.time_s, p.hot_flow_kg_s)).collect()),
        ("cold mass flow", COLD, s.iter().map(|p| (p.time_s, p.cold_flow_kg_s)).collect()),
    ];
    let (lo, hi) = span(flows.iter().flat_map(|l| l.2.iter().map(|p| p.1)).chain([0.0]));
    let mut chart =
        ChartBuilder::on(&lower).margin(12).x_label_area_size(45).y_label_area_size(70).build_cartesian_2d(0.0..t_end, lo..hi).map_err(|x| e(x.to_string()))?;
    axes(&mut chart, "time, t (s)", "mass flow (kg/s)", &e)?;
    for (label, color, pts) in flows {
        line(&mut chart, pts, color.stroke_width(2), label.to_string(), &e)?;
    }
    legend(&mut chart, SeriesLabelPosition::UpperRight, 13, &e)?;
    root.present().map_err(|x| e(x.to_string()))
}

/// Hot and cold temperature profiles at the snapshot times, as a family of curves (later
/// times darker).
pub fn snapshots(r: &TransientReport, path: &Path) -> Result<(), OutputError> {
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
    let root = SVGBackend::new(path, SIZE).into_drawing_area();
    root.fill(&WHITE).map_err(|x| e(x.to_string()))?;
    let length = r.faces_m.last().copied().unwrap_or(1.0).max(1e-9);
    let (lo, hi) = span(r.snapshots.iter().flat_map(|s| s.hot_faces_c.iter().chain(&s.cold_faces_c).copied()));
    let mut chart = ChartBuilder::on(&root)
        .caption(format!("{}: temperature profiles at chosen times", r.case), ("sans-serif", 20))
        .margin(12)
        .x_label_area_size(50)
        .y_label_area_size(70)
        .build_cartesian_2d(0.0..length, lo..hi)
        .map_err(|x| e(x.to_string()))?;
    axes(&mut chart, "position along the hot stream's flow, x (m)", "temperature (°C)", &e)?;
    let k = r.snapshots.len().max(1) as f64;
    for (i, snap) in r.snapshots.iter().enumerate() {
        let shade = 0.3 + 0.7 * (i as f64 + 1.0) / k;
        let hot =
            RGBColor((200.0 * shade + 55.0 * (1.0 - shade)) as u8, (40.0 * shade + 200.0 * (1.0 - shade)) as u8, (30.0 * shade + 200.0 * (1.0 - shade)) as u8);
        let cold =
            RGBColor((30.0 * shade + 200.0 * (1.0 - shade)) as u8, (90.0 * shade + 210.0 * (1.0 - shade)) as u8, (200.0 * shade + 240.0 * (1.0 - shade)) as u8);
        let t = snap.time_s;
        line(
            &mut chart,
            r.faces_m.iter().copied().zip(snap.hot_faces_c.iter().copied()).collect(),
            hot.stroke_width(2),
            format!("hot, t = {t} s").to_string(),
            &e,
        )?;
        line(
            &mut chart,
            r.faces_m.iter().copied().zip(snap.cold_faces_c.iter().copied()).collect(),
            cold.stroke_width(2),
            format!("cold, t = {t} s").to_string(),
            &e,
        )?;
    }
    legend(&mut chart, SeriesLabelPosition::UpperRight, 12, &e)?;
    root.present().map_err(|x| e(x.to_string()))
}

/// One curve of a study plot: label (empty: not in the legend), colour index, line width
/// and points.
pub type StudyCurve = (String, usize, u32, Vec<(f64, f64)>);

/// The corner of a panel holding the fewest points, for the legend.
fn emptiest_corner(curves: &[StudyCurve], (x0, x1): (f64, f64), (y0, y1): (f64, f64)) -> SeriesLabelPosition {
    let mut count = [0usize; 4];
    for (_, _, _, pts) in curves {
        for &(x, y) in pts {
            let right = (x - x0) / (x1 - x0) > 0.5;
            let upper = (y - y0) / (y1 - y0) > 0.5;
            count[usize::from(upper) * 2 + usize::from(right)] += 1;
        }
    }
    let best = (0..4).min_by_key(|&k| (count[k], [3, 2, 1, 0][k])).unwrap_or(3);
    match best {
        0 => SeriesLabelPosition::LowerLeft,
        1 => SeriesLabelPosition::LowerRight,
        2 => SeriesLabelPosition::UpperLeft,
        _ => SeriesLabelPosition::UpperRight,
    }
}

/// Stacked panels of curves against one input (sweeps): each panel a y label and its curves;
/// points are drawn as markers joined by lines; the legend sits in the emptiest corner.
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
    let root = SVGBackend::new(path, (SIZE.0, 80 + 300 * panels.len().max(1) as u32)).into_drawing_area();
    root.fill(&WHITE).map_err(|x| e(x.to_string()))?;
    let root = root.titled(title, ("sans-serif", 20)).map_err(|x| e(x.to_string()))?;
    let (x_lo, x_hi) = span(panels.iter().flat_map(|(_, c)| c.iter().flat_map(|c| c.3.iter().map(|q| q.0))));
    for ((y_label, curves), area) in panels.iter().zip(root.split_evenly((panels.len().max(1), 1))) {
        let (lo, hi) = span(curves.iter().flat_map(|c| c.3.iter().map(|q| q.1)));
        let mut chart = ChartBuilder::on(&area)
            .margin(12)
            .x_label_area_size(45)
            .y_label_area_size(80)
            .build_cartesian_2d(x_lo..x_hi, lo..hi)
            .map_err(|x| e(x.to_string()))?;
        axes(&mut chart, x_label, y_label, &e)?;
        for (label, k, width, pts) in curves {
            let color = PALETTE[k % PALETTE.len()];
            let series = chart.draw_series(LineSeries::new(thin(pts.clone()), color.stroke_width(*width))).map_err(|x| e(x.to_string()))?;
            if !label.is_empty() {
                let w = *width;
                series.label(label.clone()).legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 20, y)], color.stroke_width(w)));
            }
            chart.draw_series(thin(pts.clone()).into_iter().map(|p| Circle::new(p, 2 + width.min(&2), color.filled()))).map_err(|x| e(x.to_string()))?;
        }
        if curves.iter().any(|c| !c.0.is_empty()) {
            legend(&mut chart, emptiest_corner(curves, (x_lo, x_hi), (lo, hi)), 13, &e)?;
        }
    }
    root.present().map_err(|x| e(x.to_string()))
}
