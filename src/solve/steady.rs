//! Steady state: Newton's method on all cell balances at once.
//!
//! Unknowns, cell by cell: the hot temperature at the cell's hot-downstream face, the cold
//! temperature at its cold-downstream face, and the wall temperature. The Jacobian is
//! block tridiagonal; each cell's 3×5 local derivatives come from the cell model itself
//! ([`Exchanger::cell_with_jacobian`]). A backtracking line search on the summed absolute residual keeps early steps
//! safe. Convergence: Σ|residual| ≤ tolerance × the thermodynamic maximum duty, which also
//! bounds the energy imbalance between the streams (or at the round-off floor of the
//! enthalpy differences, if that is larger).

use super::BlockTridiagonal;
use crate::lumped;
use crate::model::{Arrangement, CellTemps, Exchanger};
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
    /// Newton iterations taken.
    pub iterations: usize,
    /// Final relative residual.
    pub relative_residual: f64,
}

impl SteadySolution {
    /// Temperatures seen by cell `i`, each stream's "in" being its upstream face.
    pub fn cell_temps(&self, arrangement: Arrangement, i: usize) -> CellTemps {
        let (cold_in, cold_out) = match arrangement {
            Arrangement::Counterflow => (self.cold_faces_c[i + 1], self.cold_faces_c[i]),
            Arrangement::Parallel => (self.cold_faces_c[i], self.cold_faces_c[i + 1]),
        };
        CellTemps { hot_in: self.hot_faces_c[i], hot_out: self.hot_faces_c[i + 1], cold_in, cold_out, wall: self.wall_c[i] }
    }

    /// Hot outlet, °C.
    pub fn hot_outlet_c(&self) -> f64 {
        *self.hot_faces_c.last().unwrap()
    }

    /// Cold outlet, °C.
    pub fn cold_outlet_c(&self, arrangement: Arrangement) -> f64 {
        match arrangement {
            Arrangement::Counterflow => self.cold_faces_c[0],
            Arrangement::Parallel => *self.cold_faces_c.last().unwrap(),
        }
    }
}

/// Why a steady solve failed.
#[derive(Debug, Clone, thiserror::Error, PartialEq)]
pub enum SolveError {
    /// Newton did not reach the tolerance.
    #[error(
        "the steady solver did not converge in {iterations} iterations: relative residual {residual:.3e} \
         (tolerance {tolerance:.1e}), worst at x = {worst_position_m:.4} m. {suggestion}"
    )]
    NotConverged {
        /// Iterations taken.
        iterations: usize,
        /// Last relative residual.
        residual: f64,
        /// Requested tolerance.
        tolerance: f64,
        /// Centre of the cell with the largest residual, m.
        worst_position_m: f64,
        /// What the user can change.
        suggestion: String,
    },
    /// The linear system could not be solved (singular or non-finite).
    #[error("the Newton linear system became singular or non-finite near x = {position_m:.4} m; check that flows, film coefficients and wall data are positive and physically sized")]
    Singular {
        /// Centre of the offending cell, m.
        position_m: f64,
    },
    /// The converged state leaves a fluid's valid range.
    #[error(
        "the {stream} stream reaches {temperature_c:.3} °C at x = {position_m:.4} m, outside {fluid}'s valid \
         range {min_c:.3} … {max_c:.3} °C ({reason})"
    )]
    LeftRange {
        /// "hot" or "cold".
        stream: &'static str,
        /// Fluid name.
        fluid: String,
        /// Face position, m.
        position_m: f64,
        /// Temperature there, °C.
        temperature_c: f64,
        /// Lower end of range, °C.
        min_c: f64,
        /// Upper end of range, °C.
        max_c: f64,
        /// Why the range ends there.
        reason: String,
    },
}

/// Where one local input of a cell lives in the unknown vector.
#[derive(Clone, Copy)]
enum Slot {
    /// A fixed inlet value.
    Fixed,
    /// Block row offset (−1, 0, +1) and component.
    Var(isize, usize),
}

/// Unknown-vector indexing for a given arrangement and cell count.
struct Layout {
    arrangement: Arrangement,
    n: usize,
    hot_in_c: f64,
    cold_in_c: f64,
}

impl Layout {
    fn temps(&self, x: &[Vector3<f64>], i: usize) -> CellTemps {
        let hot_in = if i == 0 { self.hot_in_c } else { x[i - 1][0] };
        let cold_in = match self.arrangement {
            Arrangement::Counterflow if i + 1 < self.n => x[i + 1][1],
            Arrangement::Parallel if i > 0 => x[i - 1][1],
            _ => self.cold_in_c,
        };
        CellTemps { hot_in, hot_out: x[i][0], cold_in, cold_out: x[i][1], wall: x[i][2] }
    }

