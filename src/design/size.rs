//! Sizing: the value of one input (a length, a flow, a whole number of rows or tubes) at
//! which the grid result meets a target duty or outlet temperature. Each evaluation is a
//! complete grid solve of the case file variant, warm-started from the previous one.
//!
//! The search marches from the case's own value towards the target in geometric steps
//! (×4, whole numbers ×2) until the target is bracketed, then runs Brent's method in
//! ln(value) (continuous) or bisects to adjacent whole numbers. A target beyond the value
//! reachable within the search bounds, or beyond where the case stops being valid or
//! solvable, is refused with the reachable limit. The search assumes the target quantity is
//! monotone in the input over the bracket, which holds for duty and outlets against length,
//! area and either flow.

use super::keys::KeyValue;
use super::{evaluate, one_line, PointError, SizeSpec, Source, Target};
use crate::case::Case;
use crate::text::num;
use serde::Serialize;

/// Relative tolerance on a duty target, and absolute on an outlet target (K).
pub const DUTY_TOLERANCE: f64 = 1e-8;
/// Absolute tolerance on an outlet temperature target, K.
pub const OUTLET_TOLERANCE_K: f64 = 1e-6;

/// The tolerance on the target's value.
pub fn target_tolerance(t: &Target) -> f64 {
    match t {
        Target::Duty(g) => DUTY_TOLERANCE * g.abs(),
        _ => OUTLET_TOLERANCE_K,
    }
}

/// A whole-number neighbour of the size found: the next valid size towards missing the
/// target, which misses it.
#[derive(Debug, Clone, Serialize)]
pub struct Neighbour {
    /// The input's value.
    pub value: f64,
    /// The target quantity there.
    pub achieved: f64,
    /// achieved − goal.
    pub achieved_minus_goal: f64,
}

/// The outcome of a sizing.
#[derive(Debug, Clone, Serialize)]
pub struct Sizing {
    /// The target key ("duty_W", "hot_outlet_C", "cold_outlet_C").
    pub target: &'static str,
    /// The value asked for.
    pub goal: f64,
    /// The free input's key.
    pub vary: String,
    /// Its value in the case file.
    pub case_value: f64,
    /// The value found (a whole number: the smallest size that meets the target).
    pub value: f64,
    /// Whether the input takes whole numbers.
    pub whole_number: bool,
    /// The target quantity at the value found.
    pub achieved: f64,
    /// achieved − goal (in the target's unit): the margin at a whole size.
    pub achieved_minus_goal: f64,
    /// The tolerance the continuous search met (target units).
    pub tolerance: f64,
    /// Complete grid solves made.
    pub evaluations: usize,
    /// Newton iterations over all of them.
    pub newton_iterations: usize,
    /// The size next to the one found that does not meet the target (whole numbers only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub next_size_misses: Option<Neighbour>,
    /// Heat-transfer area of the case as given, m².
    pub area_available_m2: f64,
    /// Area at the value found, m².
    pub area_required_m2: f64,
    /// (available / required − 1) × 100; None when the free input does not change the area
    /// (a flow).
    pub overdesign_percent: Option<f64>,
}

/// A target beyond reach: the closest value reached, where, and why the search stopped.
#[derive(Debug, Clone, thiserror::Error)]
#[error("{target} = {goal} {unit} cannot be reached by varying {vary}: the closest reachable is {limit} {unit}{at}{why}")]
pub struct Unreachable {
    /// Target key.
    pub target: &'static str,
    /// Goal as text.
    pub goal: String,
    /// Unit.
    pub unit: &'static str,
    /// The free input.
    pub vary: String,
    /// The reachable limit, as text.
    pub limit: String,
    /// Where it is reached (" at length_m = 1200"), or empty.
    pub at: String,
    /// Why the search could not go further.
    pub why: String,
}

