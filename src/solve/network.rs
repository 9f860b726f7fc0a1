//! Steady state of a cell network (crossflow, passes, shells): Newton's method with a sparse
//! LU of the Jacobian.
//!
//! Unknowns: one temperature per stream node (a cell's outlet, a mixed stream's row shared by
//! its cells, or a header; see [`crate::model::network`]), then the wall temperature of each
//! cell. Residuals: for each cell-outlet node the stream balances of the cells leaving into it
//! (from the one cell model, [`Exchanger::cell_shared_with_jacobian`]), summed; for each
//! header its enthalpy balance; for each cell its wall balance. The
//! sparsity pattern never changes, so it is analysed once (faer's column-approximate-minimum-
//! degree ordering, which keeps the fill of a 2-D grid near linear in the cells) and only
//! the numeric factorisation is repeated. Line search and convergence test as in the axial
//! solver.

use super::checks::suggested_cells;
use super::error::SolveError;
use super::steady::{convergence_target, stopped_flow_temperature, Observer, SteadySettings};
use crate::model::network::NodeKind;
use crate::model::{CellTemps, Exchanger, Feed, Layout, Network, Scheme, Side};
use faer::sparse::linalg::solvers::{Lu, SymbolicLu};
use faer::sparse::{Pair, SparseColMat, SymbolicSparseColMat};

/// Most cells a network may have (the sparse LU's memory grows a little faster than the
/// cell count).
pub const MAX_NETWORK_CELLS: usize = 2_000_000;

/// The converged steady state of a network.
#[derive(Debug, Clone)]
pub struct NetworkSolution {
    /// The network solved.
    pub network: Network,
    /// Cells along the first direction (`[solver] cells`).
    pub cells: usize,
    /// Temperature of each stream node, °C.
    pub node_c: Vec<f64>,
    /// Wall temperature of each cell, °C.
    pub wall_c: Vec<f64>,
    /// Inlet temperatures (hot, cold) the solution was found for, °C.
    pub inlet_c: [f64; 2],
    /// Scheme.
    pub scheme: Scheme,
    /// Exchanger length the cell areas are shares of, m.
    pub length_m: f64,
    /// Newton iterations.
    pub iterations: usize,
    /// Final Σ|residual| / maximum duty.
    pub relative_residual: f64,
}

impl NetworkSolution {
    /// Temperatures seen by cell `k`.
    pub fn cell_temps(&self, k: usize) -> CellTemps {
        temps(&self.network, self.scheme, self.inlet_c, &self.node_c, &self.wall_c, k)
    }

    /// Equivalent length of cell `k` (its area share of the exchanger length), m.
    pub fn dx_m(&self, k: usize) -> f64 {
        self.length_m * self.network.cells[k].area_share
    }

    /// A stream's mixed-mean outlet, °C.
    pub fn outlet_c(&self, side: Side) -> f64 {
        self.node_c[self.network.outlet[side.index()]]
    }

    /// The temperatures of a stream leaving the exchanger, one per lane of its outlet face.
    pub fn outlet_lanes_c(&self, side: Side) -> Vec<f64> {
        self.network.outlet_lanes(side).iter().map(|&n| self.node_c[n]).collect()
    }
}

/// Build cell `k`'s temperatures from the unknowns.
fn temps(net: &Network, scheme: Scheme, inlet: [f64; 2], nodes: &[f64], walls: &[f64], k: usize) -> CellTemps {
    let c = &net.cells[k];
    let value = |feed: Feed, s: usize| match feed {
        Feed::Inlet => inlet[s],
        Feed::Node(n) => nodes[n],
    };
    let (hot_in, cold_in) = (value(c.feed[0], 0), value(c.feed[1], 1));
    let (hot_out, cold_out) = (nodes[c.out[0]], nodes[c.out[1]]);
    let bulk = |t_in: f64, t_out: f64| if scheme == Scheme::Upwind { t_out } else { 0.5 * (t_in + t_out) };
    CellTemps { hot_in, hot_out, hot_bulk: bulk(hot_in, hot_out), cold_in, cold_out, cold_bulk: bulk(cold_in, cold_out), wall: walls[k] }
}

/// The system: network, exchanger and the vector layout (nodes first, then walls).
struct System<'a> {
    ex: &'a Exchanger,
    net: &'a Network,
    inlet: [f64; 2],
}

