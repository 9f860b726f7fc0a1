//! The implicit integrator: variable-step BDF of order 1 to 3 (backward Euler first, then
//! BDF2, then BDF3), its coefficients computed on the actual steps, with modified Newton on
//! the steady solver's Jacobian plus storage.
//!
//! Cost per step is kept down four ways:
//! - Steps are never shortened for output times: outputs come from the integrator's own
//!   interpolant (the polynomial through the last points, the one BDF is built on), so a
//!   settled run takes long steps however often it is sampled. Only input breakpoints
//!   (where a schedule has a kink or a jump) end a step.
//! - Order 3 once four points exist: for the same time-integration error it takes about
//!   half the steps of BDF2 (benches/README.md). Steps grow at most 1.5× per step at order 3
//!   (2× below), inside the range where variable-step BDF3 stays zero-stable.
//! - Modified Newton: the Jacobian and the factorised Newton matrix M = storage − b·h·J are
//!   kept over iterations and steps. M is refactorised when b·h has moved more than 30 %
//!   from the value it was built for (the rule of common BDF codes, e.g. CVODE), the
//!   Jacobian is re-evaluated every 20 steps, and both are refreshed at once when Newton
//!   converges slowly (rate above 0.9, or more than six iterations). Newton stops on its
//!   estimated remaining error (the update times rate/(1 − rate), the rate carried from
//!   the previous iterations with the same matrix).
//! - Work buffers live in the integrator; the exchanger for the inputs at the new time is
//!   built once per step, not per right-hand side; each face's enthalpy is evaluated once
//!   per iteration.

use super::model::*;
use super::*;
use crate::solve::steady::{jacobian, Jacobian};
use crate::solve::BlockBanded;
use nalgebra::{DVector, Vector3};

/// Refactorise when b·h differs from the factorised value by more than this fraction.
const REFACTOR_RATIO: f64 = 0.3;
/// Steps after which the Jacobian is evaluated afresh even while Newton converges.
const JACOBIAN_AGE: usize = 20;
/// Newton iterations before a step counts as not converging.
const MAX_NEWTON: usize = 6;
/// Newton stops when its estimated remaining error is below this fraction of the error
/// tolerance (measured: 0.001 to 0.05 give the same outlets to 1e-5 K; 0.01 costs 2.0
/// iterations per step on the cold-start benchmark).
const NEWTON_FRACTION: f64 = 0.01;
/// Highest BDF order. Order 3 (A(86°)-stable) took half the steps of order 2 for the same
/// time error on the cold-start benchmark; order 4 (A(73°)) gained little more, with more
/// rejections, and its stability wedge is narrower for advection (benches/README.md).
const MAX_ORDER: usize = 3;

/// One stored point: time, temperatures (the unknowns), full state (enthalpies, wall, the
/// two integrals).
type Point = (f64, Vec<Vector3<f64>>, DVector<f64>);

/// Variable-step BDF state.
pub(super) struct Bdf {
    pub(super) t: f64,
    pub(super) h: f64,
    /// The last up to MAX_ORDER + 1 points (coefficients, predictor and dense output); the
    /// last is the current one.
    hist: Vec<Point>,
    /// Temperature rates at t = 0 (K/s): the first step's predictor is explicit Euler, so
    /// its difference from backward Euler estimates the local error (h²y''/2), not the
    /// change itself (which made a cold start begin with needlessly tiny steps).
    rate0: Vec<Vector3<f64>>,
    jac: Option<Jacobian>,
    /// Steps since the Jacobian was evaluated.
    jac_age: usize,
    /// Factorised Newton matrix and the b·h it was built for.
    newton: Option<(BlockBanded, f64)>,
    /// Work buffers: rates, Newton right-hand side, the history combination.
    r: Vec<Vector3<f64>>,
    g: Vec<Vector3<f64>>,
    combined: DVector<f64>,
    work: Work,
    unknown_h: Vec<[f64; 2]>,
    /// (net inflow, hot duty), W, at the last rates evaluated.
    inflow: (f64, f64),
    /// Newton's last measured convergence rate with the current matrix (1: unknown).
    rate: f64,
    /// J·Δ of the accepted step's last Newton update.
    correction: Vec<Vector3<f64>>,
}