/// Why a sizing stopped without a value.
#[derive(Debug, Clone, thiserror::Error)]
pub enum SizeError {
    /// The target cannot be reached within the bounds or the case's valid range.
    #[error("{0}")]
    Unreachable(Box<Unreachable>),
    /// The target does not change with the input.
    #[error("{target} does not change with {vary} (from {} to {} {unit} between {vary} = {a} and {b}): choose an input that affects it", num(*from), num(*to))]
    Insensitive {
        /// Target key.
        target: &'static str,
        /// Unit.
        unit: &'static str,
        /// The free input.
        vary: String,
        /// Values tried, as text.
        a: String,
        /// Second value tried.
        b: String,
        /// Target there.
        from: f64,
        /// Target at the second.
        to: f64,
    },
    /// An evaluation failed where the case must be valid (at its own value, or inside the
    /// bracket).
    #[error("sizing stopped: with {vary} = {value} the case {what}: {error}{}", if *solver { "" } else { ". Sizing needs a valid case at the values it tries: where only some values are valid (a shell's baffle pitch fixes its length), vary another key (for a shell, geometry.tube_count or geometry.baffle_spacing_m)" })]
    Failed {
        /// The free input.
        vary: String,
        /// Its value, as text.
        value: String,
        /// "is not valid" or "could not be solved".
        what: &'static str,
        /// The error.
        error: String,
        /// Whether it was the solver.
        solver: bool,
    },
}

struct Evaluator<'a> {
    source: &'a Source,
    spec: &'a SizeSpec,
    observer: &'a mut dyn FnMut(f64, f64),
    warm: Option<Vec<nalgebra::Vector3<f64>>>,
    evaluations: usize,
    newton: usize,
}

impl Evaluator<'_> {
    fn value(&self, v: f64) -> KeyValue {
        KeyValue { value: if self.spec.start.whole { v.round() } else { v }, whole: self.spec.start.whole }
    }

    /// (target − goal, area) at `v`.
    fn eval(&mut self, v: f64) -> Result<(f64, f64), PointError> {
        let (case, ex) = self.source.variant_built(&[(&self.spec.vary, self.value(v))]).map_err(|e| PointError::Input(one_line(&e)))?;
        let e = evaluate(&ex, &case.solver, self.warm.as_deref()).map_err(|e| PointError::Solve(one_line(&e)))?;
        self.evaluations += 1;
        self.newton += e.iterations;
        let (used, achieved) = (self.value(v).value, self.spec.target.of(&e.q));
        (self.observer)(used, achieved);
        if !e.unknowns.is_empty() {
            self.warm = Some(e.unknowns);
        }
        Ok((self.spec.target.of(&e.q) - self.spec.target.goal(), e.area_m2))
    }

    /// (value used, target − goal) at `v` or, for a whole number that makes an invalid case
    /// (tubes that do not divide into the passes), at the nearest valid whole number within
    /// [lo, hi] (at most 16 away). Continuous values are evaluated as given.
    fn eval_near(&mut self, v: f64, lo: f64, hi: f64) -> Result<(f64, f64), PointError> {
        if !self.spec.start.whole {
            return self.eval(v).map(|r| (v, r.0));
        }
        let (lo, hi) = (lo.min(hi), lo.max(hi));
        let mut first: Option<PointError> = None;
        for k in 0..=32_u32 {
            let offset = if k % 2 == 0 { (k / 2) as f64 } else { -(k.div_ceil(2) as f64) };
            let c = (v + offset).round();
            if c < lo || c > hi || c < 1.0 {
                continue;
            }
            match self.eval(c) {
                Ok((g, _)) => return Ok((c, g)),
                Err(e @ PointError::Input(_)) => {
                    first.get_or_insert(e);
                }
                Err(e) => return Err(e),
            }
        }
        Err(first.unwrap_or_else(|| PointError::Input(format!("no valid whole value of {} between {} and {}", self.spec.vary, num(lo), num(hi)))))
    }
}

fn failed(vary: &str, v: f64, e: PointError) -> SizeError {
    let (what, solver) = match e {
        PointError::Input(_) => ("is not valid", false),
        PointError::Solve(_) => ("could not be solved", true),
    };
    SizeError::Failed { vary: vary.to_string(), value: num(v), what, error: e.to_string(), solver }
}

/// Size the case: find the value of `spec.vary` at which the target is met. Returns the
/// outcome and the sized case (to rate and write in full).
pub fn size(source: &Source, spec: &SizeSpec) -> Result<(Sizing, Case), SizeError> {
    size_observed(source, spec, &mut |_, _| {})
}

