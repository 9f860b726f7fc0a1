//! The command line as a user meets it: run, check, new, exit codes, output safety.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_hxgrid"))
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn scratch(name: &str) -> common::Scratch {
    common::Scratch::new(&format!("cli-{name}"))
}

fn run(args: &[&str], dir: &Path) -> Output {
    bin().args(args).current_dir(dir).output().unwrap()
}

fn text_of(o: &Output) -> String {
    text(o)
}

fn text(o: &Output) -> String {
    format!("{}{}", String::from_utf8_lossy(&o.stdout), String::from_utf8_lossy(&o.stderr))
}

#[test]
fn demo_run_writes_summary_profiles_and_plots() {
    let dir = scratch("demo");
    let case = root().join("cases/water-cooler.toml");
    let o = run(&["run", case.to_str().unwrap()], &dir);
    assert!(o.status.success(), "{}", text(&o));
    let out = dir.join("output/water-cooler");
    let summary: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap();
    for key in ["duty_W", "hot_outlet_C", "cold_outlet_C", "effectiveness", "ntu", "capacity_ratio", "cells", "iterations", "energy_imbalance_W"] {
        assert!(summary[key].is_number(), "summary.json lacks {key}");
    }
    for key in ["duty_W", "hot_outlet_C", "cold_outlet_C", "effectiveness"] {
        assert!(summary["lumped"][key].is_number(), "summary.json lacks lumped.{key}");
    }
    let csv = std::fs::read_to_string(out.join("profiles.csv")).unwrap();
    let mut lines = csv.lines();
    assert!(lines.next().unwrap().starts_with("x_m,hot_C,cold_C,wall_C,"));
    assert_eq!(lines.count(), 200);
    for plot in ["temperatures.svg", "heat_flux.svg"] {
        let svg = std::fs::read_to_string(out.join(plot)).unwrap();
        assert!(svg.contains("<svg") && svg.contains("(m)"), "{plot}");
    }
    assert!(text(&o).contains("lumped"));
    assert!(text(&o).contains("Caution"));
}

