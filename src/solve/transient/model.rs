//! The transient model: fixed storage per cell, and the steady residuals as rates.

use super::signal::*;
use super::*;
use crate::model::{Exchanger, Grid};
use crate::solve::steady::check_faces_in_range;
use crate::solve::SolveError;
use nalgebra::{DVector, Vector3};

/// Everything fixed during a run: grid, storage, and index helpers.
pub(super) struct Model<'a> {
    pub(super) ex: &'a Exchanger,
    pub(super) inputs: &'a Inputs,
    pub(super) n: usize,
    pub(super) dx: f64,
    /// Fluid mass per cell, kg.
    pub(super) mass: [Vec<f64>; 2],
    /// Wall heat capacity per cell, J/K.
    pub(super) wall_capacity: f64,
}

/// Work space of [`Model::rates`].
#[derive(Debug, Default)]
pub(super) struct Work {
    temps: Vec<crate::model::CellTemps>,
    out: Vec<[f64; 2]>,
    /// Each cell's temperature difference through the wall's thickness at the last call, K.
    pub(super) across: Vec<f64>,
}

/// State layout: h_hot[0..n], h_cold[0..n], T_wall[0..n], net inflow, hot heat.
impl Model<'_> {
    pub(super) fn len(&self) -> usize {
        3 * self.n + 2
    }

    pub(super) fn temperatures(&self, y: &DVector<f64>) -> Vec<Vector3<f64>> {
        let n = self.n;
        let (hf, cf) = (&self.ex.hot.fluid, &self.ex.cold.fluid);
        (0..n).map(|i| Vector3::new(hf.temperature_from_enthalpy(y[i]), cf.temperature_from_enthalpy(y[n + i]), y[2 * n + i])).collect()
    }

    pub(super) fn grid(&self, e: &Exchanger) -> Grid {
        Grid { arrangement: e.arrangement, n: self.n, scheme: e.scheme, hot_in_c: e.hot.inlet_c, cold_in_c: e.cold.inlet_c }
    }

    /// Storage-form right-hand side for the inputs `e` on grid `g` (both for the time of the
    /// call; built once per step, not per call): per cell [hot, −cold, wall] residuals (W) in
    /// `r`, and the specific enthalpies at the unknowns in `unknown_h` (for the storage terms).
    /// Each face's enthalpy is evaluated once (a face is the outflow of one cell and the
    /// inflow of the next; on the trapezoidal grid an unknown is its cell's outflow face, so
    /// the storage enthalpies come free). `work` holds the per-cell temperatures and outflow
    /// enthalpies. Returns (net enthalpy inflow of both streams, hot duty), W, from the same
    /// face enthalpies, so the cells' rates sum to the net inflow to round-off.
    pub(super) fn rates(&self, e: &Exchanger, g: &Grid, x: &[Vector3<f64>], r: &mut [Vector3<f64>], work: &mut Work, unknown_h: &mut [[f64; 2]]) -> (f64, f64) {
        let n = self.n;
        let (hf, cf) = (&*e.hot.fluid, &*e.cold.fluid);
        work.temps.clear();
        work.temps.extend((0..n).map(|i| g.cell_temps(x, i)));
        work.out.clear();
        work.out.extend(work.temps.iter().map(|t| [hf.enthalpy(t.hot_out), cf.enthalpy(t.cold_out)]));
        // The inlet cells' inflow faces are the inlet temperatures themselves.
        let inlet = [hf.enthalpy(e.hot.inlet_c), cf.enthalpy(e.cold.inlet_c)];
        let cold_forward = e.arrangement != crate::model::Arrangement::Counterflow;
        work.across.clear();
        let half_wall_r = 0.5 * e.wall.resistance_per_length();
        for i in 0..n {
            let t = &work.temps[i];
            // The upstream cell's outflow is this cell's inflow (same value: reuse its enthalpy).
            let from = |j: Option<usize>, s: usize, t_in: f64, f: &dyn crate::fluid::Fluid| match j {
                Some(j) if [work.temps[j].hot_out, work.temps[j].cold_out][s] == t_in => work.out[j][s],
                None if [e.hot.inlet_c, e.cold.inlet_c][s] == t_in => inlet[s],
                _ => f.enthalpy(t_in),
            };
            let h_hot_in = from(i.checked_sub(1), 0, t.hot_in, hf);
            let cold_up = if cold_forward { i.checked_sub(1) } else { (i + 1 < n).then_some(i + 1) };
            let h_cold_in = from(cold_up, 1, t.cold_in, cf);
            let d = e.cell_given(self.dx, [1.0, 1.0], t, [h_hot_in, work.out[i][0], h_cold_in, work.out[i][1]]);
            work.across.push(across_wall_k(half_wall_r, &d, self.dx));
            let res = d.balance.steady_residual();
            r[i] = Vector3::new(res[0], -res[1], res[2]);
            unknown_h[i] = [
                if x[i][0] == t.hot_out { work.out[i][0] } else { hf.enthalpy(x[i][0]) },
                if x[i][1] == t.cold_out { work.out[i][1] } else { cf.enthalpy(x[i][1]) },
            ];
        }
        let hot_out = work.out[n - 1][0];
        let cold_out = if cold_forward { work.out[n - 1][1] } else { work.out[0][1] };
        let hot = e.hot.mass_flow_kg_s * (inlet[0] - hot_out);
        let cold = e.cold.mass_flow_kg_s * (inlet[1] - cold_out);
        (hot + cold, hot)
    }

    pub(super) fn derivative(&self, t: f64, y: &DVector<f64>, dy: &mut DVector<f64>) {
        self.derivative_with(t, y, dy, &mut Work::default());
    }

    /// [`Model::derivative`] leaving the per-cell values of the call in `work`.
    fn derivative_with(&self, t: f64, y: &DVector<f64>, dy: &mut DVector<f64>, work: &mut Work) {
        let n = self.n;
        let x = self.temperatures(y);
        let mut r = vec![Vector3::zeros(); n];
        let e = self.inputs.apply(self.ex, t);
        let (net, hot) = self.rates(&e, &self.grid(&e), &x, &mut r, work, &mut vec![[0.0; 2]; n]);
        for i in 0..n {
            dy[i] = r[i][0] / self.mass[0][i];
            dy[n + i] = r[i][1] / self.mass[1][i];
            dy[2 * n + i] = r[i][2] / self.wall_capacity;
        }
        dy[3 * n] = net;
        dy[3 * n + 1] = hot;
    }

    /// The output at `t` from the state `y` alone (the explicit integrator's outputs: the
    /// wall rates come from one right-hand side).
    pub(super) fn sample(&self, t: f64, y: &DVector<f64>) -> (Sample, Snapshot) {
        let n = self.n;
        let mut dy = DVector::zeros(self.len());
        let mut work = Work::default();
        self.derivative_with(t, y, &mut dy, &mut work);
        let rates: Vec<f64> = (0..n).map(|i| dy[2 * n + i]).collect();
        self.sample_from(t, y, &self.temperatures(y), signed_largest(&rates), signed_largest(&work.across))
    }

    /// The output at `t` from the state `y`, its temperatures `x`, the fastest wall rate
    /// (cell, K/s signed) and the largest difference through the wall (cell, K signed): what
    /// dense output gives without a right-hand side.
    pub(super) fn sample_from(&self, t: f64, y: &DVector<f64>, x: &[Vector3<f64>], max_rate: (usize, f64), across: (usize, f64)) -> (Sample, Snapshot) {
        let n = self.n;
        let e = self.inputs.apply(self.ex, t);
        let g = self.grid(&e);
        let (hot_faces, cold_faces) = g.faces(x);
        let outlets = Grid::outlets(e.arrangement, &hot_faces, &cold_faces);
        let fluid_energy: f64 = (0..n).map(|i| self.mass[0][i] * y[i] + self.mass[1][i] * y[n + i]).sum();
        let wall: Vec<f64> = (0..n).map(|i| y[2 * n + i]).collect();
        let wall_energy = wall.iter().map(|t| self.wall_capacity * t).sum();
        let position = |i: usize| (i as f64 + 0.5) * self.dx;
        let state = WallState { wall_c: &wall, rate: max_rate, across, position: &position };
        let sample = Sample::at(&e, t, outlets, fluid_energy, wall_energy, &state, [y[3 * n], y[3 * n + 1]]);
        (sample, Snapshot { time_s: t, hot_faces_c: hot_faces, cold_faces_c: cold_faces, wall_c: wall })
    }

    /// Check every face against its fluid's range.
    pub(super) fn check(&self, t: f64, snap: &Snapshot) -> Result<(), SolveError> {
        check_faces_in_range(self.ex, &snap.hot_faces_c, &snap.cold_faces_c, self.dx, Some(t))
    }
}