impl Bdf {
    pub(super) fn new(model: &Model, y0: &DVector<f64>, settings: &TransientSettings) -> Self {
        let n = model.n;
        let x0 = model.temperatures(y0);
        let e0 = model.inputs.apply(model.ex, 0.0);
        let mut r = vec![Vector3::zeros(); n];
        model.rates(&e0, &model.grid(&e0), &x0, &mut r, &mut Work::default(), &mut vec![[0.0; 2]; n]);
        let rate0: Vec<Vector3<f64>> = (0..n)
            .map(|i| {
                Vector3::new(
                    r[i][0] / (model.mass[0][i] * model.ex.hot.fluid.props(x0[i][0]).cp),
                    r[i][1] / (model.mass[1][i] * model.ex.cold.fluid.props(x0[i][1]).cp),
                    r[i][2] / model.wall_capacity,
                )
            })
            .collect();
        // First step: the explicit-Euler change of the fastest unknown about one tolerance
        // (backward Euler's local error is then a fraction of it); a hundredth of the run
        // where nothing moves at t = 0. Independent of the output interval.
        let fastest = rate0
            .iter()
            .zip(&x0)
            .map(|(r, x): (&Vector3<f64>, &Vector3<f64>)| (0..3).map(|c| r[c].abs() / (settings.atol_k + settings.rtol * x[c].abs())).fold(0.0, f64::max))
            .fold(0.0, f64::max);
        let most = 0.01 * settings.duration_s.max(1e-9);
        let h0 = if fastest > 0.0 { (1.0 / fastest).min(most) } else { most };
        Self {
            t: 0.0,
            h: h0,
            hist: vec![(0.0, x0, y0.clone())],
            rate0,
            jac: None,
            jac_age: 0,
            newton: None,
            r: vec![Vector3::zeros(); n],
            g: vec![Vector3::zeros(); n],
            combined: DVector::zeros(model.len()),
            work: Work::default(),
            unknown_h: vec![[0.0; 2]; n],
            inflow: (0.0, 0.0),
            rate: 1.0,
            correction: vec![Vector3::zeros(); n],
        }
    }

    /// Take one accepted step towards `stop` (not past it).
    pub(super) fn step(&mut self, model: &Model, stop: f64, settings: &TransientSettings, stats: &mut Stats) -> Result<(), TransientError> {
        let (mut t, mut h) = (self.t, self.h);
        step_once(&mut t, &mut h, stop, settings, stats, |step, stats| self.try_step(model, step, settings, stats))?;
        self.t = t;
        self.h = h;
        Ok(())
    }

    /// The cell with the largest difference through the wall at the last right-hand side
    /// (the accepted step's final Newton iterate) and that difference, K (signed).
    pub(super) fn wall_difference(&self) -> (usize, f64) {
        signed_largest(&self.work.across)
    }

    /// Dense output at `t` within the last step: the state, its temperatures and the fastest
    /// wall rate (K/s, signed), from the polynomial through the stored points.
    pub(super) fn dense(&self, model: &Model, t: f64) -> (DVector<f64>, Vec<Vector3<f64>>, (usize, f64)) {
        let times: Vec<f64> = self.hist.iter().map(|p| p.0).collect();
        let (w, dw) = (lagrange_weights(&times, t), lagrange_derivative_weights(&times, t));
        let n = model.n;
        let mut y = DVector::zeros(model.len());
        let mut x = vec![Vector3::zeros(); n];
        for (p, &wj) in self.hist.iter().zip(&w) {
            y.axpy(wj, &p.2, 1.0);
            for (xi, pi) in x.iter_mut().zip(&p.1) {
                *xi += pi * wj;
            }
        }
        let rates: Vec<f64> = (0..n).map(|i| self.hist.iter().zip(&dw).map(|(p, d)| p.2[2 * n + i] * d).sum()).collect();
        (y, x, signed_largest(&rates))
    }

