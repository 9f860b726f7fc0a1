//! Transients on a cell network: the network's steady balances (the one cell model in every
//! cell) with storage, integrated by variable-step BDF2 (backward Euler first) with Newton on
//! the network's own Jacobian plus storage.
//!
//! Storage: the fluid of every cell (ρ at the initial state × its share of the stream's
//! volume) sits on the node its stream leaves into — a mixed row's cells store together on
//! their shared node — and each cell's wall on its wall temperature. Headers store nothing:
//! their balances stay algebraic (BDF2 handles such index-1 equations as they are). States are
//! the stored enthalpies M·h and wall energies C·T, so, as on an axial line, energy closure
//! holds to round-off: the inflow integrals are advanced by the same BDF formula.

use super::*;
use crate::model::network::{Network, NodeKind};
use crate::model::{Layout, Side};
use crate::solve::network::{temps, CellBlock, Storage, System};
use crate::solve::sparse::Linear;
use crate::solve::{solve_network, SolveError};

/// A network run: the samples and snapshots (per cell: hot bulk, cold bulk, wall) of a
/// [`TransientRun`], and the network they belong to.
#[derive(Debug, Clone)]
pub struct NetworkRun {
    /// The run; each snapshot holds one value per cell (in the network's cell order).
    pub run: TransientRun,
    /// The network (cell indices and positions for reports).
    pub network: Network,
}

/// Everything fixed during a network run.
struct NetModel<'a> {
    ex: &'a Exchanger,
    inputs: &'a Inputs,
    net: &'a Network,
    /// σ·M per node (σ = +1 hot, −1 cold; 0 for headers), kg.
    signed_mass: Vec<f64>,
    /// Wall heat capacity per cell, J/K.
    wall_cap: Vec<f64>,
}

