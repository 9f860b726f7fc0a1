//! Cell networks: the flow paths of crossflow, multi-pass cross-counterflow and
//! shell-and-tube arrangements, as cells joined by each stream's path.
//!
//! Owns: which cell feeds which, each cell's share of the heat-transfer area and of each
//! stream's flow, and where streams mix. Must not: hold temperatures or physics — every
//! cell's balance is [`crate::model::Exchanger::cell_shared`], the same cell model the axial
//! grid uses.
//!
//! A cell's unknowns are each stream's temperature where it leaves the cell and the wall
//! temperature (the trapezoidal scheme's face unknowns; with the upwind scheme the leaving
//! temperature is also the bulk). A stream enters a cell from its inlet, from one upstream
//! cell, or from a *mixer*: the flow-weighted mixed-mean (by enthalpy) of a group of cells'
//! outlets. Mixers model a stream that is mixed across the other's flow (one temperature per
//! row), a header between passes or shells, and each stream's outlet. Mixer temperatures are
//! unknowns of their own, so the Jacobian stays sparse however wide a mixed row is.

use super::Side;

/// Whether a stream is mixed across the other stream's flow.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize, schemars::JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum Mixing {
    /// Each lane keeps its own temperature (separate channels, fins, tubes).
    Unmixed,
    /// One temperature across the flow at every position along it.
    Mixed,
}

/// Single-pass crossflow: the hot stream flows along the first grid direction (`[solver]
/// cells`), the cold stream along the second (`cells_across`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct Crossflow {
    /// Hot stream mixing.
    pub hot: Mixing,
    /// Cold stream mixing.
    pub cold: Mixing,
    /// Cells along the cold stream's flow.
    pub cells_across: usize,
}

impl Crossflow {
    /// One stream's mixing.
    pub fn mixing(&self, side: Side) -> Mixing {
        match side {
            Side::Hot => self.hot,
            Side::Cold => self.cold,
        }
    }
}

/// Multi-pass cross-counterflow: one stream (the *passing* stream, e.g. the tube fluid of a
/// coil) crosses the other (the *through* stream, e.g. air) `passes` times, turning back
/// after each pass (serpentine) and moving upstream against the through stream, so the
/// arrangement is counterflow overall. `[solver] cells` run along each pass; `cells_across`
/// along the through stream's depth in each pass.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct CrossCounterflow {
    /// Number of passes (≥ 1).
    pub passes: usize,
    /// The stream that makes the passes.
    pub passing: Side,
    /// The passing stream is mixed in a header between passes (else each lane keeps its
    /// position: identical-order coupling).
    pub mixed_between_passes: bool,
    /// The through stream's mixing across the passes' width.
    pub through: Mixing,
    /// Cells along the through stream's depth in each pass (1 models one tube row per pass).
    pub cells_across: usize,
}

/// Shell-and-tube: the shell stream flows along each shell; the tube stream makes
/// `tube_passes` passes per shell, alternately against and with the shell flow (the first
/// pass against it); shells in series are in overall counterflow. The shell stream is taken
/// as mixed across the bundle at every axial station (the assumption behind the standard
/// 1–2n effectiveness formula: many baffles). `[solver] cells` run along each pass.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct ShellAndTube {
    /// Tube passes per shell (1, 2, 4, …).
    pub tube_passes: usize,
    /// Shells in series.
    pub shells: usize,
    /// The stream in the shell.
    pub shell_side: Side,
}

/// Where a stream enters a cell (or leaves the exchanger).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Feed {
    /// The stream's inlet.
    Inlet,
    /// This stream node's temperature.
    Node(usize),
}

/// What fixes a stream node's temperature.
#[derive(Debug, Clone, PartialEq)]
pub enum NodeKind {
    /// The outlet of the cells that name it as theirs: one cell for an unmixed lane, all the
    /// cells of a row across the other stream's flow for a mixed stream (they then share one
    /// temperature, as a mixed stream has, and one energy balance).
    Cells,
    /// A header: the flow-weighted mixed-mean (by enthalpy) of other nodes.
    Mixer(Vec<usize>),
}

/// A temperature of one stream: an unknown of the network.
#[derive(Debug, Clone, PartialEq)]
pub struct Node {
    /// The stream.
    pub side: Side,
    /// What fixes it.
    pub kind: NodeKind,
    /// Share of the stream's flow through the node.
    pub flow_share: f64,
}

/// One cell of the network.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NetCell {
    /// Where each stream (hot, cold) comes from.
    pub feed: [Feed; 2],
    /// The node each stream (hot, cold) leaves into.
    pub out: [usize; 2],
    /// Share of each stream's mass flow through the cell.
    pub flow_share: [f64; 2],
    /// Share of the exchanger's heat-transfer area.
    pub area_share: f64,
    /// Grid indices for reports: (along the first direction, across, pass or shell block).
    pub index: [usize; 3],
    /// Position of the cell centre on the plotted face, each in 0…1 (first direction, second).
    pub position: [f64; 2],
}

