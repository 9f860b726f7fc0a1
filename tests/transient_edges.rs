//! Transients at the edges: a flow that stops for a long time, stops at the start or the
//! end, and a step at t = 0. The references are the second law (no temperature beyond the
//! range of the inlets and the initial state) and the analytic steady state with a stream
//! stopped [A]: no duty, the flowing stream unchanged, the stopped fluid and the wall at the
//! flowing stream's temperature.

mod common;

use hxgrid::scenario::TransientReport;
use std::path::Path;

fn startup_text() -> String {
    std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/water-cooler-startup.toml")).unwrap()
}

fn simulate(text: &str) -> Result<TransientReport, String> {
    let case = hxgrid::case::parse_str(text, "edge", "edge").map_err(|e| e.to_string())?;
    let ex = case.build();
    let spec = case.transient.as_ref().unwrap();
    // The message as the command line shows it: the error and the advice naming case keys.
    hxgrid::scenario::run("edge", &ex, &spec.inputs(&ex), &spec.settings_for(&ex, &case), spec.response_from_s, &mut hxgrid::solve::SilentObserver)
        .map_err(|e| format!("{e}. {}", hxgrid::case::advice::transient(&e).unwrap_or_default()))
}

/// The demo's cooling-water schedule replaced by `times`/`values`, at `cells` cells with `scheme`.
fn with_schedule(times: &str, values: &str, scheme: &str, cells: usize) -> String {
    startup_text()
        .replace("times_s = [900.0, 905.0, 1200.0, 1220.0]", &format!("times_s = {times}"))
        .replace("values = [0.90, 0.0, 0.0, 0.90]", &format!("values = {values}"))
        .replace("cells = 200", &format!("cells = {cells}\nscheme = \"{scheme}\""))
        .replace("response_from_s = 1200.0 ", "response_from_s = 0.0 ")
}

fn extremes(r: &TransientReport) -> (f64, f64) {
    let mut all: Vec<f64> = r.snapshots.iter().flat_map(|s| s.hot_faces_c.iter().chain(&s.cold_faces_c).chain(&s.wall_c).copied()).collect();
    all.extend(r.samples.iter().flat_map(|s| [s.hot_outlet_C, s.cold_outlet_C, s.max_wall_C]));
    all.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)))
}

/// Cooling water stopped from 905 s to 1500 s with the hot water (95 °C) still flowing:
/// every scheme stays within 8 … 95 °C (the inlets; the start is 15 °C), snapshots taken
/// while the water stands included, and the three schemes agree on the outlet. Regression:
/// the default trapezoidal scheme drove the stagnant cell next to the cold inlet towards
/// 2T_w − T_in, about 115 °C.
#[test]
fn a_long_stop_stays_within_the_inlets_for_every_scheme() {
    let mut peaks = Vec::new();
    for scheme in ["trapezoidal", "upwind", "tvd"] {
        let text = with_schedule("[900.0, 905.0, 1500.0, 1520.0]", "[0.90, 0.0, 0.0, 0.90]", scheme, 120)
            .replace("snapshot_times_s = [0.0, 30.0, 120.0, 600.0, 1100.0, 1800.0]", "snapshot_times_s = [0.0, 1000.0, 1200.0, 1450.0, 1800.0]");
        let r = simulate(&text).unwrap_or_else(|e| panic!("{scheme}: {e}"));
        let (lo, hi) = extremes(&r);
        assert!(lo >= 8.0 - 1e-3 && hi <= 95.0 + 1e-3, "{scheme}: {lo} … {hi} °C");
        assert_eq!(r.snapshots.len(), 5);
        let peak = r.samples.iter().map(|s| s.cold_outlet_C).fold(f64::NEG_INFINITY, f64::max);
        peaks.push(peak);
        assert!(r.energy_closure_relative < 1e-6, "{scheme}: closure {}", r.energy_closure_relative);
    }
    // The schemes differ by their own grid error only (under 1 K at 120 cells).
    for p in &peaks[1..] {
        assert!((p - peaks[0]).abs() < 1.0, "{peaks:?}");
    }
}

