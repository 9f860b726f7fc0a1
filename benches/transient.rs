//! Transient benchmark: 10 simulated minutes of a cold start of the water demo (everything
//! at 15 °C, hot water arriving at t = 0) at 200 and 2 000 cells, explicit (Dormand–Prince)
//! and implicit (BDF2). Prints wall time, steps, right-hand sides, Jacobians and the cost per
//! cell-step. Run: `cargo bench --bench transient` (figures recorded in DEVELOPERS.md).
//! `HXGRID_BENCH_QUICK=1` runs the explicit 2 000-cell case for 60 s only.

use hxgrid::solve::transient::{simulate, Initial, Inputs, Integrator, TransientSettings};
use hxgrid::solve::SilentObserver;
use std::time::Instant;

fn main() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/water-cooler.toml");
    let case = hxgrid::case::load(&path).expect("demo case");
    let ex = case.build();
    let inputs = Inputs::constant(&ex);
    let wall = 7900.0 * 500.0 * ex.wall.cross_section_m2();
    let quick = std::env::var("HXGRID_BENCH_QUICK").is_ok();
    println!("cold start of water-cooler.toml, tolerance 1e-4 K (one core)");
    println!(
        "{:>7} {:>10} {:>12} {:>11} {:>9} {:>9} {:>10} {:>12} {:>16}",
        "cells", "integrator", "simulated s", "wall s", "steps", "rejected", "Jacobians", "RHS evals", "µs per cell-step"
    );
    for cells in [200usize, 2000] {
        for integrator in [Integrator::Implicit, Integrator::Explicit] {
            let duration = if quick && cells == 2000 && integrator == Integrator::Explicit { 60.0 } else { 600.0 };
            let settings = TransientSettings {
                cells,
                duration_s: duration,
                output_interval_s: 10.0,
                integrator,
                initial: Initial::Uniform(15.0),
                wall_heat_capacity_j_mk: wall,
                ..Default::default()
            };
            let t0 = Instant::now();
            let run = match simulate(&ex, &inputs, &settings, &mut SilentObserver) {
                Ok(r) => r,
                Err(e) => {
                    println!("{cells:>7} {:>10} {duration:>12} failed after {:.1} s: {e}", "explicit", t0.elapsed().as_secs_f64());
                    continue;
                }
            };
            let secs = t0.elapsed().as_secs_f64();
            let s = &run.stats;
            println!(
                "{:>7} {:>10} {:>12} {:>11.3} {:>9} {:>9} {:>10} {:>12} {:>16.3}",
                cells,
                if integrator == Integrator::Implicit { "implicit" } else { "explicit" },
                duration,
                secs,
                s.steps,
                s.rejected_steps,
                s.jacobian_evaluations,
                s.rhs_evaluations,
                secs / (s.steps.max(1) * cells) as f64 * 1e6
            );
        }
    }
}