    /// Evaluate the Jacobian (if missing or old) and factorise the Newton matrix (if b·h has
    /// moved or the Jacobian is new) at temperatures `x`. Err(()) if the matrix is singular.
    fn prepare(
        &mut self,
        model: &Model,
        e: &crate::model::Exchanger,
        grid: &crate::model::Grid,
        x: &[Vector3<f64>],
        bh: f64,
        stats: &mut Stats,
    ) -> Result<(), ()> {
        let n = model.n;
        let mut stale = match &self.newton {
            Some((_, bh0)) => (bh / bh0 - 1.0).abs() > REFACTOR_RATIO,
            None => true,
        };
        if self.jac.is_none() || self.jac_age >= JACOBIAN_AGE {
            let mut j = self.jac.take().unwrap_or_else(|| Jacobian::for_grid(grid));
            jacobian(e, grid, model.dx, x, &mut j);
            stats.jacobian_evaluations += 1;
            self.jac = Some(j);
            self.jac_age = 0;
            stale = true;
        }
        if !stale {
            return Ok(());
        }
        let jac = &self.jac.as_ref().expect("evaluated above").0;
        let mut m = self.newton.take().map(|(m, _)| m).unwrap_or_else(|| BlockBanded::zeros(n, jac.reach()));
        m.assign_scaled(jac, -bh);
        // Storage on each cell's unknown; S flips the cold row so the Jacobian is the steady one.
        for (i, xi) in x.iter().enumerate() {
            let d = m.block_mut(i, 0);
            d[(0, 0)] += model.mass[0][i] * model.ex.hot.fluid.props(xi[0]).cp;
            d[(1, 1)] -= model.mass[1][i] * model.ex.cold.fluid.props(xi[1]).cp;
            d[(2, 2)] += model.wall_capacity;
        }
        stats.factorisations += 1;
        self.rate = 1.0;
        m.factor().map_err(|_| ())?;
        self.newton = Some((m, bh));
        Ok(())
    }

    /// Modified Newton from `x` (updated in place): true if it converged.
    #[allow(clippy::too_many_arguments)]
    fn iterate(
        &mut self,
        model: &Model,
        e: &crate::model::Exchanger,
        grid: &crate::model::Grid,
        x: &mut [Vector3<f64>],
        bh: f64,
        tol: f64,
        stats: &mut Stats,
    ) -> bool {
        let n = model.n;
        let Some((m, _)) = &self.newton else { return false };
        let hist = &self.combined;
        let mut previous = f64::INFINITY;
        for k in 0..MAX_NEWTON {
            stats.newton_iterations += 1;
            stats.rhs_evaluations += 1;
            self.inflow = model.rates(e, grid, x, &mut self.r, &mut self.work, &mut self.unknown_h);
            // G = S·storage − b h rates.
            for i in 0..n {
                let (r, h) = (self.r[i], self.unknown_h[i]);
                self.g[i] = Vector3::new(
                    model.mass[0][i] * (h[0] - hist[i]) - bh * r[0],
                    -(model.mass[1][i] * (h[1] - hist[n + i]) - bh * r[1]),
                    model.wall_capacity * (x[i][2] - hist[2 * n + i]) - bh * r[2],
                );
            }
            if m.solve_factored(&mut self.g).is_err() {
                return false;
            }
            let mut delta = 0.0f64;
            for (xi, gi) in x.iter_mut().zip(&self.g) {
                *xi -= gi;
                delta = delta.max(gi.abs().max());
            }
            if !delta.is_finite() {
                return false;
            }
            if delta < tol {
                return true;
            }
            if k > 0 {
                let rate = delta / previous;
                if rate >= 0.9 {
                    return false;
                }
                self.rate = rate;
            }
            // The error left after this update, from the convergence rate (this step's, or
            // the last measured with the same matrix for the first iteration).
            if self.rate < 1.0 && delta * self.rate / (1.0 - self.rate) < tol {
                return true;
            }
            previous = delta;
        }
        false
    }