    /// Slots of (hot_in, hot_out, cold_in, cold_out, wall) for cell i.
    fn slots(&self, i: usize) -> [Slot; 5] {
        let hot_in = if i == 0 { Slot::Fixed } else { Slot::Var(-1, 0) };
        let cold_in = match self.arrangement {
            Arrangement::Counterflow if i + 1 < self.n => Slot::Var(1, 1),
            Arrangement::Parallel if i > 0 => Slot::Var(-1, 1),
            _ => Slot::Fixed,
        };
        [hot_in, Slot::Var(0, 0), cold_in, Slot::Var(0, 1), Slot::Var(0, 2)]
    }
}

/// Fill residuals; return Σ|r|.
fn residuals(ex: &Exchanger, lay: &Layout, dx: f64, x: &[Vector3<f64>], r: &mut [Vector3<f64>]) -> f64 {
    let mut sum = 0.0;
    for i in 0..lay.n {
        let res = ex.cell(dx, &lay.temps(x, i)).balance.steady_residual();
        r[i] = Vector3::new(res[0], res[1], res[2]);
        sum += r[i].abs().sum();
    }
    sum
}

fn jacobian(ex: &Exchanger, lay: &Layout, dx: f64, x: &[Vector3<f64>], jac: &mut BlockTridiagonal) {
    jac.clear();
    for i in 0..lay.n {
        let (_, local) = ex.cell_with_jacobian(dx, &lay.temps(x, i));
        for (k, slot) in lay.slots(i).iter().enumerate() {
            let Slot::Var(off, comp) = *slot else { continue };
            let col = Vector3::new(local[0][k], local[1][k], local[2][k]);
            let block = match off {
                -1 => &mut jac.lower[i],
                0 => &mut jac.diag[i],
                _ => &mut jac.upper[i],
            };
            block.set_column(comp, &col);
        }
    }
}

/// Initial guess: each stream's enthalpy varies linearly along the length between its
/// inlet and an ε–NTU outlet estimate, and temperatures follow from T(h). Capacity rates
/// are the mean ṁ·Δh/ΔT over the inlet-to-inlet span and the films are taken at the inlets,
/// so a stream with a strong cp peak (supercritical CO₂) starts with the right shape: its
/// temperature is flat where cp is large.
fn initial_guess(ex: &Exchanger, lay: &Layout) -> Vec<Vector3<f64>> {
    let (th, tc) = (ex.hot.inlet_c, ex.cold.inlet_c);
    let (hf, cf) = (&ex.hot.fluid, &ex.cold.fluid);
    let span = |f: &dyn crate::fluid::Fluid, m: f64| m * (f.enthalpy(th) - f.enthalpy(tc)) / (th - tc);
    let (c_hot, c_cold) = (span(&**hf, ex.hot.mass_flow_kg_s), span(&**cf, ex.cold.mass_flow_kg_s));
    let (c_min, c_max) = (c_hot.min(c_cold), c_hot.max(c_cold));
    let ntu = ex.ua_per_length_at(th, tc) * ex.length_m / c_min;
    let q = lumped::effectiveness(ex.arrangement, ntu, c_min / c_max) * ex.max_duty_w();
    let (h_hot_in, h_cold_in) = (hf.enthalpy(th), cf.enthalpy(tc));
    let dh_hot = q / ex.hot.mass_flow_kg_s;
    let dh_cold = q / ex.cold.mass_flow_kg_s;
    let n = lay.n as f64;
    // Fraction s of each stream's own path already travelled → temperature.
    let hot_at = |s: f64| hf.temperature_from_enthalpy(h_hot_in - dh_hot * s);
    let cold_at = |s: f64| cf.temperature_from_enthalpy(h_cold_in + dh_cold * s);
    let cold_path = |x: f64| match ex.arrangement {
        Arrangement::Counterflow => 1.0 - x,
        Arrangement::Parallel => x,
    };
    (0..lay.n)
        .map(|i| {
            let face = match ex.arrangement {
                Arrangement::Counterflow => i as f64 / n,
                Arrangement::Parallel => (i + 1) as f64 / n,
            };
            let centre = (i as f64 + 0.5) / n;
            let wall = 0.5 * (hot_at(centre) + cold_at(cold_path(centre)));
            Vector3::new(hot_at((i + 1) as f64 / n), cold_at(cold_path(face)), wall)
        })
        .collect()
}

