//! Steady state: Newton's method on all cell balances at once.
//!
//! Unknowns, cell by cell: the hot temperature at the cell's hot-downstream face, the cold
//! temperature at its cold-downstream face, and the wall temperature. The Jacobian is
//! block tridiagonal; each cell's 3×5 local derivatives come from the cell model itself
//! ([`Exchanger::cell_with_jacobian`]). A backtracking line search on the summed absolute residual keeps early steps
//! safe. Convergence: Σ|residual| ≤ tolerance × the thermodynamic maximum duty, which also
//! bounds the energy imbalance between the streams (or at the round-off floor of the
//! enthalpy differences, if that is larger).

pub(crate) use super::checks::check_faces_in_range;
use super::checks::*;
pub use super::error::SolveError;
pub(crate) use super::jacobian::{jacobian, Jacobian};
use crate::lumped;
use crate::model::{Arrangement, CellTemps, Exchanger, Grid};
use nalgebra::Vector3;

/// Steady solver settings.
#[derive(Debug, Clone, PartialEq)]
pub struct SteadySettings {
    /// Number of cells along the length.
    pub cells: usize,
    /// Relative tolerance: Σ|cell residuals| / max duty. Default 1e-10.
    pub tolerance: f64,
    /// Newton iterations before giving up. Default 50.
    pub max_iterations: usize,
}

impl Default for SteadySettings {
    fn default() -> Self {
        Self { cells: 100, tolerance: 1e-10, max_iterations: 50 }
    }
}

/// Hears about the solver's progress (logs, progress bars live in the binary).
pub trait Observer {
    /// Called after each Newton iteration with the relative residual.
    fn iteration(&mut self, _iteration: usize, _relative_residual: f64) {}
}

/// An observer that ignores everything.
#[derive(Debug, Default)]
pub struct SilentObserver;

impl Observer for SilentObserver {}

/// The converged steady state.
#[derive(Debug, Clone)]
pub struct SteadySolution {
    /// Number of cells.
    pub cells: usize,
    /// Cell length, m.
    pub dx_m: f64,
    /// Hot temperature at the faces x = 0, Δx, …, L, °C.
    pub hot_faces_c: Vec<f64>,
    /// Cold temperature at the same faces, °C.
    pub cold_faces_c: Vec<f64>,
    /// Wall temperature at cell centres, °C.
    pub wall_c: Vec<f64>,
    /// The unknowns per cell (hot value, cold value, wall), as the scheme defines them.
    pub unknowns: Vec<Vector3<f64>>,
    /// The grid they live on.
    pub grid: Grid,
    /// Newton iterations taken.
    pub iterations: usize,
    /// Final relative residual.
    pub relative_residual: f64,
}

impl SteadySolution {
    /// Temperatures seen by cell `i` (through the scheme that produced the solution).
    pub fn cell_temps(&self, i: usize) -> CellTemps {
        self.grid.cell_temps(&self.unknowns, i)
    }

    /// Hot outlet, °C.
    pub fn hot_outlet_c(&self) -> f64 {
        Grid::outlets(self.grid.arrangement, &self.hot_faces_c, &self.cold_faces_c).0
    }

    /// Cold outlet, °C.
    pub fn cold_outlet_c(&self, arrangement: Arrangement) -> f64 {
        Grid::outlets(arrangement, &self.hot_faces_c, &self.cold_faces_c).1
    }
}

/// Fill residuals; return Σ|r|.
fn residuals(ex: &Exchanger, lay: &Grid, dx: f64, x: &[Vector3<f64>], r: &mut [Vector3<f64>]) -> f64 {
    let mut sum = 0.0;
    for (i, ri) in r.iter_mut().enumerate().take(lay.n) {
        let res = ex.cell(dx, &lay.cell_temps(x, i)).balance.steady_residual();
        *ri = Vector3::new(res[0], res[1], res[2]);
        sum += ri.abs().sum();
    }
    sum
}