impl System<'_> {
    fn n_nodes(&self) -> usize {
        self.net.nodes.len()
    }

    fn len(&self) -> usize {
        self.n_nodes() + self.net.cells.len()
    }

    fn split<'z>(&self, z: &'z [f64]) -> (&'z [f64], &'z [f64]) {
        z.split_at(self.n_nodes())
    }

    fn mass_flow(&self, side: Side) -> f64 {
        self.ex.stream(side).mass_flow_kg_s
    }

    fn dx(&self, k: usize) -> f64 {
        self.ex.length_m * self.net.cells[k].area_share
    }

    /// Fill residuals (W); return Σ|r|.
    fn residuals(&self, z: &[f64], r: &mut [f64]) -> f64 {
        let (nodes, walls) = self.split(z);
        let nn = self.n_nodes();
        r.fill(0.0);
        for (k, c) in self.net.cells.iter().enumerate() {
            let t = temps(self.net, self.ex.scheme, self.inlet, nodes, walls, k);
            let res = self.ex.cell_shared(self.dx(k), c.flow_share, &t).balance.steady_residual();
            r[c.out[0]] += res[0];
            r[c.out[1]] += res[1];
            r[nn + k] = res[2];
        }
        for (n, node) in self.net.nodes.iter().enumerate() {
            if let NodeKind::Mixer(sources) = &node.kind {
                let fluid = &self.ex.stream(node.side).fluid;
                let h: f64 = sources.iter().map(|&m| self.net.nodes[m].flow_share * fluid.enthalpy(nodes[m])).sum();
                r[n] = self.mass_flow(node.side) * (node.flow_share * fluid.enthalpy(nodes[n]) - h);
            }
        }
        r.iter().map(|v| v.abs()).sum()
    }

    /// Rows (hot node, cold node, wall) and columns (hot in, hot out, cold in, cold out,
    /// wall) of a cell's entries.
    fn cell_rows_columns(&self, k: usize) -> ([usize; 3], [Option<usize>; 5]) {
        let c = &self.net.cells[k];
        let col = |f: Feed| match f {
            Feed::Inlet => None,
            Feed::Node(n) => Some(n),
        };
        let wall = self.n_nodes() + k;
        ([c.out[0], c.out[1], wall], [col(c.feed[0]), Some(c.out[0]), col(c.feed[1]), Some(c.out[1]), Some(wall)])
    }

    /// The Jacobian's sparsity pattern, in the order [`System::jacobian_values`] fills values
    /// (repeated entries, as from the cells of one mixed row, are summed).
    fn pattern(&self) -> Vec<Pair<usize, usize>> {
        let mut p = Vec::new();
        for k in 0..self.net.cells.len() {
            let (rows, cols) = self.cell_rows_columns(k);
            for row in rows {
                for col in cols.iter().flatten() {
                    p.push(Pair { row, col: *col });
                }
            }
        }
        for (n, node) in self.net.nodes.iter().enumerate() {
            if let NodeKind::Mixer(sources) = &node.kind {
                p.push(Pair { row: n, col: n });
                for &m in sources {
                    p.push(Pair { row: n, col: m });
                }
            }
        }
        p
    }

    /// Jacobian values in pattern order.
    fn jacobian_values(&self, z: &[f64], values: &mut Vec<f64>) {
        values.clear();
        let (nodes, walls) = self.split(z);
        // The bulk is ½(in + out), or the outlet with upwinding.
        let (w_in, w_out) = if self.ex.scheme == Scheme::Upwind { (0.0, 1.0) } else { (0.5, 0.5) };
        for (k, c) in self.net.cells.iter().enumerate() {
            let t = temps(self.net, self.ex.scheme, self.inlet, nodes, walls, k);
            let (_, jac) = self.ex.cell_shared_with_jacobian(self.dx(k), c.flow_share, &t);
            let (_, cols) = self.cell_rows_columns(k);
            for row in &jac {
                // Cell-model columns: hot in, hot out, hot bulk, cold in, cold out, cold bulk, wall.
                let five = [row[0] + w_in * row[2], row[1] + w_out * row[2], row[3] + w_in * row[5], row[4] + w_out * row[5], row[6]];
                for (v, col) in five.iter().zip(cols.iter()) {
                    if col.is_some() {
                        values.push(*v);
                    }
                }
            }
        }
        for (n, node) in self.net.nodes.iter().enumerate() {
            if let NodeKind::Mixer(sources) = &node.kind {
                let fluid = &self.ex.stream(node.side).fluid;
                let mdot = self.mass_flow(node.side);
                values.push(mdot * node.flow_share * fluid.props(nodes[n]).cp);
                for &m in sources {
                    values.push(-mdot * self.net.nodes[m].flow_share * fluid.props(nodes[m]).cp);
                }
            }
        }
    }

    /// Position (m, along the first direction) of unknown `i`, for messages.
    fn position_m(&self, i: usize) -> f64 {
        let cell = if i >= self.n_nodes() { Some(i - self.n_nodes()) } else { self.net.cells.iter().position(|c| c.out.contains(&i)) };
        cell.and_then(|k| self.net.cells.get(k)).map_or(0.0, |c| c.position[0] * self.ex.length_m)
    }
}

