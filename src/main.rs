//! hxgrid command line: parse arguments, call the library, print, set the exit code.

mod cli;

use clap::Parser;
use cli::{Cli, Command};
use hxgrid::case::{self, Case, CaseError};
use hxgrid::output::WriteOptions;
use hxgrid::results::SteadyReport;
use hxgrid::solve::Observer;
use hxgrid::study::{self, RatingOptions};
use hxgrid::text::num;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

/// `println!` that ends the program quietly when standard output is closed early
/// (`hxgrid run … | head -1`): a broken pipe is a normal end (exit 0), any other failure
/// to print is an output error (exit 5). Results are always written before they are printed.
macro_rules! outln {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        if let Err(e) = writeln!(std::io::stdout(), $($arg)*) {
            std::process::exit(if e.kind() == std::io::ErrorKind::BrokenPipe { 0 } else { i32::from(EXIT_OUTPUT) });
        }
    }};
}

/// `eprintln!` for messages: control characters escaped, lines and length capped (a case
/// file's text can reach a message), and never a panic on a closed standard error.
macro_rules! errln {
    ($($arg:tt)*) => {{
        use std::io::Write as _;
        let _ = writeln!(std::io::stderr(), "{}", hxgrid::text::safe_message(&format!($($arg)*), 400, 50));
    }};
}

const EXIT_INPUT: u8 = 3;
const EXIT_SOLVER: u8 = 4;
const EXIT_OUTPUT: u8 = 5;
/// A transient stopped early on a physical limit; its results up to then were written.
const EXIT_STOPPED: u8 = 6;

fn main() -> ExitCode {
    let args = Cli::parse();
    match args.command {
        Command::Run { case, out, grid_study, all_cells, quiet } => run(&case, out, grid_study.map(|g| g as usize), WriteOptions { all_cells }, quiet),
        Command::Simulate { case, out, quiet } => simulate(&case, out, quiet),
        Command::Check { case } => check(&case),
        Command::New { path } => new_case(&path),
        Command::Schema => {
            outln!("{}", serde_json::to_string_pretty(&case::json_schema()).expect("a schema serialises"));
            ExitCode::SUCCESS
        }
        Command::Fluids => {
            for (name, desc) in hxgrid::fluid::library::catalogue() {
                outln!("{name:<22} {desc}");
            }
            ExitCode::SUCCESS
        }
        Command::Props { fluid, table, pressure_bar, from, to, step } => props(fluid, table, pressure_bar, from, to, step),
    }
}

