//! Transient simulation: the steady cell model with storage, integrated in time (method of
//! lines).
//!
//! The right-hand side is the steady residual of each cell divided by its storage, nothing
//! else: hot fluid M_h dh/dt = (hot residual), cold fluid M_c dh/dt = −(cold residual),
//! wall C_w dT_w/dt = (wall residual). Storage sits on each cell's unknown (see
//! [`crate::model::scheme`]), so at steady state the transient is exactly the steady solver's
//! discrete problem and settles on its answer.
//!
//! States are specific enthalpies of the fluids (J/kg) and wall temperatures, plus two
//! integrals: the net enthalpy inflow of both streams and the heat given up by the hot
//! stream. Stored energy Σ M h + Σ C_w T_w and the inflow integral then differ by a linear
//! invariant of the system, which Runge–Kutta and linear multistep methods both conserve:
//! energy closure is exact to round-off and the Newton tolerance, not just to the
//! integrator's error tolerance.
//!
//! Fluid mass per cell is fixed at the density of the initial state (ρ A Δx); thermal
//! expansion of the fluid during the run is not modelled.
//!
//! Integrators: `Explicit` is Dormand–Prince 5(4) with adaptive steps (the `ode_solvers`
//! crate); `Implicit` is variable-step BDF of order 1 to 3 (see `bdf.rs`), stiffly stable,
//! with modified Newton on the same block-banded Jacobian as the steady solver.

mod bdf;
mod explicit;
mod model;
mod network;
mod signal;

use crate::model::Exchanger;
use crate::solve::{solve_steady, SilentObserver, SolveError, SteadySettings};
use bdf::*;
use explicit::*;
use model::*;
use nalgebra::{DVector, Vector3};
pub use network::{simulate_network, NetworkRun};
pub use signal::{Change, Inputs, Signal};

/// Where the run starts.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Initial {
    /// Fluids and wall all at this temperature, °C (a cold or hot start).
    Uniform(f64),
    /// The steady solution for the inputs at t = 0.
    Steady,
}

/// Time integrator.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Integrator {
    /// Dormand–Prince 5(4), adaptive (non-stiff runs).
    Explicit,
    /// Variable-step BDF (orders 1–3; BDF2 on networks) with modified Newton (stiff runs,
    /// fine grids, gases, long times).
    Implicit,
}

/// Transient settings (see `Default` for the values used when a case omits them).
#[derive(Debug, Clone, PartialEq)]
pub struct TransientSettings {
    /// Cells.
    pub cells: usize,
    /// Simulated time, s.
    pub duration_s: f64,
    /// Interval of the time series, s.
    pub output_interval_s: f64,
    /// Integrator.
    pub integrator: Integrator,
    /// Absolute tolerance on temperatures, K (default 1e-3).
    pub atol_k: f64,
    /// Relative tolerance on temperatures in °C (default 1e-5).
    pub rtol: f64,
    /// Step limit for the whole run (default 5·10⁶).
    pub max_steps: usize,
    /// Initial state.
    pub initial: Initial,
    /// Wall heat capacity per metre of exchanger length, J/(m·K), fins included (fin metal
    /// is taken at the wall's temperature).
    pub wall_heat_capacity_j_mk: f64,
    /// Heat capacity per metre of metal that follows one stream's temperature (the outer
    /// pipe of a double pipe, with the annulus fluid): (0 hot / 1 cold, J/(m·K)).
    pub shell: Option<(crate::model::Side, f64)>,
    /// Times at which whole profiles are kept, s.
    pub snapshot_times_s: Vec<f64>,
}

impl Default for TransientSettings {
    fn default() -> Self {
        Self {
            cells: 100,
            duration_s: 600.0,
            output_interval_s: 1.0,
            integrator: Integrator::Implicit,
            atol_k: 1e-3,
            rtol: 1e-5,
            max_steps: 5_000_000,
            initial: Initial::Steady,
            wall_heat_capacity_j_mk: 0.0,
            shell: None,
            snapshot_times_s: Vec::new(),
        }
    }
}