/// Initial guess: the closed-form duty spread evenly, each stream at the mean of its inlet
/// and estimated outlet, the wall between them.
fn initial_guess(ex: &Exchanger, sys: &System) -> Vec<f64> {
    let (th, tc) = (ex.hot.inlet_c, ex.cold.inlet_c);
    let c_hot = ex.hot.mass_flow_kg_s * (ex.hot.fluid.enthalpy(th) - ex.hot.fluid.enthalpy(tc)) / (th - tc);
    let c_cold = ex.cold.mass_flow_kg_s * (ex.cold.fluid.enthalpy(th) - ex.cold.fluid.enthalpy(tc)) / (th - tc);
    let (c_min, c_max) = (c_hot.min(c_cold), c_hot.max(c_cold));
    let ntu = ex.ua_per_length_at(th, tc) * ex.length_m / c_min;
    let min_side = if c_hot <= c_cold { Side::Hot } else { Side::Cold };
    let q = crate::lumped::effectiveness(ex.arrangement, ntu, c_min / c_max, min_side).clamp(0.0, 1.0) * c_min * (th - tc);
    let hot = th - 0.5 * q / c_hot;
    let cold = tc + 0.5 * q / c_cold;
    let mut z: Vec<f64> = sys.net.nodes.iter().map(|n| if n.side == Side::Hot { hot } else { cold }).collect();
    z.resize(sys.len(), 0.5 * (hot + cold));
    z
}

/// Solve the steady state of `ex` (whose arrangement is `layout`) with `settings.cells` cells
/// along the first direction.
pub fn solve_network(ex: &Exchanger, layout: &Layout, settings: &SteadySettings, observer: &mut dyn Observer) -> Result<NetworkSolution, SolveError> {
    let cells = settings.cells.max(1);
    let net = layout.build(cells);
    let inlet = [ex.hot.inlet_c, ex.cold.inlet_c];
    let sys = System { ex, net: &net, inlet };
    let pack = |z: &[f64], iterations: usize, residual: f64| {
        let (nodes, walls) = sys.split(z);
        NetworkSolution {
            network: net.clone(),
            cells,
            node_c: nodes.to_vec(),
            wall_c: walls.to_vec(),
            inlet_c: inlet,
            scheme: ex.scheme,
            length_m: ex.length_m,
            iterations,
            relative_residual: residual,
        }
    };
    if let Some(t) = stopped_flow_temperature(ex)? {
        return Ok(pack(&vec![t; sys.len()], 0, 0.0));
    }
    let (scale, target) = convergence_target(ex, net.cells.len(), settings.tolerance);
    let n = sys.len();
    let mut z = initial_guess(ex, &sys);
    let mut r = vec![0.0; n];
    let mut trial = vec![0.0; n];
    let mut step = vec![0.0; n];
    let (symbolic_matrix, argsort) = SymbolicSparseColMat::try_new_from_indices(n, n, &sys.pattern()).map_err(|_| SolveError::Singular { position_m: 0.0 })?;
    let mut symbolic: Option<SymbolicLu<usize>> = None;
    let mut values = Vec::new();
    let mut norm = sys.residuals(&z, &mut r);
    let mut iterations = 0;
    while norm > target {
        if iterations >= settings.max_iterations || !norm.is_finite() {
            let worst = (0..n).max_by(|&a, &b| r[a].abs().total_cmp(&r[b].abs())).unwrap_or(0);
            return Err(SolveError::NotConverged {
                iterations,
                residual: norm / scale,
                tolerance: settings.tolerance,
                worst_position_m: sys.position_m(worst),
            });
        }
        sys.jacobian_values(&z, &mut values);
        let matrix = SparseColMat::new_from_argsort(symbolic_matrix.clone(), &argsort, &values).map_err(|_| SolveError::Singular { position_m: 0.0 })?;
        if symbolic.is_none() {
            symbolic = Some(SymbolicLu::try_new(matrix.symbolic()).map_err(|_| SolveError::Singular { position_m: 0.0 })?);
        }
        let lu = Lu::try_new_with_symbolic(symbolic.clone().expect("analysed above"), matrix.as_ref()).map_err(|e| SolveError::Singular {
            position_m: match e {
                faer::sparse::linalg::LuError::SymbolicSingular { index } => sys.position_m(index),
                _ => 0.0,
            },
        })?;
        step.copy_from_slice(&r);
        {
            use faer::linalg::solvers::Solve;
            lu.solve_in_place(faer::ColMut::from_slice_mut(&mut step).as_mat_mut());
        }
        if let Some(bad) = step.iter().position(|v| !v.is_finite()) {
            return Err(SolveError::Singular { position_m: sys.position_m(bad) });
        }
        let mut lambda = 1.0;
        loop {
            for i in 0..n {
                trial[i] = z[i] - lambda * step[i];
            }
            let trial_norm = sys.residuals(&trial, &mut r);
            if trial_norm < norm || lambda < 1e-3 {
                norm = trial_norm;
                break;
            }
            lambda *= 0.5;
        }
        std::mem::swap(&mut z, &mut trial);
        iterations += 1;
        observer.iteration(iterations, norm / scale);
    }
    let solution = pack(&z, iterations, norm / scale);
    check_network(ex, &solution)?;
    Ok(solution)
}