/// A built network; a constructed value is consistent (every feed and outlet names a node
/// of its own stream, and flows add up).
#[derive(Debug, Clone, PartialEq)]
pub struct Network {
    /// Cells.
    pub cells: Vec<NetCell>,
    /// Stream nodes.
    pub nodes: Vec<Node>,
    /// The node each stream (hot, cold) leaves the exchanger from.
    pub outlet: [usize; 2],
    /// Plot grid: (columns, rows) of the cells' `position` lattice.
    pub plot_shape: (usize, usize),
}

impl Network {
    /// The nodes whose temperatures leave through a stream's outlet (its lanes across the
    /// outlet face): the sources of an outlet header, else the outlet node itself.
    pub fn outlet_lanes(&self, side: Side) -> Vec<usize> {
        let n = self.outlet[side.index()];
        match &self.nodes[n].kind {
            NodeKind::Mixer(sources) => sources.clone(),
            NodeKind::Cells => vec![n],
        }
    }
}

/// The arrangements that are cell networks.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum Layout {
    /// Single-pass crossflow.
    Crossflow(Crossflow),
    /// Multi-pass cross-counterflow.
    CrossCounterflow(CrossCounterflow),
    /// Shell-and-tube with tube passes and shells in series.
    ShellAndTube(ShellAndTube),
}

impl Layout {
    /// The cells across (second direction) of this layout, if it has that setting.
    pub fn cells_across(&self) -> Option<usize> {
        match self {
            Layout::Crossflow(c) => Some(c.cells_across),
            Layout::CrossCounterflow(c) => Some(c.cells_across),
            Layout::ShellAndTube(_) => None,
        }
    }

    /// The same layout with a different `cells_across` (for grid studies).
    pub fn with_cells_across(mut self, n: usize) -> Self {
        match &mut self {
            Layout::Crossflow(c) => c.cells_across = n.max(1),
            Layout::CrossCounterflow(c) => c.cells_across = n.max(1),
            Layout::ShellAndTube(_) => {}
        }
        self
    }

    /// Number of cells the network has with `cells` along the first direction.
    pub fn cell_count(&self, cells: usize) -> usize {
        match self {
            Layout::Crossflow(c) => cells * c.cells_across,
            Layout::CrossCounterflow(c) => cells * c.cells_across * c.passes,
            Layout::ShellAndTube(s) => cells * s.tube_passes * s.shells,
        }
    }

    /// Build the network with `cells` (≥ 1) along the first direction.
    pub fn build(&self, cells: usize) -> Network {
        let cells = cells.max(1);
        match self {
            Layout::Crossflow(c) => crossflow(c, cells),
            Layout::CrossCounterflow(c) => cross_counterflow(c, cells),
            Layout::ShellAndTube(s) => shell_and_tube(s, cells),
        }
    }
}

/// Accumulates cells and nodes.
#[derive(Default)]
struct Builder {
    cells: Vec<NetCell>,
    nodes: Vec<Node>,
}

impl Builder {
    /// A new cell-outlet node.
    fn node(&mut self, side: Side, flow_share: f64) -> usize {
        self.nodes.push(Node { side, kind: NodeKind::Cells, flow_share });
        self.nodes.len() - 1
    }

    /// A header mixing `sources` (a single source needs none).
    fn mix(&mut self, side: Side, sources: Vec<usize>) -> usize {
        if sources.len() == 1 {
            return sources[0];
        }
        let flow_share = sources.iter().map(|&n| self.nodes[n].flow_share).sum();
        self.nodes.push(Node { side, kind: NodeKind::Mixer(sources), flow_share });
        self.nodes.len() - 1
    }

    fn finish(self, outlet: [usize; 2], plot_shape: (usize, usize)) -> Network {
        Network { cells: self.cells, nodes: self.nodes, outlet, plot_shape }
    }
}

/// Nodes of one stream over a lattice of `rows × lanes` (rows along its flow, lanes across
/// it): one per cell when unmixed, one per row shared by its lanes when mixed.
fn lane_nodes(b: &mut Builder, side: Side, mixing: Mixing, rows: usize, lanes: usize) -> Vec<Vec<usize>> {
    (0..rows)
        .map(|_| match mixing {
            Mixing::Unmixed => (0..lanes).map(|_| b.node(side, 1.0 / lanes as f64)).collect(),
            Mixing::Mixed => vec![b.node(side, 1.0); lanes],
        })
        .collect()
}

