//! Validation of the `[transient]` section: schedules, output bounds, storage materials.

use super::file::*;
use super::problem::*;
use super::spec::*;
use crate::solve::transient::{Initial, Integrator, Signal, TransientSettings};
use crate::text::num;

pub(super) fn signal(c: &mut Checker, key: &str, s: &SignalFile, before: f64, duration: f64, positive_only: bool) -> Signal {
    let need = |c: &mut Checker, name: &str, v: Option<f64>| -> f64 {
        match v {
            Some(x) if x.is_finite() => x,
            Some(x) => {
                c.fail(&format!("{key}.{name}"), format!("{x} is not a finite number", x = num(x)));
                0.0
            }
            None => {
                c.fail(&format!("{key}.{name}"), format!("is missing: kind = \"{:?}\" needs it", s.kind).to_lowercase());
                0.0
            }
        }
    };
    let check_value = |c: &mut Checker, name: &str, v: f64| {
        if positive_only && v < 0.0 {
            c.fail(&format!("{key}.{name}"), format!("{v} is not valid: a mass flow cannot be negative (0 stops the flow)", v = num(v)));
        }
    };
    let check_time = |c: &mut Checker, name: &str, t: f64| {
        if !(0.0..=duration).contains(&t) {
            c.warnings.push(format!("{key}.{name} = {t} s lies outside the simulated 0 … {duration} s", t = num(t), duration = num(duration)));
        }
    };
    match s.kind {
        SignalKind::Step => {
            let (t, to) = (need(c, "time_s", s.time_s), need(c, "to", s.to));
            check_time(c, "time_s", t);
            check_value(c, "to", to);
            Signal::Step { time_s: t, before, after: to }
        }
        SignalKind::Ramp => {
            let (a, b, to) = (need(c, "start_s", s.start_s), need(c, "end_s", s.end_s), need(c, "to", s.to));
            if b <= a {
                c.fail(&format!("{key}.end_s"), format!("{b} s must be after start_s = {a} s", b = num(b), a = num(a)));
            }
            check_value(c, "to", to);
            Signal::Ramp { start_s: a, end_s: b.max(a + 1e-9), from: before, to }
        }
        SignalKind::Table => {
            let (times, values) = (s.times_s.clone().unwrap_or_default(), s.values.clone().unwrap_or_default());
            if times.is_empty() || times.len() != values.len() {
                c.fail(
                    &format!("{key}.times_s"),
                    format!("times_s ({} entries) and values ({} entries) must be non-empty and of equal length", times.len(), values.len()),
                );
                return Signal::Constant(before);
            }
            if times.windows(2).any(|w| w[1] <= w[0]) || times.iter().chain(&values).any(|v| !v.is_finite()) {
                c.fail(&format!("{key}.times_s"), "times must be finite and strictly increasing, values finite".into());
            }
            for v in &values {
                check_value(c, "values", *v);
            }
            Signal::Table(times.into_iter().zip(values).collect())
        }
    }
}

/// Most rows in timeseries.csv (one per output time): about 40 MB of CSV.
pub const TIMESERIES_MAX_ROWS: usize = 200_000;

/// Most profile snapshots in one run.
pub const SNAPSHOTS_MAX: usize = 1_000;

/// Most snapshot rows (snapshots × faces) in snapshots.csv: about 150 MB of CSV, 60 MB held.
pub const SNAPSHOT_MAX_ROWS: usize = 2_000_000;

