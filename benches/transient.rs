//! Transient benchmark: a cold start of the water demo (everything at 15 °C, hot water
//! arriving at t = 0), 640 s simulated, outputs every second, as a user's `[transient]`
//! table would ask.
//!
//! Prints, for each setting: wall time, the counts (accepted and rejected steps, Newton
//! iterations, factorisations, right-hand sides), the cost per cell-step, and the largest
//! outlet error over all output times against two references: the same grid integrated
//! with tolerances 10⁴ times tighter (the time-integration error), and a fine grid of the
//! same scheme (the total error a user sees). Run: `cargo bench --bench transient`
//! (figures recorded in benches/README.md).
//!
//! References are computed once and kept in `target/transient-bench-references.json` (they
//! are the converged solutions of the discrete problems, whichever build computes them), so
//! the same table can be run on an older build for before/after figures.
//! `HXGRID_BENCH_QUICK=1` skips the scaling table's 20 000-cell rows.

use hxgrid::fluid::{Fluid, Props, RangeLimit};
use hxgrid::model::{Exchanger, Scheme};
use hxgrid::solve::transient::{simulate, Initial, Inputs, Integrator, Signal, TransientRun, TransientSettings};
use hxgrid::solve::SilentObserver;
use std::sync::atomic::{AtomicUsize, Ordering::Relaxed};
use std::sync::Arc;
use std::time::Instant;

/// Counts the property calls (props and enthalpy) of the fluid it wraps.
#[derive(Debug)]
struct Counting {
    inner: Arc<dyn Fluid>,
    calls: Arc<AtomicUsize>,
}

impl Fluid for Counting {
    fn name(&self) -> String {
        self.inner.name()
    }
    fn range(&self) -> RangeLimit {
        self.inner.range()
    }
    fn bounds(&self) -> (f64, f64) {
        self.inner.bounds()
    }
    fn props(&self, t: f64) -> Props {
        self.calls.fetch_add(1, Relaxed);
        self.inner.props(t)
    }
    fn enthalpy(&self, t: f64) -> f64 {
        self.calls.fetch_add(1, Relaxed);
        self.inner.enthalpy(t)
    }
}

/// Property calls per cell and Newton iteration in one run of `s`.
fn property_calls(ex: &Exchanger, inputs: &Inputs, s: &Setting, duration: f64) -> f64 {
    let calls = Arc::new(AtomicUsize::new(0));
    let mut e = ex.clone();
    e.hot.fluid = Arc::new(Counting { inner: ex.hot.fluid.clone(), calls: calls.clone() });
    e.cold.fluid = Arc::new(Counting { inner: ex.cold.fluid.clone(), calls: calls.clone() });
    let (r, _) = run(&e, inputs, s, duration);
    calls.load(Relaxed) as f64 / (r.stats.newton_iterations.max(1) * s.cells) as f64
}

struct Setting {
    label: String,
    scheme: Scheme,
    cells: usize,
    integrator: Integrator,
    atol: f64,
    rtol: f64,
}

fn settings(ex: &Exchanger, s: &Setting, duration: f64) -> TransientSettings {
    TransientSettings {
        cells: s.cells,
        duration_s: duration,
        output_interval_s: 1.0,
        integrator: s.integrator,
        atol_k: s.atol,
        rtol: s.rtol,
        initial: Initial::Uniform(15.0),
        wall_heat_capacity_j_mk: 7900.0 * 500.0 * ex.wall.cross_section_m2(),
        ..Default::default()
    }
}

fn run(ex: &Exchanger, inputs: &Inputs, s: &Setting, duration: f64) -> (TransientRun, f64) {
    let mut e = ex.clone();
    e.scheme = s.scheme;
    let t0 = Instant::now();
    let r = simulate(&e, inputs, &settings(&e, s, duration), &mut SilentObserver).expect("run");
    (r, t0.elapsed().as_secs_f64())
}

/// Outlet series (time, hot, cold).
type Series = Vec<(f64, f64, f64)>;