/// A per-stream pair (hot, cold) from the values of stream `first` and of the other one.
fn pair<T: Copy>(first: Side, a: T, b: T) -> [T; 2] {
    if first == Side::Hot {
        [a, b]
    } else {
        [b, a]
    }
}

fn feed(node: Option<usize>) -> Feed {
    node.map_or(Feed::Inlet, Feed::Node)
}

fn crossflow(c: &Crossflow, nx: usize) -> Network {
    let ny = c.cells_across.max(1);
    let mut b = Builder::default();
    // Hot flows along i (lanes j), cold along j (lanes i).
    let hot = lane_nodes(&mut b, Side::Hot, c.hot, nx, ny);
    let cold = lane_nodes(&mut b, Side::Cold, c.cold, ny, nx);
    for i in 0..nx {
        for j in 0..ny {
            b.cells.push(NetCell {
                feed: [feed(i.checked_sub(1).map(|p| hot[p][j])), feed(j.checked_sub(1).map(|p| cold[p][i]))],
                out: [hot[i][j], cold[j][i]],
                flow_share: [1.0 / ny as f64, 1.0 / nx as f64],
                area_share: 1.0 / (nx * ny) as f64,
                index: [i, j, 0],
                position: [(i as f64 + 0.5) / nx as f64, (j as f64 + 0.5) / ny as f64],
            });
        }
    }
    let hot_out = b.mix(Side::Hot, dedup(&hot[nx - 1]));
    let cold_out = b.mix(Side::Cold, dedup(&cold[ny - 1]));
    b.finish([hot_out, cold_out], (nx, ny))
}

/// Distinct nodes, in order: a mixed row lists its one node once per lane, side by side.
fn dedup(nodes: &[usize]) -> Vec<usize> {
    let mut out = nodes.to_vec();
    out.dedup();
    out
}

fn cross_counterflow(c: &CrossCounterflow, nw: usize) -> Network {
    let (np, nd) = (c.passes.max(1), c.cells_across.max(1));
    let (ps, ts) = (c.passing, c.passing.other());
    let mut b = Builder::default();
    // Cell (q, w, d): pass q, position w along the pass, depth d within the pass. Pass q
    // flows towards +w when q is even (serpentine). The through stream meets pass np − 1
    // first, so the arrangement is counterflow overall.
    // Passing stream: lanes are the depth cells d, rows the steps along the pass.
    let passing: Vec<Vec<Vec<usize>>> = (0..np).map(|_| lane_nodes(&mut b, ps, Mixing::Unmixed, nw, nd)).collect();
    // Through stream: rows are (pass, depth) in its order of travel, lanes the positions w.
    let through: Vec<Vec<Vec<usize>>> = (0..np).map(|_| lane_nodes(&mut b, ts, c.through, nd, nw)).collect();
    let headers: Vec<Option<usize>> = passing.iter().map(|pass| c.mixed_between_passes.then(|| b.mix(ps, pass[nw - 1].clone()))).collect();
    let cells = (0..np).flat_map(|q| (0..nw).flat_map(move |w| (0..nd).map(move |d| (q, w, d))));
    for (q, w, d) in cells {
        let step = if q.is_multiple_of(2) { w } else { nw - 1 - w };
        let passing_in = if step > 0 {
            Some(passing[q][step - 1][d])
        } else if q == 0 {
            None
        } else {
            Some(headers[q - 1].unwrap_or(passing[q - 1][nw - 1][d]))
        };
        let through_in = if d > 0 {
            Some(through[q][d - 1][w])
        } else if q + 1 < np {
            Some(through[q + 1][nd - 1][w])
        } else {
            None
        };
        // Plot: w across, depth downwards in the through stream's direction of travel.
        let depth = (np - 1 - q) * nd + d;
        b.cells.push(NetCell {
            feed: pair(ps, feed(passing_in), feed(through_in)),
            out: pair(ps, passing[q][step][d], through[q][d][w]),
            flow_share: pair(ps, 1.0 / nd as f64, 1.0 / nw as f64),
            area_share: 1.0 / (np * nw * nd) as f64,
            index: [w, d, q],
            position: [(w as f64 + 0.5) / nw as f64, (depth as f64 + 0.5) / (np * nd) as f64],
        });
    }
    let passing_out = headers[np - 1].unwrap_or_else(|| b.mix(ps, passing[np - 1][nw - 1].clone()));
    let through_out = b.mix(ts, dedup(&through[0][nd - 1]));
    let outlet = pair(ps, passing_out, through_out);
    b.finish(outlet, (nw, np * nd))
}

