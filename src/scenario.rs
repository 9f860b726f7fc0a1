//! A case's transient scenario end to end: simulate, then summarise the response
//! (settling times, overshoot, energy closure, the steady answer for the final conditions).
//! Pure: no I/O.

use crate::model::Exchanger;
use crate::results::CAUTION;
use crate::solve::transient::{simulate, Initial, Inputs, Integrator, TransientError, TransientObserver, TransientSettings};
use crate::solve::{solve_steady, SilentObserver, SteadySettings};

pub use crate::results::transient::{OutletResponse, TransientReport};

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
    let response = |values: Vec<f64>, steady_final: Option<f64>| {
        let v = &values[from..];
        OutletResponse {
            initial_C: v[0],
            final_C: *v.last().unwrap(),
            change_K: v.last().unwrap() - v[0],
            settling_63_s: settling_time(times_from, v, reference, 0.63),
            settling_95_s: settling_time(times_from, v, reference, 0.95),
            settling_99_s: settling_time(times_from, v, reference, 0.99),
            overshoot_percent: overshoot_percent(v),
            steady_final_C: steady_final,
            difference_from_steady_K: steady_final.map(|s| v.last().unwrap() - s),
        }
    };
    let (first, last) = (&run.samples[0], run.samples.last().unwrap());
    let stored = (last.fluid_energy_J + last.wall_energy_J) - (first.fluid_energy_J + first.wall_energy_J);
    let closure = last.net_inflow_J - stored;
    let max_rate = run.samples.iter().map(|s| s.max_wall_rate_K_s).fold(0.0f64, |a, v| if v.abs() > a.abs() { v } else { a });
    Ok(TransientReport {
        case: case_name.to_string(),
        status: if run.stopped.is_some() { "stopped" } else { "completed" },
        stop: run.stopped.clone(),
        storage: None,
        scheme: ex.scheme.as_str(),
        version: crate::results::VERSION,
        input_sha256: None,
        input: None,
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
        hot_outlet: response(run.samples.iter().map(|s| s.hot_outlet_C).collect(), steady.map(|s| s.0)),
        cold_outlet: response(run.samples.iter().map(|s| s.cold_outlet_C).collect(), steady.map(|s| s.1)),
        hot_heat_J: last.hot_heat_J,
        energy_closure_J: closure,
        energy_closure_relative: if last.hot_heat_J != 0.0 { (closure / last.hot_heat_J).abs() } else { 0.0 },
        max_wall_C: run.samples.iter().map(|s| s.max_wall_C).fold(f64::NEG_INFINITY, f64::max),
        max_wall_rate_K_s: max_rate,
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
