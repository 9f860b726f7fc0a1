//! The implicit integrator: variable-step BDF2 (backward Euler first) with Newton on the
//! steady solver's Jacobian plus storage, reused across steps while it converges fast.

use super::model::*;
use super::*;
use crate::solve::steady::{jacobian, Jacobian};
use nalgebra::{DVector, Vector3};

/// Variable-step BDF2 state.
pub(super) struct Bdf2 {
    pub(super) t: f64,
    pub(super) h: f64,
    pub(super) y: DVector<f64>,
    /// Previous state and step (None before the first step).
    pub(super) prev: Option<(DVector<f64>, f64)>,
    /// Temperatures at the current and previous two points (for the predictor).
    pub(super) x_hist: Vec<(f64, Vec<Vector3<f64>>)>,
    pub(super) jac: Option<Jacobian>,
    pub(super) jac_age: usize,
}

impl Bdf2 {
    pub(super) fn new(model: &Model, y0: &DVector<f64>, settings: &TransientSettings) -> Self {
        // First step: a fraction of the shortest cell transit or wall time constant.
        let h0 = (settings.output_interval_s * 0.01).max(1e-6);
        Self { t: 0.0, h: h0, y: y0.clone(), prev: None, x_hist: vec![(0.0, model.temperatures(y0))], jac: None, jac_age: 0 }
    }

    pub(super) fn advance_to(&mut self, model: &Model, stop: f64, settings: &TransientSettings, stats: &mut Stats) -> Result<(), TransientError> {
        // `try_step` moves self.t itself on an accepted step; the shared loop keeps its own.
        let (mut t, mut h) = (self.t, self.h);
        advance_implicit(&mut t, &mut h, stop, settings, stats, |step, stats| {
            Ok(match self.try_step(model, step, settings, stats)? {
                StepOutcome::Accepted(next) => Ok(next),
                StepOutcome::Rejected(next) => Err(next),
            })
        })?;
        self.t = t;
        self.h = h;
        Ok(())
    }

