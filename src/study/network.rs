//! What rating a cell network adds: its duty and outlets, its solves at other grids (every
//! direction scaled together), and its fields and outlet spread for the report.

use super::Solved;
use crate::model::{Exchanger, Layout, Side};
use crate::results::*;
use crate::solve::{solve_network, NetworkSolution, Observer, SolveError, SteadySettings};

/// Duty and outlets of a network solution (duty from the hot stream's enthalpy change).
pub fn key_quantities(ex: &Exchanger, s: &NetworkSolution) -> KeyQuantities {
    let f = &ex.hot.fluid;
    let hot_out = s.outlet_c(Side::Hot);
    KeyQuantities {
        duty_w: ex.hot.mass_flow_kg_s * (f.enthalpy(ex.hot.inlet_c) - f.enthalpy(hot_out)),
        hot_outlet_c: hot_out,
        cold_outlet_c: s.outlet_c(Side::Cold),
    }
}

/// The layout refined (or coarsened) to `cells` along the first direction, keeping the
/// ratio of cells across to cells along that the case has.
fn scaled(layout: &Layout, base_cells: usize, cells: usize) -> Layout {
    match layout.cells_across() {
        Some(across) => layout.with_cells_across(((across * cells) as f64 / base_cells as f64).round().max(1.0) as usize),
        None => *layout,
    }
}

/// Solve the network at `cells` along the first direction (cells across scaled with it).
pub fn solve_at(ex: &Exchanger, layout: &Layout, settings: &SteadySettings, cells: usize, observer: &mut dyn Observer) -> Result<NetworkSolution, SolveError> {
    solve_network(ex, &scaled(layout, settings.cells, cells), &SteadySettings { cells, ..settings.clone() }, observer)
}

/// A network solution made ready for the report.
pub(super) fn solved(ex: &Exchanger, layout: &Layout, sol: &NetworkSolution) -> Solved {
    let net = &sol.network;
    let details: Vec<_> = (0..net.cells.len())
        .map(|k| {
            let c = &net.cells[k];
            let dx = sol.dx_m(k);
            (ex.cell_shared(dx, c.flow_share, &sol.cell_temps(k)), dx, sol.wall_c[k])
        })
        .collect();
    let positions = net.cells.iter().map(|c| (c.position[0] * ex.length_m, Some((c.index, c.position)))).collect();
    let q = key_quantities(ex, sol);
    // Pressure drop: one step along each stream's flow length from its inlet to its mixed
    // outlet, at the flow-weighted mean Reynolds number of its cells.
    let pressure_drop = [Side::Hot, Side::Cold].map(|side| {
        let s = side.index();
        let stream = ex.stream(side);
        let (mut w, mut re, mut wall) = (0.0, 0.0, 0.0);
        for (c, (d, _, wall_c)) in net.cells.iter().zip(&details) {
            let film = if side == Side::Hot { &d.hot_film } else { &d.cold_film };
            let share = c.flow_share[s] * c.area_share;
            re += share * film.reynolds?;
            wall += share * wall_c;
            w += share;
        }
        let outlet = if side == Side::Hot { q.hot_outlet_c } else { q.cold_outlet_c };
        let mean = |x: f64| (w > 0.0).then(|| x / w);
        stream.pressure_drop(stream.channel.flow_length_m, stream.inlet_c, outlet, stream.inlet_pressure_pa, mean(re), mean(wall))
    });
    let field = |value: &dyn Fn(usize) -> f64| Field::of_network(net, &(0..net.cells.len()).map(value).collect::<Vec<f64>>());
    let (x_label, y_label) = match layout {
        Layout::Crossflow(_) => ("along the hot flow (fraction)", "along the cold flow (fraction)"),
        Layout::CrossCounterflow(_) if super::position_label(ex).starts_with("depth of the bank") => {
            ("along the tubes, across the face (fraction)", "depth of the bank, rows (fraction)")
        }
        Layout::CrossCounterflow(c) => (
            "along each pass (fraction)",
            if c.passing == Side::Hot { "depth along the cold flow, passes (fraction)" } else { "depth along the hot flow, passes (fraction)" },
        ),
        Layout::ShellAndTube(_) => ("along the shell flow, shells in series (fraction)", "tube pass"),
    };
    let fields = NetworkFields {
        x_label: x_label.into(),
        y_label: y_label.into(),
        hot_c: field(&|k| details[k].0.hot_bulk_c),
        cold_c: field(&|k| details[k].0.cold_bulk_c),
        wall_c: field(&|k| details[k].2),
        heat_flux_w_m2: field(&|k| details[k].0.balance.hot_to_wall_w / details[k].1 / ex.reference_area_per_length_m),
        hot_outlet_lanes_c: sol.outlet_lanes_c(Side::Hot),
        cold_outlet_lanes_c: sol.outlet_lanes_c(Side::Cold),
    };
    let spread = |lanes: &[f64], mean: f64| OutletSpread {
        mixed_mean_C: mean,
        min_C: lanes.iter().copied().fold(f64::INFINITY, f64::min),
        max_C: lanes.iter().copied().fold(f64::NEG_INFINITY, f64::max),
        lanes: lanes.len(),
    };
    Solved {
        cells: sol.cells,
        iterations: sol.iterations,
        relative_residual: sol.relative_residual,
        details,
        positions,
        q,
        faces_pa: [Vec::new(), Vec::new()],
        pressure_drop,
        faces_m: Vec::new(),
        faces_c: [Vec::new(), Vec::new()],
        network: Some((*layout, [spread(&fields.hot_outlet_lanes_c, q.hot_outlet_c), spread(&fields.cold_outlet_lanes_c, q.cold_outlet_c)], fields)),
    }
}