/// Second law and fluid ranges on every node: each stream's temperatures within the span of
/// the two inlets. (Unlike an axial line, a network may rightly have the hot stream colder
/// than the cold one in some cells — the temperature cross of a 1–2 shell's second pass, the
/// far corner of crossflow with both streams mixed — so heat flowing back there is no
/// violation.)
fn check_network(ex: &Exchanger, s: &NetworkSolution) -> Result<(), SolveError> {
    let (th, tc) = (ex.hot.inlet_c, ex.cold.inlet_c);
    let tol = 1e-9 * (th - tc).abs().max(1.0);
    let mut worst = (0usize, f64::NEG_INFINITY);
    for k in 0..s.wall_c.len() {
        let t = s.cell_temps(k);
        let v = (tc - t.hot_out).max(t.hot_out - th).max(tc - t.cold_out).max(t.cold_out - th);
        if v > worst.1 {
            worst = (k, v);
        }
    }
    if worst.1 > tol {
        let max_cell_ntu = (0..s.wall_c.len())
            .map(|k| {
                let c = &s.network.cells[k];
                let d = ex.cell_shared(s.dx_m(k), c.flow_share, &s.cell_temps(k));
                let c_min = (c.flow_share[0] * ex.hot.mass_flow_kg_s * d.hot_props.cp).min(c.flow_share[1] * ex.cold.mass_flow_kg_s * d.cold_props.cp);
                d.ua_per_length_w_mk * s.dx_m(k) / c_min.max(f64::MIN_POSITIVE)
            })
            .fold(0.0, f64::max);
        return Err(SolveError::GridTooCoarse {
            cells: s.cells,
            max_cell_ntu,
            position_m: s.network.cells[worst.0].position[0] * ex.length_m,
            deficit_k: worst.1,
            suggested_cells: suggested_cells(s.cells, max_cell_ntu),
        });
    }
    for side in Side::BOTH {
        let stream = ex.stream(side);
        let (min_c, max_c) = stream.fluid.bounds();
        let values = s.network.nodes.iter().zip(&s.node_c).enumerate().filter(|(_, (n, _))| n.side == side);
        for (n, (_, &t)) in values {
            if !(t >= min_c - 1e-9 && t <= max_c + 1e-9) {
                let k = s.network.cells.iter().position(|c| c.out[side.index()] == n).unwrap_or(0);
                let range = stream.fluid.range();
                return Err(SolveError::LeftRange {
                    time_s: None,
                    stream: side,
                    fluid: stream.fluid.name(),
                    position_m: s.network.cells[k].position[0] * ex.length_m,
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