impl NetModel<'_> {
    fn system<'e>(&'e self, e: &'e Exchanger) -> System<'e> {
        System { ex: e, net: self.net, inlet: [e.hot.inlet_c, e.cold.inlet_c] }
    }

    /// Stored energy per unknown: M·h for cell-outlet nodes (0 for headers), C·T for walls.
    fn stored(&self, z: &[f64], out: &mut Vec<f64>) {
        out.clear();
        let nn = self.net.nodes.len();
        for (n, node) in self.net.nodes.iter().enumerate() {
            let f = &self.ex.stream(node.side).fluid;
            out.push(self.signed_mass[n].abs() * if self.signed_mass[n] != 0.0 { f.enthalpy(z[n]) } else { 0.0 });
        }
        out.extend(self.wall_cap.iter().zip(&z[nn..]).map(|(c, t)| c * t));
    }

    /// (net enthalpy inflow of both streams, hot duty), W, for the inputs `e`.
    fn inflows(&self, e: &Exchanger, z: &[f64]) -> (f64, f64) {
        let out = |side: Side| z[self.net.outlet[side.index()]];
        let (hf, cf) = (&e.hot.fluid, &e.cold.fluid);
        let hot = e.hot.mass_flow_kg_s * (hf.enthalpy(e.hot.inlet_c) - hf.enthalpy(out(Side::Hot)));
        let cold = e.cold.mass_flow_kg_s * (cf.enthalpy(e.cold.inlet_c) - cf.enthalpy(out(Side::Cold)));
        (hot + cold, hot)
    }

    /// The output at `t`; `max_rate` is the fastest wall rate (K/s, signed) where the
    /// integrator's interpolant gives it, else one residual evaluation does.
    fn sample(&self, t: f64, z: &[f64], integrals: [f64; 2], max_rate: Option<(usize, f64)>) -> (Sample, Snapshot) {
        let e = self.inputs.apply(self.ex, t);
        let sys = self.system(&e);
        let nn = self.net.nodes.len();
        let outlets = (z[self.net.outlet[0]], z[self.net.outlet[1]]);
        let mut stored = Vec::new();
        self.stored(z, &mut stored);
        let walls = &z[nn..];
        let rate = max_rate.unwrap_or_else(|| {
            let mut r = vec![0.0; z.len()];
            sys.residuals(z, &mut r);
            super::signed_largest(&(0..walls.len()).map(|k| r[nn + k] / self.wall_cap[k]).collect::<Vec<_>>())
        });
        let (nodes, _) = z.split_at(nn);
        let cells: Vec<_> = (0..self.net.cells.len()).map(|k| temps(self.net, e.scheme, sys.inlet, nodes, walls, k)).collect();
        let half_wall_r = 0.5 * e.wall.resistance_per_length();
        let across_k: Vec<f64> = cells
            .iter()
            .zip(&self.net.cells)
            .map(|(t, c)| {
                let dx = self.ex.length_m * c.area_share;
                super::across_wall_k(half_wall_r, &e.cell_shared(dx, c.flow_share, t), dx)
            })
            .collect();
        let wall = super::WallState { wall_c: walls, rate, across: super::signed_largest(&across_k), position: &|k| self.position_m(k) };
        let sample = Sample::at(&e, t, outlets, stored[..nn].iter().sum(), stored[nn..].iter().sum(), &wall, integrals);
        let snap = Snapshot {
            time_s: t,
            hot_faces_c: cells.iter().map(|c| c.hot_bulk).collect(),
            cold_faces_c: cells.iter().map(|c| c.cold_bulk).collect(),
            wall_c: walls.to_vec(),
        };
        (sample, snap)
    }

    /// Position of cell `k` along the first direction, m.
    fn position_m(&self, k: usize) -> f64 {
        self.net.cells.get(k).map_or(0.0, |c| c.position[0] * self.ex.length_m)
    }

    /// A node's cell (the first leaving into it), for messages.
    fn cell_of_node(&self, n: usize) -> usize {
        self.net.cells.iter().position(|c| c.out.contains(&n)).unwrap_or(0)
    }

    /// Fluid ranges (Err: where a stream left its data) and second-law bounds.
    fn check(&self, t: f64, z: &[f64], bounds: (f64, f64)) -> Result<(), TransientError> {
        let nn = self.net.nodes.len();
        for (n, node) in self.net.nodes.iter().enumerate() {
            let stream = self.ex.stream(node.side);
            let (min_c, max_c) = stream.fluid.bounds();
            if !(z[n] >= min_c - 1e-9 && z[n] <= max_c + 1e-9) {
                let range = stream.fluid.range();
                return Err(SolveError::LeftRange {
                    time_s: Some(t),
                    stream: node.side,
                    fluid: stream.fluid.name(),
                    position_m: self.position_m(self.cell_of_node(n)),
                    temperature_c: z[n],
                    min_c: range.min_c,
                    max_c: range.max_c,
                    reason: range.reason,
                }
                .into());
            }
        }
        for (i, &v) in z.iter().enumerate() {
            if !(v >= bounds.0 && v <= bounds.1) {
                let (what, k) = if i >= nn {
                    ("wall", i - nn)
                } else if self.net.nodes[i].side == Side::Hot {
                    ("hot stream", self.cell_of_node(i))
                } else {
                    ("cold stream", self.cell_of_node(i))
                };
                return Err(TransientError::SecondLaw { time_s: t, what, position_m: self.position_m(k), value_c: v, min_c: bounds.0, max_c: bounds.1 });
            }
        }
        Ok(())
    }
}

/// BDF2 state of a network run.
struct NetBdf {
    t: f64,
    h: f64,
    /// Stored energies now and at the previous point (with its step).
    stored: Vec<f64>,
    prev: Option<(Vec<f64>, [f64; 2], f64)>,
    /// Temperatures at up to three points (for the predictor and dense output).
    hist: Vec<(f64, Vec<f64>)>,
    /// The two integrals at the same points.
    ints: Vec<[f64; 2]>,
}

impl NetBdf {
    fn z(&self) -> &[f64] {
        &self.hist.last().expect("a state").1
    }