/// One row of the time series.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
#[allow(non_snake_case)]
pub struct Sample {
    /// Time, s.
    pub time_s: f64,
    /// Hot inlet, °C.
    pub hot_inlet_C: f64,
    /// Cold inlet, °C.
    pub cold_inlet_C: f64,
    /// Hot flow, kg/s.
    pub hot_flow_kg_s: f64,
    /// Cold flow, kg/s.
    pub cold_flow_kg_s: f64,
    /// Hot outlet, °C.
    pub hot_outlet_C: f64,
    /// Cold outlet, °C.
    pub cold_outlet_C: f64,
    /// Enthalpy flow given up by the hot stream, ṁ_h (h_in − h_out), W.
    pub hot_duty_W: f64,
    /// Enthalpy flow taken by the cold stream, ṁ_c (h_out − h_in), W.
    pub cold_duty_W: f64,
    /// Energy stored in both fluids, J (enthalpy reference of each fluid).
    pub fluid_energy_J: f64,
    /// Energy stored in the wall, J (relative to 0 °C).
    pub wall_energy_J: f64,
    /// Hottest wall cell, °C.
    pub max_wall_C: f64,
    /// Where the wall is hottest, m (a network: the first direction).
    pub max_wall_at_m: f64,
    /// Fastest wall temperature change of any cell, K/s (signed).
    pub max_wall_rate_K_s: f64,
    /// Where the wall changes fastest, m.
    pub max_wall_rate_at_m: f64,
    /// Largest temperature difference through the wall's thickness (hot metal face − cold
    /// metal face, signed), K: R'_wall/2 · (q'_hot→wall + q'_wall→cold). With the implicit
    /// integrator on an axial line, the largest over the steps since the previous output.
    pub max_wall_difference_K: f64,
    /// Where that difference is largest, m.
    pub max_wall_difference_at_m: f64,
    /// ∫ net enthalpy inflow of both streams dt since t = 0, J.
    pub net_inflow_J: f64,
    /// ∫ hot duty dt since t = 0, J.
    pub hot_heat_J: f64,
}

/// Whole profiles at one time.
#[derive(Debug, Clone, PartialEq)]
pub struct Snapshot {
    /// Time, s.
    pub time_s: f64,
    /// Hot face temperatures at x = 0, Δx, …, L, °C.
    pub hot_faces_c: Vec<f64>,
    /// Cold face temperatures, °C.
    pub cold_faces_c: Vec<f64>,
    /// Wall at cell centres, °C.
    pub wall_c: Vec<f64>,
}

/// Integrator statistics.
#[derive(Debug, Clone, Default, PartialEq, serde::Serialize)]
pub struct Stats {
    /// Accepted steps.
    pub steps: usize,
    /// Rejected steps.
    pub rejected_steps: usize,
    /// Jacobian evaluations (implicit).
    pub jacobian_evaluations: usize,
    /// Right-hand-side evaluations.
    pub rhs_evaluations: usize,
    /// Newton iterations (implicit).
    pub newton_iterations: usize,
    /// Factorisations of the Newton matrix (implicit).
    pub factorisations: usize,
    /// Largest local error estimate of any accepted step, over all temperatures, K
    /// (implicit; each step keeps it below tolerance_K + relative_tolerance·|T|).
    #[serde(rename = "largest_local_error_K")]
    pub largest_local_error_k: f64,
    /// Sum of the accepted steps' largest local error estimates, K: a bound on the
    /// accumulated time-integration error for a run that damps disturbances (pessimistic:
    /// an exchanger forgets errors older than its residence and wall time constants).
    #[serde(rename = "accumulated_local_error_K")]
    pub accumulated_local_error_k: f64,
}

/// The result of a transient run.
#[derive(Debug, Clone)]
pub struct TransientRun {
    /// Time series at the output interval (and at t = 0 and the end).
    pub samples: Vec<Sample>,
    /// Profiles at the requested times (nearest output times).
    pub snapshots: Vec<Snapshot>,
    /// Final state.
    pub final_snapshot: Snapshot,
    /// Integrator statistics.
    pub stats: Stats,
    /// Cells.
    pub cells: usize,
    /// Set when the run ended early on a physical limit (a stream reaching saturation or
    /// leaving its fluid's data); the samples then end at that time.
    pub stopped: Option<Stop>,
}