/// Flow stopped at the end of the run: the final steady state is defined — the stopped cold
/// water at the hot inlet temperature — and the run ends near it instead of failing with
/// NaN. Both flows stopped at the end: no steady state exists, and the report says so (null)
/// rather than inventing one.
#[test]
fn a_stop_that_lasts_to_the_end() {
    let r = simulate(&with_schedule("[900.0, 905.0]", "[0.90, 0.0]", "trapezoidal", 60)).unwrap();
    assert_eq!(r.cold_outlet.steady_final_C, Some(95.0));
    assert_eq!(r.hot_outlet.steady_final_C, Some(95.0));
    let end = r.samples.last().unwrap();
    assert!(end.cold_flow_kg_s == 0.0 && end.cold_duty_W == 0.0);
    assert!(end.hot_outlet_C > 90.0 && end.hot_outlet_C <= 95.0 + 1e-6, "{}", end.hot_outlet_C);
    // Both stopped.
    let both = with_schedule("[900.0, 905.0]", "[0.90, 0.0]", "trapezoidal", 60).replace(
        "[transient.cold_mass_flow_kg_s]",
        "[transient.hot_mass_flow_kg_s]\nkind = \"step\"\ntime_s = 1000.0\nto = 0.0\n\n[transient.cold_mass_flow_kg_s]",
    );
    let r = simulate(&both).unwrap();
    assert_eq!(r.hot_outlet.steady_final_C, None);
    assert_eq!(r.cold_outlet.difference_from_steady_K, None);
    let (lo, hi) = extremes(&r);
    assert!(lo >= 8.0 - 1e-3 && hi <= 95.0 + 1e-3, "{lo} … {hi}");
}

/// A flow that is zero at t = 0 with a steady start: the initial state is the stopped-flow
/// steady state (no duty; the stopped cold water and the wall at the hot water's 95 °C), then
/// the pump starts.
#[test]
fn a_flow_that_is_zero_at_the_start() {
    let text = with_schedule("[0.0, 300.0, 320.0]", "[0.0, 0.0, 0.90]", "trapezoidal", 60)
        .replace("initial = \"uniform\"", "initial = \"steady\"")
        .replace("initial_temperature_C = 15.0", "");
    let r = simulate(&text).unwrap();
    let first = &r.samples[0];
    assert!((first.hot_outlet_C - 95.0).abs() < 1e-9 && first.hot_duty_W.abs() < 1e-6, "{first:?}");
    // Counterflow: the cold inlet face is the last one (x = L, 8 °C).
    let cold = &r.snapshots[0].cold_faces_c;
    assert!(cold[..cold.len() - 1].iter().all(|t| (t - 95.0).abs() < 1e-9), "{cold:?}");
    assert!(r.snapshots[0].wall_c.iter().all(|t| (t - 95.0).abs() < 1e-9));
    // After the restart it settles on the flowing steady state.
    assert!(r.cold_outlet.difference_from_steady_K.unwrap().abs() < 0.05, "{:?}", r.cold_outlet);
    // Both stopped at a steady start: no initial state exists; the message says what to do.
    let both = text.replace(
        "[transient.cold_mass_flow_kg_s]",
        "[transient.hot_mass_flow_kg_s]\nkind = \"table\"\ntimes_s = [0.0, 100.0]\nvalues = [0.0, 0.2]\n\n[transient.cold_mass_flow_kg_s]",
    );
    let e = simulate(&both).unwrap_err();
    assert!(e.contains("both flows are zero") && e.contains("initial = \"uniform\""), "{e}");
}