    /// The two integrals at the current point.
    fn integrals(&self) -> [f64; 2] {
        *self.ints.last().expect("a state")
    }

    /// One accepted step towards `stop` (not past it).
    fn step(&mut self, m: &NetModel, lin: &mut Linear, stop: f64, settings: &TransientSettings, stats: &mut Stats) -> Result<(), TransientError> {
        let (mut t, mut h) = (self.t, self.h);
        step_once(&mut t, &mut h, stop, settings, stats, |step, stats| self.try_step(m, lin, step, settings, stats))?;
        self.h = h;
        self.t = t;
        Ok(())
    }

    /// Dense output at `t` within the last step (the quadratic through the last three
    /// points): temperatures, integrals and the fastest wall rate, K/s.
    fn dense(&self, nn: usize, t: f64) -> (Vec<f64>, [f64; 2], (usize, f64)) {
        let times: Vec<f64> = self.hist.iter().map(|p| p.0).collect();
        let (w, dw) = (super::bdf::lagrange_weights(&times, t), super::bdf::lagrange_derivative_weights(&times, t));
        let mut z = vec![0.0; self.hist[0].1.len()];
        let mut ints = [0.0; 2];
        for ((p, i), &wj) in self.hist.iter().zip(&self.ints).zip(&w) {
            for (zi, pi) in z.iter_mut().zip(&p.1) {
                *zi += wj * pi;
            }
            ints[0] += wj * i[0];
            ints[1] += wj * i[1];
        }
        let rates: Vec<f64> = (nn..z.len()).map(|k| self.hist.iter().zip(&dw).map(|(p, d)| p.1[k] * d).sum()).collect();
        (z, ints, super::signed_largest(&rates))
    }