/// Solve the steady state of `ex` on `settings.cells` cells.
pub fn solve_steady(
    ex: &Exchanger,
    settings: &SteadySettings,
    observer: &mut dyn Observer,
) -> Result<SteadySolution, SolveError> {
    let n = settings.cells.max(1);
    let dx = ex.length_m / n as f64;
    let lay = Layout { arrangement: ex.arrangement, n, hot_in_c: ex.hot.inlet_c, cold_in_c: ex.cold.inlet_c };
    let scale = ex.max_duty_w().abs().max(f64::MIN_POSITIVE);
    // The residual cannot go below the round-off in the enthalpy differences, which grows
    // with a stream's ṁ·|h|: a stream with 10⁶ times the other's capacity would otherwise
    // never meet a tolerance relative to the duty. Converge at whichever is larger.
    let roundoff = {
        let size = |s: &crate::model::Stream| {
            s.mass_flow_kg_s * (s.fluid.enthalpy(ex.hot.inlet_c).abs() + s.fluid.enthalpy(ex.cold.inlet_c).abs())
        };
        16.0 * f64::EPSILON * n as f64 * (size(&ex.hot) + size(&ex.cold))
    };
    let target = (settings.tolerance * scale).max(roundoff);
    let mut x = initial_guess(ex, &lay);
    let mut r = vec![Vector3::zeros(); n];
    let mut step = vec![Vector3::zeros(); n];
    let mut trial = vec![Vector3::zeros(); n];
    let mut jac = BlockTridiagonal::zeros(n);
    let mut norm = residuals(ex, &lay, dx, &x, &mut r);
    let mut iterations = 0;
    while norm > target {
        if iterations >= settings.max_iterations || !norm.is_finite() {
            let worst = (0..n)
                .max_by(|&a, &b| r[a].abs().sum().partial_cmp(&r[b].abs().sum()).unwrap_or(std::cmp::Ordering::Equal))
                .unwrap_or(0);
            return Err(SolveError::NotConverged {
                iterations,
                residual: norm / scale,
                tolerance: settings.tolerance,
                worst_position_m: (worst as f64 + 0.5) * dx,
                suggestion: "Try more cells, a looser [solver] residual_tolerance, or more max_iterations; \
                             check that flows and film coefficients are realistic."
                    .into(),
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
    let solution = unpack(ex, &lay, dx, &x, iterations, norm / scale);
    check_ranges(ex, &solution)?;
    Ok(solution)
}

fn unpack(ex: &Exchanger, lay: &Layout, dx: f64, x: &[Vector3<f64>], iterations: usize, res: f64) -> SteadySolution {
    let n = lay.n;
    let mut hot = Vec::with_capacity(n + 1);
    hot.push(ex.hot.inlet_c);
    hot.extend(x.iter().map(|v| v[0]));
    let cold: Vec<f64> = match ex.arrangement {
        Arrangement::Counterflow => x.iter().map(|v| v[1]).chain(std::iter::once(ex.cold.inlet_c)).collect(),
        Arrangement::Parallel => std::iter::once(ex.cold.inlet_c).chain(x.iter().map(|v| v[1])).collect(),
    };
    SteadySolution {
        cells: n,
        dx_m: dx,
        hot_faces_c: hot,
        cold_faces_c: cold,
        wall_c: x.iter().map(|v| v[2]).collect(),
        iterations,
        relative_residual: res,
    }
}

fn check_ranges(ex: &Exchanger, s: &SteadySolution) -> Result<(), SolveError> {
    for (name, stream, faces) in [("hot", &ex.hot, &s.hot_faces_c), ("cold", &ex.cold, &s.cold_faces_c)] {
        let range = stream.fluid.range();
        // Walk in the stream's own flow direction, so the first face reported is where it
        // first leaves the range.
        let reversed = name == "cold" && ex.arrangement == Arrangement::Counterflow;
        let order: Box<dyn Iterator<Item = (usize, &f64)>> =
            if reversed { Box::new(faces.iter().enumerate().rev()) } else { Box::new(faces.iter().enumerate()) };
        for (j, &t) in order {
            if !(t >= range.min_c && t <= range.max_c) {
                return Err(SolveError::LeftRange {
                    stream: name,
                    fluid: stream.fluid.name(),
                    position_m: j as f64 * s.dx_m,
                    temperature_c: t,
                    min_c: range.min_c,
                    max_c: range.max_c,
                    reason: range.reason,
                });
            }
        }
    }
    Ok(())
}