/// Snapshot times: within the run, not too many, and a warning for those taken at the
/// nearest output time rather than at the time given.
pub(super) fn snapshot_checks(c: &mut Checker, times: &[f64], duration: f64, interval: f64, cells: usize) {
    let key = "transient.snapshot_times_s";
    let outside: Vec<String> = times.iter().filter(|t| !(t.is_finite() && **t >= 0.0 && **t <= duration * (1.0 + 1e-12))).map(|t| num(*t)).collect();
    if !outside.is_empty() {
        c.fail(key, format!("{} s outside the run: give times from 0 to duration_s = {} s", list(&outside), num(duration)));
    }
    if times.len() > SNAPSHOTS_MAX {
        c.fail(key, format!("{} snapshots asked for, more than the {SNAPSHOTS_MAX} hxgrid keeps: give fewer times", times.len()));
    } else if times.len() * (cells + 1) > SNAPSHOT_MAX_ROWS {
        c.fail(
            key,
            format!(
                "{} snapshots of {} faces would write {} rows, more than the {SNAPSHOT_MAX_ROWS} hxgrid writes: give at most {} snapshot times or fewer cells",
                times.len(),
                cells + 1,
                times.len() * (cells + 1),
                SNAPSHOT_MAX_ROWS / (cells + 1)
            ),
        );
    }
    if outside.is_empty() && interval.is_finite() && interval > 0.0 {
        let moved: Vec<String> = times
            .iter()
            .filter_map(|&t| {
                let at = ((t / interval).round() * interval).min(duration);
                ((at - t).abs() > 1e-9 * duration.max(1.0)).then(|| format!("{} s → {} s", num(t), num(at)))
            })
            .collect();
        if !moved.is_empty() {
            c.warnings.push(format!(
                "{key}: snapshots are taken at output times (every output_interval_s = {} s), so these move to the nearest one: {}",
                num(interval),
                list(&moved)
            ));
        }
    }
}