/// [`size`], telling `observer` each value tried and the target quantity it gave.
pub fn size_observed(source: &Source, spec: &SizeSpec, observer: &mut dyn FnMut(f64, f64)) -> Result<(Sizing, Case), SizeError> {
    let mut ev = Evaluator { source, spec, observer, warm: None, evaluations: 0, newton: 0 };
    let whole = spec.start.whole;
    let t = spec.target;
    let tol = target_tolerance(&t);
    let v0 = spec.start.value;
    let (g0, area0) = ev.eval(v0).map_err(|e| failed(&spec.vary, v0, e))?;
    // The target's closest reachable value, where it is reached (None: at no finite value),
    // and why the search could not go further.
    let unreachable = |limit: f64, at: Option<f64>, why: String| {
        SizeError::Unreachable(Box::new(Unreachable {
            target: t.key(),
            goal: num(t.goal()),
            unit: t.unit(),
            vary: spec.vary.clone(),
            limit: num(limit),
            at: at.map(|v| format!(" at {} = {}", spec.vary, num(v))).unwrap_or_default(),
            why,
        }))
    };
    // A duty at or above C_min (T_h,in − T_c,in) is out of reach of any size (a flow or an
    // inlet changes that limit: then the search finds the limit itself).
    if let Target::Duty(goal) = t {
        let max = source.variant_built(&[(&spec.vary, spec.start)]).map(|(_, ex)| ex.max_duty_w()).unwrap_or(f64::INFINITY);
        let stream_key = spec.vary.starts_with("hot.") || spec.vary.starts_with("cold.");
        if !stream_key && goal >= max {
            return Err(unreachable(
                max,
                None,
                ", the thermodynamic maximum C_min (T_h,in − T_c,in), which a larger exchanger approaches but never reaches".into(),
            ));
        }
    }
    let (a, b) = if g0.abs() <= tol && !whole {
        ((v0, g0), (v0, g0))
    } else {
        // The slope's sign from a small step inside the bounds.
        let step = if whole { 1.0 } else { 0.25 * v0 };
        let v1 = if v0 + step <= spec.highest { v0 + step } else { (v0 - step).max(spec.lowest) };
        let (lo1, hi1) = if v1 > v0 { (v1, spec.highest) } else { (spec.lowest, v1) };
        let (v1, g1) = ev.eval_near(v1, lo1, hi1).map_err(|e| failed(&spec.vary, v1, e))?;
        if (g1 - g0).abs() <= 1e-3 * tol || v1 == v0 {
            return Err(SizeError::Insensitive {
                target: t.key(),
                unit: t.unit(),
                vary: spec.vary.clone(),
                a: num(v0),
                b: num(v1),
                from: g0 + t.goal(),
                to: g1 + t.goal(),
            });
        }
        let rising = (g1 - g0) * (v1 - v0) > 0.0;
        let up = (g0 < 0.0) == rising;
        let factor = if whole { 2.0 } else { 4.0 };
        let bound = if up { spec.highest } else { spec.lowest };
        let next_of = |v: f64| {
            let n = if up { v * factor } else { v / factor };
            let n = if whole {
                if up {
                    n.round().max(v + 1.0)
                } else {
                    n.round().min(v - 1.0)
                }
            } else {
                n
            };
            if up {
                n.min(bound)
            } else {
                n.max(bound)
            }
        };
        let mut last = (v0, g0);
        loop {
            if last.0 == bound {
                let side = if up { "highest" } else { "lowest" };
                return Err(unreachable(last.1 + t.goal(), Some(last.0), format!(" (the search bound size.{side}; widen it if a larger range is meaningful)")));
            }
            let next = next_of(last.0);
            let (lo_n, hi_n) = if up { (last.0 + 1.0, bound) } else { (bound, last.0 - 1.0) };
            match ev.eval_near(next, lo_n, hi_n) {
                Ok((next, g)) if g.signum() != last.1.signum() || g == 0.0 => break (last, (next, g)),
                Ok((next, g)) => last = (next, g),
                Err(e) => {
                    // Find how far the case stays valid and solvable, then decide.
                    // The reason given is the one at the first failing value: nearer values
                    // may fail for a lesser reason (an odd tube count) on the way.
                    let (mut good, mut bad) = (last, next);
                    let reason = e.to_string();
                    for _ in 0..8 {
                        let mid = if whole { ((good.0 + bad) / 2.0).round() } else { (good.0 * bad).sqrt() };
                        if mid == good.0 || mid == bad {
                            break;
                        }
                        let inside = if whole { (good.0.min(bad) + 1.0, good.0.max(bad) - 1.0) } else { (mid, mid) };
                        match ev.eval_near(mid, inside.0, inside.1) {
                            Ok((mid, g)) if g.signum() != good.1.signum() => return finish(&mut ev, spec, (good, (mid, g)), v0, area0),
                            Ok((mid, g)) => good = (mid, g),
                            Err(_) => bad = mid,
                        }
                    }
                    return Err(unreachable(good.1 + t.goal(), Some(good.0), format!(" (with {} = {} the case fails: {reason})", spec.vary, num(next))));
                }
            }
        }
    };
    finish(&mut ev, spec, (a, b), v0, area0)
}

