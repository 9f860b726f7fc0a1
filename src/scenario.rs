//! A case's transient scenario end to end: simulate, then summarise the response
//! (settling times, overshoot, energy closure, the steady answer for the final conditions).
//! Pure: no I/O.

use crate::model::Exchanger;
use crate::results::CAUTION;
use crate::solve::transient::{simulate, Initial, Inputs, Integrator, TransientError, TransientObserver, TransientSettings};
use crate::solve::{solve_steady, SilentObserver, SteadySettings};

pub use crate::results::transient::{InputChange, OutletResponse, Peak, Response, TransientReport, WallExtremes};

/// Settling time to fraction `p` of the change: the time after `t_ref` from which the
/// series stays within (1 − p)|change| of its final value (interpolated at the crossing).
pub fn settling_time(times: &[f64], values: &[f64], t_ref: f64, p: f64) -> Option<f64> {
    let (first, last) = (*values.first()?, *values.last()?);
    let change = last - first;
    if change.abs() < 1e-9 {
        return None;
    }
    let band = (1.0 - p) * change.abs();
    // Walk back from the end to the last sample outside the band.
    let outside = (0..values.len()).rev().find(|&k| (values[k] - last).abs() > band)?;
    if outside + 1 >= values.len() {
        return None;
    }
    let (t0, t1, v0, v1) = (times[outside], times[outside + 1], values[outside], values[outside + 1]);
    let (d0, d1) = ((v0 - last).abs() - band, (v1 - last).abs() - band);
    let t = if d0 != d1 { t0 + (t1 - t0) * d0 / (d0 - d1) } else { t1 };
    Some((t - t_ref).max(0.0))
}

/// Overshoot beyond the final value in the direction of the change, % of |change|.
pub fn overshoot_percent(values: &[f64]) -> f64 {
    let (first, last) = (values[0], *values.last().unwrap());
    let change = last - first;
    if change.abs() < 1e-9 {
        return 0.0;
    }
    let beyond = values.iter().map(|v| (v - last) * change.signum()).fold(0.0, f64::max);
    100.0 * beyond / change.abs()
}

/// A net change below this is no change for the response metrics, K (common practice: a
/// tenth of a kelvin is below what plant instruments resolve).
const NEGLIGIBLE_CHANGE_K: f64 = 0.1;

/// The response of `values` at `times` (one window), measured from `t0`. Settling and
/// overshoot are left out (None) when the net change is negligible, under 0.1 K or under
/// 5 % of the swing (a disturbance that returns), where a percentage of it is meaningless.
pub fn response(times: &[f64], values: &[f64], t0: f64) -> Response {
    let (first, last) = (values[0], *values.last().expect("at least one sample"));
    let change = last - first;
    let (lo, hi) = values.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)));
    let meaningful = change.abs() >= NEGLIGIBLE_CHANGE_K && change.abs() >= 0.05 * (hi - lo);
    let settle = |p: f64| if meaningful { settling_time(times, values, t0, p) } else { None };
    Response {
        initial_C: first,
        final_C: last,
        change_K: change,
        settling_63_s: settle(0.63),
        settling_95_s: settle(0.95),
        settling_99_s: settle(0.99),
        overshoot_percent: meaningful.then(|| overshoot_percent(values)),
        swing_K: hi - lo,
    }
}

/// Every change of every input in `inputs` that falls in the run (start before `end`), with
/// both outlets' responses from its start to the next change of any input or the end.
fn input_changes(inputs: &Inputs, samples: &[crate::solve::transient::Sample], end: f64) -> Vec<InputChange> {
    let all: Vec<(&'static str, &'static str, crate::solve::transient::Change)> = [
        ("hot inlet temperature", "°C", &inputs.hot_inlet_c),
        ("hot mass flow", "kg/s", &inputs.hot_flow_kg_s),
        ("cold inlet temperature", "°C", &inputs.cold_inlet_c),
        ("cold mass flow", "kg/s", &inputs.cold_flow_kg_s),
    ]
    .into_iter()
    .flat_map(|(name, unit, s)| s.changes().into_iter().map(move |c| (name, unit, c)))
    .filter(|(_, _, c)| c.1 >= 0.0 && c.0 < end)
    .collect();
    let eps = 1e-9 * end.max(1.0);
    let mut out: Vec<InputChange> = all
        .iter()
        .map(|&(input, unit, (start, stop, from, to))| {
            let start = start.max(0.0);
            let window_end = all.iter().map(|c| c.2 .0).filter(|&t| t > start + eps).fold(end, f64::min);
            let window: Vec<_> = samples.iter().filter(|s| s.time_s >= start - eps && s.time_s <= window_end + eps).collect();
            let times: Vec<f64> = window.iter().map(|s| s.time_s).collect();
            let of = |f: fn(&crate::solve::transient::Sample) -> f64| -> Response {
                let v: Vec<f64> = window.iter().map(|s| f(s)).collect();
                if v.is_empty() {
                    response(&[start], &[f(&samples[samples.len() - 1])], start)
                } else {
                    response(&times, &v, start)
                }
            };
            InputChange {
                input,
                unit,
                kind: if stop > start { "ramp" } else { "step" },
                start_s: start,
                end_s: stop.max(start),
                from,
                to,
                window_end_s: window_end,
                hot_outlet: of(|s| s.hot_outlet_C),
                cold_outlet: of(|s| s.cold_outlet_C),
            }
        })
        .collect();
    out.sort_by(|a, b| a.start_s.total_cmp(&b.start_s));
    out
}