/// Initial guess: each stream's enthalpy varies linearly along the length between its
/// inlet and an ε–NTU outlet estimate, and temperatures follow from T(h). Capacity rates
/// are the mean ṁ·Δh/ΔT over the inlet-to-inlet span and the films are taken at the inlets,
/// so a stream with a strong cp peak (supercritical CO₂) starts with the right shape: its
/// temperature is flat where cp is large.
fn initial_guess(ex: &Exchanger, lay: &Grid) -> Vec<Vector3<f64>> {
    let (th, tc) = (ex.hot.inlet_c, ex.cold.inlet_c);
    let (hf, cf) = (&ex.hot.fluid, &ex.cold.fluid);
    let (q, _, _) = duty_estimate(ex);
    let (h_hot_in, h_cold_in) = (hf.enthalpy(th), cf.enthalpy(tc));
    let dh_hot = q / ex.hot.mass_flow_kg_s;
    let dh_cold = q / ex.cold.mass_flow_kg_s;
    let n = lay.n as f64;
    // Fraction s of each stream's own path already travelled → temperature.
    let hot_at = |s: f64| hf.temperature_from_enthalpy(h_hot_in - dh_hot * s);
    let cold_at = |s: f64| cf.temperature_from_enthalpy(h_cold_in + dh_cold * s);
    let cold_path = |x: f64| match ex.arrangement {
        Arrangement::Counterflow => 1.0 - x,
        Arrangement::Parallel | Arrangement::Network(_) => x,
    };
    (0..lay.n)
        .map(|i| {
            let face = match ex.arrangement {
                Arrangement::Counterflow => i as f64 / n,
                Arrangement::Parallel | Arrangement::Network(_) => (i + 1) as f64 / n,
            };
            let centre = (i as f64 + 0.5) / n;
            let wall = 0.5 * (hot_at(centre) + cold_at(cold_path(centre)));
            Vector3::new(hot_at((i + 1) as f64 / n), cold_at(cold_path(face)), wall)
        })
        .collect()
}

/// A first estimate of the duty for initial guesses: the arrangement's closed form with each
/// stream's mean capacity rate ṁ·Δh/ΔT over the inlet-to-inlet span and the films at the
/// inlets. Returns (duty W, C_hot W/K, C_cold W/K).
pub(crate) fn duty_estimate(ex: &Exchanger) -> (f64, f64, f64) {
    let (th, tc) = (ex.hot.inlet_c, ex.cold.inlet_c);
    let span = |s: &crate::model::Stream| s.mass_flow_kg_s * (s.fluid.enthalpy(th) - s.fluid.enthalpy(tc)) / (th - tc);
    let (c_hot, c_cold) = (span(&ex.hot), span(&ex.cold));
    let (c_min, c_max) = (c_hot.min(c_cold), c_hot.max(c_cold));
    let ntu = ex.ua_per_length_at(th, tc) * ex.length_m / c_min;
    let min_side = if c_hot <= c_cold { crate::model::Side::Hot } else { crate::model::Side::Cold };
    let q = lumped::effectiveness(ex.arrangement, ntu, c_min / c_max, min_side).clamp(0.0, 1.0) * c_min * (th - tc);
    (q, c_hot, c_cold)
}

/// The steady state with a stream stopped. With no flow a stream carries no enthalpy, so in
/// every cell its film carries no heat: the wall and the stopped fluid sit at the flowing
/// stream's temperature, which passes unchanged (its inlet everywhere), and the duty is zero.
/// Uniform values satisfy every scheme's cell balances exactly (None: both flow). With both
/// stopped the steady state is not defined (it depends on the history).
pub(crate) fn stopped_flow_temperature(ex: &Exchanger) -> Result<Option<f64>, SolveError> {
    match (ex.hot.mass_flow_kg_s <= 0.0, ex.cold.mass_flow_kg_s <= 0.0) {
        (false, false) => Ok(None),
        (true, true) => Err(SolveError::NoFlow),
        (true, false) => Ok(Some(ex.cold.inlet_c)),
        (false, true) => Ok(Some(ex.hot.inlet_c)),
    }
}