    /// One step of length `h`: Ok(next step) if accepted, Err(next step) if rejected.
    fn try_step(
        &mut self,
        m: &NetModel,
        lin: &mut Linear,
        h: f64,
        settings: &TransientSettings,
        stats: &mut Stats,
    ) -> Result<Result<f64, f64>, TransientError> {
        let t1 = self.t + h;
        let (a1, a2, b) = match &self.prev {
            None => (1.0, 0.0, 1.0),
            Some((_, _, h_prev)) => {
                let w = h / h_prev;
                ((1.0 + w).powi(2) / (1.0 + 2.0 * w), -(w * w) / (1.0 + 2.0 * w), (1.0 + w) / (1.0 + 2.0 * w))
            }
        };
        let hist_stored: Vec<f64> = match &self.prev {
            None => self.stored.clone(),
            Some((sp, _, _)) => self.stored.iter().zip(sp).map(|(s, p)| a1 * s + a2 * p).collect(),
        };
        let hist_int = match &self.prev {
            None => self.integrals(),
            Some((_, ip, _)) => {
                let now = self.integrals();
                [a1 * now[0] + a2 * ip[0], a1 * now[1] + a2 * ip[1]]
            }
        };
        let predicted = super::bdf::extrapolate_flat(&self.hist, t1);
        let e1 = m.inputs.apply(m.ex, t1);
        let sys = m.system(&e1);
        let nn = m.net.nodes.len();
        let n = predicted.len();
        let bh = b * h;
        let mut z = predicted.clone();
        let (mut r, mut g, mut dz, mut stored) = (vec![0.0; n], vec![0.0; n], vec![0.0; n], Vec::new());
        let (mut values, mut blocks): (Vec<f64>, Vec<CellBlock>) = (Vec::new(), Vec::new());
        let mut node_diag = vec![0.0; nn];
        let mut converged = false;
        for iteration in 0..8 {
            stats.newton_iterations += 1;
            stats.rhs_evaluations += 1;
            sys.residuals(&z, &mut r);
            m.stored(&z, &mut stored);
            for i in 0..n {
                g[i] = if i >= nn {
                    stored[i] - hist_stored[i] - bh * r[i]
                } else if m.net.nodes[i].kind == NodeKind::Cells {
                    m.signed_mass[i].signum() * (stored[i] - hist_stored[i]) - bh * r[i]
                } else {
                    r[i]
                };
            }
            if iteration == 0 {
                // One Jacobian per step (modified Newton within the step).
                for (i, (node, &sm)) in m.net.nodes.iter().zip(&m.signed_mass).enumerate() {
                    node_diag[i] = if sm != 0.0 { sm * m.ex.stream(node.side).fluid.props(z[i]).cp } else { 0.0 };
                }
                let st = Storage { bh, node: &node_diag, wall: &m.wall_cap };
                sys.jacobian_values(&z, &mut values, &mut blocks, Some(&st));
                stats.jacobian_evaluations += 1;
                stats.factorisations += 1;
                if lin.factor(&values).is_err() {
                    break;
                }
            }
            if sys.step(&g, &blocks, lin, &mut dz).is_err() {
                break;
            }
            let mut largest = 0.0f64;
            for i in 0..n {
                z[i] -= dz[i];
                largest = largest.max(dz[i].abs());
            }
            if !largest.is_finite() {
                break;
            }
            if largest < 1e-3 * settings.atol_k {
                converged = true;
                break;
            }
        }
        if !converged {
            return Ok(Err(h * 0.5));
        }
        let constant = if self.hist.len() >= 3 { 2.0 / 11.0 } else { 0.5 };
        let (mut err, mut local_k) = (0.0f64, 0.0f64);
        for (x, p) in z.iter().zip(&predicted) {
            let e = (x - p).abs() * constant;
            local_k = local_k.max(e);
            err = err.max(e / (settings.atol_k + settings.rtol * x.abs()));
        }
        if err > 1.0 {
            return Ok(Err(h * (0.9 * err.powf(-1.0 / 3.0)).clamp(0.1, 0.5)));
        }
        stats.largest_local_error_k = stats.largest_local_error_k.max(local_k);
        stats.accumulated_local_error_k += local_k;
        let (net, hot) = m.inflows(&e1, &z);
        let new_int = [hist_int[0] + bh * net, hist_int[1] + bh * hot];
        m.stored(&z, &mut stored);
        self.prev = Some((std::mem::replace(&mut self.stored, stored), self.integrals(), h));
        self.t = t1;
        self.hist.push((t1, z));
        self.ints.push(new_int);
        if self.hist.len() > 3 {
            self.hist.remove(0);
            self.ints.remove(0);
        }
        let grow = if err > 0.0 { (0.9 * err.powf(-1.0 / 3.0)).clamp(0.2, 2.0) } else { 2.0 };
        Ok(Ok(h * grow))
    }
}