/// From a bracket to the value, then the outcome.
fn finish(ev: &mut Evaluator, spec: &SizeSpec, (a, b): ((f64, f64), (f64, f64)), v0: f64, area0: f64) -> Result<(Sizing, Case), SizeError> {
    let t = spec.target;
    let tol = target_tolerance(&t);
    let whole = spec.start.whole;
    let (value, g, neighbour) = if whole {
        // Adjacent whole numbers, one meeting the target.
        let goal = t.goal();
        let (mut a, mut b) = (a, b);
        while (b.0 - a.0).abs() > 1.0 {
            let mid = ((a.0 + b.0) / 2.0).round();
            let (lo, hi) = (a.0.min(b.0) + 1.0, a.0.max(b.0) - 1.0);
            let (mid, g) = match ev.eval_near(mid, lo, hi) {
                Ok(r) => r,
                // No valid size strictly between: a and b are neighbouring valid sizes.
                Err(PointError::Input(_)) => break,
                Err(e) => return Err(failed(&spec.vary, mid, e)),
            };
            if t.met(g + goal) == t.met(a.1 + goal) {
                a = (mid, g);
            } else {
                b = (mid, g);
            }
        }
        let (hit, miss) = if t.met(a.1 + goal) { (a, b) } else { (b, a) };
        let neighbour = Neighbour { value: miss.0, achieved: miss.1 + goal, achieved_minus_goal: miss.1 };
        (hit.0, hit.1, Some(neighbour))
    } else if a.0 == b.0 {
        (a.0, a.1, None)
    } else {
        let (u, g, _) = super::root::brent(|u: f64| ev.eval(u.exp()).map(|r| r.0).map_err(|e| (u.exp(), e)), (a.0.ln(), a.1), (b.0.ln(), b.1), 1e-12, tol, 100)
            .map_err(|(v, e)| failed(&spec.vary, v, e))?;
        (u.exp(), g, None)
    };
    // The sized case and its area, from one validation and build.
    let (case, ex) = ev.source.variant_built(&[(&spec.vary, ev.value(value))]).map_err(|e| failed(&spec.vary, value, PointError::Input(one_line(&e))))?;
    let area_required = ex.reference_area_per_length_m * ex.length_m;
    let overdesign = ((area0 - area_required).abs() > 1e-12 * area0.abs()).then(|| (area0 / area_required - 1.0) * 100.0);
    Ok((
        Sizing {
            target: t.key(),
            goal: t.goal(),
            vary: spec.vary.clone(),
            case_value: v0,
            value: ev.value(value).value,
            whole_number: whole,
            achieved: g + t.goal(),
            achieved_minus_goal: g,
            tolerance: tol,
            evaluations: ev.evaluations,
            newton_iterations: ev.newton,
            next_size_misses: neighbour,
            area_available_m2: area0,
            area_required_m2: area_required,
            overdesign_percent: overdesign,
        },
        case,
    ))
}