fn props(fluid: Option<String>, table: Option<PathBuf>, pressure_bar: Option<f64>, from: Option<f64>, to: Option<f64>, step: Option<f64>) -> ExitCode {
    use hxgrid::fluid::library::{self, FluidChoice};
    let bad = |msg: String| {
        errln!("error: {msg}");
        ExitCode::from(EXIT_INPUT)
    };
    let choice = match (&fluid, &table) {
        (Some(_), Some(_)) => return bad("give either a fluid name or --table FILE, not both".into()),
        (None, None) => return bad("give a fluid name (see `hxgrid fluids`) or --table FILE".into()),
        (None, Some(path)) => match hxgrid::case::read::table(path) {
            Ok(t) => FluidChoice::Table(t),
            Err(e) => return bad(format!("invalid fluid table: {e}")),
        },
        (Some(name), None) => match name.as_str() {
            "water" => FluidChoice::Water(hxgrid::fluid::Water::phase_at(pressure_bar.map(|p| p * 1e5).unwrap_or(101_325.0), from.unwrap_or(20.0))),
            other => match library::builtin_table(other) {
                Some(t) => FluidChoice::Table(t),
                None => return bad(format!("\"{other}\" is not a known fluid; `hxgrid fluids` lists them")),
            },
        },
    };
    let table_p = match &choice {
        FluidChoice::Table(t) if !t.is_ideal_gas() => t.table_pressure_pa(),
        _ => None,
    };
    let p_pa = match pressure_bar {
        Some(p) if !(p.is_finite() && p > 0.0) => return bad(format!("--pressure-bar {p} must be a positive number of bar (absolute)", p = num(p))),
        Some(p) => p * 1e5,
        None => table_p.unwrap_or(101_325.0),
    };
    let f = match choice.build(p_pa) {
        Ok(f) => f,
        Err(e) => return bad(e.to_string()),
    };
    let r = f.range();
    let (lo, hi) = (from.unwrap_or(r.min_c), to.unwrap_or(r.max_c));
    if !(lo.is_finite() && hi.is_finite() && hi >= lo) {
        return bad(format!("--from {lo} and --to {hi}: need finite temperatures with --to ≥ --from", lo = num(lo), hi = num(hi)));
    }
    for (flag, t) in [("--from", lo), ("--to", hi)] {
        if t < r.min_c - 1e-9 || t > r.max_c + 1e-9 {
            return bad(format!("{flag} {t} °C is outside {}'s valid range {:.2} … {:.2} °C ({})", f.name(), r.min_c, r.max_c, r.reason, t = num(t)));
        }
    }
    let step = step.unwrap_or(((hi - lo) / 20.0).max(1e-6));
    if !(step.is_finite() && step > 0.0) {
        return bad(format!("--step {step} must be a positive number of kelvin", step = num(step)));
    }
    outln!("{} at {:.5} bar (valid {:.2} … {:.2} °C)", f.name(), p_pa * 1e-5, r.min_c, r.max_c);
    if let FluidChoice::Table(t) = &choice {
        outln!("source: {}", t.source());
    }
    outln!("{:>10} {:>12} {:>12} {:>13} {:>11} {:>9} {:>14}", "T (°C)", "ρ (kg/m³)", "cp (J/kgK)", "μ (Pa·s)", "k (W/mK)", "Pr", "h − h(T₀) (kJ/kg)");
    let h0 = f.enthalpy(lo);
    let n = ((hi - lo) / step).floor() as usize;
    for i in 0..=n.min(100_000) {
        let t = (lo + step * i as f64).min(hi);
        let p = f.props(t);
        outln!(
            "{:>10.3} {:>12.4} {:>12.2} {:>13.5e} {:>11.5} {:>9.4} {:>14.4}",
            t,
            p.density,
            p.cp,
            p.viscosity,
            p.conductivity,
            p.prandtl(),
            (f.enthalpy(t) - h0) * 1e-3
        );
    }
    ExitCode::SUCCESS
}

fn load(path: &Path) -> Result<Case, ExitCode> {
    case::load(path).map_err(|e| {
        match &e {
            CaseError::Invalid { .. } => errln!("error: invalid case {e}"),
            _ => errln!("error: {e}"),
        }
        ExitCode::from(EXIT_INPUT)
    })
}

fn print_warnings(case: &Case) {
    for w in &case.warnings {
        errln!("warning: {w}");
    }
}

fn check(path: &Path) -> ExitCode {
    match load(path) {
        Ok(case) => {
            print_warnings(&case);
            outln!("{}: valid ({} case \"{}\", {} cells)", path.display(), case.arrangement.as_str(), case.name, case.solver.cells);
            ExitCode::SUCCESS
        }
        Err(code) => code,
    }
}

fn new_case(path: &Path) -> ExitCode {
    use std::io::Write as _;
    // create_new: never overwrite, and never follow a link (even a dangling one) to write
    // somewhere else.
    let file = std::fs::OpenOptions::new().write(true).create_new(true).open(path);
    match file.and_then(|mut f| f.write_all(case::STARTER.as_bytes())) {
        Ok(()) => {
            outln!("wrote {} — edit it, then: hxgrid run {}", path.display(), path.display());
            ExitCode::SUCCESS
        }
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
            errln!("error: {} already exists; hxgrid new never overwrites a file: choose another name", path.display());
            ExitCode::from(EXIT_INPUT)
        }
        Err(e) => {
            errln!("error: cannot write {}: {e}", path.display());
            ExitCode::from(EXIT_OUTPUT)
        }
    }
}

