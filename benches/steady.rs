//! Steady-solve benchmark: the variable-property water demo at N = 100, 1 000, 10 000
//! cells; the share of solve time spent in property look-ups (calls counted in one solve,
//! priced at the measured cost per call, all in the same run); nanoseconds per property
//! evaluation. Run: `cargo bench --bench steady`. Figures are recorded in DEVELOPERS.md.

use hxgrid::fluid::{Fluid, Props, RangeLimit};
use hxgrid::solve::{solve_steady, SilentObserver, SteadySettings};
use std::hint::black_box;
use std::sync::atomic::{AtomicUsize, Ordering::Relaxed};
use std::sync::Arc;
use std::time::Instant;

/// Call counters shared with the benchmark.
#[derive(Debug, Default)]
struct Calls {
    props: AtomicUsize,
    enthalpy: AtomicUsize,
}

/// Counts property and enthalpy calls of the fluid it wraps.
#[derive(Debug)]
struct Counting {
    inner: Arc<dyn Fluid>,
    calls: Arc<Calls>,
}

impl Fluid for Counting {
    fn name(&self) -> String {
        self.inner.name()
    }
    fn range(&self) -> RangeLimit {
        self.inner.range()
    }
    fn props(&self, t: f64) -> Props {
        self.calls.props.fetch_add(1, Relaxed);
        self.inner.props(t)
    }
    fn enthalpy(&self, t: f64) -> f64 {
        self.calls.enthalpy.fetch_add(1, Relaxed);
        self.inner.enthalpy(t)
    }
}

/// Median wall time (s) of `reps` calls.
fn median_time(reps: usize, mut f: impl FnMut()) -> f64 {
    let mut times: Vec<f64> = (0..reps)
        .map(|_| {
            let t = Instant::now();
            f();
            t.elapsed().as_secs_f64()
        })
        .collect();
    times.sort_by(|a, b| a.partial_cmp(b).unwrap());
    times[reps / 2]
}

/// Solve `case_file` at 100, 1 000, 10 000 cells; print time, calls and property share.
fn solve_table(case_file: &str) {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("cases").join(case_file);
    let case = hxgrid::case::load(&path).expect("demo case");
    let plain = case.build();
    let (hot_calls, cold_calls) = (Arc::new(Calls::default()), Arc::new(Calls::default()));
    let mut counted = case.build();
    counted.hot.fluid = Arc::new(Counting { inner: case.build().hot.fluid, calls: hot_calls.clone() });
    counted.cold.fluid = Arc::new(Counting { inner: case.build().cold.fluid, calls: cold_calls.clone() });
    // Per-call cost of each stream's own fluid, measured in this run over its range.
    let cost = |f: &dyn Fluid| {
        let r = f.range();
        let temps: Vec<f64> = (0..10_000).map(|i| r.min_c + (r.max_c - r.min_c) * (i as f64 * 0.618_034).fract()).collect();
        let t_p = median_time(50, || {
            temps.iter().for_each(|&t| {
                black_box(f.props(black_box(t)));
            })
        }) / 1e4;
        let t_h = median_time(50, || {
            temps.iter().for_each(|&t| {
                black_box(f.enthalpy(black_box(t)));
            })
        }) / 1e4;
        (t_p, t_h)
    };
    // Each stream's calls priced at its own fluid's cost.
    let prices = [cost(&*plain.hot.fluid), cost(&*plain.cold.fluid)];
    let snapshot = || [&hot_calls, &cold_calls].map(|c| (c.props.load(Relaxed), c.enthalpy.load(Relaxed)));

    println!("\nsteady solve, {case_file} (median of repeated runs, one core)");
    println!("{:>8} {:>12} {:>12} {:>12} {:>14} {:>14}", "cells", "time (ms)", "µs/cell", "iterations", "prop. calls", "props share");
    let mut per_cell = Vec::new();
    for n in [100usize, 1_000, 10_000] {
        let settings = SteadySettings { cells: n, ..case.solver.clone() };
        let reps = if n >= 10_000 { 7 } else { 31 };
        let its = solve_steady(&plain, &settings, &mut SilentObserver).unwrap().iterations;
        let time = median_time(reps, || {
            black_box(solve_steady(&plain, &settings, &mut SilentObserver).unwrap());
        });
        let before = snapshot();
        solve_steady(&counted, &settings, &mut SilentObserver).unwrap();
        let after = snapshot();
        let (mut calls, mut in_props) = (0, 0.0);
        for k in 0..2 {
            let (np, nh) = (after[k].0 - before[k].0, after[k].1 - before[k].1);
            calls += np + nh;
            in_props += np as f64 * prices[k].0 + nh as f64 * prices[k].1;
        }
        per_cell.push(time / n as f64);
        println!("{:>8} {:>12.3} {:>12.3} {:>12} {:>14} {:>13.0}%", n, time * 1e3, time / n as f64 * 1e6, its, calls, 100.0 * in_props / time);
    }
    println!("cost per cell, 10 000 vs 100 cells: {:.2}× (1.0 = linear in N)", per_cell[2] / per_cell[0]);
}

