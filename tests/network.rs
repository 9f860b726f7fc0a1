//! Cell networks: the Jacobian is exact (a constant-property network is linear, so one
//! Newton step from any start solves it), energy closes, the demos run, and the outputs of a
//! network carry its fields.

mod common;

use hxgrid::model::{Arrangement, CrossCounterflow, Crossflow, Layout, Mixing, ShellAndTube, Side};
use hxgrid::solve::{solve_network, SilentObserver, SteadySettings};
use hxgrid::study::{rate, RatingOptions};
use hxgrid::verify::constant_exchanger;

fn layouts() -> Vec<Layout> {
    let mut v = Vec::new();
    for hot in [Mixing::Unmixed, Mixing::Mixed] {
        for cold in [Mixing::Unmixed, Mixing::Mixed] {
            v.push(Layout::Crossflow(Crossflow { hot, cold, cells_across: 7 }));
        }
    }
    for mixed_between_passes in [false, true] {
        for through in [Mixing::Unmixed, Mixing::Mixed] {
            for passing in Side::BOTH {
                v.push(Layout::CrossCounterflow(CrossCounterflow { passes: 3, passing, mixed_between_passes, through, cells_across: 2 }));
            }
        }
    }
    for shell_side in Side::BOTH {
        v.push(Layout::ShellAndTube(ShellAndTube { tube_passes: 4, shells: 2, shell_side }));
    }
    v
}

/// With constant properties and fixed films the balances are linear in the temperatures: a
/// Newton step with the assembled (and wall-eliminated) Jacobian lands on the solution from
/// the initial guess in one iteration, for every layout (Newton's method is exact on a linear
/// system: a fact of the method). A wrong entry would leave a residual.
#[test]
fn one_newton_step_solves_a_linear_network() {
    for layout in layouts() {
        let ex = constant_exchanger(Arrangement::Network(layout), 2.0, 0.6, Side::Cold);
        let settings = SteadySettings { cells: 9, max_iterations: 1, ..SteadySettings::default() };
        let s = solve_network(&ex, &layout, &settings, &mut SilentObserver).unwrap_or_else(|e| panic!("{layout:?}: {e}"));
        assert_eq!(s.iterations, 1, "{layout:?}");
    }
}

/// Energy closes in every layout (first law: Σ cell heat = hot released = cold gained) and
/// the outlet mixed means lie within the lanes' spread (a flow-weighted mean of the lanes).
#[test]
fn energy_closes_and_outlets_are_mixed_means() {
    for layout in layouts() {
        let ex = constant_exchanger(Arrangement::Network(layout), 3.0, 0.8, Side::Hot);
        let r = rate("t", &ex, &SteadySettings { cells: 12, ..SteadySettings::default() }, &RatingOptions::default(), &mut SilentObserver).unwrap();
        assert!((r.energy_imbalance_W / r.duty_W).abs() < 1e-9, "{layout:?}");
        assert!((r.hot_heat_released_W - r.duty_W).abs() < 1e-8 * r.duty_W, "{layout:?}");
        let n = r.network.as_ref().unwrap();
        for o in [&n.hot_outlet, &n.cold_outlet] {
            assert!(o.min_C <= o.mixed_mean_C + 1e-9 && o.mixed_mean_C <= o.max_C + 1e-9, "{layout:?}");
        }
        assert_eq!(r.profile.len(), n.cells_total);
    }
}

/// More passes of cross-counterflow approach counterflow (Shah & Sekulić 2003, Table 3.6 discussion [M]: N-pass cross-counterflow
/// tends to counterflow as N grows).
#[test]
fn more_passes_approach_counterflow() {
    let eps = |arr: Arrangement| {
        let ex = constant_exchanger(arr, 3.0, 1.0, Side::Hot);
        let r = rate("t", &ex, &SteadySettings { cells: 40, ..SteadySettings::default() }, &RatingOptions::default(), &mut SilentObserver).unwrap();
        r.duty_W / r.max_duty_W
    };
    let counter = eps(Arrangement::Counterflow);
    let mut last = eps(Arrangement::Network(Layout::Crossflow(Crossflow { hot: Mixing::Unmixed, cold: Mixing::Unmixed, cells_across: 40 })));
    for passes in [2, 4, 8] {
        let e = eps(Arrangement::Network(Layout::CrossCounterflow(CrossCounterflow {
            passes,
            passing: Side::Hot,
            mixed_between_passes: false,
            through: Mixing::Unmixed,
            cells_across: 40 / passes,
        })));
        assert!(e > last && e < counter, "{passes} passes: {e} (previous {last}, counterflow {counter})");
        last = e;
    }
    assert!(counter - last < 0.02, "8 passes {last} vs counterflow {counter}");
}

