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
    /// The outlet of this cell.
    Cell(usize),
    /// This mixer's mixed-mean temperature.
    Mixer(usize),
}

/// One cell of the network.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct NetCell {
    /// Where each stream (hot, cold) comes from.
    pub feed: [Feed; 2],
    /// Share of each stream's mass flow through the cell.
    pub flow_share: [f64; 2],
    /// Share of the exchanger's heat-transfer area.
    pub area_share: f64,
    /// Grid indices for reports: (along the first direction, across, pass or shell block).
    pub index: [usize; 3],
    /// Position of the cell centre on the plotted face, each in 0…1 (first direction, second).
    pub position: [f64; 2],
}

/// A mixer: the cells whose outlets of one stream are mixed (by flow-weighted enthalpy).
#[derive(Debug, Clone, PartialEq)]
pub struct Mixer {
    /// The stream mixed.
    pub side: Side,
    /// The cells mixed.
    pub cells: Vec<usize>,
}

/// A built network; a constructed value is consistent (every feed refers to an earlier-built
/// cell or mixer of the right stream).
#[derive(Debug, Clone, PartialEq)]
pub struct Network {
    /// Cells.
    pub cells: Vec<NetCell>,
    /// Mixers.
    pub mixers: Vec<Mixer>,
    /// Where each stream (hot, cold) leaves.
    pub outlet: [Feed; 2],
    /// Plot grid: (columns, rows) of the cells' `position` lattice.
    pub plot_shape: (usize, usize),
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

/// Accumulates cells and mixers.
#[derive(Default)]
struct Builder {
    cells: Vec<NetCell>,
    mixers: Vec<Mixer>,
}

impl Builder {
    /// A feed from a group of cells: the cell itself for a group of one, else a mixer.
    fn mix(&mut self, side: Side, cells: Vec<usize>) -> Feed {
        if cells.len() == 1 {
            return Feed::Cell(cells[0]);
        }
        self.mixers.push(Mixer { side, cells });
        Feed::Mixer(self.mixers.len() - 1)
    }
}

/// Index of cell (i, j) in a row-major nx × ny block.
fn at(ny: usize, i: usize, j: usize) -> usize {
    i * ny + j
}

fn crossflow(c: &Crossflow, nx: usize) -> Network {
    let ny = c.cells_across.max(1);
    let mut b = Builder::default();
    let area = 1.0 / (nx * ny) as f64;
    // Hot flows along i (rows j), cold along j (columns i). A mixed stream's cells at one
    // position along its flow all take the mixed-mean of the previous position's outlets.
    let mut hot_mixers = Vec::with_capacity(nx);
    if c.hot == Mixing::Mixed {
        for i in 0..nx.saturating_sub(1) {
            let f = b.mix(Side::Hot, (0..ny).map(|j| at(ny, i, j)).collect());
            hot_mixers.push(f);
        }
    }
    let mut cold_mixers = Vec::with_capacity(ny);
    if c.cold == Mixing::Mixed {
        for j in 0..ny.saturating_sub(1) {
            let f = b.mix(Side::Cold, (0..nx).map(|i| at(ny, i, j)).collect());
            cold_mixers.push(f);
        }
    }
    for i in 0..nx {
        for j in 0..ny {
            let hot = match (i, c.hot) {
                (0, _) => Feed::Inlet,
                (_, Mixing::Unmixed) => Feed::Cell(at(ny, i - 1, j)),
                (_, Mixing::Mixed) => hot_mixers[i - 1],
            };
            let cold = match (j, c.cold) {
                (0, _) => Feed::Inlet,
                (_, Mixing::Unmixed) => Feed::Cell(at(ny, i, j - 1)),
                (_, Mixing::Mixed) => cold_mixers[j - 1],
            };
            b.cells.push(NetCell {
                feed: [hot, cold],
                flow_share: [1.0 / ny as f64, 1.0 / nx as f64],
                area_share: area,
                index: [i, j, 0],
                position: [(i as f64 + 0.5) / nx as f64, (j as f64 + 0.5) / ny as f64],
            });
        }
    }
    let hot_out = b.mix(Side::Hot, (0..ny).map(|j| at(ny, nx - 1, j)).collect());
    let cold_out = b.mix(Side::Cold, (0..nx).map(|i| at(ny, i, ny - 1)).collect());
    Network { cells: b.cells, mixers: b.mixers, outlet: [hot_out, cold_out], plot_shape: (nx, ny) }
}

fn cross_counterflow(c: &CrossCounterflow, nw: usize) -> Network {
    let (np, nd) = (c.passes.max(1), c.cells_across.max(1));
    let (p, t) = (c.passing.index(), c.passing.other().index());
    let mut b = Builder::default();
    let area = 1.0 / (np * nw * nd) as f64;
    // Cell (q, w, d): pass q, position w along the pass, depth d within the pass. Pass q
    // flows towards +w when q is even. The through stream meets pass np − 1 first.
    let id = |q: usize, w: usize, d: usize| (q * nw + w) * nd + d;
    let upstream_w = |q: usize, k: usize| if q % 2 == 0 { k } else { nw - 1 - k };
    // Cells are pushed in index order, so feeds may name any cell; mixers go first.
    let mut through_mixer = vec![Feed::Inlet; np * nd];
    if c.through == Mixing::Mixed {
        for q in 0..np {
            for d in 0..nd {
                through_mixer[q * nd + d] = b.mix(c.passing.other(), (0..nw).map(|w| id(q, w, d)).collect());
            }
        }
    }
    let mut pass_header = vec![Feed::Inlet; np];
    if c.mixed_between_passes {
        for (q, header) in pass_header.iter_mut().enumerate().take(np - 1) {
            let last = upstream_w(q, nw - 1);
            *header = b.mix(c.passing, (0..nd).map(|d| id(q, last, d)).collect());
        }
    }
    for q in 0..np {
        for w in 0..nw {
            for d in 0..nd {
                let mut feed = [Feed::Inlet; 2];
                // Passing stream: along the pass, then from the previous pass.
                let k = if q % 2 == 0 { w } else { nw - 1 - w }; // steps travelled in the pass
                feed[p] = if k > 0 {
                    Feed::Cell(id(q, upstream_w(q, k - 1), d))
                } else if q == 0 {
                    Feed::Inlet
                } else if c.mixed_between_passes {
                    pass_header[q - 1]
                } else {
                    Feed::Cell(id(q - 1, upstream_w(q - 1, nw - 1), d))
                };
                // Through stream: from the previous depth cell of this pass, or the last of the
                // next pass up its path.
                let (uq, ud) = if d > 0 { (q, d - 1) } else { (q + 1, nd - 1) };
                feed[t] = if d == 0 && q + 1 == np {
                    Feed::Inlet
                } else {
                    match c.through {
                        Mixing::Unmixed => Feed::Cell(id(uq, w, ud)),
                        Mixing::Mixed => through_mixer[uq * nd + ud],
                    }
                };
                let mut flow_share = [0.0; 2];
                flow_share[p] = 1.0 / nd as f64;
                flow_share[t] = 1.0 / nw as f64;
                // Plot: w across, depth downwards in the through stream's direction.
                let depth = (np - 1 - q) * nd + d;
                b.cells.push(NetCell {
                    feed,
                    flow_share,
                    area_share: area,
                    index: [w, d, q],
                    position: [(w as f64 + 0.5) / nw as f64, (depth as f64 + 0.5) / (np * nd) as f64],
                });
            }
        }
    }
    let mut outlet = [Feed::Inlet; 2];
    let last = upstream_w(np - 1, nw - 1);
    outlet[p] = b.mix(c.passing, (0..nd).map(|d| id(np - 1, last, d)).collect());
    outlet[t] = b.mix(c.passing.other(), (0..nw).map(|w| id(0, w, nd - 1)).collect());
    Network { cells: b.cells, mixers: b.mixers, outlet, plot_shape: (nw, np * nd) }
}

fn shell_and_tube(s: &ShellAndTube, n: usize) -> Network {
    let (np, ns) = (s.tube_passes.max(1), s.shells.max(1));
    let (sh, tu) = (s.shell_side.index(), s.shell_side.other().index());
    let mut b = Builder::default();
    let area = 1.0 / (ns * np * n) as f64;
    // Cell (k, p, i): shell k (the tube stream's order), pass p, axial station i (0 at the
    // shell stream's inlet end). The shell stream runs shell ns − 1 → 0, i = 0 → n − 1.
    let id = |k: usize, p: usize, i: usize| (k * np + p) * n + i;
    // Station mixers of the shell stream: the mixed-mean over the passes at (k, i).
    let mut station = vec![Feed::Inlet; ns * n];
    for k in 0..ns {
        for i in 0..n {
            station[k * n + i] = b.mix(s.shell_side, (0..np).map(|p| id(k, p, i)).collect());
        }
    }
    // Tube pass p runs against the shell flow (i decreasing) when p is even.
    let station_of = |p: usize, step: usize| if p % 2 == 0 { n - 1 - step } else { step };
    for k in 0..ns {
        for p in 0..np {
            for i in 0..n {
                let mut feed = [Feed::Inlet; 2];
                feed[sh] = if i > 0 {
                    station[k * n + i - 1]
                } else if k + 1 < ns {
                    station[(k + 1) * n + n - 1]
                } else {
                    Feed::Inlet
                };
                let step = if p % 2 == 0 { n - 1 - i } else { i };
                feed[tu] = if step > 0 {
                    Feed::Cell(id(k, p, station_of(p, step - 1)))
                } else if p > 0 {
                    Feed::Cell(id(k, p - 1, station_of(p - 1, n - 1)))
                } else if k > 0 {
                    Feed::Cell(id(k - 1, np - 1, station_of(np - 1, n - 1)))
                } else {
                    Feed::Inlet
                };
                let mut flow_share = [0.0; 2];
                flow_share[sh] = 1.0 / np as f64;
                flow_share[tu] = 1.0;
                b.cells.push(NetCell {
                    feed,
                    flow_share,
                    area_share: area,
                    index: [i, p, k],
                    position: [((ns - 1 - k) * n + i) as f64 / (ns * n) as f64 + 0.5 / (ns * n) as f64, (p as f64 + 0.5) / np as f64],
                });
            }
        }
    }
    let mut outlet = [Feed::Inlet; 2];
    outlet[sh] = station[n - 1];
    outlet[tu] = Feed::Cell(id(ns - 1, np - 1, station_of(np - 1, n - 1)));
    Network { cells: b.cells, mixers: b.mixers, outlet, plot_shape: (ns * n, np) }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every stream's flow shares add up to the whole flow along any cut: each cell's
    /// outflow goes to exactly one place, and each stream's inlet cells carry all of it.
    fn check_conservation(net: &Network) {
        for s in 0..2 {
            let inlet: f64 = net.cells.iter().filter(|c| c.feed[s] == Feed::Inlet).map(|c| c.flow_share[s]).sum();
            assert!((inlet - 1.0).abs() < 1e-12, "stream {s} inlet share {inlet}");
            let total_area: f64 = net.cells.iter().map(|c| c.area_share).sum();
            assert!((total_area - 1.0).abs() < 1e-12);
            // What a mixer or a cell passes on is what its consumers take.
            let mut taken = vec![0.0; net.mixers.len()];
            let mut cell_taken = vec![0.0; net.cells.len()];
            let consumers = net.cells.iter().map(|c| (c.feed[s], c.flow_share[s])).chain(std::iter::once((net.outlet[s], 1.0)));
            for (feed, share) in consumers {
                match feed {
                    Feed::Mixer(m) => taken[m] += share,
                    Feed::Cell(k) => cell_taken[k] += share,
                    Feed::Inlet => {}
                }
            }
            for (m, mixer) in net.mixers.iter().enumerate().filter(|(_, m)| m.side.index() == s) {
                let given: f64 = mixer.cells.iter().map(|&k| net.cells[k].flow_share[s]).sum();
                assert!((given - taken[m]).abs() < 1e-12, "stream {s} mixer {m}: {given} in, {} out", taken[m]);
                for &k in &mixer.cells {
                    cell_taken[k] += net.cells[k].flow_share[s];
                }
            }
            for (k, c) in net.cells.iter().enumerate() {
                assert!((cell_taken[k] - c.flow_share[s]).abs() < 1e-12, "stream {s} cell {k}: passes on {} of {}", cell_taken[k], c.flow_share[s]);
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
