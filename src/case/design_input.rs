//! Validation of the study tables `[size]`, `[sweep]` and `[uncertainty]`. The keys they
//! vary are looked up in the case file's own text (see [`crate::design::keys`]).

use super::file::*;
use super::problem::*;
use crate::design::keys::{lookup, KeyValue};
use crate::design::{Combine, DesignSpec, SizeSpec, SweepInput, SweepSpec, Target, UncertaintySpec};
use crate::text::{num, quote};

/// Most samples of an uncertainty run.
pub const SAMPLES_MAX: i64 = 100_000;

fn key_of(c: &mut Checker, key: &str, text: &str, given: &str) -> Option<KeyValue> {
    match lookup(text, given) {
        Ok(v) => Some(v),
        Err(why) => {
            c.fail(key, format!("{} {why}", quote(given, 60)));
            None
        }
    }
}

pub(super) fn design(c: &mut Checker, f: &CaseFile, text: &str) -> DesignSpec {
    DesignSpec {
        size: f.size.as_ref().and_then(|s| size(c, s, f, text)),
        sweep: f.sweep.as_ref().and_then(|s| sweep(c, s, text)),
        uncertainty: f.uncertainty.as_ref().map(|u| uncertainty(c, u)),
    }
}

fn size(c: &mut Checker, s: &SizeFile, f: &CaseFile, text: &str) -> Option<SizeSpec> {
    let targets: Vec<Target> =
        [s.duty_W.map(Target::Duty), s.hot_outlet_C.map(Target::HotOutlet), s.cold_outlet_C.map(Target::ColdOutlet)].into_iter().flatten().collect();
    let target = match targets.as_slice() {
        [t] => *t,
        [] => {
            c.fail("size", "is missing: give one target, duty_W, hot_outlet_C or cold_outlet_C".into());
            return None;
        }
        _ => {
            c.fail("size", format!("has {} targets: give exactly one of duty_W, hot_outlet_C, cold_outlet_C", targets.len()));
            return None;
        }
    };
    let key = format!("size.{}", target.key());
    let goal = target.goal();
    let (th, tc) = (f.hot.inlet_temperature_C, f.cold.inlet_temperature_C);
    // Limits no exchanger passes (second law), unless an inlet itself is the free input.
    let inlet_free = s.vary.ends_with("inlet_temperature_C");
    match target {
        _ if !goal.is_finite() => c.fail(&key, format!("{} is not a finite number", num(goal))),
        Target::Duty(q) if q <= 0.0 => c.fail(&key, format!("{} W is not valid: give a positive duty", num(q))),
        Target::HotOutlet(t) | Target::ColdOutlet(t) if !(inlet_free || (tc < t && t < th)) => c.fail(
            &key,
            format!(
                "{} °C is outside the inlet span {} … {} °C: no exchanger takes either stream beyond the other's inlet (second law); the reachable outlets lie strictly between the inlets",
                num(t),
                num(tc),
                num(th)
            ),
        ),
        _ => {}
    }
    let start = key_of(c, "size.vary", text, &s.vary)?;
    if !(start.value.is_finite() && start.value > 0.0) {
        c.fail(
            "size.vary",
            format!("{} = {} in the case: the free input must be a positive number (sizing searches by factors of it)", quote(&s.vary, 60), num(start.value)),
        );
        return None;
    }
    let lowest = s.lowest.unwrap_or(if start.whole { 1.0 } else { start.value / 100.0 });
    let highest = s.highest.unwrap_or(start.value * 100.0);
    for (k, v) in [("size.lowest", lowest), ("size.highest", highest)] {
        if !(v.is_finite() && v > 0.0) {
            c.fail(k, format!("{} is not valid: give a positive value in the unit of {}", num(v), s.vary));
            return None;
        }
    }
    if !(lowest <= start.value && start.value <= highest) {
        c.fail(
            "size.lowest",
            format!(
                "the search range {} … {} does not contain the case's own {} = {}: the search starts there",
                num(lowest),
                num(highest),
                s.vary,
                num(start.value)
            ),
        );
        return None;
    }
    Some(SizeSpec { target, vary: s.vary.clone(), start, lowest, highest })
}