fn series(r: &TransientRun) -> Series {
    r.samples.iter().map(|s| (s.time_s, s.hot_outlet_C, s.cold_outlet_C)).collect()
}

/// Largest outlet difference over the common output times, K.
fn max_error(a: &TransientRun, b: &Series) -> f64 {
    series(a)
        .iter()
        .zip(b)
        .map(|(p, q)| {
            assert!((p.0 - q.0).abs() < 1e-9);
            (p.1 - q.1).abs().max((p.2 - q.2).abs())
        })
        .fold(0.0, f64::max)
}

/// A time-converged reference of `scheme` at `cells`, from the cache file or computed.
fn reference(ex: &Exchanger, inputs: &Inputs, scheme: Scheme, cells: usize, duration: f64, tol: (f64, f64), cache: &mut Cache) -> Series {
    let key = format!("{}-{cells}-{duration}-{:e}-{:e}", scheme.as_str(), tol.0, tol.1);
    if let Some(v) = cache.map.get(&key) {
        return serde_json::from_value(v.clone()).expect("cached series");
    }
    let s = Setting { label: String::new(), scheme, cells, integrator: Integrator::Implicit, atol: tol.0, rtol: tol.1 };
    let (r, secs) = run(ex, inputs, &s, duration);
    println!("reference {} {cells} cells, atol {:e}: {secs:.1} s, {} steps", scheme.as_str(), tol.0, r.stats.steps);
    let out = series(&r);
    cache.map.insert(key, serde_json::to_value(&out).expect("series"));
    std::fs::write(&cache.path, serde_json::to_string(&cache.map).expect("json")).expect("write the reference cache");
    out
}

/// References kept between runs.
struct Cache {
    path: std::path::PathBuf,
    map: serde_json::Map<String, serde_json::Value>,
}

fn header() {
    println!(
        "{:<34} {:>6} {:>9} {:>7} {:>5} {:>7} {:>5} {:>6} {:>7} {:>9} {:>11} {:>11} {:>10}",
        "setting", "cells", "wall ms", "steps", "rej", "Newton", "Jac", "LU", "RHS", "µs/c-step", "time err K", "total err K", "est. K"
    );
}

fn row(s: &Setting, r: &TransientRun, secs: f64, time_err: f64, total_err: Option<f64>) {
    let st = &r.stats;
    println!(
        "{:<34} {:>6} {:>9.1} {:>7} {:>5} {:>7} {:>5} {:>6} {:>7} {:>9.3} {:>11.2e} {:>11} {:>10.2e}",
        s.label,
        s.cells,
        secs * 1e3,
        st.steps,
        st.rejected_steps,
        st.newton_iterations,
        st.jacobian_evaluations,
        factorisations(st),
        st.rhs_evaluations,
        secs / (st.steps.max(1) * s.cells) as f64 * 1e6,
        time_err,
        total_err.map(|e| format!("{e:.2e}")).unwrap_or_else(|| "—".into()),
        estimate(st)
    );
}

/// Factorisations of the Newton matrix.
fn factorisations(st: &hxgrid::solve::transient::Stats) -> usize {
    st.factorisations
}

/// The run's own bound on its time-integration error, K.
fn estimate(st: &hxgrid::solve::transient::Stats) -> f64 {
    st.accumulated_local_error_k
}

