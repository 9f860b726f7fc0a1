//! SVG plots (the only place plotters appears).

use super::OutputError;
use crate::results::SteadyReport;
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

/// Local heat flux (upper panel) and local U (lower panel) along the length.
pub fn heat_flux(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
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