/// Simulate and summarise.
/// `response_from_s`: the time from which settling and overshoot are measured (None: 0 for
/// a uniform start, else the first change of any input).
pub fn run(
    case_name: &str,
    ex: &Exchanger,
    inputs: &Inputs,
    settings: &TransientSettings,
    response_from_s: Option<f64>,
    observer: &mut dyn TransientObserver,
) -> Result<TransientReport, TransientError> {
    let (run, network) = match ex.arrangement.layout() {
        None => (simulate(ex, inputs, settings, observer)?, None),
        Some(layout) => {
            let r = crate::solve::transient::simulate_network(ex, &layout, inputs, settings, observer)?;
            (r.run, Some(r.network))
        }
    };
    let end = settings.duration_s;
    // The steady state for the final inputs, beside the end of a completed run (none after
    // an early stop: the run did not reach the end).
    let final_steady = |e: &Exchanger| -> Result<(f64, f64), crate::solve::SolveError> {
        let steady_settings = SteadySettings { cells: settings.cells, ..SteadySettings::default() };
        match e.arrangement.layout() {
            None => solve_steady(e, &steady_settings, &mut SilentObserver).map(|s| (s.hot_outlet_c(), s.cold_outlet_c(e.arrangement))),
            Some(layout) => crate::solve::solve_network(e, &layout, &steady_settings, &mut SilentObserver)
                .map(|s| (s.outlet_c(crate::model::Side::Hot), s.outlet_c(crate::model::Side::Cold))),
        }
    };
    let steady = match &run.stopped {
        Some(_) => None,
        None => match final_steady(&inputs.apply(ex, end)) {
            Ok(s) => Some(s),
            // No steady comparison where none is defined: both flows stopped, or the
            // schedules end with the "hot" inlet no hotter than the "cold" one.
            Err(crate::solve::SolveError::NoFlow | crate::solve::SolveError::InletsReversed { .. }) => None,
            Err(e) => return Err(e.into()),
        },
    };
    let times: Vec<f64> = run.samples.iter().map(|s| s.time_s).collect();
    let reference = [&inputs.hot_inlet_c, &inputs.hot_flow_kg_s, &inputs.cold_inlet_c, &inputs.cold_flow_kg_s]
        .iter()
        .flat_map(|s| s.breakpoints())
        .filter(|t| *t >= 0.0)
        .fold(f64::INFINITY, f64::min);
    let automatic = if reference.is_finite() && !matches!(settings.initial, Initial::Uniform(_)) { reference } else { 0.0 };
    let reference = response_from_s.unwrap_or(automatic);
    // The response is measured on the samples from the reference time on.
    let from = times.iter().position(|&t| t >= reference - 1e-9).unwrap_or(0);
    let times_from = &times[from..];
    let outlet = |values: Vec<f64>, steady_final: Option<f64>| {
        let r = response(times_from, &values[from..], reference);
        let (min, max) = values.iter().zip(&times).fold(((f64::INFINITY, 0.0), (f64::NEG_INFINITY, 0.0)), |(lo, hi), (&v, &t)| {
            (if v < lo.0 { (v, t) } else { lo }, if v > hi.0 { (v, t) } else { hi })
        });
        OutletResponse {
            difference_from_steady_K: steady_final.map(|s| r.final_C - s),
            response: r,
            steady_final_C: steady_final,
            min_C: min.0,
            min_at_s: min.1,
            max_C: max.0,
            max_at_s: max.1,
        }
    };
    let peak = |value: fn(&crate::solve::transient::Sample) -> (f64, f64), signed: bool| {
        let best = run
            .samples
            .iter()
            .map(|s| (value(s), s.time_s))
            .fold(None::<((f64, f64), f64)>, |a, b| match a {
                Some(a) if (if signed { a.0 .0.abs() >= b.0 .0.abs() } else { a.0 .0 >= b.0 .0 }) => Some(a),
                _ => Some(b),
            })
            .expect("at least one sample");
        Peak { value: best.0 .0, at_s: best.1, at_m: best.0 .1 }
    };
    let wall = WallExtremes {
        hottest_C: peak(|s| (s.max_wall_C, s.max_wall_at_m), false),
        fastest_change_K_s: peak(|s| (s.max_wall_rate_K_s, s.max_wall_rate_at_m), true),
        largest_difference_K: peak(|s| (s.max_wall_difference_K, s.max_wall_difference_at_m), true),
    };
    let changes = input_changes(inputs, &run.samples, run.samples.last().map_or(end, |s| s.time_s));
    let (first, last) = (&run.samples[0], run.samples.last().unwrap());
    let stored = (last.fluid_energy_J + last.wall_energy_J) - (first.fluid_energy_J + first.wall_energy_J);
    let closure = last.net_inflow_J - stored;
    Ok(TransientReport {
        case: case_name.to_string(),
        status: if run.stopped.is_some() { "stopped" } else { "completed" },
        stop: run.stopped.clone(),
        storage: None,
        scheme: ex.scheme.as_str(),
        version: crate::results::VERSION,
        input_sha256: None,
        input: None,
        position_label: crate::study::position_label(ex),
        integrator: match settings.integrator {
            Integrator::Explicit => "explicit (Dormand–Prince 5(4))",
            Integrator::Implicit => {
                if ex.arrangement.layout().is_some() {
                    "implicit (variable-step BDF2)"
                } else {
                    "implicit (variable-step BDF, orders 1–3)"
                }
            }
        },
        cells: run.cells,
        duration_s: end,
        initial_state: match settings.initial {
            Initial::Steady => "steady state for the inputs at t = 0".into(),
            Initial::Uniform(t) => format!("uniform {t} °C (fluids and wall)"),
        },
        reference_time_s: reference,
        hot_outlet: outlet(run.samples.iter().map(|s| s.hot_outlet_C).collect(), steady.map(|s| s.0)),
        cold_outlet: outlet(run.samples.iter().map(|s| s.cold_outlet_C).collect(), steady.map(|s| s.1)),
        hot_heat_J: last.hot_heat_J,
        energy_closure_J: closure,
        energy_closure_relative: if last.hot_heat_J != 0.0 { (closure / last.hot_heat_J).abs() } else { 0.0 },
        max_wall_C: wall.hottest_C.value,
        max_wall_rate_K_s: wall.fastest_change_K_s.value,
        wall,
        input_changes: changes,
        stats: run.stats,
        caution: CAUTION,
        faces_m: if network.is_some() { Vec::new() } else { (0..=run.cells).map(|j| j as f64 * ex.length_m / run.cells as f64).collect() },
        network,
        arrangement: ex.arrangement.as_str(),
        samples: run.samples,
        snapshots: run.snapshots,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// First-order lag y = 1 − e^(−t/τ): settling to 63.2 % at τ, 95 % at ≈3τ, 99 % at
    /// ≈4.6τ (definition of the time constant; ln 20 and ln 100).
    #[test]
    fn settling_of_a_first_order_lag() {
        let tau = 10.0;
        let times: Vec<f64> = (0..=20000).map(|k| k as f64 * 0.01).collect();
        let mut values: Vec<f64> = times.iter().map(|t| 1.0 - (-t / tau).exp()).collect();
        *values.last_mut().unwrap() = 1.0; // settled
        let s63 = settling_time(&times, &values, 0.0, 1.0 - (-1.0f64).exp()).unwrap();
        assert!((s63 - tau).abs() < 0.02, "{s63}");
        assert!((settling_time(&times, &values, 0.0, 0.95).unwrap() - tau * 20f64.ln()).abs() < 0.02);
        assert!((settling_time(&times, &values, 0.0, 0.99).unwrap() - tau * 100f64.ln()).abs() < 0.02);
        assert_eq!(overshoot_percent(&values), 0.0);
        let over = [0.0, 1.2, 0.9, 1.0];
        assert!((overshoot_percent(&over) - 20.0).abs() < 1e-12);
    }
}