/// Why and where a run ended early.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
#[allow(non_snake_case)]
pub struct Stop {
    /// First output time at which the limit was found, s (the limit was crossed after the
    /// output before it).
    pub time_s: f64,
    /// Which stream.
    pub stream: crate::model::Side,
    /// Where, m.
    pub position_m: f64,
    /// The temperature reached there, °C.
    pub temperature_C: f64,
    /// What the limit is, as a sentence.
    pub reason: String,
}

/// Hears about progress (the binary draws a progress bar).
pub trait TransientObserver {
    /// Called at each output time.
    fn progress(&mut self, _t: f64, _t_end: f64) {}
}

impl TransientObserver for SilentObserver {}

/// Why a transient run could not start or finish.
#[derive(Debug, Clone, thiserror::Error, PartialEq)]
pub enum TransientError {
    /// A solver failure (initial steady state, Newton, or a fluid leaving its range).
    #[error(transparent)]
    Solve(#[from] SolveError),
    /// The integrator could not advance.
    #[error("the {integrator} integrator stopped in the step range starting at t = {} s: {reason}", crate::text::num(*time_s))]
    Stalled {
        /// Which integrator.
        integrator: &'static str,
        /// Time reached, s.
        time_s: f64,
        /// Why.
        reason: String,
    },
    /// The exchanger lacks data the transient needs.
    #[error("{0}")]
    Missing(String),
    /// A temperature left the range spanned by the inlets (over their schedules) and the
    /// initial state: heat would have flowed from cold to hot.
    #[error(
        "at t = {} s the {what} reaches {} °C at x = {} m, outside {} … {} °C, the range of the inlet temperatures (over their schedules) and the initial state: the discrete solution breaks the second law",
        crate::text::num(*time_s), crate::text::num(*value_c), crate::text::num(*position_m), crate::text::num(*min_c), crate::text::num(*max_c)
    )]
    SecondLaw {
        /// Time, s.
        time_s: f64,
        /// "hot stream", "cold stream" or "wall".
        what: &'static str,
        /// Where, m.
        position_m: f64,
        /// The temperature, °C.
        value_c: f64,
        /// Lowest allowed, °C.
        min_c: f64,
        /// Highest allowed, °C.
        max_c: f64,
    },
}

/// Second-law bounds of a run: every temperature stays within the range of the inlet
/// temperatures over their schedules and of the initial state, widened by a round-off and
/// integration allowance of 10 tolerance_K + 10⁻⁹ of the span.
fn second_law_bounds(inputs: &Inputs, x0: &[Vector3<f64>], atol_k: f64) -> (f64, f64) {
    let (h_lo, h_hi) = inputs.hot_inlet_c.range();
    let (c_lo, c_hi) = inputs.cold_inlet_c.range();
    let (mut lo, mut hi) = (h_lo.min(c_lo), h_hi.max(c_hi));
    for x in x0 {
        for v in x.iter() {
            lo = lo.min(*v);
            hi = hi.max(*v);
        }
    }
    let margin = 10.0 * atol_k + 1e-9 * (hi - lo).abs().max(1.0);
    (lo - margin, hi + margin)
}

/// The first face or wall temperature outside `bounds`, as an error.
fn check_second_law(snap: &Snapshot, dx: f64, bounds: (f64, f64)) -> Result<(), TransientError> {
    let (lo, hi) = bounds;
    let faces = |v: &[f64], what: &'static str| v.iter().enumerate().find(|(_, t)| !(**t >= lo && **t <= hi)).map(|(j, t)| (what, j as f64 * dx, *t));
    let wall = snap.wall_c.iter().enumerate().find(|(_, t)| !(**t >= lo && **t <= hi)).map(|(i, t)| ("wall", (i as f64 + 0.5) * dx, *t));
    match faces(&snap.hot_faces_c, "hot stream").or_else(|| faces(&snap.cold_faces_c, "cold stream")).or(wall) {
        None => Ok(()),
        Some((what, position_m, value_c)) => {
            Err(TransientError::SecondLaw { time_s: snap.time_s, what, position_m, value_c, min_c: bounds.0, max_c: bounds.1 })
        }
    }
}