fn shell_and_tube(s: &ShellAndTube, n: usize) -> Network {
    let (np, ns) = (s.tube_passes.max(1), s.shells.max(1));
    let (sh, tu) = (s.shell_side, s.shell_side.other());
    let mut b = Builder::default();
    // Cell (k, p, i): shell k (in the tube stream's order), pass p, axial station i (0 at the
    // shell stream's inlet end). The shell stream runs shell ns − 1 → 0, i = 0 → n − 1, and
    // is one temperature per station (mixed across the passes).
    let station: Vec<Vec<usize>> = (0..ns).map(|_| (0..n).map(|_| b.node(sh, 1.0)).collect()).collect();
    // Tube pass p runs against the shell flow (i decreasing) when p is even; its nodes by step.
    let tube: Vec<Vec<Vec<usize>>> = (0..ns).map(|_| (0..np).map(|_| (0..n).map(|_| b.node(tu, 1.0)).collect()).collect()).collect();
    for k in 0..ns {
        for p in 0..np {
            for i in 0..n {
                let shell_in = if i > 0 {
                    Some(station[k][i - 1])
                } else if k + 1 < ns {
                    Some(station[k + 1][n - 1])
                } else {
                    None
                };
                let step = if p.is_multiple_of(2) { n - 1 - i } else { i };
                let tube_in = if step > 0 {
                    Some(tube[k][p][step - 1])
                } else if p > 0 {
                    Some(tube[k][p - 1][n - 1])
                } else if k > 0 {
                    Some(tube[k - 1][np - 1][n - 1])
                } else {
                    None
                };
                let column = (ns - 1 - k) * n + i;
                b.cells.push(NetCell {
                    feed: pair(sh, feed(shell_in), feed(tube_in)),
                    out: pair(sh, station[k][i], tube[k][p][step]),
                    flow_share: pair(sh, 1.0 / np as f64, 1.0),
                    area_share: 1.0 / (ns * np * n) as f64,
                    index: [i, p, k],
                    position: [(column as f64 + 0.5) / (ns * n) as f64, (p as f64 + 0.5) / np as f64],
                });
            }
        }
    }
    let outlet = pair(sh, station[0][n - 1], tube[ns - 1][np - 1][n - 1]);
    b.finish(outlet, (ns * n, np))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Flow is conserved along every path: what each node passes on (to the cells it feeds,
    /// headers and the outlet) is what flows through it, and the inlet cells take the whole
    /// stream.
    fn check_conservation(net: &Network) {
        let total_area: f64 = net.cells.iter().map(|c| c.area_share).sum();
        assert!((total_area - 1.0).abs() < 1e-12);
        for side in Side::BOTH {
            let s = side.index();
            let inlet: f64 = net.cells.iter().filter(|c| c.feed[s] == Feed::Inlet).map(|c| c.flow_share[s]).sum();
            assert!((inlet - 1.0).abs() < 1e-12, "{side} inlet share {inlet}");
            let mut into = vec![0.0; net.nodes.len()];
            let mut taken = vec![0.0; net.nodes.len()];
            for c in &net.cells {
                assert_eq!(net.nodes[c.out[s]].side, side);
                into[c.out[s]] += c.flow_share[s];
                if let Feed::Node(n) = c.feed[s] {
                    assert_eq!(net.nodes[n].side, side);
                    taken[n] += c.flow_share[s];
                }
            }
            for node in &net.nodes {
                if let NodeKind::Mixer(src) = &node.kind {
                    for &m in src {
                        taken[m] += net.nodes[m].flow_share;
                    }
                }
            }
            taken[net.outlet[s]] += 1.0;
            for (n, node) in net.nodes.iter().enumerate().filter(|(_, n)| n.side == side) {
                let through = if node.kind == NodeKind::Cells { into[n] } else { node.flow_share };
                assert!((through - node.flow_share).abs() < 1e-12, "{side} node {n}: {through} in, share {}", node.flow_share);
                assert!((taken[n] - node.flow_share).abs() < 1e-12, "{side} node {n}: {} taken of {}", taken[n], node.flow_share);
            }
        }
    }

    #[test]
    fn every_layout_conserves_flow_and_area() {
        for hot in [Mixing::Unmixed, Mixing::Mixed] {
            for cold in [Mixing::Unmixed, Mixing::Mixed] {
                check_conservation(&Layout::Crossflow(Crossflow { hot, cold, cells_across: 3 }).build(4));
            }
        }
        for passing in Side::BOTH {
            for mixed_between_passes in [false, true] {
                for through in [Mixing::Unmixed, Mixing::Mixed] {
                    let l = Layout::CrossCounterflow(CrossCounterflow { passes: 3, passing, mixed_between_passes, through, cells_across: 2 });
                    check_conservation(&l.build(5));
                }
            }
        }
        for shell_side in Side::BOTH {
            check_conservation(&Layout::ShellAndTube(ShellAndTube { tube_passes: 4, shells: 2, shell_side }).build(5));
        }
    }
}
