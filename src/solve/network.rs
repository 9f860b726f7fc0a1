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
use super::sparse::{Linear, LuFailure};
use super::steady::{convergence_target, duty_estimate, stopped_flow_temperature, Observer, SteadySettings};
use crate::model::network::NodeKind;
use crate::model::{CellTemps, Exchanger, Feed, Layout, Network, Scheme, Side};
use faer::sparse::Pair;

/// A reused factorisation is kept while each step cuts Σ|r| at least this much.
const CHORD_CONTRACTION: f64 = 0.1;

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
pub(crate) fn temps(net: &Network, scheme: Scheme, inlet: [f64; 2], nodes: &[f64], walls: &[f64], k: usize) -> CellTemps {
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

/// A cell's Newton block: rows hot, cold, wall; columns hot in, hot out, cold in, cold out,
/// wall (W/K).
pub(crate) type CellBlock = [[f64; 5]; 3];

/// The system: network, exchanger and the vector layout (nodes first, then walls).
pub(crate) struct System<'a> {
    pub(crate) ex: &'a Exchanger,
    pub(crate) net: &'a Network,
    pub(crate) inlet: [f64; 2],
}

/// Storage added to the Newton matrix by an implicit time step: the matrix is
/// D − bh·J with D the storage derivatives (σ M cp on each cell-outlet node, σ = +1 hot,
/// −1 cold, so the cold rows keep the steady Jacobian's signs; C on each wall).
pub(crate) struct Storage<'s> {
    /// b·h of the BDF formula, s.
    pub(crate) bh: f64,
    /// Per node, σ·M·cp (0 for headers, which store nothing), W·s/K.
    pub(crate) node: &'s [f64],
    /// Per cell, the wall's heat capacity, J/K.
    pub(crate) wall: &'s [f64],
}

