//! CaseFile → Case: defaults filled in, every problem found in one pass, each named by
//! its key path with the value given and what would be valid.

use super::file::*;
use super::geometry_input::*;
use super::problem::*;
use super::spec::*;
use super::stream_input::*;
use super::transient_input::*;
use crate::fluid::library::FluidChoice;
use crate::model::Exchanger;
use crate::solve::SteadySettings;
use crate::text::num;
use std::path::Path;

/// Read and validate a case file.
pub fn load(path: &Path) -> Result<Case, CaseError> {
    let text = super::read::text_file(path, super::read::CASE_MAX_BYTES, None)
        .map_err(|problem| CaseError::Unreadable { path: path.display().to_string(), problem })?;
    let stem = path.file_stem().map(|s| s.to_string_lossy().into_owned()).unwrap_or_else(|| "case".into());
    let base = path.parent().unwrap_or(Path::new("."));
    parse_in(&text, &path.display().to_string(), &stem, base)
}

/// Parse and validate case text; `origin` names it in messages, `default_name` is used
/// when the file has no `name`. Table files are looked up relative to the current folder.
pub fn parse_str(text: &str, origin: &str, default_name: &str) -> Result<Case, CaseError> {
    parse_in(text, origin, default_name, Path::new("."))
}

/// As [`parse_str`], with table files relative to `base_dir`.
///
/// Order: TOML syntax (line and column); then the file's shape — unknown keys (with the
/// closest valid key), missing required keys, wrong types, words outside their choices —
/// all at once with line numbers; then the values. If the only shape problems are unknown
/// keys, the values are checked too (with those keys set aside) and reported together.
pub fn parse_in(text: &str, origin: &str, default_name: &str, base_dir: &Path) -> Result<Case, CaseError> {
    parse_built(text, origin, default_name, base_dir).map(|(case, _)| case)
}

/// [`parse_in`], also returning the exchanger validation built for its derived checks (a
/// study rating many variants saves building each twice).
pub fn parse_built(text: &str, origin: &str, default_name: &str, base_dir: &Path) -> Result<(Case, Exchanger), CaseError> {
    let shape = super::schema::check(text).map_err(|message| CaseError::Syntax { origin: origin.into(), message })?;
    let invalid = |mut problems: Vec<Problem>| {
        for p in problems.iter_mut().filter(|p| p.line.is_none()) {
            p.line = super::schema::line_of_key(text, &p.key);
        }
        CaseError::Invalid { origin: origin.into(), problems }
    };
    let clean = shape.problems.is_empty();
    let cleaned = if clean { text.to_string() } else { super::schema::readable(text, &shape) };
    let file: CaseFile = match toml::from_str(&cleaned) {
        Ok(f) => f,
        Err(e) if clean => return Err(CaseError::Syntax { origin: origin.into(), message: e.to_string() }),
        // The shape problems leave too little to read the values (a required key missing).
        Err(_) => return Err(invalid(shape.problems)),
    };
    let mut problems = shape.problems.clone();
    match validate(&file, default_name, base_dir, text) {
        Ok(mut case) if problems.is_empty() => {
            case.source = std::sync::Arc::new(crate::design::Source {
                text: text.to_string(),
                origin: origin.to_string(),
                default_name: default_name.to_string(),
                base_dir: base_dir.to_path_buf(),
            });
            let ex = case.build();
            let derived = derived_problems(&case, &ex);
            if !derived.is_empty() {
                return Err(invalid(derived));
            }
            case.warnings.extend(velocity_warnings(&ex));
            Ok((case, ex))
        }
        Ok(_) => Err(invalid(problems)),
        Err(more) => {
            // Value problems are kept unless they follow from a shape problem: a key already
            // suggested for a misspelling is not reported again as missing; a key set aside
            // for its type is not reported again; and where a word that selects what a table
            // holds (a geometry kind, a film model) is invalid, that table's other keys
            // cannot be judged.
            let set_aside: Vec<String> = shape.wrong_type.iter().chain(&shape.unknown).map(|p| p.join(".")).collect();
            let selectors: Vec<String> = shape.bad_words.iter().filter(|(p, _)| p.len() > 1).map(|(p, _)| format!("{}.", p[..p.len() - 1].join("."))).collect();
            let follows_from_shape = |p: &Problem| {
                (shape.suggested.contains(&p.key) && matches!(p.kind, ProblemKind::Missing { .. }))
                    || set_aside.iter().any(|k| p.key == *k || p.message.contains(k.as_str()))
                    || selectors.iter().any(|t| p.key.starts_with(t.as_str()))
                    || shape.bad_words.iter().any(|(b, _)| b.join(".") == p.key)
            };
            problems.extend(more.into_iter().filter(|p| !follows_from_shape(p)));
            Err(invalid(problems))
        }
    }
}

