//! CaseFile → Case: defaults filled in, every problem found in one pass, each named by
//! its key path with the value given and what would be valid.

use super::file::*;
use crate::fluid::library::{self, FluidChoice};
use crate::fluid::{Props, WaterPhase};
use crate::model::{Arrangement, Exchanger, Stream};
use crate::solve::transient::{Initial, Inputs, Integrator, Signal, TransientSettings};
use crate::solve::SteadySettings;
use crate::text::num;
use crate::transfer::{
    Channel, CompactSurface, FilmCorrelation, Fin, FixedFilm, InternalFlow, Laminar, LaminarConstants, Layout, Transition, TubeBank, Turbulent, Wall,
    WallCorrection, Zukauskas,
};
use std::f64::consts::PI;
use std::path::Path;
use std::sync::Arc;

/// One thing wrong with a case, tied to its key.
#[derive(Debug, Clone, PartialEq)]
pub struct Problem {
    /// Key path, e.g. `hot.mass_flow_kg_s`.
    pub key: String,
    /// Line in the case file, where known.
    pub line: Option<usize>,
    /// What is wrong and what would be valid.
    pub message: String,
}

impl std::fmt::Display for Problem {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.line {
            Some(l) => write!(f, "line {l}: {}: {}", self.key, self.message),
            None => write!(f, "{}: {}", self.key, self.message),
        }
    }
}

/// Why a case could not be read.
#[derive(Debug, thiserror::Error)]
pub enum CaseError {
    /// The file could not be read (missing, not a regular file, too large, not text).
    #[error("case file {path} {problem}")]
    Unreadable {
        /// Path given.
        path: String,
        /// What is wrong with it.
        problem: String,
    },
    /// TOML syntax, a missing key, an unknown key or a wrong type.
    #[error("{origin}: {message}")]
    Syntax {
        /// File name.
        origin: String,
        /// Parser message with line and column.
        message: String,
    },
    /// Values that parse but are not valid.
    #[error("{origin}: {} problem(s):\n{}", problems.len(), problems.iter().map(|p| format!("  - {p}")).collect::<Vec<_>>().join("\n"))]
    Invalid {
        /// File name.
        origin: String,
        /// Every problem found.
        problems: Vec<Problem>,
    },
}

/// Which side of the wall a stream is on, for a double pipe.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TubeSide {
    /// The hot stream flows in the inner tube.
    Hot,
    /// The cold stream flows in the inner tube.
    Cold,
}

/// Validated geometry.
#[derive(Debug, Clone, PartialEq)]
pub enum Geometry {
    /// Inner tube inside an outer pipe; one stream in the tube, the other in the annulus.
    DoublePipe {
        /// Tube inner diameter, m.
        di: f64,
        /// Tube outer diameter, m.
        d_o: f64,
        /// Outer pipe inner diameter, m.
        ds: f64,
        /// Wall conductivity, W/(m·K).
        k: f64,
        /// Stream in the tube.
        tube_side: TubeSide,
        /// Use the equivalent diameter (D₂² − D₁²)/D₁ for the annulus film coefficient.
        annulus_equivalent_diameter: bool,
    },
    /// Generic plane wall with given area per length and per-stream channels.
    PlaneWall {
        /// Area per metre, m²/m.
        area_per_length: f64,
        /// Thickness, m.
        thickness: f64,
        /// Conductivity, W/(m·K).
        k: f64,
        /// Hot (flow area, hydraulic diameter).
        hot: (Option<f64>, Option<f64>),
        /// Cold (flow area, hydraulic diameter).
        cold: (Option<f64>, Option<f64>),
    },
    /// A bank of tubes crossed by the outside stream row after row, the tube-side stream
    /// in serpentine circuits against it: many-pass cross-counterflow, modelled as
    /// counterflow along the bank depth (x = row direction, length = rows × S_L).
    TubeBank {
        /// Tube inner diameter, m.
        di: f64,
        /// Wall conductivity, W/(m·K).
        k: f64,
        /// Stream in the tubes.
        tube_side: TubeSide,
        /// Bank geometry (outer diameter, pitches, layout, rows, frontal area).
        bank: TubeBank,
        /// Tubes in each row.
        tubes_per_row: usize,
        /// Length of each tube (face width), m.
        tube_length: f64,
        /// Parallel tube-side circuits.
        circuits: usize,
    },
}

impl Geometry {
    /// Which stream the tubes carry, for geometries with tubes.
    pub fn tube_side(&self) -> Option<TubeSide> {
        match self {
            Geometry::DoublePipe { tube_side, .. } | Geometry::TubeBank { tube_side, .. } => Some(*tube_side),
            Geometry::PlaneWall { .. } => None,
        }
    }
}

/// Validated film model.
#[derive(Debug, Clone)]
pub enum FilmSpec {
    /// Internal flow (tube, annulus, plate channel).
    Internal(InternalFlow),
    /// Zukauskas, outside of a tube bank.
    Zukauskas,
    /// Compact surface from j/f data, with its own passage geometry.
    Compact {
        /// The surface data and fins.
        surface: CompactSurface,
        /// Hydraulic diameter, m.
        hydraulic_diameter_m: f64,
        /// Free-flow area, m².
        free_flow_area_m2: f64,
        /// Total surface per metre of length, m²/m.
        area_per_length_m: f64,
    },
    /// Fixed value, W/(m²·K).
    Fixed(f64),
}

/// Validated stream.
#[derive(Debug, Clone)]
pub struct StreamSpec {
    /// Fluid.
    pub fluid: FluidChoice,
    /// Inlet, °C.
    pub inlet_c: f64,
    /// Mass flow, kg/s.
    pub mass_flow_kg_s: f64,
    /// Pressure, Pa (absolute).
    pub pressure_pa: f64,
    /// Fouling, m²·K/W.
    pub fouling_m2k_w: f64,
    /// Film model.
    pub film: FilmSpec,
    /// Absolute roughness, m.
    pub roughness_m: f64,
}

/// A valid case: everything needed to build and solve an exchanger.
#[derive(Debug, Clone)]
pub struct Case {
    /// Name (output folder).
    pub name: String,
    /// Arrangement.
    pub arrangement: Arrangement,
    /// Length, m.
    pub length_m: f64,
    /// Geometry.
    pub geometry: Geometry,
    /// Hot stream.
    pub hot: StreamSpec,
    /// Cold stream.
    pub cold: StreamSpec,
    /// Steady solver settings.
    pub solver: SteadySettings,
    /// Spatial scheme.
    pub scheme: crate::model::Scheme,
    /// Transient scenario, if the case has one.
    pub transient: Option<TransientSpec>,
    /// Legal but suspicious inputs.
    pub warnings: Vec<String>,
}

/// Metal heat capacities of a transient, per metre of exchanger length (reported in
/// transient.json).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
#[allow(non_snake_case)]
pub struct Storage {
    /// Separating wall, J/(m·K).
    pub wall_J_mK: f64,
    /// Fin metal of finned surfaces, at the wall's temperature, J/(m·K).
    pub fins_J_mK: f64,
    /// Outer pipe (shell) of a double pipe, J/(m·K).
    pub shell_J_mK: f64,
    /// The stream whose temperature the shell follows ("hot"/"cold"), if there is a shell.
    pub shell_with: Option<&'static str>,
    /// The shell's outer face: adiabatic (no heat loss to ambient is modelled).
    pub shell_outer_face: Option<&'static str>,
}

impl Storage {
    fn shell(&self) -> Option<(usize, f64)> {
        self.shell_with.map(|s| (usize::from(s == "cold"), self.shell_J_mK))
    }
}