/// (scale, target) of the convergence test for `cells` cells: the residual scale (the
/// maximum duty) and Σ|r| to reach. The residual cannot go below the round-off in the
/// enthalpy differences, which grows with a stream's ṁ·|h|: a stream with 10⁶ times the
/// other's capacity would otherwise never meet a tolerance relative to the duty. Converge at
/// whichever is larger.
pub(crate) fn convergence_target(ex: &Exchanger, cells: usize, tolerance: f64) -> (f64, f64) {
    let scale = ex.max_duty_w().abs().max(f64::MIN_POSITIVE);
    let size = |s: &crate::model::Stream| s.mass_flow_kg_s * (s.fluid.enthalpy(ex.hot.inlet_c).abs() + s.fluid.enthalpy(ex.cold.inlet_c).abs());
    let roundoff = 16.0 * f64::EPSILON * cells as f64 * (size(&ex.hot) + size(&ex.cold));
    (scale, (tolerance * scale).max(roundoff))
}

/// Solve the steady state of `ex` on `settings.cells` cells.
pub fn solve_steady(ex: &Exchanger, settings: &SteadySettings, observer: &mut dyn Observer) -> Result<SteadySolution, SolveError> {
    solve_steady_from(ex, settings, None, observer)
}

/// [`solve_steady`] started from `start` (the unknowns of a solution on the same number of
/// cells, e.g. of a neighbouring design point) instead of the lumped estimate; a start of
/// another size is ignored.
pub fn solve_steady_from(
    ex: &Exchanger,
    settings: &SteadySettings,
    start: Option<&[Vector3<f64>]>,
    observer: &mut dyn Observer,
) -> Result<SteadySolution, SolveError> {
    let n = settings.cells.max(1);
    let dx = ex.length_m / n as f64;
    let lay = Grid { arrangement: ex.arrangement, n, scheme: ex.scheme, hot_in_c: ex.hot.inlet_c, cold_in_c: ex.cold.inlet_c };
    if let Some(t) = stopped_flow_temperature(ex)? {
        return Ok(unpack(&lay, dx, &vec![Vector3::new(t, t, t); lay.n], 0, 0.0));
    }
    let (scale, target) = convergence_target(ex, n, settings.tolerance);
    let mut x = match start {
        Some(s) if s.len() == n && s.iter().all(|v| v.iter().all(|t| t.is_finite())) => s.to_vec(),
        _ => initial_guess(ex, &lay),
    };
    let mut r = vec![Vector3::zeros(); n];
    let mut step = vec![Vector3::zeros(); n];
    let mut trial = vec![Vector3::zeros(); n];
    let mut jac = Jacobian::for_grid(&lay);
    let mut norm = residuals(ex, &lay, dx, &x, &mut r);
    let mut iterations = 0;
    while norm > target {
        if iterations >= settings.max_iterations || !norm.is_finite() {
            let worst = (0..n).max_by(|&a, &b| r[a].abs().sum().partial_cmp(&r[b].abs().sum()).unwrap_or(std::cmp::Ordering::Equal)).unwrap_or(0);
            return Err(SolveError::NotConverged {
                iterations,
                residual: norm / scale,
                tolerance: settings.tolerance,
                worst_position_m: (worst as f64 + 0.5) * dx,
            });
        }
        jacobian(ex, &lay, dx, &x, &mut jac);
        step.copy_from_slice(&r);
        jac.solve(&mut step).map_err(|i| SolveError::Singular { position_m: (i as f64 + 0.5) * dx })?;
        // Backtracking: accept the first step length that reduces Σ|r|, else the smallest tried.
        let mut lambda = 1.0;
        loop {
            for i in 0..n {
                trial[i] = x[i] - step[i] * lambda;
            }
            let trial_norm = residuals(ex, &lay, dx, &trial, &mut r);
            if trial_norm < norm || lambda < 1e-3 {
                norm = trial_norm;
                break;
            }
            lambda *= 0.5;
        }
        std::mem::swap(&mut x, &mut trial);
        iterations += 1;
        observer.iteration(iterations, norm / scale);
    }
    let solution = unpack(&lay, dx, &x, iterations, norm / scale);
    check_second_law(ex, &solution)?;
    check_ranges(ex, &solution)?;
    Ok(solution)
}