/// The groups every solve divides by, at the inlet states: Prandtl number, capacity rate,
/// Reynolds number and NTU. Each input can be within its own range and still give a group
/// that overflows (a viscosity of 10⁸ Pa·s with a conductivity of 10⁻³⁰⁰ W/(m·K)); that is
/// an input problem, named here, not a failure to write results later.
fn derived_problems(case: &Case, ex: &Exchanger) -> Vec<Problem> {
    let mut out = Vec::new();
    let fail = |out: &mut Vec<Problem>, key: String, message: String| out.push(Problem::new(key, None, ProblemKind::Other(message)));
    let mut c_min = f64::INFINITY;
    for (side, spec, s) in [("hot", &case.hot, &ex.hot), ("cold", &case.cold, &ex.cold)] {
        let key = if matches!(spec.fluid, FluidChoice::Constant(_)) { format!("{side}.properties") } else { side.to_string() };
        let p = s.fluid.props(s.inlet_c);
        let groups = [
            ("the Prandtl number μ·cp/k", p.prandtl()),
            ("the capacity rate ṁ·cp (W/K)", s.mass_flow_kg_s * p.cp),
            ("the Reynolds number", s.channel.reynolds(s.mass_flow_kg_s, p.viscosity).unwrap_or(1.0)),
        ];
        for (what, v) in groups {
            if !(v.is_finite() && v > 0.0) {
                fail(&mut out, key.clone(), format!("the values give {what} = {} at the inlet: check the property values and their units", num(v)));
            }
        }
        c_min = c_min.min(s.mass_flow_kg_s * p.cp);
    }
    if out.is_empty() {
        let ntu = ex.ua_per_length_at(ex.hot.inlet_c, ex.cold.inlet_c) * ex.length_m / c_min;
        if !(ntu.is_finite() && ntu >= 0.0) {
            fail(
                &mut out,
                "length_m".into(),
                format!("the inputs give NTU = {} at the inlet temperatures: check film coefficients, properties and geometry", num(ntu)),
            );
        }
    }
    out
}

/// Warnings for inlet velocities far outside normal practice (common design ranges:
/// liquids about 0.1–3 m/s in tubes, gases about 2–30 m/s; flagged beyond 0.05–5 and 0.5–60).
pub fn velocity_warnings(ex: &crate::model::Exchanger) -> Vec<String> {
    let mut out = Vec::new();
    for (name, s) in [("hot", &ex.hot), ("cold", &ex.cold)] {
        let Some(area) = s.channel.flow_area_m2 else { continue };
        let rho = s.fluid.density_at(s.inlet_c, s.inlet_pressure_pa);
        let u = s.mass_flow_kg_s / (rho * area);
        let (lo, hi, kind) = if rho > 200.0 { (0.05, 5.0, "a liquid") } else { (0.5, 60.0, "a gas") };
        if u < lo || u > hi {
            out.push(format!(
                "{name} stream: inlet velocity {} m/s is far outside normal practice for {kind} ({lo}–{hi} m/s): check {name}.mass_flow_kg_s and the flow geometry (diameters in metres?)",
                num(u)
            ));
        }
    }
    out
}