/// The wall at one output time, for [`Sample::at`].
pub(super) struct WallState<'a> {
    /// Wall temperature of each cell, °C.
    pub(super) wall_c: &'a [f64],
    /// The fastest-changing cell and its rate, K/s (signed).
    pub(super) rate: (usize, f64),
    /// The cell with the largest through-thickness difference and that difference, K (signed).
    pub(super) across: (usize, f64),
    /// A cell's position, m.
    pub(super) position: &'a dyn Fn(usize) -> f64,
}

/// The entry of largest magnitude (index, signed value); (0, 0) when empty.
pub(super) fn signed_largest(v: &[f64]) -> (usize, f64) {
    v.iter().enumerate().fold((0, 0.0f64), |a, (i, &x)| if x.abs() > a.1.abs() { (i, x) } else { a })
}

/// A cell's through-thickness wall difference, K: the heat into the wall from the hot side
/// and out to the cold side, each through half the wall's conduction resistance
/// `half_wall_r` (K·m/W; the caller evaluates it once, not per cell).
pub(super) fn across_wall_k(half_wall_r: f64, d: &crate::model::CellDetail, dx_m: f64) -> f64 {
    half_wall_r * (d.balance.hot_to_wall_w + d.balance.wall_to_cold_w) / dx_m
}

impl Sample {
    /// The sample at `t` for the inputs `e`: outlets (hot, cold), stored energies (fluid,
    /// wall), the wall temperatures, the fastest wall rate and the two integrals (net inflow,
    /// hot heat).
    #[allow(clippy::too_many_arguments)]
    fn at(e: &Exchanger, t: f64, outlets: (f64, f64), fluid_energy_j: f64, wall_energy_j: f64, wall: &WallState, integrals: [f64; 2]) -> Self {
        let (hf, cf) = (&e.hot.fluid, &e.cold.fluid);
        let (hot_out, cold_out) = outlets;
        let hottest = wall.wall_c.iter().enumerate().fold((0, f64::NEG_INFINITY), |a, (i, &v)| if v > a.1 { (i, v) } else { a });
        let across = wall.across;
        Sample {
            time_s: t,
            hot_inlet_C: e.hot.inlet_c,
            cold_inlet_C: e.cold.inlet_c,
            hot_flow_kg_s: e.hot.mass_flow_kg_s,
            cold_flow_kg_s: e.cold.mass_flow_kg_s,
            hot_outlet_C: hot_out,
            cold_outlet_C: cold_out,
            hot_duty_W: e.hot.mass_flow_kg_s * (hf.enthalpy(e.hot.inlet_c) - hf.enthalpy(hot_out)),
            cold_duty_W: e.cold.mass_flow_kg_s * (cf.enthalpy(cold_out) - cf.enthalpy(e.cold.inlet_c)),
            fluid_energy_J: fluid_energy_j,
            wall_energy_J: wall_energy_j,
            max_wall_C: hottest.1,
            max_wall_at_m: (wall.position)(hottest.0),
            max_wall_rate_K_s: wall.rate.1,
            max_wall_rate_at_m: (wall.position)(wall.rate.0),
            max_wall_difference_K: across.1,
            max_wall_difference_at_m: (wall.position)(across.0),
            net_inflow_J: integrals[0],
            hot_heat_J: integrals[1],
        }
    }
}

/// Stop times of a run: every output interval, every input breakpoint (so responses are
/// measured from the change itself) and the end, sorted and without repeats.
fn output_stops(inputs: &Inputs, settings: &TransientSettings) -> Vec<f64> {
    let t_end = settings.duration_s;
    let mut stops: Vec<f64> = (1..).map(|k| k as f64 * settings.output_interval_s).take_while(|&t| t < t_end - 1e-12 * t_end.max(1.0)).collect();
    stops.extend(inputs.breakpoints().into_iter().filter(|&b| b > 0.0 && b < t_end));
    stops.push(t_end);
    stops.sort_by(|a, b| a.total_cmp(b));
    stops.dedup_by(|a, b| (*a - *b).abs() < 1e-12 * t_end.max(1.0));
    stops
}