/// `snapshot_cells`: the values a snapshot holds per stream, less one (faces − 1 on an axial
/// line; a network's cells).
pub(super) fn transient(c: &mut Checker, t: &TransientFile, f: &CaseFile, geometry: &Geometry, cells: usize, snapshot_cells: usize) -> TransientSpec {
    let duration = c.positive("transient.duration_s", t.duration_s, "s");
    let interval = t.output_interval_s.unwrap_or((duration / 1000.0).max(1e-6));
    if !(interval > 0.0 && interval <= duration) {
        c.fail(
            "transient.output_interval_s",
            format!(
                "{interval} s is not valid: use a positive interval no longer than duration_s = {duration} s",
                interval = num(interval),
                duration = num(duration)
            ),
        );
    }
    if duration / interval > TIMESERIES_MAX_ROWS as f64 {
        c.fail(
            "transient.output_interval_s",
            format!(
                "{} s gives {} output rows over duration_s = {} s, more than the {TIMESERIES_MAX_ROWS} hxgrid writes: use an interval of at least {} s",
                num(interval),
                num((duration / interval).floor() + 1.0),
                num(duration),
                num(duration / TIMESERIES_MAX_ROWS as f64)
            ),
        );
    }
    let tolerance = t.tolerance_K.unwrap_or(TransientSettings::default().atol_k);
    if !(tolerance > 0.0 && tolerance < 10.0) {
        c.fail(
            "transient.tolerance_K",
            format!("{tolerance} K is not valid: use a small positive temperature tolerance, e.g. 1e-3", tolerance = num(tolerance)),
        );
    }
    let relative = t.relative_tolerance.unwrap_or(TransientSettings::default().rtol);
    if !(0.0..0.1).contains(&relative) {
        c.fail(
            "transient.relative_tolerance",
            format!("{} is not valid: use 0 (absolute tolerance only) or a small positive fraction below 0.1, e.g. 1e-6", num(relative)),
        );
    }
    let initial = match (t.initial, t.initial_temperature_C) {
        (None | Some(InitialName::Steady), None) => Initial::Steady,
        (None | Some(InitialName::Steady), Some(_)) => {
            c.fail("transient.initial_temperature_C", "is only used with initial = \"uniform\": remove it, or set initial = \"uniform\"".into());
            Initial::Steady
        }
        (Some(InitialName::Uniform), Some(v)) if v.is_finite() => Initial::Uniform(v),
        (Some(InitialName::Uniform), _) => {
            c.fail("transient.initial_temperature_C", "is missing: initial = \"uniform\" needs the starting temperature of fluids and wall in °C".into());
            Initial::Uniform(20.0)
        }
    };
    let rho = c.positive("transient.wall_density_kg_m3", t.wall_density_kg_m3, "kg/m³");
    let cw = c.positive("transient.wall_specific_heat_J_kgK", t.wall_specific_heat_J_kgK, "J/(kg·K)");
    let material = |c: &mut Checker, d: Option<f64>, cp: Option<f64>, what: &str| {
        let d = d.map(|v| c.positive(&format!("transient.{what}_density_kg_m3"), v, "kg/m³")).unwrap_or(rho);
        let cp = cp.map(|v| c.positive(&format!("transient.{what}_specific_heat_J_kgK"), v, "J/(kg·K)")).unwrap_or(cw);
        d * cp
    };
    let fin_rho_c = material(c, t.fin_density_kg_m3, t.fin_specific_heat_J_kgK, "fin");
    let shell_rho_c = material(c, t.shell_density_kg_m3, t.shell_specific_heat_J_kgK, "shell");
    let shell = match (t.shell_thickness_m, geometry) {
        (None, _) => {
            if t.shell_density_kg_m3.is_some() || t.shell_specific_heat_J_kgK.is_some() {
                c.fail("transient.shell_thickness_m", "is missing: the shell material is given, so give the outer pipe's wall thickness in m".into());
            }
            None
        }
        (Some(th), Geometry::DoublePipe { .. }) => Some((c.positive("transient.shell_thickness_m", th, "m"), shell_rho_c)),
        (Some(_), _) => {
            c.fail("transient.shell_thickness_m", "applies to a double pipe only (the outer pipe around the annulus): remove it".into());
            None
        }
    };
    let integrator = match t.integrator {
        Some(IntegratorName::Explicit) => Integrator::Explicit,
        // Auto: implicit. Wall–fluid exchange and short cells make most exchanger
        // transients stiff; the benchmark shows BDF ahead even for coarse liquid cases.
        None | Some(IntegratorName::Auto) | Some(IntegratorName::Implicit) => Integrator::Implicit,
    };
    if let Geometry::PlaneWall { hot, cold, .. } = geometry {
        for (side, (area, _), film) in [("hot", hot, f.hot.film), ("cold", cold, f.cold.film)] {
            if area.is_none() && film != FilmName::Compact {
                c.fail(
                    &format!("geometry.{side}_flow_area_m2"),
                    "is missing: a transient needs each stream's flow area to know how much fluid the exchanger holds".into(),
                );
            }
        }
    }
    let snapshots = t.snapshot_times_s.clone().unwrap_or_else(|| (0..=4).map(|k| k as f64 * duration / 4.0).collect());
    snapshot_checks(c, &snapshots, duration, interval, snapshot_cells);
    let mut sig =
        |name: &str, s: &Option<SignalFile>, before: f64, flow: bool| s.as_ref().map(|s| signal(c, &format!("transient.{name}"), s, before, duration, flow));
    let hot_inlet_c = sig("hot_inlet_temperature_C", &t.hot_inlet_temperature_C, f.hot.inlet_temperature_C, false);
    let hot_flow_kg_s = sig("hot_mass_flow_kg_s", &t.hot_mass_flow_kg_s, f.hot.mass_flow_kg_s, true);
    let cold_inlet_c = sig("cold_inlet_temperature_C", &t.cold_inlet_temperature_C, f.cold.inlet_temperature_C, false);
    let cold_flow_kg_s = sig("cold_mass_flow_kg_s", &t.cold_mass_flow_kg_s, f.cold.mass_flow_kg_s, true);
    for (side, flow, film) in [("hot", &hot_flow_kg_s, f.hot.film), ("cold", &cold_flow_kg_s, f.cold.film)] {
        if film == FilmName::Fixed && flow.as_ref().is_some_and(|s| s.range().0 <= 0.0) {
            c.warnings.push(format!(
                "{side} stream: its flow stops in the schedule, but film = \"fixed\" keeps the full film coefficient at zero flow; for a lost-flow study give a film model that follows the flow (see the README, \"At zero flow\")"
            ));
        }
    }
    TransientSpec {
        settings: TransientSettings {
            cells,
            duration_s: duration,
            output_interval_s: interval,
            integrator,
            atol_k: tolerance,
            rtol: relative,
            initial,
            snapshot_times_s: snapshots,
            // Step limit, heat capacities: the documented defaults.
            ..TransientSettings::default()
        },
        wall_volumetric_heat_capacity: rho * cw,
        fin_volumetric_heat_capacity: fin_rho_c,
        shell,
        response_from_s: match t.response_from_s {
            Some(r) if !(r >= 0.0 && r < duration) => {
                c.fail(
                    "transient.response_from_s",
                    format!("{r} s is not valid: give a time from 0 up to (not including) duration_s = {duration} s", r = num(r), duration = num(duration)),
                );
                None
            }
            v => v,
        },
        hot_inlet_c,
        hot_flow_kg_s,
        cold_inlet_c,
        cold_flow_kg_s,
    }
}