fn unpack(lay: &Grid, dx: f64, x: &[Vector3<f64>], iterations: usize, res: f64) -> SteadySolution {
    let (hot, cold) = lay.faces(x);
    SteadySolution {
        cells: lay.n,
        dx_m: dx,
        hot_faces_c: hot,
        cold_faces_c: cold,
        wall_c: x.iter().map(|v| v[2]).collect(),
        unknowns: x.to_vec(),
        grid: *lay,
        iterations,
        relative_residual: res,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fluid::{ConstantFluid, Props};
    use crate::model::{Scheme, Stream};
    use crate::transfer::{Channel, FixedFilm, Wall};
    use std::sync::Arc;

    fn exchanger(arrangement: Arrangement, scheme: Scheme) -> Exchanger {
        let props = Props { density: 1000.0, cp: 4000.0, viscosity: 1e-3, conductivity: 0.6 };
        let stream = |m: f64, t: f64| Stream {
            fluid: Arc::new(ConstantFluid::new(props)),
            mass_flow_kg_s: m,
            inlet_c: t,
            inlet_pressure_pa: 1e5,
            fouling_m2k_w: 0.0,
            film: Arc::new(FixedFilm { h: 800.0 }),
            channel: Channel::bare(0.5),
        };
        Exchanger {
            arrangement,
            length_m: 4.0,
            hot: stream(0.3, 90.0),
            cold: stream(0.5, 10.0),
            wall: Wall::Plane { thickness_m: 1e-3, conductivity_w_mk: 15.0, area_per_length_m: 0.5 },
            reference_area_per_length_m: 0.5,
            scheme,
        }
    }

    /// The assembled Jacobian equals central differences of the residuals for the exact
    /// schemes (trapezoidal, upwind); for TVD only the frozen-limiter part is assembled.
    #[test]
    fn assembled_jacobian_matches_residual_differences() {
        for arr in [Arrangement::Counterflow, Arrangement::Parallel] {
            for scheme in [Scheme::Trapezoidal, Scheme::Upwind, Scheme::Tvd] {
                let ex = exchanger(arr, scheme);
                let n = 6;
                let lay = Grid { arrangement: arr, n, scheme, hot_in_c: 90.0, cold_in_c: 10.0 };
                let x: Vec<Vector3<f64>> = (0..n).map(|i| Vector3::new(80.0 - 3.0 * i as f64, 40.0 - 2.5 * i as f64, 60.0 - 2.0 * i as f64)).collect();
                let mut jac = Jacobian::for_grid(&lay);
                jacobian(&ex, &lay, 4.0 / n as f64, &x, &mut jac);
                let dense = |i: usize, r: usize, j: usize, c: usize| -> Option<f64> { Some(jac.0.get(i, r, j, c)) };
                let mut r0 = vec![Vector3::zeros(); n];
                let mut r1 = vec![Vector3::zeros(); n];
                for j in 0..n {
                    for c in 0..3 {
                        let (mut xp, mut xm) = (x.clone(), x.clone());
                        xp[j][c] += 1e-4;
                        xm[j][c] -= 1e-4;
                        residuals(&ex, &lay, 4.0 / n as f64, &xp, &mut r0);
                        residuals(&ex, &lay, 4.0 / n as f64, &xm, &mut r1);
                        for i in 0..n {
                            let fd = (r0[i] - r1[i]) / 2e-4;
                            for row in 0..3 {
                                let a = dense(i, row, j, c).unwrap_or(0.0);
                                assert!(
                                    (a - fd[row]).abs() < 1e-6 * (1.0 + fd[row].abs()),
                                    "{arr:?} {scheme:?} cell {i} var {j}.{c} row {row}: {a} vs {}",
                                    fd[row]
                                );
                            }
                        }
                    }
                }
            }
        }
    }
}