impl TransientRun {
    /// Record the output at `t`: the sample, and the snapshot where one was asked for near `t`.
    fn keep(&mut self, t: f64, sample: Sample, snap: Snapshot, settings: &TransientSettings) {
        let t_end = settings.duration_s;
        for &ts in &settings.snapshot_times_s {
            let nearest = (ts / settings.output_interval_s).round() * settings.output_interval_s;
            if (t - nearest.min(t_end)).abs() < 1e-9 * t_end.max(1.0) && !self.snapshots.iter().any(|s| s.time_s == t) {
                self.snapshots.push(snap.clone());
            }
        }
        self.samples.push(sample);
        self.final_snapshot = snap;
    }

    /// End the run early at `t` because of `e` (a stream left its fluid's data), keeping the
    /// last state inside the limits as a snapshot; Err for any other failure.
    fn stop_on(&mut self, t: f64, e: SolveError) -> Result<(), TransientError> {
        match e {
            SolveError::LeftRange { stream, position_m, temperature_c, .. } => {
                self.stopped = Some(Stop { time_s: t, stream, position_m, temperature_C: temperature_c, reason: e.to_string() });
                if self.snapshots.last().map(|s| s.time_s) != Some(self.final_snapshot.time_s) {
                    self.snapshots.push(self.final_snapshot.clone());
                }
                Ok(())
            }
            other => Err(other.into()),
        }
    }
}

/// Take one accepted step of an implicit integrator from `*t` towards `stop` (never past
/// it): `try_step(h)` gives Ok(next step) for an accepted step and Err(next step) for a
/// rejected one.
fn step_once(
    t: &mut f64,
    h: &mut f64,
    stop: f64,
    settings: &TransientSettings,
    stats: &mut Stats,
    mut try_step: impl FnMut(f64, &mut Stats) -> Result<Result<f64, f64>, TransientError>,
) -> Result<(), TransientError> {
    loop {
        // Land on `stop` rather than leave a sliver of a step before it.
        let left = stop - *t;
        let step = if *h >= left * 0.999 { left } else { h.min(left) };
        let result = try_step(step, stats)?;
        if stats.steps + stats.rejected_steps > settings.max_steps {
            return Err(TransientError::Stalled { integrator: "implicit", time_s: *t, reason: format!("more than {} steps", settings.max_steps) });
        }
        match result {
            Ok(next) => {
                stats.steps += 1;
                *t = if step == left { stop } else { *t + step };
                // A step cut short to land on `stop` does not shrink the next one.
                *h = if step < *h { next.max(*h) } else { next };
                return Ok(());
            }
            Err(next) => {
                stats.rejected_steps += 1;
                *h = next;
                if *h < 1e-12 * stop.max(1.0) {
                    return Err(TransientError::Stalled { integrator: "implicit", time_s: *t, reason: "step size underflow".into() });
                }
            }
        }
    }
}

/// Where implicit steps must end: each input breakpoint inside the run (a schedule's kink or
/// jump) and the end.
fn hard_stops(inputs: &Inputs, settings: &TransientSettings) -> Vec<f64> {
    let t_end = settings.duration_s;
    let mut stops: Vec<f64> = inputs.breakpoints().into_iter().filter(|&b| b > 0.0 && b < t_end).collect();
    stops.push(t_end);
    stops.sort_by(|a, b| a.total_cmp(b));
    stops.dedup_by(|a, b| (*a - *b).abs() < 1e-12 * t_end.max(1.0));
    stops
}