/// A validated transient scenario.
#[derive(Debug, Clone)]
pub struct TransientSpec {
    /// Settings (cells from `[solver]`); the wall heat capacity is filled in by
    /// [`TransientSpec::settings_for`].
    pub settings: TransientSettings,
    /// Wall density × specific heat, J/(m³·K).
    pub wall_volumetric_heat_capacity: f64,
    /// Fin metal density × specific heat, J/(m³·K) (used where a surface has fins).
    pub fin_volumetric_heat_capacity: f64,
    /// Shell (outer pipe) wall thickness, m, and density × specific heat, J/(m³·K).
    pub shell: Option<(f64, f64)>,
    /// Response metrics start here, s (None: automatic).
    pub response_from_s: Option<f64>,
    /// Schedules; None = the stream's constant case value.
    pub hot_inlet_c: Option<Signal>,
    /// Hot flow schedule.
    pub hot_flow_kg_s: Option<Signal>,
    /// Cold inlet schedule.
    pub cold_inlet_c: Option<Signal>,
    /// Cold flow schedule.
    pub cold_flow_kg_s: Option<Signal>,
}

impl TransientSpec {
    /// Settings with the heat capacities per metre of this exchanger: its wall, the fins of
    /// either surface (each fin's volume is half its area × thickness), and the shell.
    pub fn settings_for(&self, ex: &crate::model::Exchanger, case: &Case) -> TransientSettings {
        let storage = self.storage(ex, case);
        TransientSettings { wall_heat_capacity_j_mk: storage.wall_J_mK + storage.fins_J_mK, shell: storage.shell(), ..self.settings.clone() }
    }

    /// The metal heat capacities per metre of exchanger length.
    pub fn storage(&self, ex: &crate::model::Exchanger, case: &Case) -> Storage {
        let fins: f64 = [&case.hot, &case.cold]
            .iter()
            .filter_map(|s| match &s.film {
                FilmSpec::Compact { surface, area_per_length_m, .. } => surface.fin.map(|fin| {
                    let t = match fin {
                        Fin::Straight { thickness_m, .. } | Fin::Annular { thickness_m, .. } => thickness_m,
                    };
                    area_per_length_m * surface.fin_area_fraction * t / 2.0
                }),
                _ => None,
            })
            .sum::<f64>()
            * self.fin_volumetric_heat_capacity;
        let shell = match (&case.geometry, self.shell) {
            (Geometry::DoublePipe { ds, tube_side, .. }, Some((t, rho_c))) => {
                let area = PI / 4.0 * ((ds + 2.0 * t).powi(2) - ds * ds);
                Some((if *tube_side == TubeSide::Hot { "cold" } else { "hot" }, area * rho_c))
            }
            _ => None,
        };
        Storage {
            wall_J_mK: self.wall_volumetric_heat_capacity * ex.wall.cross_section_m2(),
            fins_J_mK: fins,
            shell_J_mK: shell.map(|s| s.1).unwrap_or(0.0),
            shell_with: shell.map(|s| s.0),
            shell_outer_face: shell.map(|_| "adiabatic"),
        }
    }

