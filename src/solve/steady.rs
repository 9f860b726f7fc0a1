//! Steady state: Newton's method on all cell balances at once.
//!
//! Unknowns, cell by cell: the hot temperature at the cell's hot-downstream face, the cold
//! temperature at its cold-downstream face, and the wall temperature. The Jacobian is
//! block tridiagonal; each cell's 3×5 local derivatives come from the cell model itself
//! ([`Exchanger::cell_with_jacobian`]). A backtracking line search on the summed absolute residual keeps early steps
//! safe. Convergence: Σ|residual| ≤ tolerance × the thermodynamic maximum duty, which also
//! bounds the energy imbalance between the streams (or at the round-off floor of the
//! enthalpy differences, if that is larger).

use super::{Banded, BlockTridiagonal};
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
    #[error("the Newton linear system became singular or non-finite near x = {} m; check that flows, film coefficients and wall data are positive and physically sized", crate::text::num(*position_m))]
    Singular {
        /// Centre of the offending cell, m.
        position_m: f64,
    },
    /// The converged discrete solution violates the second law (the hot stream colder than
    /// the cold one at some face, or a stream beyond the inlet temperatures).
    #[error(
        "the solution breaks the second law by {} K at x = {} m (hot colder than cold, or a stream beyond the inlet \
         temperatures) with {cells} cells, largest cell NTU {}. {}",
        crate::text::num(*deficit_k), crate::text::num(*position_m), crate::text::num(*max_cell_ntu), advice_for(*suggested_cells, *max_cell_ntu)
    )]
    GridTooCoarse {
        /// Cells used.
        cells: usize,
        /// Largest UA·Δx/C_min of a cell.
        max_cell_ntu: f64,
        /// Where the violation is largest, m.
        position_m: f64,
        /// Size of the violation there, K.
        deficit_k: f64,
        /// Cells that bring the largest cell NTU to 0.5, where the cells are the cause
        /// (None: the cells are already short, so more of them would not help).
        suggested_cells: Option<usize>,
    },
    /// The local absolute pressure falls to zero or below: the pressure drop exceeds what the
    /// inlet pressure allows.
    #[error(
        "the {stream} stream's absolute pressure falls to {} bar at x = {} m (inlet {} bar, drop {} bar so far): the pressure drop is larger than the inlet pressure allows. Raise {stream}.pressure_bar_abs, or reduce the flow or the length, or enlarge the passage",
        crate::text::num(*pressure_pa * 1e-5), crate::text::num(*position_m), crate::text::num(*inlet_pa * 1e-5), crate::text::num((*inlet_pa - *pressure_pa) * 1e-5)
    )]
    NegativePressure {
        /// "hot" or "cold".
        stream: &'static str,
        /// Where, m.
        position_m: f64,
        /// Local absolute pressure, Pa.
        pressure_pa: f64,
        /// Inlet pressure, Pa.
        inlet_pa: f64,
    },
    /// A liquid's local pressure falls below its saturation pressure at the local
    /// temperature: it would flash to vapour.
    #[error(
        "the {stream} stream flashes: at x = {} m its pressure {} bar is below the saturation pressure {} bar of the liquid at {} °C; hxgrid models one phase and does not compute boiling. Raise {stream}.pressure_bar_abs, or reduce the pressure drop",
        crate::text::num(*position_m), crate::text::num(*pressure_pa * 1e-5), crate::text::num(*saturation_pa * 1e-5), crate::text::num(*temperature_c)
    )]
    Flashing {
        /// "hot" or "cold".
        stream: &'static str,
        /// Where, m.
        position_m: f64,
        /// Local absolute pressure, Pa.
        pressure_pa: f64,
        /// Saturation pressure at the local temperature, Pa.
        saturation_pa: f64,
        /// Local temperature, °C.
        temperature_c: f64,
    },
    /// Both flows are zero: no steady state is defined.
    #[error("both flows are zero, so the steady state is not defined (it depends on the history): start a transient with initial = \"uniform\", or keep one flow running")]
    NoFlow,
    /// The hot inlet is not hotter than the cold inlet (possible through schedules).
    #[error(
        "the hot inlet ({} °C) is not hotter than the cold inlet ({} °C){}: the hot stream must be the hotter one at its inlet; \
         change the inlet temperatures or their schedules (or swap [hot] and [cold])",
        crate::text::num(*hot_c), crate::text::num(*cold_c), at.map(|t| format!(" at t = {} s", crate::text::num(t))).unwrap_or_default()
    )]
    InletsReversed {
        /// Hot inlet, °C.
        hot_c: f64,
        /// Cold inlet, °C.
        cold_c: f64,
        /// Time in a transient, s.
        at: Option<f64>,
    },
    /// The converged state leaves a fluid's valid range.
    #[error(
        "the {stream} stream reaches {} °C at x = {} m{}, outside the valid range {} … {} °C of {fluid} ({reason})",
        crate::text::num(*temperature_c), crate::text::num(*position_m),
        time_s.map(|t| format!(" at t = {} s", crate::text::num(t))).unwrap_or_default(),
        crate::text::num(*min_c), crate::text::num(*max_c)
    )]
    LeftRange {
        /// Time in a transient, s (None for a steady solve).
        time_s: Option<f64>,
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

/// What to do about a second-law violation.
fn advice_for(suggested: Option<usize>, max_cell_ntu: f64) -> String {
    match suggested {
        Some(n) => format!(
            "The cells are too long for the scheme: use at least {n} cells ([solver] cells), or scheme = \"upwind\", which stays monotone on coarse grids"
        ),
        None => format!(
            "The cells are already short (largest cell NTU {}), so more cells will not help: check the inputs \
             (property data that are not smooth, a fluid table with too few rows, extreme film coefficients)",
            crate::text::num(max_cell_ntu)
        ),
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

/// The Newton matrix: block tridiagonal when each cell reaches only its neighbours,
/// banded otherwise (TVD).
#[derive(Debug, Clone)]
pub(crate) enum Jacobian {
    /// 3×3 blocks, neighbours only.
    Tri(BlockTridiagonal),
    /// Scalar band, reach two cells.
    Band(Banded),
}

impl Jacobian {
    /// A zero matrix suited to the grid's reach.
    pub(crate) fn for_grid(grid: &Grid) -> Self {
        if grid.reach() <= 1 {
            Jacobian::Tri(BlockTridiagonal::zeros(grid.n))
        } else {
            let k = 3 * grid.reach() + 2;
            Jacobian::Band(Banded::zeros(3 * grid.n, k, k))
        }
    }

    fn clear(&mut self) {
        match self {
            Jacobian::Tri(m) => m.clear(),
            Jacobian::Band(m) => m.clear(),
        }
    }

    /// Add `v` to the derivative of cell `i`'s residual `row` by cell (i + off)'s unknown `comp`.
    #[inline]
    pub(crate) fn add(&mut self, i: usize, row: usize, off: isize, comp: usize, v: f64) {
        match self {
            Jacobian::Tri(m) => {
                let block = match off {
                    -1 => &mut m.lower[i],
                    0 => &mut m.diag[i],
                    _ => &mut m.upper[i],
                };
                block[(row, comp)] += v;
            }
            Jacobian::Band(m) => m.add(3 * i + row, (3 * i as isize + 3 * off) as usize + comp, v),
        }
    }

    /// The matrix multiplied by `s`.
    pub(crate) fn scaled(mut self, s: f64) -> Self {
        match &mut self {
            Jacobian::Tri(m) => {
                for b in m.lower.iter_mut().chain(m.diag.iter_mut()).chain(m.upper.iter_mut()) {
                    *b *= s;
                }
            }
            Jacobian::Band(m) => m.scale(s),
        }
        self
    }

    /// Add `v` on the diagonal of cell `i`, component `comp` (storage terms).
    pub(crate) fn add_diagonal(&mut self, i: usize, comp: usize, v: f64) {
        self.add(i, comp, 0, comp, v);
    }

    /// Solve J Δ = b in place; Err(cell) if singular.
    pub(crate) fn solve(&mut self, b: &mut [Vector3<f64>]) -> Result<(), usize> {
        match self {
            Jacobian::Tri(m) => m.solve(b),
            Jacobian::Band(m) => {
                let mut flat: Vec<f64> = b.iter().flat_map(|v| [v[0], v[1], v[2]]).collect();
                m.solve(&mut flat).map_err(|k| k / 3)?;
                for (i, v) in b.iter_mut().enumerate() {
                    *v = Vector3::new(flat[3 * i], flat[3 * i + 1], flat[3 * i + 2]);
                }
                Ok(())
            }
        }
    }
}

/// Assemble the Jacobian of the residuals: the cell model's derivatives with respect to its
/// seven inputs, chained through the scheme's reconstruction.
pub(crate) fn jacobian(ex: &Exchanger, lay: &Grid, dx: f64, x: &[Vector3<f64>], jac: &mut Jacobian) {
    jac.clear();
    for i in 0..lay.n {
        let (_, local) = ex.cell_with_jacobian(dx, &lay.cell_temps(x, i));
        let deps = lay.dependencies(x, i);
        for (k, dep) in deps.iter().enumerate() {
            for &(off, comp, w) in dep {
                if w == 0.0 {
                    continue;
                }
                for (row, local_row) in local.iter().enumerate() {
                    jac.add(i, row, off, comp, local_row[k] * w);
                }
            }
        }
    }
}

/// Initial guess: each stream's enthalpy varies linearly along the length between its
/// inlet and an ε–NTU outlet estimate, and temperatures follow from T(h). Capacity rates
/// are the mean ṁ·Δh/ΔT over the inlet-to-inlet span and the films are taken at the inlets,
/// so a stream with a strong cp peak (supercritical CO₂) starts with the right shape: its
/// temperature is flat where cp is large.
fn initial_guess(ex: &Exchanger, lay: &Grid) -> Vec<Vector3<f64>> {
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

/// The steady state with a stream stopped. With no flow a stream carries no enthalpy, so in
/// every cell its film carries no heat: the wall and the stopped fluid sit at the flowing
/// stream's temperature, which passes unchanged (its inlet everywhere), and the duty is zero.
/// Uniform values satisfy every scheme's cell balances exactly. With both stopped the steady
/// state is not defined (it depends on the history).
fn stopped_flow_state(ex: &Exchanger, lay: &Grid, dx: f64) -> Result<Option<SteadySolution>, SolveError> {
    let (hot_stopped, cold_stopped) = (ex.hot.mass_flow_kg_s <= 0.0, ex.cold.mass_flow_kg_s <= 0.0);
    let t = match (hot_stopped, cold_stopped) {
        (false, false) => return Ok(None),
        (true, true) => return Err(SolveError::NoFlow),
        (true, false) => ex.cold.inlet_c,
        (false, true) => ex.hot.inlet_c,
    };
    let x = vec![Vector3::new(t, t, t); lay.n];
    Ok(Some(unpack(lay, dx, &x, 0, 0.0)))
}

/// Solve the steady state of `ex` on `settings.cells` cells.
pub fn solve_steady(ex: &Exchanger, settings: &SteadySettings, observer: &mut dyn Observer) -> Result<SteadySolution, SolveError> {
    let n = settings.cells.max(1);
    let dx = ex.length_m / n as f64;
    let lay = Grid { arrangement: ex.arrangement, n, scheme: ex.scheme, hot_in_c: ex.hot.inlet_c, cold_in_c: ex.cold.inlet_c };
    if let Some(stopped) = stopped_flow_state(ex, &lay, dx)? {
        return Ok(stopped);
    }
    let scale = ex.max_duty_w().abs().max(f64::MIN_POSITIVE);
    // The residual cannot go below the round-off in the enthalpy differences, which grows
    // with a stream's ṁ·|h|: a stream with 10⁶ times the other's capacity would otherwise
    // never meet a tolerance relative to the duty. Converge at whichever is larger.
    let roundoff = {
        let size = |s: &crate::model::Stream| s.mass_flow_kg_s * (s.fluid.enthalpy(ex.hot.inlet_c).abs() + s.fluid.enthalpy(ex.cold.inlet_c).abs());
        16.0 * f64::EPSILON * n as f64 * (size(&ex.hot) + size(&ex.cold))
    };
    let target = (settings.tolerance * scale).max(roundoff);
    let mut x = initial_guess(ex, &lay);
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

/// The hot stream must not be colder than the cold stream at any face. The trapezoidal
/// scheme (like Crank–Nicolson in time) stops being monotone when a cell's NTU exceeds about
/// 2; the error names the grid that fixes it instead of returning an impossible profile.
fn check_second_law(ex: &Exchanger, s: &SteadySolution) -> Result<(), SolveError> {
    let (th, tc) = (ex.hot.inlet_c, ex.cold.inlet_c);
    if th <= tc {
        return Err(SolveError::InletsReversed { hot_c: th, cold_c: tc, at: None });
    }
    let tol = 1e-9 * (th - tc).abs().max(1.0);
    // Violation at each face: hot below cold, or either stream outside [T_c,in, T_h,in].
    let worst = s
        .hot_faces_c
        .iter()
        .zip(&s.cold_faces_c)
        .enumerate()
        .map(|(j, (&h, &c))| (j, (c - h).max(tc - h).max(h - th).max(tc - c).max(c - th)))
        .fold((0, f64::NEG_INFINITY), |a, b| if b.1 > a.1 { b } else { a });
    if worst.1 <= tol {
        return Ok(());
    }
    let max_cell_ntu = (0..s.cells)
        .map(|i| {
            let d = ex.cell(s.dx_m, &s.cell_temps(i));
            let c_min = (ex.hot.mass_flow_kg_s * d.hot_props.cp).min(ex.cold.mass_flow_kg_s * d.cold_props.cp);
            d.ua_per_length_w_mk * s.dx_m / c_min.max(f64::MIN_POSITIVE)
        })
        .fold(0.0, f64::max);
    Err(SolveError::GridTooCoarse {
        cells: s.cells,
        max_cell_ntu,
        position_m: worst.0 as f64 * s.dx_m,
        deficit_k: worst.1,
        suggested_cells: suggested_cells(s.cells, max_cell_ntu),
    })
}

/// Cells for a largest cell NTU of 0.5 (four times inside the trapezoidal scheme's limit of
/// about 2), rounded up to a round number; None where the cells are not the cause (already
/// below 0.5) or no grid within the limit would do.
fn suggested_cells(cells: usize, max_cell_ntu: f64) -> Option<usize> {
    if !(max_cell_ntu.is_finite() && max_cell_ntu > 0.5) {
        return None;
    }
    let raw = cells as f64 * max_cell_ntu / 0.5;
    let step = 10f64.powf(raw.log10().floor() - 1.0).max(1.0);
    let n = (raw / step).ceil() * step;
    (n <= crate::solve::MAX_CELLS as f64).then_some(n as usize).filter(|&n| n > cells)
}

fn check_ranges(ex: &Exchanger, s: &SteadySolution) -> Result<(), SolveError> {
    check_faces_in_range(ex, &s.hot_faces_c, &s.cold_faces_c, s.dx_m, None)
}

/// Every face of both streams inside its fluid's valid range, walking each stream in its
/// own flow direction so the first face reported is where it first leaves the range; `time`
/// (s) is named in the message for transients.
pub(crate) fn check_faces_in_range(ex: &Exchanger, hot: &[f64], cold: &[f64], dx: f64, time: Option<f64>) -> Result<(), SolveError> {
    for (name, stream, faces) in [("hot", &ex.hot, hot), ("cold", &ex.cold, cold)] {
        let (min_c, max_c) = stream.fluid.bounds();
        let reversed = name == "cold" && ex.arrangement == Arrangement::Counterflow;
        let order: Box<dyn Iterator<Item = (usize, &f64)>> =
            if reversed { Box::new(faces.iter().enumerate().rev()) } else { Box::new(faces.iter().enumerate()) };
        for (j, &t) in order {
            if !(t >= min_c - 1e-9 && t <= max_c + 1e-9) {
                let range = stream.fluid.range();
                return Err(SolveError::LeftRange {
                    time_s: time,
                    stream: name,
                    fluid: stream.fluid.name(),
                    position_m: j as f64 * dx,
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
                let dense = |i: usize, r: usize, j: usize, c: usize| -> Option<f64> {
                    match &jac {
                        Jacobian::Tri(m) => match j as isize - i as isize {
                            -1 => Some(m.lower[i][(r, c)]),
                            0 => Some(m.diag[i][(r, c)]),
                            1 => Some(m.upper[i][(r, c)]),
                            _ => None,
                        },
                        Jacobian::Band(m) => Some(m.get(3 * i + r, 3 * j + c)),
                    }
                };
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