/// Run a transient simulation of the network arrangement `layout` of `ex` under `inputs`.
pub fn simulate_network(
    ex: &Exchanger,
    layout: &Layout,
    inputs: &Inputs,
    settings: &TransientSettings,
    observer: &mut dyn TransientObserver,
) -> Result<NetworkRun, TransientError> {
    let cells = settings.cells.max(1);
    let net = layout.build(cells);
    let nn = net.nodes.len();
    let e0 = inputs.apply_before(ex, 0.0);
    let z0: Vec<f64> = match settings.initial {
        Initial::Uniform(t) => vec![t; nn + net.cells.len()],
        Initial::Steady => {
            let s = solve_network(&e0, layout, &SteadySettings { cells, ..SteadySettings::default() }, &mut SilentObserver)?;
            s.node_c.iter().chain(&s.wall_c).copied().collect()
        }
    };
    let volume = |s: &crate::model::Stream, side: &str| {
        s.channel.volume_per_length_m2.ok_or_else(|| {
            TransientError::Missing(format!(
                "the {side} stream has no fluid volume: a transient needs geometry.{side}_flow_area_m2 (plane wall) to know how much fluid each cell holds"
            ))
        })
    };
    let v = [volume(&ex.hot, "hot")?, volume(&ex.cold, "cold")?];
    if settings.wall_heat_capacity_j_mk.is_nan() || settings.wall_heat_capacity_j_mk <= 0.0 {
        return Err(TransientError::Missing("the wall heat capacity must be positive: give the wall's density and specific heat".into()));
    }
    let mut mass = vec![0.0; nn];
    for c in &net.cells {
        let length = ex.length_m * c.area_share;
        for side in Side::BOTH {
            let node = c.out[side.index()];
            mass[node] += ex.stream(side).fluid.props(z0[node]).density * v[side.index()] * length;
        }
    }
    let signed_mass: Vec<f64> = net
        .nodes
        .iter()
        .zip(&mass)
        .map(|(node, &mm)| {
            if node.kind != NodeKind::Cells {
                0.0
            } else if node.side == Side::Hot {
                mm
            } else {
                -mm
            }
        })
        .collect();
    let wall_cap: Vec<f64> = net.cells.iter().map(|c| settings.wall_heat_capacity_j_mk * ex.length_m * c.area_share).collect();
    let model = NetModel { ex, inputs, net: &net, signed_mass, wall_cap };
    let probe = model.system(ex);
    let mut lin = Linear::new(nn, &probe.pattern_with_storage()).map_err(|_| SolveError::Singular { position_m: 0.0 })?;
    // Bounds: inlets over their schedules and the initial state, as on an axial line.
    let (h_lo, h_hi) = inputs.hot_inlet_c.range();
    let (c_lo, c_hi) = inputs.cold_inlet_c.range();
    let (mut lo, mut hi) = (h_lo.min(c_lo), h_hi.max(c_hi));
    for &t in &z0 {
        lo = lo.min(t);
        hi = hi.max(t);
    }
    let margin = 10.0 * settings.atol_k + 1e-9 * (hi - lo).abs().max(1.0);
    let bounds = (lo - margin, hi + margin);

    let t_end = settings.duration_s;
    let outputs = output_stops(inputs, settings);

    let mut stored0 = Vec::new();
    model.stored(&z0, &mut stored0);
    let mut bdf =
        NetBdf { t: 0.0, h: (settings.output_interval_s * 0.01).max(1e-6), stored: stored0, prev: None, hist: vec![(0.0, z0)], ints: vec![[0.0, 0.0]] };
    let mut run = TransientRun {
        samples: Vec::new(),
        snapshots: Vec::new(),
        final_snapshot: model.sample(0.0, bdf.z(), [0.0, 0.0], None).1,
        stats: Stats::default(),
        cells,
        stopped: None,
    };
    let record = |run: &mut TransientRun, t: f64, z: &[f64], integrals: [f64; 2], rate: Option<(usize, f64)>| -> Result<bool, TransientError> {
        match model.check(t, z, bounds) {
            Err(TransientError::Solve(e)) => {
                run.stop_on(t, e)?;
                return Ok(false);
            }
            Err(other) => return Err(other),
            Ok(()) => {}
        }
        let (sample, snap) = model.sample(t, z, integrals, rate);
        run.keep(t, sample, snap, settings);
        Ok(true)
    };
    if !record(&mut run, 0.0, bdf.z(), [0.0, 0.0], None)? {
        return Ok(NetworkRun { run, network: net.clone() });
    }
    let eps = 1e-12 * t_end.max(1.0);
    let mut next = outputs.partition_point(|&o| o <= eps);
    'run: for stop in hard_stops(inputs, settings) {
        while bdf.t < stop - eps {
            bdf.step(&model, &mut lin, stop, settings, &mut run.stats)?;
            while next < outputs.len() && outputs[next] <= bdf.t + eps {
                let t = outputs[next];
                let (z, ints, rate) = bdf.dense(nn, t.min(bdf.t));
                if !record(&mut run, t, &z, ints, Some(rate))? {
                    break 'run;
                }
                observer.progress(t, t_end);
                next += 1;
            }
        }
    }
    Ok(NetworkRun { run, network: net.clone() })
}