/// Run a transient simulation of `ex` under `inputs`.
pub fn simulate(ex: &Exchanger, inputs: &Inputs, settings: &TransientSettings, observer: &mut dyn TransientObserver) -> Result<TransientRun, TransientError> {
    let n = settings.cells.max(1);
    let dx = ex.length_m / n as f64;
    // Initial temperatures, for the inputs just before t = 0.
    let e0 = inputs.apply_before(ex, 0.0);
    let x0: Vec<Vector3<f64>> = match settings.initial {
        Initial::Uniform(t) => vec![Vector3::new(t, t, t); n],
        Initial::Steady => {
            let s = solve_steady(&e0, &SteadySettings { cells: n, ..SteadySettings::default() }, &mut SilentObserver)?;
            s.unknowns
        }
    };
    let volume = |s: &crate::model::Stream, side: &str| {
        s.channel.volume_per_length_m2.ok_or_else(|| {
            TransientError::Missing(format!(
                "the {side} stream has no fluid volume: a transient needs geometry.{side}_flow_area_m2 (plane wall) to know how much fluid each cell holds"
            ))
        })
    };
    let (v_hot, v_cold) = (volume(&ex.hot, "hot")?, volume(&ex.cold, "cold")?);
    let mut mass = [
        x0.iter().map(|x| ex.hot.fluid.props(x[0]).density * v_hot * dx).collect::<Vec<f64>>(),
        x0.iter().map(|x| ex.cold.fluid.props(x[1]).density * v_cold * dx).collect::<Vec<f64>>(),
    ];
    // Shell metal stored with its stream, as an equivalent fluid mass C_s/cp at each cell's
    // initial cp: the state stays linear in the enthalpies, so energy closure stays exact;
    // the shell's capacity is then right to the change of cp over the run (0.5 % for water
    // from 15 to 95 °C).
    if let Some((side, capacity)) = settings.shell {
        let fluid = &ex.stream(side).fluid;
        for (m, x) in mass[side.index()].iter_mut().zip(&x0) {
            *m += capacity * dx / fluid.props(x[side.index()]).cp;
        }
    }
    if settings.wall_heat_capacity_j_mk.is_nan() || settings.wall_heat_capacity_j_mk <= 0.0 {
        return Err(TransientError::Missing("the wall heat capacity must be positive: give the wall's density and specific heat".into()));
    }
    let model = Model { ex, inputs, n, dx, mass, wall_capacity: settings.wall_heat_capacity_j_mk * dx };
    let mut y = DVector::zeros(model.len());
    for i in 0..n {
        y[i] = ex.hot.fluid.enthalpy(x0[i][0]);
        y[n + i] = ex.cold.fluid.enthalpy(x0[i][1]);
        y[2 * n + i] = x0[i][2];
    }
    let t_end = settings.duration_s;
    let stops = output_stops(inputs, settings);
    let outputs: Vec<f64> = stops.clone();

    let mut run =
        TransientRun { samples: Vec::new(), snapshots: Vec::new(), final_snapshot: model.sample(0.0, &y).1, stats: Stats::default(), cells: n, stopped: None };
    let bounds = second_law_bounds(inputs, &x0, settings.atol_k);
    // Ok(false): a physical limit was reached at this output; the run ends here, with its
    // results up to the output before.
    let record = |run: &mut TransientRun, t: f64, (sample, snap): (Sample, Snapshot), model: &Model| -> Result<bool, TransientError> {
        if let Err(e) = model.check(t, &snap) {
            run.stop_on(t, e)?;
            return Ok(false);
        }
        check_second_law(&snap, model.dx, bounds)?;
        run.keep(t, sample, snap, settings);
        Ok(true)
    };
    if !record(&mut run, 0.0, model.sample(0.0, &y), &model)? {
        return Ok(run);
    }
    // Outputs are sorted: look up the nearest by bisection (a linear scan made long runs O(n²)).
    let is_output = |t: f64| {
        let k = outputs.partition_point(|&o| o < t);
        t == t_end || [k.checked_sub(1), Some(k)].into_iter().flatten().filter_map(|j| outputs.get(j)).any(|&o| (o - t).abs() < 1e-12 * t_end.max(1.0))
    };
    match settings.integrator {
        Integrator::Explicit => {
            // One integration per output interval, restarted from the integrator's own end
            // state. Dormand–Prince's dense output was tried: on these stiff problems the
            // explicit method hovers at its stability limit and its interpolant there was off
            // by 0.15 K at a segment end on a steady start (the step states are not).
            let mut t = 0.0;
            for &stop in &stops {
                let (y1, st) = explicit_segment(&model, t, stop, &y, settings)?;
                run.stats.steps += st.accepted_steps as usize;
                run.stats.rejected_steps += st.rejected_steps as usize;
                run.stats.rhs_evaluations += st.num_eval as usize;
                y = y1;
                t = stop;
                if is_output(t) {
                    if !record(&mut run, t, model.sample(t, &y), &model)? {
                        break;
                    }
                    observer.progress(t, t_end);
                }
                if run.stats.steps > settings.max_steps {
                    return Err(TransientError::Stalled { integrator: "explicit", time_s: t, reason: format!("more than {} steps", settings.max_steps) });
                }
            }
        }
        Integrator::Implicit => {
            let mut bdf = Bdf::new(&model, &y, settings);
            let eps = 1e-12 * t_end.max(1.0);
            let mut next = outputs.partition_point(|&o| o <= eps);
            // The largest difference through the wall over the steps since the last output
            // (from each step's own right-hand side: no extra evaluation).
            let mut across = (0, 0.0f64);
            'run: for stop in hard_stops(inputs, settings) {
                while bdf.t < stop - eps {
                    bdf.step(&model, stop, settings, &mut run.stats)?;
                    let this_step = bdf.wall_difference();
                    if this_step.1.abs() > across.1.abs() {
                        across = this_step;
                    }
                    while next < outputs.len() && outputs[next] <= bdf.t + eps {
                        let t = outputs[next];
                        // At a step's end the interpolant's weights are exactly (0, 0, 1).
                        let (yt, xt, rate) = bdf.dense(&model, t.min(bdf.t));
                        if !record(&mut run, t, model.sample_from(t, &yt, &xt, rate, across), &model)? {
                            break 'run;
                        }
                        across = this_step;
                        observer.progress(t, t_end);
                        next += 1;
                    }
                }
            }
        }
    }
    Ok(run)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The second-law bound spans the inlets over their schedules and the initial state, and
    /// a temperature outside it (the 115 °C stagnant cell the face-mean scheme once produced
    /// with a 95 °C hot inlet) is refused, naming where and when.
    #[test]
    fn second_law_check_spans_schedules_and_initial_state() {
        let inputs = Inputs {
            hot_inlet_c: Signal::Ramp { start_s: 10.0, end_s: 20.0, from: 95.0, to: 99.0 },
            hot_flow_kg_s: Signal::Constant(1.0),
            cold_inlet_c: Signal::Step { time_s: 5.0, before: 8.0, after: 12.0 },
            cold_flow_kg_s: Signal::Table(vec![(0.0, 1.0), (10.0, 0.0)]),
        };
        let x0 = vec![Vector3::new(15.0, 15.0, 15.0); 3];
        let (lo, hi) = second_law_bounds(&inputs, &x0, 1e-4);
        assert!((lo - 8.0).abs() < 2e-3 && (hi - 99.0).abs() < 2e-3, "{lo} {hi}");
        let snap = |cold: f64| Snapshot { time_s: 1100.0, hot_faces_c: vec![95.0; 4], cold_faces_c: vec![20.0, cold, 20.0, 20.0], wall_c: vec![50.0; 3] };
        assert!(check_second_law(&snap(90.0), 0.5, (lo, hi)).is_ok());
        let e = check_second_law(&snap(115.0), 0.5, (lo, hi)).unwrap_err();
        assert!(matches!(e, TransientError::SecondLaw { what: "cold stream", .. }), "{e}");
        assert!(e.to_string().contains("t = 1100 s") && e.to_string().contains("x = 0.5 m"), "{e}");
    }

    /// A step at t = 0 is seen just after 0: the initial state uses the value before it.
    #[test]
    fn a_step_at_zero_acts_after_the_initial_state() {
        let step = Signal::Step { time_s: 0.0, before: 95.0, after: 85.0 };
        assert_eq!(step.before(0.0), 95.0);
        assert_eq!(step.at(0.0), 85.0);
        assert_eq!(step.before(1.0), 85.0);
    }
}