    /// The inputs for an exchanger built from this case.
    pub fn inputs(&self, ex: &crate::model::Exchanger) -> Inputs {
        let base = Inputs::constant(ex);
        Inputs {
            hot_inlet_c: self.hot_inlet_c.clone().unwrap_or(base.hot_inlet_c),
            hot_flow_kg_s: self.hot_flow_kg_s.clone().unwrap_or(base.hot_flow_kg_s),
            cold_inlet_c: self.cold_inlet_c.clone().unwrap_or(base.cold_inlet_c),
            cold_flow_kg_s: self.cold_flow_kg_s.clone().unwrap_or(base.cold_flow_kg_s),
        }
    }
}

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
    match validate(&file, default_name, base_dir) {
        Ok(mut case) if problems.is_empty() => {
            let ex = case.build();
            let derived = derived_problems(&case, &ex);
            if !derived.is_empty() {
                return Err(invalid(derived));
            }
            case.warnings.extend(velocity_warnings(&ex));
            Ok(case)
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
                (shape.suggested.contains(&p.key) && p.message.starts_with("is missing"))
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
    let fail = |out: &mut Vec<Problem>, key: String, message: String| out.push(Problem { key, line: None, message });
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

/// Standard atmosphere, Pa: the default stream pressure.
const ATMOSPHERE_PA: f64 = 101_325.0;

struct Checker {
    problems: Vec<Problem>,
    warnings: Vec<String>,
}

impl Checker {
    fn fail(&mut self, key: &str, message: String) {
        self.problems.push(Problem { key: key.into(), line: None, message });
    }
    /// A finite value strictly above zero.
    fn positive(&mut self, key: &str, v: f64, unit: &str) -> f64 {
        if !(v.is_finite() && v > 0.0) {
            self.fail(key, format!("{v} {unit} is not valid: it must be a finite number above zero", v = num(v)));
        } else if v > 1e9 {
            self.fail(key, format!("{v} {unit} is implausibly large for any exchanger: check the units in the key name", v = num(v)));
        }
        v
    }
    fn required(&mut self, key: &str, v: Option<f64>, unit: &str, why: &str) -> f64 {
        match v {
            Some(v) => self.positive(key, v, unit),
            None => {
                self.fail(key, format!("is missing: give a value in {unit} ({why})"));
                f64::NAN
            }
        }
    }
    fn looks_like_mm(&mut self, key: &str, v: f64) {
        if v.is_finite() && v > 2.0 {
            self.warnings.push(format!("{key} = {v} m is very large: was it entered in millimetres? (keys ending _m are metres)", v = num(v)));
        }
    }
}

fn validate(f: &CaseFile, default_name: &str, base_dir: &Path) -> Result<Case, Vec<Problem>> {
    let mut c = Checker { problems: Vec::new(), warnings: Vec::new() };
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
    let transient = f.transient.as_ref().map(|t| transient(&mut c, t, f, &geometry, cells.max(1) as usize));
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
        transient,
        name,
        arrangement: f.arrangement,
        length_m,
        geometry,
        hot,
        cold,
        solver: SteadySettings { cells: cells as usize, tolerance, max_iterations: max_iterations as usize },
        scheme: match f.solver.scheme {
            None | Some(SchemeName::Trapezoidal) => crate::model::Scheme::Trapezoidal,
            Some(SchemeName::Upwind) => crate::model::Scheme::Upwind,
            Some(SchemeName::Tvd) => crate::model::Scheme::Tvd,
        },
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

fn signal(c: &mut Checker, key: &str, s: &SignalFile, before: f64, duration: f64, positive_only: bool) -> Signal {
    let need = |c: &mut Checker, name: &str, v: Option<f64>| -> f64 {
        match v {
            Some(x) if x.is_finite() => x,
            Some(x) => {
                c.fail(&format!("{key}.{name}"), format!("{x} is not a finite number", x = num(x)));
                0.0
            }
            None => {
                c.fail(&format!("{key}.{name}"), format!("is missing: kind = \"{:?}\" needs it", s.kind).to_lowercase());
                0.0
            }
        }
    };
    let check_value = |c: &mut Checker, name: &str, v: f64| {
        if positive_only && v < 0.0 {
            c.fail(&format!("{key}.{name}"), format!("{v} is not valid: a mass flow cannot be negative (0 stops the flow)", v = num(v)));
        }
    };
    let check_time = |c: &mut Checker, name: &str, t: f64| {
        if !(0.0..=duration).contains(&t) {
            c.warnings.push(format!("{key}.{name} = {t} s lies outside the simulated 0 … {duration} s", t = num(t), duration = num(duration)));
        }
    };
    match s.kind {
        SignalKind::Step => {
            let (t, to) = (need(c, "time_s", s.time_s), need(c, "to", s.to));
            check_time(c, "time_s", t);
            check_value(c, "to", to);
            Signal::Step { time_s: t, before, after: to }
        }
        SignalKind::Ramp => {
            let (a, b, to) = (need(c, "start_s", s.start_s), need(c, "end_s", s.end_s), need(c, "to", s.to));
            if b <= a {
                c.fail(&format!("{key}.end_s"), format!("{b} s must be after start_s = {a} s", b = num(b), a = num(a)));
            }
            check_value(c, "to", to);
            Signal::Ramp { start_s: a, end_s: b.max(a + 1e-9), from: before, to }
        }
        SignalKind::Table => {
            let (times, values) = (s.times_s.clone().unwrap_or_default(), s.values.clone().unwrap_or_default());
            if times.is_empty() || times.len() != values.len() {
                c.fail(
                    &format!("{key}.times_s"),
                    format!("times_s ({} entries) and values ({} entries) must be non-empty and of equal length", times.len(), values.len()),
                );
                return Signal::Constant(before);
            }
            if times.windows(2).any(|w| w[1] <= w[0]) || times.iter().chain(&values).any(|v| !v.is_finite()) {
                c.fail(&format!("{key}.times_s"), "times must be finite and strictly increasing, values finite".into());
            }
            for v in &values {
                check_value(c, "values", *v);
            }
            Signal::Table(times.into_iter().zip(values).collect())
        }
    }
}

/// Most rows in timeseries.csv (one per output time): about 40 MB of CSV.
pub const TIMESERIES_MAX_ROWS: usize = 200_000;
/// Most profile snapshots in one run.
pub const SNAPSHOTS_MAX: usize = 1_000;
/// Most snapshot rows (snapshots × faces) in snapshots.csv: about 150 MB of CSV, 60 MB held.
pub const SNAPSHOT_MAX_ROWS: usize = 2_000_000;

/// Snapshot times: within the run, not too many, and a warning for those taken at the
/// nearest output time rather than at the time given.
fn snapshot_checks(c: &mut Checker, times: &[f64], duration: f64, interval: f64, cells: usize) {
    let key = "transient.snapshot_times_s";
    let outside: Vec<String> = times.iter().filter(|t| !(t.is_finite() && **t >= 0.0 && **t <= duration * (1.0 + 1e-12))).map(|t| num(*t)).collect();
    if !outside.is_empty() {
        c.fail(key, format!("{} s outside the run: give times from 0 to duration_s = {} s", list(&outside), num(duration)));
    }
    if times.len() > SNAPSHOTS_MAX {
        c.fail(key, format!("{} snapshots asked for, more than the {SNAPSHOTS_MAX} hxgrid keeps: give fewer times", times.len()));
    } else if times.len() * (cells + 1) > SNAPSHOT_MAX_ROWS {
        c.fail(
            key,
            format!(
                "{} snapshots of {} faces would write {} rows, more than the {SNAPSHOT_MAX_ROWS} hxgrid writes: give at most {} snapshot times or fewer cells",
                times.len(),
                cells + 1,
                times.len() * (cells + 1),
                SNAPSHOT_MAX_ROWS / (cells + 1)
            ),
        );
    }
    if outside.is_empty() && interval.is_finite() && interval > 0.0 {
        let moved: Vec<String> = times
            .iter()
            .filter_map(|&t| {
                let at = ((t / interval).round() * interval).min(duration);
                ((at - t).abs() > 1e-9 * duration.max(1.0)).then(|| format!("{} s → {} s", num(t), num(at)))
            })
            .collect();
        if !moved.is_empty() {
            c.warnings.push(format!(
                "{key}: snapshots are taken at output times (every output_interval_s = {} s), so these move to the nearest one: {}",
                num(interval),
                list(&moved)
            ));
        }
    }
}

/// At most ten items of a list, then a count of the rest.
fn list(items: &[String]) -> String {
    let shown = items.iter().take(10).cloned().collect::<Vec<_>>().join(", ");
    if items.len() > 10 {
        format!("{shown} and {} more", items.len() - 10)
    } else {
        shown
    }
}

fn transient(c: &mut Checker, t: &TransientFile, f: &CaseFile, geometry: &Geometry, cells: usize) -> TransientSpec {
    let duration = c.positive("transient.duration_s", t.duration_s, "s");
    let interval = t.output_interval_s.unwrap_or((duration / 1000.0).max(1e-6));
    if !(interval > 0.0 && interval <= duration) {
        c.fail(
            "transient.output_interval_s",
            format!(
                "{interval} s is not valid: use a positive interval no longer than duration_s = {duration} s",
                interval = num(interval),
                duration = num(duration)
            ),
        );
    }
    if duration / interval > TIMESERIES_MAX_ROWS as f64 {
        c.fail(
            "transient.output_interval_s",
            format!(
                "{} s gives {} output rows over duration_s = {} s, more than the {TIMESERIES_MAX_ROWS} hxgrid writes: use an interval of at least {} s",
                num(interval),
                num((duration / interval).floor() + 1.0),
                num(duration),
                num(duration / TIMESERIES_MAX_ROWS as f64)
            ),
        );
    }
    let tolerance = t.tolerance_K.unwrap_or(1e-4);
    if !(tolerance > 0.0 && tolerance < 10.0) {
        c.fail(
            "transient.tolerance_K",
            format!("{tolerance} K is not valid: use a small positive temperature tolerance, e.g. 1e-4", tolerance = num(tolerance)),
        );
    }
    let initial = match (t.initial, t.initial_temperature_C) {
        (None | Some(InitialName::Steady), None) => Initial::Steady,
        (None | Some(InitialName::Steady), Some(_)) => {
            c.fail("transient.initial_temperature_C", "is only used with initial = \"uniform\": remove it, or set initial = \"uniform\"".into());
            Initial::Steady
        }
        (Some(InitialName::Uniform), Some(v)) if v.is_finite() => Initial::Uniform(v),
        (Some(InitialName::Uniform), _) => {
            c.fail("transient.initial_temperature_C", "is missing: initial = \"uniform\" needs the starting temperature of fluids and wall in °C".into());
            Initial::Uniform(20.0)
        }
    };
    let rho = c.positive("transient.wall_density_kg_m3", t.wall_density_kg_m3, "kg/m³");
    let cw = c.positive("transient.wall_specific_heat_J_kgK", t.wall_specific_heat_J_kgK, "J/(kg·K)");
    let material = |c: &mut Checker, d: Option<f64>, cp: Option<f64>, what: &str| {
        let d = d.map(|v| c.positive(&format!("transient.{what}_density_kg_m3"), v, "kg/m³")).unwrap_or(rho);
        let cp = cp.map(|v| c.positive(&format!("transient.{what}_specific_heat_J_kgK"), v, "J/(kg·K)")).unwrap_or(cw);
        d * cp
    };
    let fin_rho_c = material(c, t.fin_density_kg_m3, t.fin_specific_heat_J_kgK, "fin");
    let shell_rho_c = material(c, t.shell_density_kg_m3, t.shell_specific_heat_J_kgK, "shell");
    let shell = match (t.shell_thickness_m, geometry) {
        (None, _) => {
            if t.shell_density_kg_m3.is_some() || t.shell_specific_heat_J_kgK.is_some() {
                c.fail("transient.shell_thickness_m", "is missing: the shell material is given, so give the outer pipe's wall thickness in m".into());
            }
            None
        }
        (Some(th), Geometry::DoublePipe { .. }) => Some((c.positive("transient.shell_thickness_m", th, "m"), shell_rho_c)),
        (Some(_), _) => {
            c.fail("transient.shell_thickness_m", "applies to a double pipe only (the outer pipe around the annulus): remove it".into());
            None
        }
    };
    let integrator = match t.integrator {
        Some(IntegratorName::Explicit) => Integrator::Explicit,
        // Auto: implicit. Wall–fluid exchange and short cells make most exchanger
        // transients stiff; the benchmark shows BDF2 ahead even for coarse liquid cases.
        None | Some(IntegratorName::Auto) | Some(IntegratorName::Implicit) => Integrator::Implicit,
    };
    if let Geometry::PlaneWall { hot, cold, .. } = geometry {
        for (side, (area, _), film) in [("hot", hot, f.hot.film), ("cold", cold, f.cold.film)] {
            if area.is_none() && film != FilmName::Compact {
                c.fail(
                    &format!("geometry.{side}_flow_area_m2"),
                    "is missing: a transient needs each stream's flow area to know how much fluid the exchanger holds".into(),
                );
            }
        }
    }
    let snapshots = t.snapshot_times_s.clone().unwrap_or_else(|| (0..=4).map(|k| k as f64 * duration / 4.0).collect());
    snapshot_checks(c, &snapshots, duration, interval, cells);
    let mut sig =
        |name: &str, s: &Option<SignalFile>, before: f64, flow: bool| s.as_ref().map(|s| signal(c, &format!("transient.{name}"), s, before, duration, flow));
    let hot_inlet_c = sig("hot_inlet_temperature_C", &t.hot_inlet_temperature_C, f.hot.inlet_temperature_C, false);
    let hot_flow_kg_s = sig("hot_mass_flow_kg_s", &t.hot_mass_flow_kg_s, f.hot.mass_flow_kg_s, true);
    let cold_inlet_c = sig("cold_inlet_temperature_C", &t.cold_inlet_temperature_C, f.cold.inlet_temperature_C, false);
    let cold_flow_kg_s = sig("cold_mass_flow_kg_s", &t.cold_mass_flow_kg_s, f.cold.mass_flow_kg_s, true);
    for (side, flow, film) in [("hot", &hot_flow_kg_s, f.hot.film), ("cold", &cold_flow_kg_s, f.cold.film)] {
        if film == FilmName::Fixed && flow.as_ref().is_some_and(|s| s.range().0 <= 0.0) {
            c.warnings.push(format!(
                "{side} stream: its flow stops in the schedule, but film = \"fixed\" keeps the full film coefficient at zero flow; for a lost-flow study give a film model that follows the flow (see the README, \"At zero flow\")"
            ));
        }
    }
    TransientSpec {
        settings: TransientSettings {
            cells,
            duration_s: duration,
            output_interval_s: interval,
            integrator,
            atol_k: tolerance,
            rtol: 1e-6,
            max_steps: 5_000_000,
            initial,
            wall_heat_capacity_j_mk: 0.0,
            shell: None,
            snapshot_times_s: snapshots,
        },
        wall_volumetric_heat_capacity: rho * cw,
        fin_volumetric_heat_capacity: fin_rho_c,
        shell,
        response_from_s: match t.response_from_s {
            Some(r) if !(r >= 0.0 && r < duration) => {
                c.fail(
                    "transient.response_from_s",
                    format!("{r} s is not valid: give a time from 0 up to (not including) duration_s = {duration} s", r = num(r), duration = num(duration)),
                );
                None
            }
            v => v,
        },
        hot_inlet_c,
        hot_flow_kg_s,
        cold_inlet_c,
        cold_flow_kg_s,
    }
}

/// Keys of `[geometry]` that belong to each kind (anything else given is an error).
fn geometry_keys(g: &GeometryFile) -> Vec<(&'static str, bool)> {
    vec![
        ("tube_inner_diameter_m", g.tube_inner_diameter_m.is_some()),
        ("tube_outer_diameter_m", g.tube_outer_diameter_m.is_some()),
        ("shell_inner_diameter_m", g.shell_inner_diameter_m.is_some()),
        ("tube_side", g.tube_side.is_some()),
        ("annulus_heat_diameter", g.annulus_heat_diameter.is_some()),
        ("layout", g.layout.is_some()),
        ("transverse_pitch_m", g.transverse_pitch_m.is_some()),
        ("longitudinal_pitch_m", g.longitudinal_pitch_m.is_some()),
        ("rows", g.rows.is_some()),
        ("tubes_per_row", g.tubes_per_row.is_some()),
        ("tube_length_m", g.tube_length_m.is_some()),
        ("tube_circuits", g.tube_circuits.is_some()),
        ("area_per_length_m2_m", g.area_per_length_m2_m.is_some()),
        ("wall_thickness_m", g.wall_thickness_m.is_some()),
        ("hot_flow_area_m2", g.hot_flow_area_m2.is_some()),
        ("hot_hydraulic_diameter_m", g.hot_hydraulic_diameter_m.is_some()),
        ("cold_flow_area_m2", g.cold_flow_area_m2.is_some()),
        ("cold_hydraulic_diameter_m", g.cold_hydraulic_diameter_m.is_some()),
    ]
}

fn geometry(c: &mut Checker, f: &CaseFile) -> Geometry {
    let g = &f.geometry;
    let k = c.positive("geometry.wall_conductivity_W_mK", g.wall_conductivity_W_mK, "W/(m·K)");
    let (kind_name, allowed): (&str, &[&str]) = match g.kind {
        GeometryKind::DoublePipe => {
            ("double_pipe", &["tube_inner_diameter_m", "tube_outer_diameter_m", "shell_inner_diameter_m", "tube_side", "annulus_heat_diameter"])
        }
        GeometryKind::PlaneWall => (
            "plane_wall",
            &["area_per_length_m2_m", "wall_thickness_m", "hot_flow_area_m2", "hot_hydraulic_diameter_m", "cold_flow_area_m2", "cold_hydraulic_diameter_m"],
        ),
        GeometryKind::TubeBank => (
            "tube_bank",
            &[
                "tube_inner_diameter_m",
                "tube_outer_diameter_m",
                "tube_side",
                "layout",
                "transverse_pitch_m",
                "longitudinal_pitch_m",
                "rows",
                "tubes_per_row",
                "tube_length_m",
                "tube_circuits",
            ],
        ),
    };
    for (key, given) in geometry_keys(g) {
        if given && !allowed.contains(&key) {
            c.fail(&format!("geometry.{key}"), format!("does not apply to kind = \"{kind_name}\": remove it (keys for this kind: {})", allowed.join(", ")));
        }
    }
    let tube_side = |c: &mut Checker| match g.tube_side {
        Some(SideName::Hot) => TubeSide::Hot,
        Some(SideName::Cold) => TubeSide::Cold,
        None => {
            c.fail("geometry.tube_side", "is missing: say which stream flows in the tubes, \"hot\" or \"cold\"".into());
            TubeSide::Hot
        }
    };
    let tubes = |c: &mut Checker, why: &str| {
        let di = c.required("geometry.tube_inner_diameter_m", g.tube_inner_diameter_m, "m", why);
        let d_o = c.required("geometry.tube_outer_diameter_m", g.tube_outer_diameter_m, "m", why);
        c.looks_like_mm("geometry.tube_inner_diameter_m", di);
        c.looks_like_mm("geometry.tube_outer_diameter_m", d_o);
        if di >= d_o {
            c.fail(
                "geometry.tube_inner_diameter_m",
                format!("{di} m must be smaller than geometry.tube_outer_diameter_m = {d_o} m (the wall needs a thickness)", di = num(di), d_o = num(d_o)),
            );
        }
        (di, d_o)
    };
    let count = |c: &mut Checker, key: &str, v: Option<i64>, why: &str| -> usize {
        match v {
            Some(n) if (1..=1_000_000).contains(&n) => n as usize,
            Some(n) => {
                c.fail(key, format!("{n} is not valid: use a whole number from 1 to 1 000 000"));
                1
            }
            None => {
                c.fail(key, format!("is missing: give a whole number ({why})"));
                1
            }
        }
    };
    match g.kind {
        GeometryKind::DoublePipe => {
            let why = "needed for a double pipe";
            let (di, d_o) = tubes(c, why);
            let ds = c.required("geometry.shell_inner_diameter_m", g.shell_inner_diameter_m, "m", why);
            c.looks_like_mm("geometry.shell_inner_diameter_m", ds);
            if d_o >= ds {
                c.fail(
                    "geometry.shell_inner_diameter_m",
                    format!("{ds} m must be larger than geometry.tube_outer_diameter_m = {d_o} m (the annulus needs a gap)", ds = num(ds), d_o = num(d_o)),
                );
            }
            let annulus_equivalent_diameter = g.annulus_heat_diameter == Some(AnnulusDiameter::Equivalent);
            Geometry::DoublePipe { di, d_o, ds, k, tube_side: tube_side(c), annulus_equivalent_diameter }
        }
        GeometryKind::PlaneWall => {
            let why = "needed for a plane wall";
            let area = c.required("geometry.area_per_length_m2_m", g.area_per_length_m2_m, "m²/m", why);
            let thickness = c.required("geometry.wall_thickness_m", g.wall_thickness_m, "m", why);
            let mut channel = |side: &str, film: FilmName, area: Option<f64>, dh: Option<f64>| {
                let needs = matches!(film, FilmName::Gnielinski | FilmName::DittusBoelter | FilmName::SiederTate | FilmName::Pitla);
                let why = "needed when the film coefficient is computed from the flow";
                let a_key = format!("geometry.{side}_flow_area_m2");
                let d_key = format!("geometry.{side}_hydraulic_diameter_m");
                let a = match (area, needs) {
                    (None, true) => Some(c.required(&a_key, None, "m²", why)),
                    (Some(v), _) => Some(c.positive(&a_key, v, "m²")),
                    (None, false) => None,
                };
                let d = match (dh, needs) {
                    (None, true) => Some(c.required(&d_key, None, "m", why)),
                    (Some(v), _) => Some(c.positive(&d_key, v, "m")),
                    (None, false) => None,
                };
                if let Some(d) = d {
                    c.looks_like_mm(&d_key, d);
                }
                (a, d)
            };
            let hot = channel("hot", f.hot.film, g.hot_flow_area_m2, g.hot_hydraulic_diameter_m);
            let cold = channel("cold", f.cold.film, g.cold_flow_area_m2, g.cold_hydraulic_diameter_m);
            Geometry::PlaneWall { area_per_length: area, thickness, k, hot, cold }
        }
        GeometryKind::TubeBank => {
            let why = "needed for a tube bank";
            let (di, d_o) = tubes(c, why);
            let st = c.required("geometry.transverse_pitch_m", g.transverse_pitch_m, "m", why);
            let sl = c.required("geometry.longitudinal_pitch_m", g.longitudinal_pitch_m, "m", why);
            if st <= d_o {
                c.fail("geometry.transverse_pitch_m", format!("{} m must exceed the tube outer diameter {} m (tubes cannot overlap)", num(st), num(d_o)));
            }
            let layout = match g.layout {
                Some(LayoutName::Aligned) => Layout::Aligned,
                Some(LayoutName::Staggered) => Layout::Staggered,
                None => {
                    c.fail("geometry.layout", "is missing: \"aligned\" or \"staggered\"".into());
                    Layout::Aligned
                }
            };
            if layout == Layout::Aligned && sl <= d_o {
                c.fail("geometry.longitudinal_pitch_m", format!("{} m must exceed the tube outer diameter {} m in an aligned bank", num(sl), num(d_o)));
            }
            // Staggered: neighbours in adjacent rows sit at the diagonal pitch
            // S_D = √(S_L² + (S_T/2)²), which must exceed D for the tubes not to overlap.
            let diagonal = (sl * sl + 0.25 * st * st).sqrt();
            if layout == Layout::Staggered && diagonal <= d_o {
                c.fail(
                    "geometry.longitudinal_pitch_m",
                    format!(
                        "{} m puts tubes of adjacent rows {} m apart (diagonal pitch √(S_L² + (S_T/2)²)), less than the tube outer diameter {} m: the tubes would overlap",
                        num(sl),
                        num(diagonal),
                        num(d_o)
                    ),
                );
            }
            let rows = count(c, "geometry.rows", g.rows, why);
            let tubes_per_row = count(c, "geometry.tubes_per_row", g.tubes_per_row, why);
            let tube_length = c.required("geometry.tube_length_m", g.tube_length_m, "m", why);
            let circuits = match g.tube_circuits {
                None => tubes_per_row,
                v => count(c, "geometry.tube_circuits", v, why),
            };
            let tubes = rows * tubes_per_row;
            if circuits > tubes {
                c.fail(
                    "geometry.tube_circuits",
                    format!("{circuits} circuits but the bank has only {tubes} tubes (rows × tubes_per_row): give at most {tubes}"),
                );
            } else if tubes > 0 && circuits > 0 && tubes % circuits != 0 {
                c.fail(
                    "geometry.tube_circuits",
                    format!("{circuits} circuits do not divide the {tubes} tubes (rows × tubes_per_row) evenly: every circuit must hold the same number of tubes in series"),
                );
            }
            let bank = TubeBank {
                outer_diameter_m: d_o,
                transverse_pitch_m: st,
                longitudinal_pitch_m: sl,
                layout,
                rows,
                frontal_area_m2: tubes_per_row as f64 * st * tube_length,
            };
            Geometry::TubeBank { di, k, tube_side: tube_side(c), bank, tubes_per_row, tube_length, circuits }
        }
    }
}

/// Read a compact-surface data file: `reynolds,colburn_j,fanning_f` rows, Re increasing.
fn compact_data(path: &Path) -> Result<Vec<(f64, f64, f64)>, String> {
    let text = super::read::text_file(path, super::read::DATA_MAX_BYTES, Some(super::read::DATA_MAX_LINES)).map_err(|e| format!("{} {e}", path.display()))?;
    let mut rows: Vec<(f64, f64, f64)> = Vec::new();
    let mut header = false;
    for (i, raw) in text.lines().enumerate() {
        let line = raw.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        if !header {
            if line.replace(' ', "") != "reynolds,colburn_j,fanning_f" {
                return Err(format!("{}, line {}: the header must be 'reynolds,colburn_j,fanning_f'", path.display(), i + 1));
            }
            header = true;
            continue;
        }
        let v: Vec<f64> = line.split(',').filter_map(|x| x.trim().parse::<f64>().ok()).collect();
        if v.len() != 3 || v.iter().any(|x| !(x.is_finite() && *x > 0.0)) {
            return Err(format!("{}, line {}: need three positive numbers (Re, j, f), got {}", path.display(), i + 1, crate::text::quote(line, 40)));
        }
        if rows.last().is_some_and(|r| v[0] <= r.0) {
            return Err(format!("{}, line {}: Reynolds numbers must increase", path.display(), i + 1));
        }
        rows.push((v[0], v[1], v[2]));
    }
    if rows.len() < 2 {
        return Err(format!("{}: at least two data rows are needed", path.display()));
    }
    Ok(rows)
}

/// Largest relative roughness ε/D accepted (the end of the Moody chart).
pub const MAX_RELATIVE_ROUGHNESS: f64 = 0.05;

/// The hydraulic diameter of a stream's passage, where the geometry gives one.
fn hydraulic_diameter(geometry: &Geometry, side: &str, film: &FilmSpec) -> Option<f64> {
    if let FilmSpec::Compact { hydraulic_diameter_m, .. } = film {
        return Some(*hydraulic_diameter_m);
    }
    let in_tubes = geometry.tube_side().map(|t| (t == TubeSide::Hot) == (side == "hot"));
    match (geometry, in_tubes) {
        (Geometry::DoublePipe { di, .. }, Some(true)) | (Geometry::TubeBank { di, .. }, Some(true)) => Some(*di),
        (Geometry::DoublePipe { d_o, ds, .. }, Some(false)) => Some(ds - d_o),
        (Geometry::PlaneWall { hot, cold, .. }, _) => {
            if side == "hot" {
                hot.1
            } else {
                cold.1
            }
        }
        _ => None,
    }
}

fn film_spec(c: &mut Checker, side: &str, s: &StreamFile, base_dir: &Path, geometry: &Geometry) -> FilmSpec {
    let key = |k: &str| format!("{side}.{k}");
    let is_tube_side = geometry.tube_side().map(|t| (t == TubeSide::Hot) == (side == "hot"));
    let internal = matches!(s.film, FilmName::Gnielinski | FilmName::DittusBoelter | FilmName::SiederTate | FilmName::Pitla);
    if s.film_coefficient_W_m2K.is_some() && s.film != FilmName::Fixed {
        c.fail(&key("film_coefficient_W_m2K"), "is only used with film = \"fixed\": remove it, or set film = \"fixed\"".into());
    }
    if s.compact.is_some() && s.film != FilmName::Compact {
        c.fail(&key("compact"), "is only used with film = \"compact\": remove the table, or set film = \"compact\"".into());
    }
    if !internal && (s.laminar.is_some() || s.wall_correction.is_some() || s.transition.is_some()) {
        c.fail(
            &key(if s.laminar.is_some() {
                "laminar"
            } else if s.wall_correction.is_some() {
                "wall_correction"
            } else {
                "transition"
            }),
            "applies to internal-flow films (gnielinski, dittus_boelter, sieder_tate, pitla) only: remove it".into(),
        );
    }
    if let (Geometry::TubeBank { .. }, Some(false)) = (geometry, is_tube_side) {
        if internal {
            c.fail(
                &key("film"),
                format!("\"{:?}\" is for flow inside channels; the outside of a tube bank needs film = \"zukauskas\", \"compact\" or \"fixed\"", s.film)
                    .to_lowercase(),
            );
        }
    }
    match s.film {
        FilmName::Fixed => FilmSpec::Fixed(match s.film_coefficient_W_m2K {
            Some(h) => c.positive(&key("film_coefficient_W_m2K"), h, "W/(m²·K)"),
            None => {
                c.fail(&key("film_coefficient_W_m2K"), "is missing: film = \"fixed\" needs a coefficient in W/(m²·K)".into());
                f64::NAN
            }
        }),
        FilmName::Zukauskas => {
            if !matches!((geometry, is_tube_side), (Geometry::TubeBank { .. }, Some(false))) {
                c.fail(
                    &key("film"),
                    "\"zukauskas\" is for the outside of a tube bank: use geometry kind = \"tube_bank\" with this stream outside the tubes".into(),
                );
            }
            FilmSpec::Zukauskas
        }
        FilmName::Compact => match &s.compact {
            None => {
                c.fail(&key("compact"), format!("is missing: film = \"compact\" needs a [{side}.compact] table (data_file, hydraulic_diameter_m, free_flow_area_m2, area_per_length_m2_m, fin, …)"));
                FilmSpec::Fixed(f64::NAN)
            }
            Some(cf) => {
                let ck = |k: &str| format!("{side}.compact.{k}");
                let data = match compact_data(&base_dir.join(&cf.data_file)) {
                    Ok(d) => d,
                    Err(e) => {
                        c.fail(&ck("data_file"), e);
                        vec![(1.0, 1.0, 1.0), (2.0, 1.0, 1.0)]
                    }
                };
                let dh = c.positive(&ck("hydraulic_diameter_m"), cf.hydraulic_diameter_m, "m");
                let a_ff = c.positive(&ck("free_flow_area_m2"), cf.free_flow_area_m2, "m²");
                let area = c.positive(&ck("area_per_length_m2_m"), cf.area_per_length_m2_m, "m²/m");
                let fin_needed = |c: &mut Checker, k: &str, v: Option<f64>| c.required(&ck(k), v, "m or W/(m·K)", "needed for the fin efficiency");
                let (fin, fraction) = match cf.fin {
                    FinName::None => (None, 0.0),
                    kind => {
                        let fraction = cf.fin_area_fraction.unwrap_or(f64::NAN);
                        if !(fraction > 0.0 && fraction < 1.0) {
                            c.fail(
                                &ck("fin_area_fraction"),
                                format!(
                                    "{} is not valid: give the fin share of this side's area, between 0 and 1",
                                    cf.fin_area_fraction.map(|v| v.to_string()).unwrap_or_else(|| "missing".into())
                                ),
                            );
                        }
                        let t = fin_needed(c, "fin_thickness_m", cf.fin_thickness_m);
                        let kf = fin_needed(c, "fin_conductivity_W_mK", cf.fin_conductivity_W_mK);
                        let fin = if kind == FinName::Straight {
                            Fin::Straight { length_m: fin_needed(c, "fin_length_m", cf.fin_length_m), thickness_m: t, conductivity_w_mk: kf }
                        } else {
                            let r1 = fin_needed(c, "fin_root_radius_m", cf.fin_root_radius_m);
                            let r2 = fin_needed(c, "fin_tip_radius_m", cf.fin_tip_radius_m);
                            if r2 <= r1 {
                                c.fail(&ck("fin_tip_radius_m"), format!("{r2} m must exceed fin_root_radius_m = {r1} m"));
                            }
                            Fin::Annular { root_radius_m: r1, tip_radius_m: r2, thickness_m: t, conductivity_w_mk: kf }
                        };
                        (Some(fin), fraction)
                    }
                };
                FilmSpec::Compact {
                    surface: CompactSurface { data, fin, fin_area_fraction: fraction },
                    hydraulic_diameter_m: dh,
                    free_flow_area_m2: a_ff,
                    area_per_length_m: area,
                }
            }
        },
        FilmName::Gnielinski | FilmName::DittusBoelter | FilmName::SiederTate | FilmName::Pitla => FilmSpec::Internal(InternalFlow {
            turbulent: match s.film {
                FilmName::DittusBoelter => Turbulent::DittusBoelter,
                FilmName::SiederTate => Turbulent::SiederTate,
                FilmName::Pitla => Turbulent::Pitla,
                _ => Turbulent::Gnielinski,
            },
            laminar: match s.laminar {
                None | Some(LaminarName::FullyDeveloped) => Laminar::FullyDevelopedT,
                Some(LaminarName::FullyDevelopedFlux) => Laminar::FullyDevelopedH,
                Some(LaminarName::Hausen) => Laminar::Hausen,
                Some(LaminarName::SiederTate) => Laminar::SiederTate,
            },
            wall_correction: match s.wall_correction {
                None | Some(WallCorrectionName::None) => WallCorrection::None,
                Some(WallCorrectionName::Viscosity) => WallCorrection::Viscosity,
                Some(WallCorrectionName::GasTemperature) => WallCorrection::GasTemperature,
            },
            transition: match s.transition {
                None | Some(TransitionName::Blend) => Transition::Blend,
                Some(TransitionName::None) => Transition::None,
            },
        }),
    }
}

fn stream(c: &mut Checker, side: &str, s: &StreamFile, base_dir: &Path, geometry: &Geometry) -> StreamSpec {
    let key = |k: &str| format!("{side}.{k}");
    let inlet_c = s.inlet_temperature_C;
    if !inlet_c.is_finite() || inlet_c <= -273.15 || inlet_c > 5000.0 {
        c.fail(
            &key("inlet_temperature_C"),
            format!("{inlet_c} °C is not valid: give a temperature above −273.15 °C and below 5000 °C (°C, not K?)", inlet_c = num(inlet_c)),
        );
    }
    let mass_flow_kg_s = c.positive(&key("mass_flow_kg_s"), s.mass_flow_kg_s, "kg/s");
    let fouling_m2k_w = s.fouling_m2K_W.unwrap_or(0.0);
    if !(fouling_m2k_w.is_finite() && (0.0..=1.0).contains(&fouling_m2k_w)) {
        c.fail(
            &key("fouling_m2K_W"),
            format!(
                "{fouling_m2k_w} m²K/W is not valid: use 0 (clean) or a positive resistance, typically 0.0001–0.001 (at most 1)",
                fouling_m2k_w = num(fouling_m2k_w)
            ),
        );
    } else if fouling_m2k_w > 0.01 {
        c.warnings.push(format!(
            "{side}.fouling_m2K_W = {fouling_m2k_w} m²K/W is far above tabulated values (≤ 0.002): check the units",
            fouling_m2k_w = num(fouling_m2k_w)
        ));
    }
    let film = film_spec(c, side, s, base_dir, geometry);
    let roughness_m = s.roughness_m.unwrap_or(0.0);
    if !(roughness_m.is_finite() && roughness_m >= 0.0) {
        c.fail(
            &key("roughness_m"),
            format!(
                "{roughness_m} m is not valid: use 0 (smooth) or a positive absolute roughness, e.g. 4.5e-5 for commercial steel",
                roughness_m = num(roughness_m)
            ),
        );
    }
    // Relative roughness above about 0.05 is beyond every friction chart (Moody's ends there;
    // Churchill's formula even turns back, giving less friction for a rougher wall).
    if let Some(d) = hydraulic_diameter(geometry, side, &film).filter(|d| d.is_finite() && *d > 0.0) {
        if roughness_m.is_finite() && roughness_m / d > MAX_RELATIVE_ROUGHNESS {
            c.fail(
                &key("roughness_m"),
                format!(
                    "{} m is {} of the hydraulic diameter {} m, beyond the friction charts (ε/D ≤ {MAX_RELATIVE_ROUGHNESS}): check the units (commercial steel is about 4.5e-5 m)",
                    num(roughness_m),
                    num(roughness_m / d),
                    num(d)
                ),
            );
        }
    }
    let fluid = fluid_choice(c, side, s, base_dir);
    // Pressure: given, else the table's own pressure, else one atmosphere.
    let table_pressure = match &fluid {
        Some(FluidChoice::Table(t)) if !t.is_ideal_gas() => t.table_pressure_pa(),
        _ => None,
    };
    let pressure_pa = match (s.pressure_bar_abs, table_pressure) {
        (Some(p), tp) => {
            let p = c.positive(&key("pressure_bar_abs"), p, "bar") * 1e5;
            if let Some(tp) = tp {
                if p.is_finite() && ((p - tp) / tp).abs() > 0.005 {
                    c.fail(
                        &key("pressure_bar_abs"),
                        format!("{:.4} bar does not match fluid \"{}\", tabulated at {:.4} bar: set pressure_bar_abs = {} or omit it, or choose the table for your pressure", p * 1e-5, s.fluid, tp * 1e-5, num(tp * 1e-5)),
                    );
                }
            }
            p
        }
        (None, Some(tp)) => tp,
        (None, None) => ATMOSPHERE_PA,
    };
    let fluid = fluid.unwrap_or(FluidChoice::Constant(Props { density: 1.0, cp: 1.0, viscosity: 1.0, conductivity: 1.0 }));
    if pressure_pa.is_finite() && pressure_pa > 0.0 && inlet_c.is_finite() && inlet_c > -273.15 {
        check_inlet(c, side, &fluid, pressure_pa, inlet_c);
    }
    StreamSpec { fluid, inlet_c, mass_flow_kg_s, pressure_pa, fouling_m2k_w, film, roughness_m }
}

/// Closest name by edit distance, for "did you mean".
pub fn closest<'a>(word: &str, options: &'a [String]) -> Option<&'a str> {
    fn distance(a: &str, b: &str) -> usize {
        let (a, b): (Vec<char>, Vec<char>) = (a.chars().collect(), b.chars().collect());
        let mut prev: Vec<usize> = (0..=b.len()).collect();
        for i in 1..=a.len() {
            let mut cur = vec![i; b.len() + 1];
            for j in 1..=b.len() {
                let sub = prev[j - 1] + usize::from(a[i - 1] != b[j - 1]);
                cur[j] = sub.min(prev[j] + 1).min(cur[j - 1] + 1);
            }
            prev = cur;
        }
        prev[b.len()]
    }
    let w = word.to_lowercase();
    if w.len() >= 3 {
        if let Some(o) = options.iter().find(|o| o.to_lowercase().starts_with(&w)) {
            return Some(o.as_str());
        }
    }
    options.iter().map(|o| (distance(&w, &o.to_lowercase()), o)).filter(|(d, o)| *d <= 3.max(o.len() / 3)).min_by_key(|(d, _)| *d).map(|(_, o)| o.as_str())
}

fn fluid_choice(c: &mut Checker, side: &str, s: &StreamFile, base_dir: &Path) -> Option<FluidChoice> {
    let key = |k: &str| format!("{side}.{k}");
    if s.properties.is_some() && s.fluid != "constant" {
        c.fail(&key("properties"), format!("is only used with fluid = \"constant\" (fluid is {}): remove the table", crate::text::quote(&s.fluid, 40)));
    }
    if s.table_file.is_some() && s.fluid != "table" {
        c.fail(&key("table_file"), format!("is only used with fluid = \"table\" (fluid is {}): remove it", crate::text::quote(&s.fluid, 40)));
    }
    if s.phase.is_some() && s.fluid != "water" {
        c.fail(&key("phase"), format!("is only used with fluid = \"water\" (fluid is {}): remove it", crate::text::quote(&s.fluid, 40)));
    }
    match s.fluid.as_str() {
        "water" => Some(FluidChoice::Water(match s.phase {
            Some(PhaseName::Vapour) => WaterPhase::Vapour,
            None | Some(PhaseName::Liquid) => WaterPhase::Liquid,
        })),
        "constant" => match &s.properties {
            Some(p) => Some(FluidChoice::Constant(Props {
                density: c.positive(&key("properties.density_kg_m3"), p.density_kg_m3, "kg/m³"),
                cp: c.positive(&key("properties.specific_heat_J_kgK"), p.specific_heat_J_kgK, "J/(kg·K)"),
                viscosity: c.positive(&key("properties.viscosity_Pa_s"), p.viscosity_Pa_s, "Pa·s"),
                conductivity: c.positive(&key("properties.conductivity_W_mK"), p.conductivity_W_mK, "W/(m·K)"),
            })),
            None => {
                c.fail(&key("properties"), format!("is missing: fluid = \"constant\" needs a [{side}.properties] table with density_kg_m3, specific_heat_J_kgK, viscosity_Pa_s, conductivity_W_mK"));
                None
            }
        },
        "table" => match &s.table_file {
            Some(file) => match super::read::table(&base_dir.join(file)) {
                Ok(t) => Some(FluidChoice::Table(t)),
                Err(e) => {
                    c.fail(&key("table_file"), format!("{} is not a valid fluid table: {e}", crate::text::quote(file, 80)));
                    None
                }
            },
            None => {
                c.fail(&key("table_file"), "is missing: fluid = \"table\" needs table_file = \"path/to/table.csv\" (relative to the case file)".into());
                None
            }
        },
        name => match library::builtin_table(name) {
            Some(t) => Some(FluidChoice::Table(t)),
            None => {
                let names = library::names();
                let hint = closest(name, &names).map(|n| format!(" Did you mean \"{n}\"?")).unwrap_or_default();
                c.fail(
                    &key("fluid"),
                    format!("{} is not a known fluid.{hint} Valid: {} (list them with `hxgrid fluids`)", crate::text::quote(name, 40), names.join(", ")),
                );
                None
            }
        },
    }
}

fn check_inlet(c: &mut Checker, side: &str, fluid: &FluidChoice, pressure_pa: f64, inlet_c: f64) {
    if let FluidChoice::Water(phase) = fluid {
        if (0.000_611_657e6..=22.064e6).contains(&pressure_pa) && inlet_c.is_finite() {
            let t_sat = crate::fluid::water::saturation_temperature_c(pressure_pa);
            let p_sat_bar = crate::fluid::water::saturation_pressure_pa(inlet_c.min(373.9)) * 1e-5;
            match phase {
                WaterPhase::Liquid if inlet_c >= t_sat - 0.1 => {
                    c.fail(
                        &format!("{side}.pressure_bar_abs"),
                        format!(
                            "{:.4} bar is below the saturation pressure of water at the inlet temperature {inlet_c} °C ({p_sat_bar:.4} bar; at {:.4} bar water boils at {t_sat:.2} °C): raise pressure_bar_abs above {p_sat_bar:.3} bar for liquid water, or set phase = \"vapour\" for superheated steam",
                            pressure_pa * 1e-5,
                            pressure_pa * 1e-5, inlet_c = num(inlet_c)),
                    );
                    return;
                }
                WaterPhase::Vapour if inlet_c <= t_sat + 0.1 => {
                    c.fail(
                        &format!("{side}.inlet_temperature_C"),
                        format!("{inlet_c} °C is not superheated steam at {:.4} bar (saturation {t_sat:.2} °C): raise the temperature, lower the pressure, or use phase = \"liquid\"", pressure_pa * 1e-5, inlet_c = num(inlet_c)),
                    );
                    return;
                }
                _ => {}
            }
        }
    }
    let built = match fluid.build(pressure_pa) {
        Ok(f) => f,
        Err(e) => {
            c.fail(&format!("{side}.pressure_bar_abs"), format!("{e}"));
            return;
        }
    };
    let r = built.range();
    if inlet_c < r.min_c {
        c.fail(
            &format!("{side}.inlet_temperature_C"),
            format!(
                "{inlet_c} °C is below the lowest valid temperature {:.2} °C of {} (valid {:.2} … {:.2} °C)",
                r.min_c,
                built.name(),
                r.min_c,
                r.max_c,
                inlet_c = num(inlet_c)
            ),
        );
    } else if inlet_c > r.max_c {
        c.fail(
            &format!("{side}.inlet_temperature_C"),
            format!("{inlet_c} °C is above the valid range {:.2} … {:.2} °C of {}: {}", r.min_c, r.max_c, built.name(), r.reason, inlet_c = num(inlet_c)),
        );
    }
}

impl Case {
    /// Build the exchanger model (fluid tables are made here, once).
    pub fn build(&self) -> Exchanger {
        let l = self.length_m;
        let (wall, hot_channel, cold_channel, reference) = match &self.geometry {
            &Geometry::DoublePipe { di, d_o, ds, k, tube_side, annulus_equivalent_diameter } => {
                let tube = Channel::duct(PI * di * di / 4.0, di, PI * di, LaminarConstants::TUBE, l);
                let mut annulus = Channel::duct(PI * (ds * ds - d_o * d_o) / 4.0, ds - d_o, PI * d_o, LaminarConstants::annulus(d_o / ds), l);
                if annulus_equivalent_diameter {
                    annulus.heat_diameter_m = Some((ds * ds - d_o * d_o) / d_o);
                }
                let wall = Wall::Tube { inner_diameter_m: di, outer_diameter_m: d_o, conductivity_w_mk: k, tube_length_per_length: 1.0 };
                match tube_side {
                    TubeSide::Hot => (wall, tube, annulus, PI * d_o),
                    TubeSide::Cold => (wall, annulus, tube, PI * d_o),
                }
            }
            Geometry::PlaneWall { area_per_length, thickness, k, hot, cold } => {
                // Laminar: parallel plates heated on one side, the other insulated.
                let channel = |(a, d): (Option<f64>, Option<f64>)| Channel {
                    flow_area_m2: a,
                    hydraulic_diameter_m: d,
                    volume_per_length_m2: a,
                    ..Channel::duct(1.0, 1.0, *area_per_length, LaminarConstants::PLATES_ONE_SIDE, l)
                };
                let wall = Wall::Plane { thickness_m: *thickness, conductivity_w_mk: *k, area_per_length_m: *area_per_length };
                (wall, channel(*hot), channel(*cold), *area_per_length)
            }
            Geometry::TubeBank { di, k, tube_side, bank, tubes_per_row, tube_length, circuits } => {
                // Metres of tube per metre of bank depth.
                let tubes_per_length = *tubes_per_row as f64 * tube_length / bank.longitudinal_pitch_m;
                let d_o = bank.outer_diameter_m;
                // Each circuit threads rows × tubes_per_row / circuits tubes in series
                // (validation requires the division to be exact).
                let circuit_length = (bank.rows * tubes_per_row / circuits) as f64 * tube_length;
                let inside = Channel {
                    volume_per_length_m2: Some(PI * di * di / 4.0 * tubes_per_length),
                    ..Channel::duct(*circuits as f64 * PI * di * di / 4.0, *di, PI * di * tubes_per_length, LaminarConstants::TUBE, circuit_length)
                };
                let outside = Channel {
                    flow_area_m2: Some(bank.frontal_area_m2),
                    hydraulic_diameter_m: Some(d_o),
                    // Gas between the tubes: the bank's volume less the tubes'.
                    volume_per_length_m2: Some(
                        *tubes_per_row as f64 * tube_length * (bank.transverse_pitch_m * bank.longitudinal_pitch_m - PI * d_o * d_o / 4.0)
                            / bank.longitudinal_pitch_m,
                    ),
                    ..Channel::duct(1.0, 1.0, PI * d_o * tubes_per_length, LaminarConstants::TUBE, l)
                };
                let wall = Wall::Tube { inner_diameter_m: *di, outer_diameter_m: d_o, conductivity_w_mk: *k, tube_length_per_length: tubes_per_length };
                match tube_side {
                    TubeSide::Hot => (wall, inside, outside, PI * d_o * tubes_per_length),
                    TubeSide::Cold => (wall, outside, inside, PI * d_o * tubes_per_length),
                }
            }
        };
        Exchanger {
            arrangement: self.arrangement,
            length_m: l,
            hot: build_stream(&self.hot, hot_channel, &self.geometry),
            cold: build_stream(&self.cold, cold_channel, &self.geometry),
            wall,
            reference_area_per_length_m: reference,
            scheme: self.scheme,
        }
    }
}

fn build_stream(s: &StreamSpec, mut channel: Channel, geometry: &Geometry) -> Stream {
    let fluid = s.fluid.build(s.pressure_pa).expect("fluid checked in validation");
    channel.roughness_m = s.roughness_m;
    let film: Arc<dyn FilmCorrelation> = match &s.film {
        FilmSpec::Internal(model) => Arc::new(model.clone()),
        FilmSpec::Fixed(h) => Arc::new(FixedFilm { h: *h }),
        FilmSpec::Zukauskas => match geometry {
            Geometry::TubeBank { bank, .. } => Arc::new(Zukauskas { bank: bank.clone() }),
            _ => unreachable!("validation allows zukauskas only on a tube bank"),
        },
        FilmSpec::Compact { surface, hydraulic_diameter_m, free_flow_area_m2, area_per_length_m } => {
            channel.flow_area_m2 = Some(*free_flow_area_m2);
            // Compact passages: void volume ≈ free-flow area × length (σ-based estimate).
            channel.volume_per_length_m2 = Some(*free_flow_area_m2);
            channel.hydraulic_diameter_m = Some(*hydraulic_diameter_m);
            channel.heat_diameter_m = None;
            channel.area_per_length_m = *area_per_length_m;
            Arc::new(surface.clone())
        }
    };
    Stream { fluid, mass_flow_kg_s: s.mass_flow_kg_s, inlet_c: s.inlet_c, inlet_pressure_pa: s.pressure_pa, fouling_m2k_w: s.fouling_m2k_w, film, channel }
}