/// The network demos run from their case files and write field plots and outlets.svg (and
/// no pressure.svg); profiles.csv starts with the cell indices.
#[test]
fn network_demos_write_fields() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    for name in ["crossflow-plate-recuperator", "shell-and-tube-water-cooler", "tube-bank-air-heater"] {
        let scratch = common::Scratch::new(&format!("network-{name}"));
        let out = scratch.join("res");
        let status = std::process::Command::new(env!("CARGO_BIN_EXE_hxgrid"))
            .args(["run", root.join("cases").join(format!("{name}.toml")).to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"])
            .status()
            .unwrap();
        assert!(status.success(), "{name}");
        for f in ["summary.json", "profiles.csv", "temperatures.svg", "heat_flux.svg", "outlets.svg"] {
            assert!(out.join(f).is_file(), "{name}: {f}");
        }
        assert!(!out.join("pressure.svg").exists());
        let csv = std::fs::read_to_string(out.join("profiles.csv")).unwrap();
        assert!(csv.starts_with("i,j,k,x_fraction,y_fraction,x_m,"), "{name}");
        assert!(csv.lines().nth(1).unwrap().starts_with("0,0,0,"), "{name}: indices as whole numbers");
        let summary: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
        assert!(summary["network"]["closed_form_effectiveness"].as_f64().unwrap() > 0.0);
    }
}

fn demo_text(name: &str) -> String {
    std::fs::read_to_string(std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("cases").join(name)).unwrap()
}

/// A transient on a network settles on the steady rating of the same grid (the analytical
/// steady limit of the storage equations, dT/dt → 0, is the steady problem: the same cell
/// balances with storage added) and closes energy to round-off: the crossflow start-up demo
/// run long, and a shell-and-tube network rated from its geometry (Bell–Delaware shell side,
/// stations shared by the passes) after a hot-inlet step.
#[test]
fn network_transients_settle_on_the_steady_answer() {
    let text = demo_text("crossflow-recuperator-startup.toml").replace("duration_s = 600.0", "duration_s = 4000.0").replace("300.0, 600.0]", "300.0]");
    let case = hxgrid::case::parse_str(&text, "t", "t").unwrap();
    let report = hxgrid::simulate(&case).unwrap().unwrap();
    for o in [&report.hot_outlet, &report.cold_outlet] {
        assert!(o.difference_from_steady_K.unwrap().abs() < 1e-4, "{o:?}");
    }
    assert!(report.energy_closure_relative < 1e-9);

    let shell = demo_text("shell-and-tube-water-cooler.toml")
        .replace("cells = 100", "cells = 20")
        + "\n[transient]\nduration_s = 3000.0\noutput_interval_s = 10.0\nwall_density_kg_m3 = 7900.0\nwall_specific_heat_J_kgK = 500.0\n[transient.hot_inlet_temperature_C]\nkind = \"step\"\ntime_s = 10.0\nto = 75.0\n";
    let case = hxgrid::case::parse_str(&shell, "s", "s").unwrap();
    let report = hxgrid::simulate(&case).unwrap().unwrap();
    assert!(report.energy_closure_relative < 1e-9, "{}", report.energy_closure_relative);
    assert!(report.hot_outlet.response.change_K < 0.0);
    for o in [&report.hot_outlet, &report.cold_outlet] {
        assert!(o.difference_from_steady_K.unwrap().abs() < 1e-4, "{o:?}");
    }
}
