//! The case behind a result as the program took it: each value with its unit, read from the
//! built exchanger (and the transient settings), for the report beside the file as given.

use crate::design::Source;
use crate::model::{Exchanger, Stream};
use crate::results::InputEcho;
use crate::solve::transient::{Initial, Inputs, Integrator, Signal, TransientSettings};
use crate::text::num;

/// The echo of a steady case: the file as given and the exchanger as interpreted.
pub fn steady(source: &Source, ex: &Exchanger, cells: usize) -> InputEcho {
    let mut rows = vec![
        row("arrangement", ex.arrangement.as_str().to_string()),
        row("spatial scheme", ex.scheme.as_str().to_string()),
        row("cells", cells.to_string()),
        row("length", format!("{} m", num(ex.length_m))),
        row("reference area for U", format!("{} m² ({} m²/m)", num(ex.reference_area_per_length_m * ex.length_m), num(ex.reference_area_per_length_m))),
        row("wall conduction resistance", format!("{} K·m/W per metre of length", num(ex.wall.resistance_per_length()))),
    ];
    for (name, s) in [("hot", &ex.hot), ("cold", &ex.cold)] {
        stream(&mut rows, name, s, ex.length_m);
    }
    InputEcho { origin: source.origin.clone(), text: source.text.clone(), sha256: source.sha256(), interpreted: rows }
}

/// The echo of a transient case: the steady echo and the run's settings and schedules.
pub fn transient(source: &Source, ex: &Exchanger, settings: &TransientSettings, inputs: &Inputs) -> InputEcho {
    let mut echo = steady(source, ex, settings.cells);
    let rows = &mut echo.interpreted;
    rows.push(row("simulated time", format!("{} s", num(settings.duration_s))));
    rows.push(row("output interval", format!("{} s", num(settings.output_interval_s))));
    rows.push(row(
        "integrator",
        match settings.integrator {
            Integrator::Explicit => "explicit".to_string(),
            Integrator::Implicit => "implicit".to_string(),
        },
    ));
    rows.push(row("time tolerance", format!("{} K absolute, {} relative", num(settings.atol_k), num(settings.rtol))));
    rows.push(row(
        "initial state",
        match settings.initial {
            Initial::Steady => "steady state for the inputs at t = 0".to_string(),
            Initial::Uniform(t) => format!("uniform {} °C", num(t)),
        },
    ));
    rows.push(row("wall heat capacity", format!("{} J/(m·K) per metre of length", num(settings.wall_heat_capacity_j_mk))));
    for (what, unit, s) in [
        ("hot inlet temperature", "°C", &inputs.hot_inlet_c),
        ("hot mass flow", "kg/s", &inputs.hot_flow_kg_s),
        ("cold inlet temperature", "°C", &inputs.cold_inlet_c),
        ("cold mass flow", "kg/s", &inputs.cold_flow_kg_s),
    ] {
        rows.push(row(&format!("schedule: {what}"), schedule(s, unit)));
    }
    echo
}

fn row(what: &str, value: String) -> (String, String) {
    (what.to_string(), value)
}

fn stream(rows: &mut Vec<(String, String)>, name: &str, s: &Stream, length_m: f64) {
    let range = s.fluid.range();
    rows.push(row(&format!("{name} fluid"), format!("{} (valid {}–{} °C: {})", s.fluid.name(), num(range.min_c), num(range.max_c), range.reason)));
    rows.push(row(&format!("{name} mass flow"), format!("{} kg/s", num(s.mass_flow_kg_s))));
    rows.push(row(&format!("{name} inlet temperature"), format!("{} °C", num(s.inlet_c))));
    rows.push(row(&format!("{name} inlet pressure"), format!("{} kPa (absolute)", num(s.inlet_pressure_pa * 1e-3))));
    rows.push(row(&format!("{name} fouling resistance"), format!("{} m²·K/W", num(s.fouling_m2k_w))));
    rows.push(row(&format!("{name} film model"), format!("{}: {}", s.film.name(), s.film.validity())));
    rows.push(row(
        &format!("{name} heat-transfer area"),
        format!("{} m² ({} m²/m)", num(s.channel.area_per_length_m * length_m), num(s.channel.area_per_length_m)),
    ));
    if let Some(a) = s.channel.flow_area_m2 {
        rows.push(row(&format!("{name} free-flow area"), format!("{} m²", num(a))));
    }
    if let Some(d) = s.channel.hydraulic_diameter_m {
        rows.push(row(&format!("{name} hydraulic diameter"), format!("{} mm", num(d * 1e3))));
    }
    rows.push(row(&format!("{name} flow path length"), format!("{} m", num(s.channel.flow_length_m))));
}

/// A schedule in words.
fn schedule(s: &Signal, unit: &str) -> String {
    match s {
        Signal::Constant(v) => format!("constant {} {unit}", num(*v)),
        Signal::Step { time_s, before, after } => format!("step from {} to {} {unit} at {} s", num(*before), num(*after), num(*time_s)),
        Signal::Ramp { start_s, end_s, from, to } => {
            format!("ramp from {} {unit} at {} s to {} {unit} at {} s", num(*from), num(*start_s), num(*to), num(*end_s))
        }
        Signal::Table(p) => {
            let pts: Vec<String> = p.iter().map(|(t, v)| format!("({} s, {})", num(*t), num(*v))).collect();
            format!("table {unit}: {}", pts.join(", "))
        }
    }
}