/// A step at t = 0 with a steady start acts at 0⁺: the initial state is the steady state for
/// the value before the step, the response is measured from t = 0 itself, and the run ends at
/// the steady state for the value after. Regression: the step was absorbed into the initial
/// steady state and nothing happened.
#[test]
fn a_step_at_zero_is_not_swallowed() {
    let base = startup_text().replace("initial = \"uniform\"", "initial = \"steady\"").replace("initial_temperature_C = 15.0", "");
    let no_schedule =
        base.replace("[transient.cold_mass_flow_kg_s]\nkind = \"table\"\ntimes_s = [900.0, 905.0, 1200.0, 1220.0]\nvalues = [0.90, 0.0, 0.0, 0.90]", "");
    assert!(!no_schedule.contains("times_s = [900.0"), "schedule removed");
    let text = no_schedule.replace("response_from_s = 1200.0 ", "").replace("cells = 200", "cells = 60")
        + "\n[transient.hot_inlet_temperature_C]\nkind = \"step\"\ntime_s = 0.0\nto = 80.0\n";
    let r = simulate(&text).unwrap();
    let case = hxgrid::case::parse_str(&text, "s", "s").unwrap();
    let before =
        hxgrid::solve::solve_steady(&case.build(), &hxgrid::solve::SteadySettings { cells: 60, ..Default::default() }, &mut hxgrid::solve::SilentObserver)
            .unwrap();
    assert!((r.samples[0].hot_outlet_C - before.hot_outlet_c()).abs() < 1e-6, "{} vs {}", r.samples[0].hot_outlet_C, before.hot_outlet_c());
    assert_eq!(r.reference_time_s, 0.0);
    assert!(r.hot_outlet.response.change_K < -1.0, "{:?}", r.hot_outlet);
    assert!(r.cold_outlet.response.change_K < -1.0, "{:?}", r.cold_outlet);
    assert!(r.hot_outlet.difference_from_steady_K.unwrap().abs() < 0.01, "{:?}", r.hot_outlet);
}

/// A lost-flow run that reaches saturation stops there and writes what it has: cooling water
/// at 1.5 bar (saturation 111.35 °C, IAPWS-IF97) left standing against 125 °C hot water
/// boils. The run reports status "stopped" with the time, place and reason, its results end
/// at the last output inside the limits, and the command exits 6. Regression: nothing was
/// written, and the message read "outside water (…) (at t = …)'s valid range".
#[test]
fn a_run_that_reaches_saturation_stops_and_keeps_its_results() {
    let mut text = with_schedule("[900.0, 905.0, 1500.0, 1520.0]", "[0.90, 0.0, 0.0, 0.90]", "trapezoidal", 80).replacen(
        "inlet_temperature_C = 95.0",
        "inlet_temperature_C = 125.0",
        1,
    );
    let cold = text.find("[cold]").unwrap();
    let tail = text[cold..].replacen("pressure_bar_abs = 3.0", "pressure_bar_abs = 1.5", 1);
    text.replace_range(cold.., &tail);
    let r = simulate(&text).unwrap();
    assert_eq!(r.status, "stopped");
    let stop = r.stop.as_ref().unwrap();
    assert_eq!(stop.stream, hxgrid::model::Side::Cold);
    assert!(stop.time_s > 905.0 && stop.time_s < 1500.0, "{}", stop.time_s);
    assert!(stop.temperature_C > 111.0 && stop.reason.contains("outside the valid range") && stop.reason.contains("saturates at 111.35 °C"), "{stop:?}");
    let last = r.samples.last().unwrap();
    assert!(last.time_s < stop.time_s && last.time_s > stop.time_s - 2.0, "{}", last.time_s);
    assert_eq!(r.hot_outlet.steady_final_C, None);
    // From the command line: results written, exit 6.
    let dir = common::Scratch::new("stop");
    std::fs::write(dir.join("boil.toml"), &text).unwrap();
    let o = std::process::Command::new(env!("CARGO_BIN_EXE_hxgrid")).args(["simulate", "boil.toml", "--out", "res", "-q"]).current_dir(&dir).output().unwrap();
    assert_eq!(o.status.code(), Some(6), "{}", String::from_utf8_lossy(&o.stderr));
    let json: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(dir.join("res/transient.json")).unwrap()).unwrap();
    assert_eq!(json["status"], "stopped");
    assert!(json["stop"]["time_s"].is_number());
    assert!(std::fs::read_to_string(dir.join("res/timeseries.csv")).unwrap().lines().count() > 900);
}