/// An invented water-to-water crossflow plate exchanger (IF97 water both sides, Gnielinski
/// films from the flow): the network benchmark case.
const CROSSFLOW_WATER: &str = r#"
arrangement = "crossflow"
length_m = 1.0
[geometry]
kind = "plane_wall"
area_per_length_m2_m = 20.0
wall_thickness_m = 0.0006
wall_conductivity_W_mK = 16.0
hot_flow_area_m2 = 0.01
hot_hydraulic_diameter_m = 0.008
cold_flow_area_m2 = 0.01
cold_hydraulic_diameter_m = 0.008
[hot]
fluid = "water"
inlet_temperature_C = 90.0
mass_flow_kg_s = 4.0
pressure_bar_abs = 3.0
film = "gnielinski"
[cold]
fluid = "water"
inlet_temperature_C = 15.0
mass_flow_kg_s = 5.0
pressure_bar_abs = 3.0
film = "gnielinski"
"#;

/// Steady solves of the crossflow network at n × n cells.
fn network_table() {
    println!("\nsteady solve, crossflow water network n × n (IF97 water, Gnielinski; median, one core)");
    println!("{:>10} {:>10} {:>12} {:>12} {:>12}", "grid", "cells", "time (ms)", "µs/cell", "iterations");
    let mut per_cell = Vec::new();
    for n in [25usize, 50, 100, 200] {
        let text = format!("{CROSSFLOW_WATER}\n[crossflow]\ncells_across = {n}\n[solver]\ncells = {n}\n");
        let case = hxgrid::case::parse_str(&text, "bench", "bench").expect("bench case");
        let ex = case.build();
        let layout = ex.arrangement.layout().expect("a network");
        let its = hxgrid::solve::solve_network(&ex, &layout, &case.solver, &mut SilentObserver).unwrap().iterations;
        let reps = if n >= 200 { 5 } else { 15 };
        let time = median_time(reps, || {
            black_box(hxgrid::solve::solve_network(&ex, &layout, &case.solver, &mut SilentObserver).unwrap());
        });
        per_cell.push(time / (n * n) as f64);
        println!("{:>10} {:>10} {:>12.2} {:>12.3} {:>12}", format!("{n}×{n}"), n * n, time * 1e3, time / (n * n) as f64 * 1e6, its);
    }
    println!("cost per cell, 200×200 vs 25×25: {:.2}× (1.0 = linear in the cells)", per_cell[3] / per_cell[0]);
    // A network with feedback (the sparse LU path): the same water, two 1-2 shells in series.
    println!("\nsteady solve, the same water in two 1-2 shells in series (sparse LU path)");
    println!("{:>10} {:>10} {:>12} {:>12} {:>12}", "per pass", "cells", "time (ms)", "µs/cell", "iterations");
    for n in [250usize, 1_000, 2_500] {
        let text = format!("{CROSSFLOW_WATER}\n[shell_and_tube]\nshell_side = \"cold\"\ntube_passes = 2\nshells_in_series = 2\n[solver]\ncells = {n}\n")
            .replace("arrangement = \"crossflow\"", "arrangement = \"shell_and_tube\"");
        let case = hxgrid::case::parse_str(&text, "bench", "bench").expect("bench case");
        let ex = case.build();
        let layout = ex.arrangement.layout().expect("a network");
        let its = hxgrid::solve::solve_network(&ex, &layout, &case.solver, &mut SilentObserver).unwrap().iterations;
        let time = median_time(9, || {
            black_box(hxgrid::solve::solve_network(&ex, &layout, &case.solver, &mut SilentObserver).unwrap());
        });
        let cells = 4 * n;
        println!("{:>10} {:>10} {:>12.2} {:>12.3} {:>12}", n, cells, time * 1e3, time / cells as f64 * 1e6, its);
    }
}