impl System<'_> {
    pub(crate) fn n_nodes(&self) -> usize {
        self.net.nodes.len()
    }

    pub(crate) fn len(&self) -> usize {
        self.n_nodes() + self.net.cells.len()
    }

    pub(crate) fn split<'z>(&self, z: &'z [f64]) -> (&'z [f64], &'z [f64]) {
        z.split_at(self.n_nodes())
    }

    fn mass_flow(&self, side: Side) -> f64 {
        self.ex.stream(side).mass_flow_kg_s
    }

    fn dx(&self, k: usize) -> f64 {
        self.ex.length_m * self.net.cells[k].area_share
    }

    /// Fill residuals (W); return Σ|r|.
    pub(crate) fn residuals(&self, z: &[f64], r: &mut [f64]) -> f64 {
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

    /// The pattern with a diagonal entry for every cell-outlet node appended (for the
    /// storage of an implicit time step), in the order [`System::jacobian_values`] fills it.
    pub(crate) fn pattern_with_storage(&self) -> Vec<Pair<usize, usize>> {
        let mut p = self.pattern();
        p.extend(self.net.nodes.iter().enumerate().filter(|(_, n)| n.kind == NodeKind::Cells).map(|(n, _)| Pair { row: n, col: n }));
        p
    }

    /// The pattern of the reduced Jacobian (nodes only: each cell's wall is eliminated
    /// locally, which adds no entries — a wall couples only to its own cell's four stream
    /// temperatures), in the order [`System::jacobian_values`] fills values (repeated
    /// entries, as from the cells of one mixed row, are summed).
    pub(crate) fn pattern(&self) -> Vec<Pair<usize, usize>> {
        let mut p = Vec::new();
        for k in 0..self.net.cells.len() {
            let (rows, cols) = self.cell_rows_columns(k);
            for row in &rows[..2] {
                for col in cols[..4].iter().flatten() {
                    p.push(Pair { row: *row, col: *col });
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

    /// The reduced Jacobian's values in pattern order, and each cell's own 3 × 5 block
    /// (rows hot, cold, wall; columns hot in, hot out, cold in, cold out, wall) for the
    /// elimination of its wall.
    pub(crate) fn jacobian_values(&self, z: &[f64], values: &mut Vec<f64>, blocks: &mut Vec<CellBlock>, storage: Option<&Storage>) {
        values.clear();
        blocks.clear();
        let (nodes, walls) = self.split(z);
        // The bulk is ½(in + out), or the outlet with upwinding.
        let (w_in, w_out) = if self.ex.scheme == Scheme::Upwind { (0.0, 1.0) } else { (0.5, 0.5) };
        for (k, c) in self.net.cells.iter().enumerate() {
            let t = temps(self.net, self.ex.scheme, self.inlet, nodes, walls, k);
            let (_, jac) = self.ex.cell_shared_with_jacobian(self.dx(k), c.flow_share, &t);
            let (_, cols) = self.cell_rows_columns(k);
            // Cell-model columns: hot in, hot out, hot bulk, cold in, cold out, cold bulk, wall.
            let mut block: CellBlock =
                jac.map(|row| [row[0] + w_in * row[2], row[1] + w_out * row[2], row[3] + w_in * row[5], row[4] + w_out * row[5], row[6]]);
            if let Some(st) = storage {
                for row in block.iter_mut() {
                    for v in row.iter_mut() {
                        *v *= -st.bh;
                    }
                }
                block[2][4] += st.wall[k];
            }
            let wall = block[2];
            for row in &block[..2] {
                let ratio = row[4] / wall[4];
                for j in 0..4 {
                    if cols[j].is_some() {
                        values.push(row[j] - ratio * wall[j]);
                    }
                }
            }
            blocks.push(block);
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
        if let Some(st) = storage {
            values.extend(self.net.nodes.iter().enumerate().filter(|(_, n)| n.kind == NodeKind::Cells).map(|(n, _)| st.node[n]));
        }
    }

    /// Newton step from residuals `r` with the eliminated system: the nodes' right-hand
    /// side less each wall's share, solved by `lu`, then each wall from its own row.
    pub(crate) fn step(&self, r: &[f64], blocks: &[CellBlock], lu: &mut Linear, step: &mut [f64]) -> Result<(), LuFailure> {
        let nn = self.n_nodes();
        let (nodes, walls) = step.split_at_mut(nn);
        nodes.copy_from_slice(&r[..nn]);
        for (k, (c, b)) in self.net.cells.iter().zip(blocks).enumerate() {
            let r_wall = r[nn + k];
            nodes[c.out[0]] -= b[0][4] / b[2][4] * r_wall;
            nodes[c.out[1]] -= b[1][4] / b[2][4] * r_wall;
        }
        lu.solve(nodes)?;
        for (k, b) in blocks.iter().enumerate() {
            let (_, cols) = self.cell_rows_columns(k);
            let mut v = r[nn + k];
            for j in 0..4 {
                if let Some(col) = cols[j] {
                    v -= b[2][j] * nodes[col];
                }
            }
            walls[k] = v / b[2][4];
        }
        Ok(())
    }

    /// Position (m, along the first direction) of unknown `i`, for messages.
    pub(crate) fn position_m(&self, i: usize) -> f64 {
        let cell = if i >= self.n_nodes() { Some(i - self.n_nodes()) } else { self.net.cells.iter().position(|c| c.out.contains(&i)) };
        cell.and_then(|k| self.net.cells.get(k)).map_or(0.0, |c| c.position[0] * self.ex.length_m)
    }
}

/// How far along its stream's path each node is: cells passed from the inlet (a mixed row
/// counts once), by a topological walk of each stream's flow graph.
fn path_depths(net: &Network) -> Vec<usize> {
    let nn = net.nodes.len();
    let mut depth = vec![0usize; nn];
    // What each node still waits for, and who waits for each node.
    let mut waiting = vec![0usize; nn];
    let mut cells_from: Vec<Vec<(usize, usize)>> = vec![Vec::new(); nn]; // (cell, side) fed by the node
    let mut mixers_from: Vec<Vec<usize>> = vec![Vec::new(); nn];
    let mut ready: Vec<(usize, usize)> = Vec::new(); // (cell, side) whose feed is known
    for (k, c) in net.cells.iter().enumerate() {
        for s in 0..2 {
            waiting[c.out[s]] += 1;
            match c.feed[s] {
                Feed::Inlet => ready.push((k, s)),
                Feed::Node(n) => cells_from[n].push((k, s)),
            }
        }
    }
    for (m, node) in net.nodes.iter().enumerate() {
        if let NodeKind::Mixer(sources) = &node.kind {
            waiting[m] = sources.len();
            for &src in sources {
                mixers_from[src].push(m);
            }
        }
    }
    let mut done_nodes: Vec<usize> = Vec::new();
    while !ready.is_empty() || !done_nodes.is_empty() {
        while let Some((k, s)) = ready.pop() {
            let c = &net.cells[k];
            let d = match c.feed[s] {
                Feed::Inlet => 1,
                Feed::Node(n) => depth[n] + 1,
            };
            let out = c.out[s];
            depth[out] = depth[out].max(d);
            waiting[out] -= 1;
            if waiting[out] == 0 {
                done_nodes.push(out);
            }
        }
        while let Some(n) = done_nodes.pop() {
            ready.extend(cells_from[n].iter().copied());
            for &m in &mixers_from[n] {
                depth[m] = depth[m].max(depth[n]);
                waiting[m] -= 1;
                if waiting[m] == 0 {
                    done_nodes.push(m);
                }
            }
        }
    }
    depth
}

/// Initial guess: each stream's temperature linear in the cells passed along its path,
/// between its inlet and the closed-form outlet estimate; the wall between the streams.
fn initial_guess(ex: &Exchanger, sys: &System) -> Vec<f64> {
    let (th, tc) = (ex.hot.inlet_c, ex.cold.inlet_c);
    let (q, c_hot, c_cold) = duty_estimate(ex);
    let (hot_drop, cold_rise) = (q / c_hot, q / c_cold);
    let depth = path_depths(sys.net);
    let mut longest = [1usize; 2];
    for (n, node) in sys.net.nodes.iter().enumerate() {
        longest[node.side.index()] = longest[node.side.index()].max(depth[n]);
    }
    let mut z: Vec<f64> = sys
        .net
        .nodes
        .iter()
        .enumerate()
        .map(|(n, node)| {
            let f = depth[n] as f64 / longest[node.side.index()] as f64;
            if node.side == Side::Hot {
                th - hot_drop * f
            } else {
                tc + cold_rise * f
            }
        })
        .collect();
    let walls: Vec<f64> = sys.net.cells.iter().map(|c| 0.5 * (z[c.out[0]] + z[c.out[1]])).collect();
    z.extend(walls);
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
    let mut trial_r = vec![0.0; n];
    let mut step = vec![0.0; n];
    let singular = |failure: LuFailure| SolveError::Singular {
        position_m: match failure {
            LuFailure::Singular(at) => at.map_or(0.0, |i| sys.position_m(i)),
        },
    };
    let mut lu = Linear::new(sys.n_nodes(), &sys.pattern()).map_err(singular)?;
    let (mut values, mut blocks) = (Vec::new(), Vec::new());
    let mut norm = sys.residuals(&z, &mut r);
    let mut iterations = 0;
    // Chord steps: the factorisation is reused while each step cuts the residual at least
    // tenfold (the Jacobian changes only through the properties and films); a step that
    // does less earns a fresh Jacobian, and a fresh Jacobian's step that fails is backtracked.
    let mut fresh = false;
    let mut refactor = true;
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
        if refactor {
            sys.jacobian_values(&z, &mut values, &mut blocks, None);
            lu.factor(&values).map_err(singular)?;
            fresh = true;
        }
        sys.step(&r, &blocks, &mut lu, &mut step).map_err(singular)?;
        if let Some(bad) = step.iter().position(|v| !v.is_finite()) {
            return Err(SolveError::Singular { position_m: sys.position_m(bad) });
        }
        let mut lambda = 1.0;
        loop {
            for i in 0..n {
                trial[i] = z[i] - lambda * step[i];
            }
            let trial_norm = sys.residuals(&trial, &mut trial_r);
            // NaN counts as "did not contract".
            let contracted = trial_norm < CHORD_CONTRACTION * norm;
            if !fresh && !contracted {
                // A chord step that did not do well: retry from z with a fresh Jacobian (the
                // residuals at z are still in `r`).
                refactor = true;
                break;
            }
            if trial_norm < norm || lambda < 1e-3 {
                refactor = !contracted;
                fresh = false;
                norm = trial_norm;
                std::mem::swap(&mut z, &mut trial);
                std::mem::swap(&mut r, &mut trial_r);
                iterations += 1;
                observer.iteration(iterations, norm / scale);
                break;
            }
            lambda *= 0.5;
        }
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Arrangement, Crossflow, Mixing, ShellAndTube};

    /// Crossflow with both streams unmixed has no feedback: its Jacobian is solved by the
    /// block sweep (2 × 2 blocks); a shell with passes feeds back and takes the LU. Both
    /// reach the same answer as the other solver would (checked in tests/verify.rs).
    #[test]
    fn the_solver_follows_the_feedback() {
        let pick = |layout: Layout| {
            let ex = crate::verify::constant_exchanger(Arrangement::Network(layout), 2.0, 0.5, Side::Hot);
            let net = layout.build(6);
            let sys = System { ex: &ex, net: &net, inlet: [90.0, 10.0] };
            Linear::new(sys.n_nodes(), &sys.pattern()).unwrap()
        };
        assert!(matches!(pick(Layout::Crossflow(Crossflow { hot: Mixing::Unmixed, cold: Mixing::Unmixed, cells_across: 5 })), Linear::Sweep(_)));
        assert!(matches!(pick(Layout::ShellAndTube(ShellAndTube { tube_passes: 2, shells: 1, shell_side: Side::Cold })), Linear::Lu(_)));
    }
}