/// Prints Newton progress when not quiet.
struct Progress {
    quiet: bool,
}
impl Observer for Progress {
    fn iteration(&mut self, k: usize, residual: f64) {
        if !self.quiet {
            errln!("  Newton iteration {k:>2}: relative residual {residual:.3e}");
        }
    }
}

fn run(path: &Path, out: Option<PathBuf>, grid_study: Option<usize>, write: WriteOptions, quiet: bool) -> ExitCode {
    let case = match load(path) {
        Ok(c) => c,
        Err(code) => return code,
    };
    print_warnings(&case);
    let dir = out.unwrap_or_else(|| Path::new("output").join(&case.name));
    if let Err(code) = destination_ok(&dir) {
        return code;
    }
    let exchanger = case.build();
    let options = RatingOptions { study_levels: grid_study };
    let report = match study::rate(&case.name, &exchanger, &case.solver, &options, &mut Progress { quiet }) {
        Ok(r) => r,
        Err(e) => return solver_failed(&e),
    };
    let written = hxgrid::output::write_steady(&report, &dir, write);
    let stride = hxgrid::output::profile_stride(report.profile.len(), write);
    finish(written, quiet, || {
        print_report(&report);
        if stride > 1 {
            outln!("\nprofiles.csv holds every {stride}th of the {} cells (and the last); run with --all-cells to write every cell", report.profile.len());
        }
    })
}

/// Refuse, before any work, a destination hxgrid may not replace.
fn destination_ok(dir: &Path) -> Result<(), ExitCode> {
    hxgrid::output::check_destination(dir).map_err(|e| {
        errln!("error: {e}");
        ExitCode::from(EXIT_OUTPUT)
    })
}

/// Map a write result to the exit code, printing the report and the files unless quiet.
fn finish(written: Result<Vec<PathBuf>, hxgrid::output::OutputError>, quiet: bool, print: impl FnOnce()) -> ExitCode {
    match written {
        Ok(files) => {
            if !quiet {
                print();
                outln!("\nwrote:");
                for f in files {
                    outln!("  {}", f.display());
                }
            }
            ExitCode::SUCCESS
        }
        Err(e) => {
            errln!("error: {e}");
            ExitCode::from(EXIT_OUTPUT)
        }
    }
}

/// Report a solver failure (nothing was written).
fn solver_failed(e: &dyn std::fmt::Display) -> ExitCode {
    errln!("error: {e}\nNo results were written; earlier results (if any) are untouched.");
    ExitCode::from(EXIT_SOLVER)
}

/// A progress bar on a terminal; nothing otherwise.
struct Bar(Option<indicatif::ProgressBar>);

impl hxgrid::solve::transient::TransientObserver for Bar {
    fn progress(&mut self, t: f64, t_end: f64) {
        if let Some(bar) = &self.0 {
            bar.set_position((1000.0 * t / t_end) as u64);
        }
    }
}

