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
/// A row of `hxgrid verify` is outside its tolerance.
const EXIT_VERIFY: u8 = 7;

fn main() -> ExitCode {
    let args = Cli::parse();
    match args.command {
        Command::Run { case, out, grid_study, all_cells, quiet } => run(&case, out, grid_study.map(|g| g as usize), WriteOptions { all_cells }, quiet),
        Command::Simulate { case, out, quiet } => simulate(&case, out, quiet),
        Command::Size { case, out, quiet } => size(&case, out, quiet),
        Command::Sweep { case, out, shard, quiet } => sweep(&case, out, shard, quiet),
        Command::Merge { shards, out } => merge(&shards, out),
        Command::Uncertainty { case, out, quiet } => uncertainty(&case, out, quiet),
        Command::Check { case } => check(&case),
        Command::Verify { json } => verify(json),
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

fn verify(json: bool) -> ExitCode {
    let rows = hxgrid::verify::run();
    let failed = rows.iter().filter(|r| !r.passed).count();
    if json {
        outln!("{}", serde_json::to_string_pretty(&rows).expect("rows serialise"));
    } else {
        outln!("{:<92} {:<14} {:>11} {:>11} {:>10} {:>8}  {:<4}  source", "case", "quantity", "reference", "computed", "error", "tol", "");
        for r in &rows {
            outln!(
                "{:<92} {:<14} {:>11.8} {:>11.8} {:>10.2e} {:>8.0e}  {:<4}  {}",
                r.case,
                r.quantity,
                r.reference,
                r.computed,
                r.error,
                r.tolerance,
                if r.passed { "ok" } else { "FAIL" },
                r.source
            );
            if let Some(note) = &r.note {
                outln!("    {note}");
            }
        }
        outln!("{} rows, {} passed, {failed} failed", rows.len(), rows.len() - failed);
    }
    if failed > 0 {
        ExitCode::from(EXIT_VERIFY)
    } else {
        ExitCode::SUCCESS
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
    // Default step: a round 1, 2 or 5 × 10ⁿ K giving about 20 rows; default ends: the valid
    // range's ends rounded inwards to that step, so every row is at a round temperature.
    let step = step.unwrap_or_else(|| {
        let raw = ((hi - lo) / 20.0).max(1e-6);
        let m = 10f64.powf(raw.log10().floor());
        [1.0, 2.0, 5.0, 10.0].iter().map(|k| k * m).find(|s| *s >= raw * (1.0 - 1e-9)).unwrap_or(raw)
    });
    if !(step.is_finite() && step > 0.0) {
        return bad(format!("--step {step} must be a positive number of kelvin", step = num(step)));
    }
    let round = |t: f64, up: bool| {
        let k = t / step;
        // Clean up round-off (0.1 × 3 = 0.30000000000000004) before rounding to the step.
        let k = if (k - k.round()).abs() < 1e-9 {
            k.round()
        } else if up {
            k.ceil()
        } else {
            k.floor()
        };
        k * step
    };
    let (lo, hi) = match (from.is_none().then(|| round(lo, true)), to.is_none().then(|| round(hi, false))) {
        (a, b) if a.unwrap_or(lo) <= b.unwrap_or(hi) => (a.unwrap_or(lo), b.unwrap_or(hi)),
        _ => (lo, hi),
    };
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
        Ok(r) => r.with_input(study::echo::steady(&case.source, &exchanger, case.solver.cells)),
        Err(e) => return solver_failed(&e, case::advice::steady(&e)),
    };
    // A rated case with a [size] table also gets its design margin against that target.
    let report = match &case.design.size {
        None => report,
        Some(spec) => match hxgrid::design::size::size(&case.source, spec) {
            Ok((sizing, _)) => SteadyReport { sizing: Some(sizing), ..report },
            Err(e) => {
                let mut r = report;
                r.warnings.push(format!("design margin against [size] not computed: {e}"));
                r
            }
        },
    };
    let written = hxgrid::output::write_steady(&report, &dir, write);
    let stride = hxgrid::output::profile_stride(report.profile.len(), write);
    finish(written, quiet, || {
        print_report(&report);
        if let Some(s) = &report.sizing {
            outln!("{}", hxgrid::output::console::sizing(s));
        }
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
fn solver_failed(e: &dyn std::fmt::Display, advice: Option<String>) -> ExitCode {
    let advice = advice.map(|a| format!("\nWhat to change: {a}.")).unwrap_or_default();
    errln!("error: {e}.{advice}\nNo results were written; earlier results (if any) are untouched.");
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
        Ok(r) => hxgrid::scenario::TransientReport { storage: Some(spec.storage(&exchanger, &case)), ..r }.with_input(study::echo::transient(
            &case.source,
            &exchanger,
            &settings,
            &inputs,
        )),
        Err(e) => return solver_failed(&e, case::advice::transient(&e)),
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
    outln!("{}", hxgrid::output::console::transient(r));
}

fn print_report(r: &SteadyReport) {
    outln!("{}", hxgrid::output::console::steady(r));
}

/// A sizing target cannot be reached (the reachable limit is stated).
const EXIT_UNREACHABLE: u8 = 8;

/// A progress bar over `n` items on a terminal (stderr), else nothing.
struct CountBar(Option<indicatif::ProgressBar>);

impl CountBar {
    fn new(n: usize, quiet: bool, what: &str) -> Self {
        use std::io::IsTerminal;
        CountBar((!quiet && std::io::stderr().is_terminal()).then(|| {
            let b = indicatif::ProgressBar::new(n as u64);
            b.set_style(
                indicatif::ProgressStyle::with_template(&format!("{{spinner}} {what} {{pos}}/{{len}} [{{bar:40}}] elapsed {{elapsed_precise}}, left ~{{eta}}"))
                    .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
            );
            b
        }))
    }
    /// One item done (from any thread).
    fn tick(&self) {
        if let Some(b) = &self.0 {
            b.inc(1);
        }
    }
    fn finish(&self) {
        if let Some(b) = &self.0 {
            b.finish_and_clear();
        }
    }
}

/// Map a sizing error to its message and exit code.
fn sizing_failed(e: &hxgrid::design::size::SizeError) -> ExitCode {
    use hxgrid::design::size::SizeError;
    errln!("error: {e}.\nNo results were written; earlier results (if any) are untouched.");
    match e {
        SizeError::Unreachable(_) | SizeError::Insensitive { .. } => ExitCode::from(EXIT_UNREACHABLE),
        SizeError::Failed { solver: true, .. } => ExitCode::from(EXIT_SOLVER),
        SizeError::Failed { .. } => ExitCode::from(EXIT_INPUT),
    }
}

fn size(path: &Path, out: Option<PathBuf>, quiet: bool) -> ExitCode {
    let case = match load(path) {
        Ok(c) => c,
        Err(code) => return code,
    };
    print_warnings(&case);
    let Some(spec) = &case.design.size else {
        errln!(
            "error: {} has no [size] table: add one with a target (duty_W, hot_outlet_C or cold_outlet_C) and vary = \"<key>\" (e.g. \"length_m\"); see README",
            path.display()
        );
        return ExitCode::from(EXIT_INPUT);
    };
    let dir = out.unwrap_or_else(|| Path::new("output").join(format!("{}-sized", case.name)));
    if let Err(code) = destination_ok(&dir) {
        return code;
    }
    let mut step = 0;
    let mut show = |value: f64, achieved: f64| {
        step += 1;
        if !quiet {
            errln!("  sizing solve {step:>2}: {} = {} → {} = {}", spec.vary, num(value), spec.target.key(), num(achieved));
        }
    };
    let (sizing, sized) = match hxgrid::design::size::size_observed(&case.source, spec, &mut show) {
        Ok(s) => s,
        Err(e) => return sizing_failed(&e),
    };
    let exchanger = sized.build();
    let report = match study::rate(&sized.name, &exchanger, &sized.solver, &RatingOptions::default(), &mut Progress { quiet: true }) {
        Ok(r) => SteadyReport { sizing: Some(sizing), ..r }.with_input(study::echo::steady(&case.source, &exchanger, sized.solver.cells)),
        Err(e) => return solver_failed(&e, case::advice::steady(&e)),
    };
    let written = hxgrid::output::write_steady(&report, &dir, WriteOptions::default());
    finish(written, quiet, || {
        print_report(&report);
        if let Some(s) = &report.sizing {
            outln!("{}", hxgrid::output::console::sizing(s));
        }
    })
}

fn sweep(path: &Path, out: Option<PathBuf>, shard: Option<(usize, usize)>, quiet: bool) -> ExitCode {
    use hxgrid::design::sweep;
    use hxgrid::output::design::{sweep_header, sweep_line, write_sweep, Shard, SweepManifest};
    let case = match load(path) {
        Ok(c) => c,
        Err(code) => return code,
    };
    print_warnings(&case);
    let Some(spec) = &case.design.sweep else {
        errln!(
            "error: {} has no [sweep] table: add one [[sweep.inputs]] table per input (key = \"hot.mass_flow_kg_s\", and values = [...] or start/stop/count); see README",
            path.display()
        );
        return ExitCode::from(EXIT_INPUT);
    };
    let total = sweep::point_count(spec);
    if let Some((k, n)) = shard {
        if k > total {
            errln!("error: --shard {k}/{n}: the sweep has only {total} points, so slice {k} would be empty: use at most {total} slices");
            return ExitCode::from(EXIT_INPUT);
        }
    }
    let dir = out.unwrap_or_else(|| {
        Path::new("output").join(match shard {
            None => format!("{}-sweep", case.name),
            Some((k, n)) => format!("{}-sweep-shard-{k}-of-{n}", case.name),
        })
    });
    if let Err(code) = destination_ok(&dir) {
        return code;
    }
    let indices = sweep::shard_indices(total, shard);
    let bar = CountBar::new(indices.len(), quiet, "points");
    let points = sweep::run(&case.source, spec, &indices, &|| bar.tick());
    bar.finish();
    let lines: Vec<String> = points.iter().map(sweep_line).collect();
    let manifest =
        SweepManifest::new(&case.name, &case.source.sha256(), spec.combine, &spec.inputs, total, shard.map(|(index, count)| Shard { index, count }), &lines);
    let written = write_sweep(&dir, &manifest, &sweep_header(&spec.inputs), &lines);
    finish(written, quiet, || {
        outln!(
            "\n{} — sweep of {}: {} of {} points rated here, {} failed (status and error in sweep.csv)",
            case.name,
            spec.inputs.iter().map(|i| i.key.as_str()).collect::<Vec<_>>().join(" × "),
            manifest.points_in_file,
            total,
            manifest.points_failed
        );
        if let Some((k, n)) = shard {
            outln!("shard {k} of {n}: join all {n} shard folders with `hxgrid merge`");
        }
        outln!("\nCaution: {}", hxgrid::results::CAUTION);
    })
}

fn merge(shards: &[PathBuf], out: Option<PathBuf>) -> ExitCode {
    use hxgrid::output::design::MergeError;
    let dir = match out {
        Some(d) => d,
        None => {
            let name = shards
                .first()
                .and_then(|d| std::fs::read_to_string(d.join("sweep.json")).ok())
                .and_then(|t| serde_json::from_str::<hxgrid::output::design::SweepManifest>(&t).ok().map(|m| m.case).filter(|c| case::check_name(c).is_ok()));
            match name {
                Some(n) => Path::new("output").join(format!("{n}-sweep")),
                None => {
                    errln!("error: {} holds no sweep.json hxgrid wrote: give the shard folders of one `hxgrid sweep --shard K/N` run", shards[0].display());
                    return ExitCode::from(EXIT_INPUT);
                }
            }
        }
    };
    let same = |a: &Path, b: &Path| matches!((a.canonicalize(), b.canonicalize()), (Ok(x), Ok(y)) if x == y);
    if let Some(s) = shards.iter().find(|s| same(s, &dir)) {
        errln!("error: --out {} is one of the shard folders being merged: choose another folder, so the shards stay as they are", s.display());
        return ExitCode::from(EXIT_INPUT);
    }
    if let Err(code) = destination_ok(&dir) {
        return code;
    }
    match hxgrid::output::design::merge(shards, &dir) {
        Ok(files) => finish(Ok(files), false, || outln!("merged {} shard folders into {}", shards.len(), dir.display())),
        Err(MergeError::Input(m)) => {
            errln!("error: {m}");
            ExitCode::from(EXIT_INPUT)
        }
        Err(MergeError::Output(e)) => finish(Err(e), false, || {}),
    }
}

fn uncertainty(path: &Path, out: Option<PathBuf>, quiet: bool) -> ExitCode {
    let case = match load(path) {
        Ok(c) => c,
        Err(code) => return code,
    };
    print_warnings(&case);
    let spec = case.design.uncertainty.clone().unwrap_or_else(hxgrid::design::UncertaintySpec::defaults);
    let dir = out.unwrap_or_else(|| Path::new("output").join(format!("{}-uncertainty", case.name)));
    if let Err(code) = destination_ok(&dir) {
        return code;
    }
    let exchanger = case.build();
    let nominal = match study::rate(&case.name, &exchanger, &case.solver, &RatingOptions::default(), &mut Progress { quiet: true }) {
        Ok(r) => r,
        Err(e) => return solver_failed(&e, case::advice::steady(&e)),
    };
    let bar = CountBar::new(spec.samples, quiet, "samples");
    let report = hxgrid::design::uncertainty::study(&case, &nominal, &spec, &|| bar.tick());
    bar.finish();
    if report.samples_failed == report.samples {
        let first = report.sample_rows.iter().find_map(|s| s.outcome.as_ref().err()).map(|e| e.to_string()).unwrap_or_default();
        return solver_failed(&format!("every one of the {} samples failed to solve (the first: {first})", report.samples), None);
    }
    finish(hxgrid::output::design::write_uncertainty(&dir, &report), quiet, || outln!("{}", hxgrid::output::console::uncertainty(&report)))
}