#[test]
fn grid_study_option_prints_observed_order() {
    let dir = scratch("study");
    let case = root().join("cases/water-cooler.toml");
    let o = run(&["run", case.to_str().unwrap(), "--grid-study", "3", "--out", "res"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    assert!(text(&o).contains("observed order"));
    let summary = std::fs::read_to_string(dir.join("res/summary.json")).unwrap();
    assert!(summary.contains("\"grid_study\""));
}

#[test]
fn check_and_new() {
    let dir = scratch("new");
    let o = run(&["new", "mine.toml"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    let o = run(&["check", "mine.toml"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    assert!(text(&o).contains("valid"));
    // Never overwrites.
    std::fs::write(dir.join("mine.toml"), "keep me").unwrap();
    let o = run(&["new", "mine.toml"], &dir);
    assert_eq!(o.status.code(), Some(3));
    assert_eq!(std::fs::read_to_string(dir.join("mine.toml")).unwrap(), "keep me");
    // The starter runs.
    std::fs::remove_file(dir.join("mine.toml")).unwrap();
    run(&["new", "mine.toml"], &dir);
    let o = run(&["run", "mine.toml", "-q"], &dir);
    assert!(o.status.success(), "{}", text(&o));
}

#[test]
fn bad_input_exits_3_naming_the_key() {
    let dir = scratch("bad");
    let starter = hxgrid::case::STARTER;
    let cases = [
        (starter.replace("mass_flow_kg_s = 0.25", "mass_flow_kg_s = -0.25"), "hot.mass_flow_kg_s"),
        (starter.replace("length_m = 5.0", "length_m = 0.0"), "length_m"),
        (starter.replace("tube_inner_diameter_m = 0.0212", "tube_inner_diameter_m = 0.03"), "geometry.tube_inner_diameter_m"),
        (starter.replace("inlet_temperature_C = 85.0", "inlet_temperature_C = 15.0"), "hot.inlet_temperature_C"),
        (starter.replace("cells = 200", "cells = 0"), "solver.cells"),
        (starter.replace("fouling_m2K_W = 0.0001", "fouling_m2K_W = -0.1"), "hot.fouling_m2K_W"),
        (starter.replace("length_m = 5.0", "length_m = 5.0\nlenght_m = 5.0"), "lenght_m"),
        (starter.replace("arrangement = \"counterflow\"", "arrangement = \"counter\""), "counterflow"),
        (starter.replace("inlet_temperature_C = 20.0", "inlet_temperature_C = -5.0"), "cold.inlet_temperature_C"),
        (starter.replace("length_m = 5.0", "length_m = \"five\""), "length_m"),
    ];
    for (i, (body, needle)) in cases.iter().enumerate() {
        let f = dir.join(format!("bad{i}.toml"));
        std::fs::write(&f, body).unwrap();
        for cmd in ["check", "run"] {
            let o = run(&[cmd, f.to_str().unwrap()], &dir);
            assert_eq!(o.status.code(), Some(3), "case {i} {cmd}: {}", text(&o));
            assert!(text(&o).contains(needle), "case {i}: message lacks {needle}: {}", text(&o));
            assert!(!text(&o).contains("panicked"));
        }
    }
    // Every problem reported at once.
    let many = starter.replace("length_m = 5.0", "length_m = -1.0").replace("cells = 200", "cells = 0");
    std::fs::write(dir.join("many.toml"), many).unwrap();
    let t = text(&run(&["check", "many.toml"], &dir));
    assert!(t.contains("length_m") && t.contains("solver.cells"), "{t}");
    assert!(!dir.join("output").exists(), "nothing written for bad input");
}

#[test]
fn solver_failure_exits_4_and_keeps_previous_results() {
    let dir = scratch("fail");
    let good = hxgrid::case::STARTER;
    std::fs::write(dir.join("c.toml"), good).unwrap();
    let o = run(&["run", "c.toml", "--out", "res", "-q"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    let before = std::fs::read_to_string(dir.join("res/summary.json")).unwrap();
    // One Newton iteration cannot reach 1e-14.
    let bad = good.replace("max_iterations = 50", "max_iterations = 1").replace("residual_tolerance = 1e-10", "residual_tolerance = 1e-14");
    std::fs::write(dir.join("c.toml"), bad).unwrap();
    let o = run(&["run", "c.toml", "--out", "res", "-q"], &dir);
    assert_eq!(o.status.code(), Some(4), "{}", text(&o));
    assert!(text(&o).contains("did not converge") && text(&o).contains("max_iterations"), "{}", text(&o));
    assert_eq!(std::fs::read_to_string(dir.join("res/summary.json")).unwrap(), before);
    // No stray staging folders.
    let names: Vec<String> = std::fs::read_dir(&dir).unwrap().map(|e| e.unwrap().file_name().to_string_lossy().into_owned()).collect();
    assert!(names.iter().all(|n| !n.contains("partial") && !n.contains("previous")), "{names:?}");
}

#[test]
fn boiling_run_exits_4_with_saturation_message() {
    let dir = scratch("boil");
    let body = hxgrid::case::STARTER
        .replace("inlet_temperature_C = 85.0", "inlet_temperature_C = 130.0")
        .replace("mass_flow_kg_s = 0.35", "mass_flow_kg_s = 0.01")
        .replace("pressure_bar_abs = 3.0\nfouling_m2K_W = 0.0002", "pressure_bar_abs = 1.0\nfouling_m2K_W = 0.0002");
    std::fs::write(dir.join("b.toml"), body).unwrap();
    let o = run(&["run", "b.toml", "-q"], &dir);
    assert_eq!(o.status.code(), Some(4), "{}", text(&o));
    let t = text(&o);
    assert!(t.contains("cold stream") && t.contains("boiling") && t.contains("x = "), "{t}");
}

#[test]
fn fluids_and_props_commands() {
    let dir = scratch("props");
    let o = run(&["fluids"], &dir);
    assert!(o.status.success());
    for name in ["water", "air", "ethylene-glycol-30", "co2-10MPa", "thermal-oil"] {
        assert!(text(&o).contains(name), "{name} missing");
    }
    let o = run(&["props", "co2-10MPa", "--from", "40", "--to", "50", "--step", "5"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    assert!(text(&o).contains("45.000") && text(&o).contains("CoolProp"), "{}", text(&o));
    let o = run(&["props", "water", "--pressure-bar", "3", "--from", "20", "--to", "120", "--step", "50"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    // Out of range, unknown fluid, bad table: exit 3 with the reason.
    let o = run(&["props", "water", "--pressure-bar", "1", "--from", "20", "--to", "120"], &dir);
    assert_eq!(o.status.code(), Some(3));
    assert!(text(&o).contains("boiling"), "{}", text(&o));
    let o = run(&["props", "glycol"], &dir);
    assert_eq!(o.status.code(), Some(3));
    std::fs::write(
        dir.join("t.csv"),
        "temperature_C,density_kg_m3,specific_heat_J_kgK,viscosity_Pa_s,conductivity_W_mK\n20,870,1850,0.03,0.13\n10,857,1930,0.012,0.128\n",
    )
    .unwrap();
    let o = run(&["props", "--table", "t.csv"], &dir);
    assert_eq!(o.status.code(), Some(3));
    assert!(text(&o).contains("t.csv, line 3"), "{}", text(&o));
}

#[test]
fn simulate_command() {
    let dir = scratch("simulate");
    // A short version of the start-up demo.
    let text = std::fs::read_to_string(root().join("cases/water-cooler-startup.toml"))
        .unwrap()
        .replace("duration_s = 1800.0", "duration_s = 120.0")
        .replace("snapshot_times_s = [0.0, 30.0, 120.0, 600.0, 1100.0, 1800.0]", "snapshot_times_s = [0.0, 60.0, 120.0]")
        .replace("response_from_s = 1200.0", "response_from_s = 0.0")
        .replace("cells = 200", "cells = 40");
    std::fs::write(dir.join("s.toml"), &text).unwrap();
    let o = run(&["simulate", "s.toml", "--out", "res"], &dir);
    assert!(o.status.success(), "{}", text_of(&o));
    for f in ["transient.json", "timeseries.csv", "snapshots.csv", "response.svg", "snapshots.svg"] {
        assert!(dir.join("res").join(f).exists(), "{f}");
    }
    let summary: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(dir.join("res/transient.json")).unwrap()).unwrap();
    for key in ["settling_63_s", "settling_95_s", "settling_99_s", "overshoot_percent", "difference_from_steady_K", "final_C"] {
        assert!(summary["hot_outlet"].get(key).is_some(), "{key}");
    }
    assert!(summary["energy_closure_relative"].as_f64().unwrap() < 1e-6);
    let rows = std::fs::read_to_string(dir.join("res/timeseries.csv")).unwrap().lines().count();
    assert_eq!(rows, 1 + 121, "header + one row per second");
    // Not a terminal: no progress bar escape codes in the output.
    assert!(!text_of(&o).contains('\u{1b}'));
    // A case without [transient] is an input error.
    let o = run(&["simulate", root().join("cases/water-cooler.toml").to_str().unwrap()], &dir);
    assert_eq!(o.status.code(), Some(3));
    assert!(text_of(&o).contains("[transient]"));
    // A bad schedule names its key.
    std::fs::write(dir.join("bad.toml"), text.replace("times_s = [900.0, 905.0, 1200.0, 1220.0]", "times_s = [900.0, 905.0, 1200.0]")).unwrap();
    let o = run(&["simulate", "bad.toml"], &dir);
    assert_eq!(o.status.code(), Some(3));
    assert!(text_of(&o).contains("transient.cold_mass_flow_kg_s.times_s"), "{}", text_of(&o));
}

#[test]
fn every_case_file_the_help_and_readme_name_exists() {
    let help = text(&run(&["--help"], &root()));
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    for source in [help, readme] {
        for word in source.split(|c: char| c.is_whitespace() || "`()[]".contains(c)) {
            if let Some(rest) = word.strip_prefix("cases/") {
                if rest.ends_with(".toml") {
                    assert!(root().join("cases").join(rest).is_file(), "{word} is named but does not exist");
                }
            }
        }
    }
}