fn main() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/water-cooler.toml");
    let ex = hxgrid::case::load(&path).expect("demo case").build();
    let inputs = Inputs::constant(&ex);
    let quick = std::env::var("HXGRID_BENCH_QUICK").is_ok();
    let duration = 640.0;
    let set = |scheme: Scheme, cells: usize, integrator: Integrator, atol: f64, rtol: f64| Setting {
        label: format!("{} {} atol {atol:.0e} rtol {rtol:.0e}", scheme.as_str(), if integrator == Integrator::Implicit { "implicit" } else { "explicit" }),
        scheme,
        cells,
        integrator,
        atol,
        rtol,
    };
    println!("cold start of water-cooler.toml, {duration} s, outputs every 1 s (one core)");
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("target/transient-bench-references.json");
    let map = std::fs::read_to_string(&path).ok().and_then(|t| serde_json::from_str(&t).ok()).unwrap_or_default();
    let mut cache = Cache { path, map };
    let schemes: Vec<Scheme> = match std::env::var("HXGRID_BENCH_SCHEME").as_deref() {
        Ok("tvd") => vec![Scheme::Tvd],
        Ok("trapezoidal") => vec![Scheme::Trapezoidal],
        _ => vec![Scheme::Trapezoidal, Scheme::Tvd],
    };
    // Fine-grid references, one per scheme (time-converged).
    let fine_cells = 1600;
    let fine: Vec<(Scheme, Series)> = schemes.iter().map(|&sc| (sc, reference(&ex, &inputs, sc, fine_cells, duration, (1e-6, 1e-8), &mut cache))).collect();
    println!("time err: against the same grid with atol 1e-7, rtol 1e-9; total err: against {fine_cells} cells of the same scheme (atol 1e-6, rtol 1e-8)");
    header();
    for (scheme, cells) in [(Scheme::Trapezoidal, 200), (Scheme::Tvd, 200), (Scheme::Trapezoidal, 800)] {
        if !schemes.contains(&scheme) {
            continue;
        }
        let same = reference(&ex, &inputs, scheme, cells, duration, (1e-7, 1e-9), &mut cache);
        let fine = &fine.iter().find(|f| f.0 == scheme).expect("fine").1;
        let mut list = vec![];
        for (atol, rtol) in [(1e-2, 1e-4), (1e-3, 1e-3), (1e-3, 1e-5), (3e-4, 3e-6), (1e-4, 1e-6), (5e-5, 5e-7), (2e-5, 2e-7), (1e-5, 1e-7)] {
            list.push(set(scheme, cells, Integrator::Implicit, atol, rtol));
        }
        if cells == 200 && scheme == Scheme::Trapezoidal {
            list.push(set(scheme, cells, Integrator::Explicit, 1e-4, 1e-6));
        }
        for s in list {
            let (r, secs) = run(&ex, &inputs, &s, duration);
            row(&s, &r, secs, max_error(&r, &same), Some(max_error(&r, fine)));
        }
    }
    let default = set(Scheme::Trapezoidal, 200, Integrator::Implicit, TransientSettings::default().atol_k, TransientSettings::default().rtol);
    println!(
        "\nproperty calls (props or enthalpy, both streams) per cell and Newton iteration, default setting, 200 cells: {:.1}",
        property_calls(&ex, &inputs, &default, duration)
    );
    // Scaling: cost per cell-step against N on a smooth schedule (the hot inlet eased from
    // 95 to 85 °C over 300 s along a smoothstep 3s² − 2s³, given as a 31-point table), so
    // that the step count does not depend on N. A linear ramp's kinks travel as ever
    // sharper fronts on finer grids, which the error control then follows.
    println!("\nscaling: steady start, hot inlet eased 95 → 85 °C over 300 s (smoothstep table), 640 s, default tolerances");
    header();
    let ease: Vec<(f64, f64)> = (0..=30)
        .map(|k| {
            let s = k as f64 / 30.0;
            (20.0 + 300.0 * s, 95.0 - 10.0 * s * s * (3.0 - 2.0 * s))
        })
        .collect();
    let ramp = Inputs { hot_inlet_c: Signal::Table(ease), ..Inputs::constant(&ex) };
    for cells in [200usize, 2000, 20000] {
        if quick && cells > 2000 {
            continue;
        }
        for scheme in [Scheme::Trapezoidal, Scheme::Tvd] {
            let s = set(scheme, cells, Integrator::Implicit, TransientSettings::default().atol_k, TransientSettings::default().rtol);
            let mut e = ex.clone();
            e.scheme = scheme;
            let mut st = settings(&e, &s, duration);
            st.initial = Initial::Steady;
            let t0 = Instant::now();
            let r = simulate(&e, &ramp, &st, &mut SilentObserver).expect("run");
            row(&s, &r, t0.elapsed().as_secs_f64(), f64::NAN, None);
        }
    }
}