/// Metal that stores heat besides the separating wall: the outer pipe of a double pipe
/// (stored with the annulus fluid, outer face adiabatic) and the fins of a finned surface
/// (at the wall's temperature). Capacities by hand [C]: shell π/4((D_s + 2t)² − D_s²)ρc with
/// D_s = 40.9 mm, t = 3 mm, steel ρc = 7900 × 500 J/(m³K): 1634.2 J/(m·K); fins 40 m²/m ×
/// 0.85 × 0.15 mm / 2 × ρc. With the shell the start-up is slower, energy still closes to
/// round-off, and the run still settles on the steady answer.
#[test]
fn shell_and_fin_metal_store_heat() {
    let base = with_schedule("[900.0, 905.0, 1200.0, 1220.0]", "[0.90, 0.0, 0.0, 0.90]", "trapezoidal", 60);
    let shelled = base.replace("wall_specific_heat_J_kgK = 500.0", "wall_specific_heat_J_kgK = 500.0\nshell_thickness_m = 0.003");
    let case = hxgrid::case::parse_str(&shelled, "s", "s").unwrap();
    let spec = case.transient.as_ref().unwrap();
    let storage = spec.storage(&case.build(), &case);
    let by_hand = std::f64::consts::PI / 4.0 * (0.0469f64.powi(2) - 0.0409f64.powi(2)) * 7900.0 * 500.0;
    assert!((storage.shell_J_mK - by_hand).abs() < 1e-9 * by_hand, "{storage:?}");
    assert_eq!(storage.shell_with, Some(hxgrid::model::Side::Cold));
    assert_eq!(storage.shell_outer_face, Some("adiabatic"));
    let (plain, with_shell) = (simulate(&base).unwrap(), simulate(&shelled).unwrap());
    // The shell's heat capacity changes the way up, not where it ends: the stored energy
    // differs early by about the shell's capacity × the annulus temperature change, and both
    // runs end on the same steady state.
    let at = |r: &TransientReport, t: f64| r.samples.iter().find(|s| s.time_s >= t).unwrap().clone();
    let stored = |r: &TransientReport, t: f64| at(r, t).fluid_energy_J - at(r, 0.0).fluid_energy_J;
    let shell_part = stored(&with_shell, 120.0) - stored(&plain, 120.0);
    assert!(shell_part.abs() > 1e3, "{shell_part} J");
    assert!(with_shell.cold_outlet.difference_from_steady_K.unwrap().abs() < 0.05 && plain.cold_outlet.difference_from_steady_K.unwrap().abs() < 0.05);
    assert!(with_shell.energy_closure_relative < 1e-6, "{}", with_shell.energy_closure_relative);
    // Fins.
    let finned = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/finned-air-cooler.toml")).unwrap()
        + "\n[transient]\nduration_s = 10.0\nwall_density_kg_m3 = 2700.0\nwall_specific_heat_J_kgK = 900.0\n";
    let base_dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("cases");
    // The shell belongs to a double pipe only (the finned cooler is a plane wall).
    let e = hxgrid::case::parse_in(&(finned.clone() + "shell_thickness_m = 0.003\n"), "x", "x", &base_dir).unwrap_err().to_string();
    assert!(e.contains("transient.shell_thickness_m") && e.contains("double pipe only"), "{e}");
    let case = hxgrid::case::parse_in(&finned, "f", "f", &base_dir).unwrap();
    let storage = case.transient.as_ref().unwrap().storage(&case.build(), &case);
    let fins = 40.0 * 0.85 * 0.00015 / 2.0 * 2700.0 * 900.0;
    assert!((storage.fins_J_mK - fins).abs() < 1e-9 * fins, "{storage:?}");
}

/// Schedules that end with the "hot" inlet below the "cold" one are a valid transient (heat
/// then flows the other way); only the steady comparison, which needs the hot stream to be
/// the hotter, is left out (null). Regression: the whole run failed on the final steady solve.
#[test]
fn schedules_may_reverse_the_inlets() {
    let text = startup_text().replace("cells = 200", "cells = 40")
        + "\n[transient.hot_inlet_temperature_C]\nkind = \"ramp\"\nstart_s = 100.0\nend_s = 200.0\nto = 5.0\n";
    let r = simulate(&text).unwrap();
    assert_eq!(r.status, "completed");
    assert_eq!(r.hot_outlet.steady_final_C, None);
    let (lo, hi) = extremes(&r);
    assert!(lo >= 5.0 - 1e-3 && hi <= 95.0 + 1e-3, "{lo} … {hi}");
}