    pub(super) fn try_step(&mut self, model: &Model, h: f64, settings: &TransientSettings, stats: &mut Stats) -> Result<StepOutcome, TransientError> {
        let n = model.n;
        let t1 = self.t + h;
        // BDF coefficients: y1 = a1 y0 + a2 y_prev + b h f(y1).
        let (a1, a2, b) = match &self.prev {
            None => (1.0, 0.0, 1.0),
            Some((_, h_prev)) => {
                let w = h / h_prev;
                ((1.0 + w).powi(2) / (1.0 + 2.0 * w), -(w * w) / (1.0 + 2.0 * w), (1.0 + w) / (1.0 + 2.0 * w))
            }
        };
        let hist: DVector<f64> = match &self.prev {
            None => self.y.clone() * a1,
            Some((yp, _)) => &self.y * a1 + yp * a2,
        };
        // Predictor: polynomial extrapolation of the temperatures through the history.
        let predicted = extrapolate(&self.x_hist, t1);
        let e1 = model.inputs.apply(model.ex, t1);
        let grid = model.grid(&e1);
        let mut x = predicted.clone();
        let mut r = vec![Vector3::zeros(); n];
        let bh = b * h;
        let storage = |x: &[Vector3<f64>], i: usize| -> Vector3<f64> {
            Vector3::new(
                model.mass[0][i] * (model.ex.hot.fluid.enthalpy(x[i][0]) - hist[i]),
                model.mass[1][i] * (model.ex.cold.fluid.enthalpy(x[i][1]) - hist[n + i]),
                model.wall_capacity * (x[i][2] - hist[2 * n + i]),
            )
        };
        let reuse = self.jac.is_some() && self.jac_age < 20;
        if !reuse {
            let mut j = Jacobian::for_grid(&grid);
            jacobian(&e1, &grid, model.dx, &x, &mut j);
            stats.jacobian_evaluations += 1;
            self.jac = Some(j);
            self.jac_age = 0;
        }
        let mut converged = false;
        for iteration in 0..8 {
            stats.newton_iterations += 1;
            stats.rhs_evaluations += 1;
            model.rates(t1, &x, &mut r);
            // G = S·storage − b h residual; S flips the cold row so the Jacobian is the steady one.
            let mut g: Vec<Vector3<f64>> = (0..n)
                .map(|i| {
                    let s = storage(&x, i);
                    Vector3::new(s[0] - bh * r[i][0], -(s[1] - bh * r[i][1]), s[2] - bh * r[i][2])
                })
                .collect();
            let scale = g.iter().map(|v| v.abs().max()).fold(0.0, f64::max);
            let mut newton = self.jac.clone().expect("jacobian set above").scaled(-bh);
            for (i, xi) in x.iter().enumerate().take(n) {
                newton.add_diagonal(i, 0, model.mass[0][i] * model.ex.hot.fluid.props(xi[0]).cp);
                newton.add_diagonal(i, 1, -model.mass[1][i] * model.ex.cold.fluid.props(xi[1]).cp);
                newton.add_diagonal(i, 2, model.wall_capacity);
            }
            if newton.solve(&mut g).is_err() {
                break;
            }
            let mut largest = 0.0f64;
            for i in 0..n {
                x[i] -= g[i];
                largest = largest.max(g[i].abs().max());
            }
            if !largest.is_finite() {
                break;
            }
            if largest < 1e-3 * settings.atol_k || (scale == 0.0 && iteration > 0) {
                converged = true;
                break;
            }
            if iteration >= 3 && self.jac_age > 0 {
                break; // slow with an old Jacobian: refresh it and retry with a smaller step
            }
        }
        if !converged {
            self.jac = None;
            return Ok(StepOutcome::Rejected(h * 0.5));
        }
        // Error estimate from the predictor–corrector difference (Milne's device; the
        // constant 2/11 is that of constant-step BDF2 with a quadratic predictor).
        let order_known = self.x_hist.len() >= 3;
        let mut err = 0.0f64;
        for i in 0..n {
            for c in 0..3 {
                let tol = settings.atol_k + settings.rtol * x[i][c].abs();
                err = err.max((x[i][c] - predicted[i][c]).abs() * if order_known { 2.0 / 11.0 } else { 0.5 } / tol);
            }
        }
        if err > 1.0 {
            return Ok(StepOutcome::Rejected(h * (0.9 * err.powf(-1.0 / 3.0)).clamp(0.1, 0.5)));
        }
        // Accept: update the enthalpy states and the two integrals with the same formula.
        let (net, hot) = model.inflows(&e1, &grid, &x);
        let mut y1 = DVector::zeros(model.len());
        for i in 0..n {
            y1[i] = model.ex.hot.fluid.enthalpy(x[i][0]);
            y1[n + i] = model.ex.cold.fluid.enthalpy(x[i][1]);
            y1[2 * n + i] = x[i][2];
        }
        y1[3 * n] = hist[3 * n] + bh * net;
        y1[3 * n + 1] = hist[3 * n + 1] + bh * hot;
        self.prev = Some((std::mem::replace(&mut self.y, y1), h));
        self.t = t1;
        self.x_hist.push((t1, x));
        if self.x_hist.len() > 3 {
            self.x_hist.remove(0);
        }
        self.jac_age += 1;
        let grow = if err > 0.0 { (0.9 * err.powf(-1.0 / 3.0)).clamp(0.2, 2.0) } else { 2.0 };
        Ok(StepOutcome::Accepted(h * grow))
    }
}

pub(super) enum StepOutcome {
    Accepted(f64),
    Rejected(f64),
}

/// Lagrange extrapolation of the stored temperature profiles to time `t`.
pub(super) fn extrapolate(hist: &[(f64, Vec<Vector3<f64>>)], t: f64) -> Vec<Vector3<f64>> {
    let k = hist.len();
    let weights = lagrange_weights(&hist.iter().map(|h| h.0).collect::<Vec<_>>(), t);
    let n = hist[0].1.len();
    (0..n).map(|i| (0..k).fold(Vector3::zeros(), |acc, j| acc + hist[j].1[i] * weights[j])).collect()
}

/// [`extrapolate`] for flat state vectors.
pub(super) fn extrapolate_flat(hist: &[(f64, Vec<f64>)], t: f64) -> Vec<f64> {
    let k = hist.len();
    let weights = lagrange_weights(&hist.iter().map(|h| h.0).collect::<Vec<_>>(), t);
    let n = hist[0].1.len();
    (0..n).map(|i| (0..k).map(|j| hist[j].1[i] * weights[j]).sum()).collect()
}

/// Weights of the Lagrange polynomial through the times `ts`, evaluated at `t`.
fn lagrange_weights(ts: &[f64], t: f64) -> Vec<f64> {
    let k = ts.len();
    (0..k).map(|j| (0..k).filter(|&m| m != j).fold(1.0, |w, m| w * (t - ts[m]) / (ts[j] - ts[m]))).collect()
}