fn validate(f: &CaseFile, default_name: &str, base_dir: &Path, text: &str) -> Result<Case, Vec<Problem>> {
    let mut c = Checker { problems: Vec::new(), warnings: Vec::new() };
    let design = super::design_input::design(&mut c, f, text);
    let geometry = geometry(&mut c, f);
    let length_m = match (&geometry, f.length_m) {
        (Geometry::TubeBank { bank, .. }, given) => {
            let depth = bank.rows as f64 * bank.longitudinal_pitch_m;
            if let Some(l) = given {
                if (l - depth).abs() > 1e-9 * depth.abs().max(1.0) {
                    c.fail(
                        "length_m",
                        format!(
                            "{l} m differs from the tube bank's depth rows × longitudinal_pitch_m = {depth} m: omit length_m for a tube bank",
                            l = num(l),
                            depth = num(depth)
                        ),
                    );
                }
            }
            depth
        }
        (_, Some(l)) => c.positive("length_m", l, "m"),
        (_, None) => {
            c.fail("length_m", "is missing: give the heated length in m".into());
            f64::NAN
        }
    };
    let hot = stream(&mut c, "hot", &f.hot, base_dir, &geometry);
    let cold = stream(&mut c, "cold", &f.cold, base_dir, &geometry);
    if f.hot.inlet_temperature_C <= f.cold.inlet_temperature_C {
        c.fail(
            "hot.inlet_temperature_C",
            format!(
                "the hot inlet ({} °C) must be hotter than the cold inlet (cold.inlet_temperature_C = {} °C); \
                 if the streams are the other way round, swap the [hot] and [cold] sections",
                f.hot.inlet_temperature_C, f.cold.inlet_temperature_C
            ),
        );
    }
    let defaults = SteadySettings::default();
    let cells = f.solver.cells.unwrap_or(defaults.cells as i64);
    if !(2..=crate::solve::MAX_CELLS as i64).contains(&cells) {
        c.fail(
            "solver.cells",
            format!("{cells} is not valid: use a whole number from 2 to 10 000 000 (every run also solves at half the cells to estimate its grid error)"),
        );
    }
    let tolerance = f.solver.residual_tolerance.unwrap_or(defaults.tolerance);
    if !(tolerance > 0.0 && tolerance < 1.0) {
        c.fail(
            "solver.residual_tolerance",
            format!("{tolerance} is not valid: use a value between 0 and 1 (exclusive), e.g. 1e-10", tolerance = num(tolerance)),
        );
    }
    let max_iterations = f.solver.max_iterations.unwrap_or(defaults.max_iterations as i64);
    if !(1..=10_000).contains(&max_iterations) {
        c.fail("solver.max_iterations", format!("{max_iterations} is not valid: use a whole number from 1 to 10 000"));
    }
    let scheme = match f.solver.scheme {
        None | Some(SchemeName::Trapezoidal) => crate::model::Scheme::Trapezoidal,
        Some(SchemeName::Upwind) => crate::model::Scheme::Upwind,
        Some(SchemeName::Tvd) => crate::model::Scheme::Tvd,
    };
    let arrangement = super::arrangement_input::arrangement(&mut c, f, &geometry, cells.max(1) as usize, scheme);
    // Snapshot rows are bounded by the cells a snapshot holds: a network's every cell.
    let snapshot_cells = arrangement.layout().map_or(cells.max(1) as usize, |l| l.cell_count(cells.max(1) as usize));
    let transient = f.transient.as_ref().map(|t| transient(&mut c, t, f, &geometry, cells.max(1) as usize, snapshot_cells));
    let name = match &f.name {
        Some(given) => {
            if let Err(why) = check_name(given) {
                c.fail("name", format!("{} {why}", crate::text::quote(given, 40)));
            }
            given.clone()
        }
        None => name_from_file(default_name),
    };
    if !c.problems.is_empty() {
        return Err(c.problems);
    }
    Ok(Case {
        design,
        source: Default::default(),
        transient,
        name,
        arrangement,
        length_m,
        geometry,
        hot,
        cold,
        solver: SteadySettings { cells: cells as usize, tolerance, max_iterations: max_iterations as usize },
        scheme,
        warnings: c.warnings,
    })
}

/// Longest case name, characters.
pub const NAME_MAX: usize = 100;

/// A case name is a label that becomes a folder under `output/`: letters, digits, `-`, `_`
/// and `.` (not first), at most [`NAME_MAX`] characters, so it can never name a path
/// elsewhere (`../src`, `/etc`, `.`, an empty name).
pub fn check_name(name: &str) -> Result<(), String> {
    let ok_char = |c: char| c.is_ascii_alphanumeric() || c == '-' || c == '_' || c == '.';
    if name.is_empty() {
        Err("is empty: give a short label such as \"cooler-a\" (it names the results folder under output/)".into())
    } else if name.chars().count() > NAME_MAX {
        Err(format!("is longer than {NAME_MAX} characters: give a short label (it names the results folder under output/)"))
    } else if name.starts_with('.') || !name.chars().all(ok_char) {
        Err("is not a valid name: use letters, digits, '-', '_' and '.' (not first), e.g. \"cooler-a\"; it names the results folder under output/, and --out chooses any other folder".into())
    } else {
        Ok(())
    }
}

/// The default name from a case file's name: characters outside the name set become '_'.
fn name_from_file(stem: &str) -> String {
    let mut s: String = stem.chars().take(NAME_MAX).map(|c| if c.is_ascii_alphanumeric() || c == '-' || c == '_' || c == '.' { c } else { '_' }).collect();
    while s.starts_with('.') {
        s.remove(0);
    }
    if s.is_empty() {
        "case".into()
    } else {
        s
    }
}