/// How many cells each stream node lies from its stream's inlet, along the flow (a header
/// takes the deepest of its sources). Networks carry no face pressures, so the local
/// pressure is taken to fall in proportion to this depth. Nodes are visited in flow order
/// (Kahn's topological sort: streams flow forward, so the graph has no cycles), O(cells).
fn path_depths(net: &crate::model::Network, side: Side) -> Vec<usize> {
    use crate::model::network::NodeKind;
    use crate::model::Feed;
    let s = side.index();
    let n = net.nodes.len();
    // Edges (from, to, cells added): a cell from its feed to its outlet, a header from each
    // source; inlet-fed cells start at depth 1.
    let mut edges: Vec<Vec<(usize, usize)>> = vec![Vec::new(); n];
    let mut incoming = vec![0usize; n];
    let mut depth = vec![0usize; n];
    for c in &net.cells {
        match c.feed[s] {
            Feed::Inlet => depth[c.out[s]] = depth[c.out[s]].max(1),
            Feed::Node(m) => {
                edges[m].push((c.out[s], 1));
                incoming[c.out[s]] += 1;
            }
        }
    }
    for (to, node) in net.nodes.iter().enumerate() {
        if let NodeKind::Mixer(sources) = &node.kind {
            for &m in sources {
                edges[m].push((to, 0));
                incoming[to] += 1;
            }
        }
    }
    let mut ready: Vec<usize> = (0..n).filter(|&k| incoming[k] == 0).collect();
    while let Some(m) = ready.pop() {
        for &(to, add) in &edges[m] {
            depth[to] = depth[to].max(depth[m] + add);
            incoming[to] -= 1;
            if incoming[to] == 0 {
                ready.push(to);
            }
        }
    }
    depth
}

/// The local-pressure check of an axial line, for a network: at each cell's outlet the
/// pressure is the inlet's less the stream's drop in proportion to the cells passed
/// through; it must stay positive, and a liquid's above its saturation pressure at the
/// local temperature (flashing). Without a friction model the inlet pressure holds
/// everywhere.
pub(super) fn check_local_pressure(ex: &Exchanger, sol: &NetworkSolution, drops: [Option<f64>; 2]) -> Result<(), SolveError> {
    let net = &sol.network;
    for side in [Side::Hot, Side::Cold] {
        let s = side.index();
        let stream = ex.stream(side);
        let depth = path_depths(net, side);
        let deepest = depth[net.outlet[s]].max(1) as f64;
        let drop = drops[s].unwrap_or(0.0);
        for c in &net.cells {
            let node = c.out[s];
            let p = stream.inlet_pressure_pa - drop * (depth[node] as f64 / deepest).min(1.0);
            let position_m = c.position[0] * ex.length_m;
            if p.is_nan() || p <= 0.0 {
                return Err(SolveError::NegativePressure { stream: side, position_m, pressure_pa: p, inlet_pa: stream.inlet_pressure_pa });
            }
            let t = sol.node_c[node];
            if let Some(p_sat) = stream.fluid.saturation_pressure_pa(t) {
                if p < p_sat {
                    return Err(SolveError::Flashing { stream: side, position_m, pressure_pa: p, saturation_pa: p_sat, temperature_c: t });
                }
            }
        }
    }
    Ok(())
}
