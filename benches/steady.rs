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
    inner: Box<dyn Fluid>,
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

fn main() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/water-cooler.toml");
    let case = hxgrid::case::load(&path).expect("demo case");
    let water = case.build();
    let calls = Arc::new(Calls::default());
    let mut counted = case.build();
    counted.hot.fluid = Box::new(Counting { inner: case.build().hot.fluid, calls: calls.clone() });
    counted.cold.fluid = Box::new(Counting { inner: case.build().cold.fluid, calls: calls.clone() });

    // Cost of one look-up on the tabulated water, measured in this run.
    let fluid = &water.hot.fluid;
    let temps: Vec<f64> = (0..10_000).map(|i| 10.0 + 80.0 * (i as f64 * 0.618_034).fract()).collect();
    let per_call = |f: &dyn Fn(f64)| {
        median_time(200, || {
            for &t in &temps {
                f(black_box(t));
            }
        }) / temps.len() as f64
    };
    let t_props = per_call(&|t| {
        black_box(fluid.props(t));
    });
    let t_h = per_call(&|t| {
        black_box(fluid.enthalpy(t));
    });
    let t_direct = median_time(5, || {
        for &t in temps.iter().take(1000) {
            black_box(hxgrid::fluid::water::direct(0.3, black_box(t)));
        }
    }) / 1000.0;

    println!("steady solve, water-cooler demo (median of repeated runs, one core)");
    println!("{:>8} {:>12} {:>12} {:>12} {:>14} {:>14}", "cells", "time (ms)", "µs/cell", "iterations", "prop. calls", "props share");
    let mut per_cell = Vec::new();
    for n in [100usize, 1_000, 10_000] {
        let settings = SteadySettings { cells: n, ..case.solver.clone() };
        let reps = if n >= 10_000 { 7 } else { 31 };
        let its = solve_steady(&water, &settings, &mut SilentObserver).unwrap().iterations;
        let time = median_time(reps, || {
            black_box(solve_steady(&water, &settings, &mut SilentObserver).unwrap());
        });
        let before = (calls.props.load(Relaxed), calls.enthalpy.load(Relaxed));
        solve_steady(&counted, &settings, &mut SilentObserver).unwrap();
        let (np, nh) = (calls.props.load(Relaxed) - before.0, calls.enthalpy.load(Relaxed) - before.1);
        let in_props = np as f64 * t_props + nh as f64 * t_h;
        per_cell.push(time / n as f64);
        println!(
            "{:>8} {:>12.3} {:>12.3} {:>12} {:>14} {:>13.0}%",
            n,
            time * 1e3,
            time / n as f64 * 1e6,
            its,
            np + nh,
            100.0 * in_props / time
        );
    }
    println!("cost per cell, 10 000 vs 100 cells: {:.2}× (1.0 = linear in N)", per_cell[2] / per_cell[0]);
    println!("\nproperty evaluation, water (IF97 tabulated per run at 0.25 K):");
    println!("  props(T) from table:           {:>8.1} ns", t_props * 1e9);
    println!("  enthalpy(T) from table:        {:>8.1} ns", t_h * 1e9);
    println!("  IF97 direct (h, ρ, cp, μ, k):  {:>8.1} ns", t_direct * 1e9);
}