fn simulate(path: &Path, out: Option<PathBuf>, quiet: bool) -> ExitCode {
    use std::io::IsTerminal;
    let case = match load(path) {
        Ok(c) => c,
        Err(code) => return code,
    };
    print_warnings(&case);
    let Some(spec) = &case.transient else {
        errln!(
            "error: {} has no [transient] section: add one (duration_s, wall_density_kg_m3, wall_specific_heat_J_kgK, and optional schedules; see README) or use `hxgrid run` for the steady state",
            path.display()
        );
        return ExitCode::from(EXIT_INPUT);
    };
    let dir = out.unwrap_or_else(|| Path::new("output").join(format!("{}-transient", case.name)));
    if let Err(code) = destination_ok(&dir) {
        return code;
    }
    let exchanger = case.build();
    let settings = spec.settings_for(&exchanger, &case);
    let inputs = spec.inputs(&exchanger);
    let bar = (!quiet && std::io::stderr().is_terminal()).then(|| {
        let b = indicatif::ProgressBar::new(1000);
        b.set_style(
            indicatif::ProgressStyle::with_template("{spinner} simulated {percent:>3}% [{bar:40}] elapsed {elapsed_precise}, left ~{eta}")
                .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
        );
        b
    });
    let mut observer = Bar(bar);
    let result = hxgrid::scenario::run(&case.name, &exchanger, &inputs, &settings, spec.response_from_s, &mut observer);
    if let Some(b) = &observer.0 {
        b.finish_and_clear();
    }
    let report = match result {
        Ok(r) => hxgrid::scenario::TransientReport { storage: Some(spec.storage(&exchanger, &case)), ..r },
        Err(e) => return solver_failed(&e),
    };
    let code = finish(hxgrid::output::write_transient(&report, &dir), quiet, || print_transient(&report));
    match (&report.stop, code == ExitCode::SUCCESS) {
        (Some(stop), true) => {
            errln!(
                "stopped early: {}
The results up to t = {} s were written (status \"stopped\" in transient.json).",
                stop.reason,
                num(stop.time_s)
            );
            ExitCode::from(EXIT_STOPPED)
        }
        _ => code,
    }
}

fn print_transient(r: &hxgrid::scenario::TransientReport) {
    outln!("\n{} — transient, {} s simulated, {} cells, {} scheme, {}", r.case, r.duration_s, r.cells, r.scheme, r.integrator);
    outln!("  start: {}; response measured from t = {} s", r.initial_state, r.reference_time_s);
    if let Some(stop) = &r.stop {
        outln!("  STOPPED EARLY at t = {} s ({} stream at x = {} m): results end there", num(stop.time_s), stop.stream, num(stop.position_m));
    }
    let f = |v: Option<f64>| v.map(|x| format!("{x:.1} s")).unwrap_or_else(|| "—".into());
    outln!("\n{:<14}{:>11}{:>11}{:>10}{:>10}{:>10}{:>11}{:>16}", "", "start °C", "end °C", "63 %", "95 %", "99 %", "overshoot", "end − steady K");
    for (name, o) in [("hot outlet", &r.hot_outlet), ("cold outlet", &r.cold_outlet)] {
        outln!(
            "{:<14}{:>11.3}{:>11.3}{:>10}{:>10}{:>10}{:>10.2}%{:>16}",
            name,
            o.initial_C,
            o.final_C,
            f(o.settling_63_s),
            f(o.settling_95_s),
            f(o.settling_99_s),
            o.overshoot_percent,
            o.difference_from_steady_K.map(|d| format!("{d:.2e}")).unwrap_or_else(|| "— (none)".into())
        );
    }
    outln!("\nhottest wall {:.2} °C; fastest wall change {:.3} K/s", r.max_wall_C, r.max_wall_rate_K_s);
    outln!("energy closure {:.3e} J of {:.3e} J transferred ({:.1e})", r.energy_closure_J, r.hot_heat_J, r.energy_closure_relative);
    outln!(
        "steps {} (rejected {}), Jacobians {}, right-hand sides {}",
        r.stats.steps,
        r.stats.rejected_steps,
        r.stats.jacobian_evaluations,
        r.stats.rhs_evaluations
    );
    outln!("\nCaution: {}", r.caution);
}

fn print_report(r: &SteadyReport) {
    let l = &r.lumped;
    outln!("\n{} — {} exchanger, {} m, {} cells ({} Newton iterations)", r.case, r.arrangement, r.length_m, r.cells, r.iterations);
    outln!("  hot:  {}\n  cold: {}", r.hot_fluid, r.cold_fluid);
    outln!("\n{:<22}{:>16}{:>16}{:>12}", "", "grid", "lumped ε–NTU", "difference");
    use hxgrid::text::fixed as f;
    outln!("{:<22}{:>16}{:>16}{:>11}%", "duty (W)", f(r.duty_W, 1), f(l.duty_w, 1), f(r.grid_vs_lumped.duty_difference_percent, 2));
    outln!("{:<22}{:>16}{:>16}{:>10} K", "hot outlet (°C)", f(r.hot_outlet_C, 3), f(l.hot_outlet_c, 3), f(r.grid_vs_lumped.hot_outlet_difference_K, 3));
    outln!("{:<22}{:>16}{:>16}{:>10} K", "cold outlet (°C)", f(r.cold_outlet_C, 3), f(l.cold_outlet_c, 3), f(r.grid_vs_lumped.cold_outlet_difference_K, 3));
    outln!("{:<22}{:>16}{:>16}{:>11}%", "UA (W/K)", f(r.UA_W_K, 2), f(l.ua_w_k, 2), f(r.grid_vs_lumped.ua_difference_percent, 2));
    outln!("{:<22}{:>16}{:>16}", "effectiveness", f(r.effectiveness, 5), f(l.effectiveness, 5));
    outln!("{:<22}{:>16}{:>16}", "NTU", f(r.ntu, 5), f(l.ntu, 5));
    outln!("{:<22}{:>16}{:>16}", "capacity ratio", f(r.capacity_ratio, 5), f(l.capacity_ratio, 5));
    if let (Some(a), Some(b)) = (r.lmtd_K, l.lmtd_k) {
        outln!("{:<22}{:>16}{:>16}", "LMTD (K)", f(a, 4), f(b, 4));
    }
    let dp = |v: Option<f64>| v.map(|p| format!("{:.4} kPa", p * 1e-3)).unwrap_or_else(|| "not computed".into());
    outln!("{:<22}{:>16}{:>16}", "pressure drop hot", dp(r.hot_pressure_drop_Pa), "");
    outln!("{:<22}{:>16}{:>16}", "pressure drop cold", dp(r.cold_pressure_drop_Pa), "");
    outln!("\nenergy imbalance (hot released − cold gained): {:.3e} W", r.energy_imbalance_W);
    if let Some(g) = &r.grid_error_estimate {
        outln!(
            "estimated grid error (vs {} cells, Richardson order {}): duty {:.3e} W, hot outlet {:.2e} K, cold outlet {:.2e} K",
            g.coarse_cells,
            g.order,
            g.estimated_error.duty_w,
            g.estimated_error.hot_outlet_c,
            g.estimated_error.cold_outlet_c
        );
    }
    if let Some(s) = &r.grid_study {
        outln!("\ngrid study:");
        outln!("{:>10}{:>18}{:>16}{:>16}", "cells", "duty (W)", "hot out (°C)", "cold out (°C)");
        for lv in &s.levels {
            outln!("{:>10}{:>18.6}{:>16.8}{:>16.8}", lv.cells, lv.values.duty_w, lv.values.hot_outlet_c, lv.values.cold_outlet_c);
        }
        let fmt = |o: Option<f64>| o.map(|p| format!("{p:.3}")).unwrap_or_else(|| "n/a (round-off)".into());
        outln!(
            "observed order: duty {}, hot outlet {}, cold outlet {} (scheme: {})",
            fmt(s.observed_order.duty),
            fmt(s.observed_order.hot_outlet),
            fmt(s.observed_order.cold_outlet),
            s.formal_order
        );
        outln!(
            "Richardson extrapolation: duty {:.6} W, hot outlet {:.8} °C, cold outlet {:.8} °C",
            s.extrapolated.duty_w,
            s.extrapolated.hot_outlet_c,
            s.extrapolated.cold_outlet_c
        );
    }
    for w in &r.warnings {
        outln!("warning: {w}");
    }
    outln!("\nCaution: {}", r.caution);
}