    /// One step of length `h`: Ok(next step) if accepted, Err(next step) if rejected.
    fn try_step(&mut self, model: &Model, h: f64, settings: &TransientSettings, stats: &mut Stats) -> Result<Result<f64, f64>, TransientError> {
        let n = model.n;
        let t1 = self.t + h;
        // BDF-k coefficients on the actual (variable) steps: the polynomial through the new
        // point and the last k points has derivative f(y1) at t1, Σ_j α_j y_j = f(y1), so
        // y1 = Σ_{j≥1} (−α_j/α_0) y_j + (1/α_0) f(y1). k = 1 is backward Euler, the first step.
        let order = MAX_ORDER.min(self.hist.len());
        let mut ts = vec![t1];
        ts.extend(self.hist.iter().rev().take(order).map(|p| p.0));
        let alpha = lagrange_derivative_weights(&ts, t1);
        let bh = 1.0 / alpha[0];
        self.combined.fill(0.0);
        for (p, a) in self.hist.iter().rev().take(order).zip(&alpha[1..]) {
            self.combined.axpy(-a / alpha[0], &p.2, 1.0);
        }
        // Predictor: the polynomial through the last k + 1 points (explicit Euler first).
        let predictor_points = (order + 1).min(self.hist.len());
        let predicted = if self.hist.len() == 1 {
            self.hist[0].1.iter().zip(&self.rate0).map(|(x, r)| x + r * h).collect()
        } else {
            extrapolate(&self.hist[self.hist.len() - predictor_points..], t1)
        };
        let e1 = model.inputs.apply(model.ex, t1);
        let grid = model.grid(&e1);
        // Newton stops well inside the error tolerance, and above the round-off of the
        // enthalpy differences (about 1e-13 of the temperatures).
        let t_scale = predicted.iter().map(|v| v.abs().max()).fold(1.0, f64::max);
        let tol = (NEWTON_FRACTION * (settings.atol_k + settings.rtol * t_scale)).max(1e-12 * t_scale);
        let mut x = predicted.clone();
        let mut converged = false;
        for attempt in 0..2 {
            if attempt > 0 {
                // Slow with an old Jacobian or factorisation: refresh both and retry.
                if self.jac_age == 0 && self.newton.as_ref().is_some_and(|(_, b0)| *b0 == bh) {
                    break;
                }
                self.jac = None;
                x.copy_from_slice(&predicted);
            }
            if self.prepare(model, &e1, &grid, &x, bh, stats).is_err() {
                self.jac = None;
                self.newton = None;
                return Ok(Err(h * 0.5));
            }
            if self.iterate(model, &e1, &grid, &mut x, bh, tol, stats) {
                converged = true;
                break;
            }
        }
        if !converged {
            self.jac = None;
            self.newton = None;
            return Ok(Err(h * 0.5));
        }
        // Error estimate from the predictor–corrector difference (Milne's device).
        // LTE ≈ c/(1 + c)·(x − predicted), c = β/(k + 1) the error constant of BDF-k with
        // β = b·h/h (2/11 for constant-step BDF2, 3/25 for BDF3); with a predictor of lower
        // order than the method (the first steps), ½ of the difference (an overestimate).
        let constant = if predictor_points == order + 1 && self.hist.len() > 1 {
            let c = bh / h / (order as f64 + 1.0);
            c / (1.0 + c)
        } else {
            0.5
        };
        let (mut err, mut local_k) = (0.0f64, 0.0f64);
        for i in 0..n {
            for c in 0..3 {
                let e = (x[i][c] - predicted[i][c]).abs() * constant;
                local_k = local_k.max(e);
                err = err.max(e / (settings.atol_k + settings.rtol * x[i][c].abs()));
            }
        }
        if err > 1.0 {
            return Ok(Err(h * (0.9 * err.powf(-1.0 / (order as f64 + 1.0))).clamp(0.1, 0.5)));
        }
        stats.largest_local_error_k = stats.largest_local_error_k.max(local_k);
        stats.accumulated_local_error_k += local_k;
        // Accept. Every state, the two integrals included, is advanced by the BDF formula
        // y1 = combined + b·h·f from the rates of the last Newton iterate x_k, carried to the
        // accepted x_k+1 = x_k − Δ to first order with the Jacobian (f(x_k+1) ≈ f(x_k) − S·J·Δ).
        // The cells' rates sum to the net inflow at every state, so the columns of J sum to
        // its derivative, and the stored energy changes by exactly b·h times the inflow used
        // for the integral: energy closure is exact to round-off whatever Newton's remaining
        // error, and y1 agrees with h(x_k+1) to second order in Δ.
        self.jac.as_ref().expect("a Jacobian after Newton").0.mul_vec(&self.g, &mut self.correction);
        let (mut net, hot) = self.inflow;
        let mut y1 = self.combined.clone();
        for i in 0..n {
            let (r, c) = (self.r[i], self.correction[i]);
            let rate = Vector3::new(r[0] - c[0], r[1] + c[1], r[2] - c[2]);
            net += -c[0] + c[1] - c[2];
            y1[i] += bh * rate[0] / model.mass[0][i];
            y1[n + i] += bh * rate[1] / model.mass[1][i];
            y1[2 * n + i] += bh * rate[2] / model.wall_capacity;
        }
        // (The hot duty integral, not part of the closure, is taken at x_k: off by O(Δ).)
        y1[3 * n] += bh * net;
        y1[3 * n + 1] += bh * hot;
        self.t = t1;
        self.hist.push((t1, x, y1));
        if self.hist.len() > MAX_ORDER + 1 {
            self.hist.remove(0);
        }
        self.jac_age += 1;
        let most = if order >= 3 { 1.5 } else { 2.0 };
        let grow = if err > 0.0 { (0.9 * err.powf(-1.0 / (order as f64 + 1.0))).clamp(0.2, most) } else { most };
        Ok(Ok(h * grow))
    }
}