/// A whole steady run at 100 000 cells, piece by piece: the solve alone, the rating (solve,
/// the half-grid solve for the error estimate, lumped result, report assembly), and the
/// files (`hxgrid run`'s writing, thinned profiles; then every cell).
fn whole_run_table() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/water-cooler.toml");
    let case = hxgrid::case::load(&path).expect("demo case");
    let ex = case.build();
    let cells = 100_000;
    let settings = SteadySettings { cells, ..case.solver.clone() };
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("target/bench-whole-run");
    println!("\nwhole steady run of water-cooler.toml at {cells} cells (median of 5, s):");
    let solve = median_time(5, || {
        black_box(solve_steady(&ex, &settings, &mut SilentObserver).unwrap());
    });
    let rate = median_time(5, || {
        black_box(hxgrid::study::rate("bench", &ex, &settings, &Default::default(), &mut SilentObserver).unwrap());
    });
    let report = hxgrid::study::rate("bench", &ex, &settings, &Default::default(), &mut SilentObserver).unwrap();
    let write = median_time(5, || {
        hxgrid::output::write_steady(&report, &dir, hxgrid::output::WriteOptions::default()).unwrap();
    });
    let write_all = median_time(5, || {
        hxgrid::output::write_steady(&report, &dir, hxgrid::output::WriteOptions { all_cells: true }).unwrap();
    });
    println!("{:<44} {:>9} {:>12}", "part", "s", "× solve");
    for (label, t) in [
        ("solve", solve),
        ("rating (solve + half grid + lumped + report)", rate),
        ("writing the files (profiles thinned)", write),
        ("writing the files (every cell)", write_all),
        ("whole run (rating + writing)", rate + write),
    ] {
        println!("{label:<44} {t:>9.4} {:>12.2}", t / solve);
    }
}

fn main() {
    whole_run_table();
    network_table();
    solve_table("water-cooler.toml");
    solve_table("co2-gas-cooler.toml");

    println!("\nproperty evaluation per call (props = ρ, cp, μ, k; enthalpy separately):");
    println!("{:<40} {:>12} {:>14}", "source", "props (ns)", "enthalpy (ns)");
    let mut sources: Vec<(String, Box<dyn Fluid>)> = vec![
        ("water, IF97 tabulated per run (0.25 K)".into(), Box::new(hxgrid::fluid::Water::new(3e5, hxgrid::fluid::WaterPhase::Liquid).unwrap())),
        ("constant properties".into(), Box::new(hxgrid::fluid::ConstantFluid::new(Props { density: 1.0, cp: 1.0, viscosity: 1.0, conductivity: 1.0 }))),
    ];
    for (name, _) in hxgrid::fluid::library::TABLES {
        let t = hxgrid::fluid::library::builtin_table(name).unwrap();
        sources.push((format!("table {name} ({} points)", t.temperatures().len()), Box::new(t)));
    }
    for (label, f) in &sources {
        let r = f.range();
        let temps: Vec<f64> = (0..10_000).map(|i| r.min_c + (r.max_c - r.min_c).min(1e3) * (i as f64 * 0.618_034).fract()).collect();
        let t_p = median_time(50, || {
            temps.iter().for_each(|&t| {
                black_box(f.props(black_box(t)));
            })
        }) / 1e4;
        let t_h = median_time(50, || {
            temps.iter().for_each(|&t| {
                black_box(f.enthalpy(black_box(t)));
            })
        }) / 1e4;
        println!("{label:<40} {:>12.1} {:>14.1}", t_p * 1e9, t_h * 1e9);
    }
    let temps: Vec<f64> = (0..1000).map(|i| 10.0 + 120.0 * (i as f64 * 0.618_034).fract()).collect();
    let t_direct = median_time(5, || {
        temps.iter().for_each(|&t| {
            black_box(hxgrid::fluid::water::direct(0.3, black_box(t)));
        })
    }) / 1e3;
    println!("{:<40} {:>12.1} {:>14}", "water, IF97 evaluated directly", t_direct * 1e9, "(same call)");
}