fn sweep(c: &mut Checker, s: &SweepFile, text: &str) -> Option<SweepSpec> {
    let combine = match s.combine {
        None | Some(SweepCombine::Factorial) => Combine::Factorial,
        Some(SweepCombine::Paired) => Combine::Paired,
    };
    if s.inputs.is_empty() {
        c.fail("sweep.inputs", "is missing: add one [[sweep.inputs]] table per swept input (key, and values or start/stop/count)".into());
        return None;
    }
    let mut inputs = Vec::new();
    for (i, input) in s.inputs.iter().enumerate() {
        let at = |k: &str| format!("sweep.inputs[{i}].{k}");
        let Some(kv) = key_of(c, &at("key"), text, &input.key) else { continue };
        if inputs.iter().any(|x: &SweepInput| x.key == input.key) {
            c.fail(&at("key"), format!("{} is swept twice: give each key once", quote(&input.key, 60)));
            continue;
        }
        let values = match (&input.values, input.start, input.stop, input.count) {
            (Some(v), None, None, None) => v.clone(),
            (None, Some(a), Some(b), Some(n)) => {
                if !(2..=100_000).contains(&n) {
                    c.fail(&at("count"), format!("{n} is not valid: use a whole number from 2 to 100 000"));
                    continue;
                }
                (0..n)
                    .map(|k| {
                        // To 12 significant digits: 0.04, not 0.039999999999999994.
                        let v = a + (b - a) * k as f64 / (n - 1) as f64;
                        format!("{v:.11e}").parse().unwrap_or(v)
                    })
                    .collect()
            }
            _ => {
                c.fail(&at("values"), "give either values = [...] or all of start, stop and count".into());
                continue;
            }
        };
        if values.is_empty() {
            c.fail(&at("values"), "is empty: give at least one value".into());
            continue;
        }
        if let Some(bad) = values.iter().find(|v| !v.is_finite()) {
            c.fail(&at("values"), format!("{} is not a finite number", num(*bad)));
            continue;
        }
        if kv.whole {
            if let Some(bad) = values.iter().find(|v| v.fract() != 0.0) {
                c.fail(
                    &at("values"),
                    format!(
                        "{} is not a whole number, and {} takes whole numbers: choose whole values (or a start/stop/count that gives them)",
                        num(*bad),
                        input.key
                    ),
                );
                continue;
            }
        }
        inputs.push(SweepInput { key: input.key.clone(), values, whole: kv.whole });
    }
    if inputs.len() != s.inputs.len() {
        return None;
    }
    if combine == Combine::Paired {
        let n = inputs[0].values.len();
        if let Some((i, other)) = inputs.iter().enumerate().find(|(_, x)| x.values.len() != n) {
            c.fail(
                &format!("sweep.inputs[{i}].values"),
                format!("has {} values but sweep.inputs[0] has {n}: paired inputs need equally many values (or combine = \"factorial\")", other.values.len()),
            );
            return None;
        }
    }
    let spec = SweepSpec { combine, inputs };
    let points: f64 = match combine {
        Combine::Factorial => spec.inputs.iter().map(|i| i.values.len() as f64).product(),
        Combine::Paired => spec.inputs[0].values.len() as f64,
    };
    if points > crate::design::sweep::MAX_POINTS as f64 {
        c.fail("sweep", format!("has {} points: at most {} (fewer values, or paired inputs)", num(points), crate::design::sweep::MAX_POINTS));
        return None;
    }
    Some(spec)
}

fn uncertainty(c: &mut Checker, u: &UncertaintyFile) -> UncertaintySpec {
    let samples = u.samples.unwrap_or(200);
    if !(10..=SAMPLES_MAX).contains(&samples) {
        c.fail("uncertainty.samples", format!("{samples} is not valid: use a whole number from 10 to {SAMPLES_MAX}"));
    }
    let seed = u.seed.unwrap_or(1);
    if seed < 0 {
        c.fail("uncertainty.seed", format!("{seed} is not valid: use a whole number ≥ 0"));
    }
    let mut pct = |key: &str, v: Option<f64>, max: f64, unit: &str| {
        if let Some(x) = v {
            if !(x.is_finite() && (0.0..max).contains(&x)) {
                c.fail(&format!("uncertainty.{key}"), format!("{} {unit} is not valid: give a ± half-width from 0 up to {}", num(x), num(max)));
            }
        }
        v
    };
    UncertaintySpec {
        samples: samples.clamp(10, SAMPLES_MAX) as usize,
        seed: seed.max(0) as u64,
        film_percent: [pct("hot_film_percent", u.hot_film_percent, 100.0, "%"), pct("cold_film_percent", u.cold_film_percent, 100.0, "%")],
        fouling_percent: [pct("hot_fouling_percent", u.hot_fouling_percent, 100.0, "%"), pct("cold_fouling_percent", u.cold_fouling_percent, 100.0, "%")],
        mass_flow_percent: [
            pct("hot_mass_flow_percent", u.hot_mass_flow_percent, 100.0, "%"),
            pct("cold_mass_flow_percent", u.cold_mass_flow_percent, 100.0, "%"),
        ],
        inlet_k: [
            pct("hot_inlet_temperature_K", u.hot_inlet_temperature_K, 100.0, "K"),
            pct("cold_inlet_temperature_K", u.cold_inlet_temperature_K, 100.0, "K"),
        ],
    }
}