/// Lagrange extrapolation of the stored temperature profiles to time `t`.
fn extrapolate(hist: &[Point], t: f64) -> Vec<Vector3<f64>> {
    let weights = lagrange_weights(&hist.iter().map(|h| h.0).collect::<Vec<_>>(), t);
    let n = hist[0].1.len();
    (0..n).map(|i| hist.iter().zip(&weights).fold(Vector3::zeros(), |acc, (p, w)| acc + p.1[i] * *w)).collect()
}

/// [`extrapolate`] for flat state vectors.
pub(super) fn extrapolate_flat(hist: &[(f64, Vec<f64>)], t: f64) -> Vec<f64> {
    let k = hist.len();
    let weights = lagrange_weights(&hist.iter().map(|h| h.0).collect::<Vec<_>>(), t);
    let n = hist[0].1.len();
    (0..n).map(|i| (0..k).map(|j| hist[j].1[i] * weights[j]).sum()).collect()
}

/// Weights of the Lagrange polynomial through the times `ts`, evaluated at `t`.
pub(super) fn lagrange_weights(ts: &[f64], t: f64) -> Vec<f64> {
    let k = ts.len();
    (0..k).map(|j| (0..k).filter(|&m| m != j).fold(1.0, |w, m| w * (t - ts[m]) / (ts[j] - ts[m]))).collect()
}

/// Weights of the derivative of the Lagrange polynomial through `ts`, at `t`.
pub(super) fn lagrange_derivative_weights(ts: &[f64], t: f64) -> Vec<f64> {
    let k = ts.len();
    (0..k)
        .map(|j| {
            let denom: f64 = (0..k).filter(|&m| m != j).map(|m| ts[j] - ts[m]).product();
            // d/dt Π_{m≠j} (t − t_m) = Σ_l Π_{m≠j,l} (t − t_m).
            let numer: f64 = (0..k).filter(|&l| l != j).map(|l| (0..k).filter(|&m| m != j && m != l).map(|m| t - ts[m]).product::<f64>()).sum();
            numer / denom
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The interpolant reproduces a quadratic and its derivative exactly [A] (Lagrange
    /// interpolation through three points is exact for polynomials of degree two).
    #[test]
    fn lagrange_weights_reproduce_a_quadratic() {
        let f = |t: f64| 3.0 - 2.0 * t + 0.5 * t * t;
        let ts = [1.0, 2.5, 4.0];
        for t in [1.7, 3.2, 4.0] {
            let v: f64 = lagrange_weights(&ts, t).iter().zip(&ts).map(|(w, &s)| w * f(s)).sum();
            let d: f64 = lagrange_derivative_weights(&ts, t).iter().zip(&ts).map(|(w, &s)| w * f(s)).sum();
            assert!((v - f(t)).abs() < 1e-12 && (d - (-2.0 + t)).abs() < 1e-12, "{t}: {v} {d}");
        }
        // Two points: a line.
        let d = lagrange_derivative_weights(&[0.0, 2.0], 1.0);
        assert!((d[0] + 0.5).abs() < 1e-15 && (d[1] - 0.5).abs() < 1e-15);
    }
}
