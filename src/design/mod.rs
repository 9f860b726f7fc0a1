//! Design studies on a rated case: sizing (find the value of one input that meets a
//! target), sweeps (a rating at every point of a grid of inputs, shardable across machines)
//! and uncertainty (Latin-hypercube Monte Carlo over the inputs' stated uncertainties).
//! Every point is a complete grid rating of a case file variant (see [`keys`]). Pure: no I/O.

pub mod keys;
pub mod root;
pub mod size;
pub mod sweep;
pub mod uncertainty;

use crate::case::{Case, CaseError};
use keys::KeyValue;
use std::path::PathBuf;

/// The case file a study varies: its text and where it came from.
#[derive(Debug, Clone, Default)]
pub struct Source {
    /// The case file's text, as read.
    pub text: String,
    /// Where the text came from (a path, for messages).
    pub origin: String,
    /// The name used when the file has none (the file stem).
    pub default_name: String,
    /// Folder that relative table and data files are found in.
    pub base_dir: PathBuf,
}

impl Source {
    /// The case with `values` set, validated like a case file the user wrote.
    pub fn variant(&self, values: &[(&str, KeyValue)]) -> Result<Case, CaseError> {
        self.variant_built(values).map(|(case, _)| case)
    }

    /// [`Source::variant`] and its exchanger (built once, by the validation).
    pub fn variant_built(&self, values: &[(&str, KeyValue)]) -> Result<(Case, crate::Exchanger), CaseError> {
        let text = keys::with_values(&self.text, values).map_err(|message| CaseError::Syntax { origin: self.origin.clone(), message })?;
        let shown: Vec<String> = values.iter().map(|(k, v)| format!("{k} = {}", crate::text::num(v.value))).collect();
        crate::case::parse_built(&text, &format!("{} with {}", self.origin, shown.join(", ")), &self.default_name, &self.base_dir)
    }

    /// SHA-256 of the case file's text, hex.
    pub fn sha256(&self) -> String {
        use sha2::Digest;
        let digest = sha2::Sha256::digest(self.text.as_bytes());
        digest.iter().map(|b| format!("{b:02x}")).collect()
    }
}

/// The quantity a sizing meets.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Target {
    /// Duty, W.
    Duty(f64),
    /// Hot outlet, °C.
    HotOutlet(f64),
    /// Cold outlet, °C.
    ColdOutlet(f64),
}

impl Target {
    /// The case-file key of the target.
    pub fn key(&self) -> &'static str {
        match self {
            Target::Duty(_) => "duty_W",
            Target::HotOutlet(_) => "hot_outlet_C",
            Target::ColdOutlet(_) => "cold_outlet_C",
        }
    }
    /// The value asked for.
    pub fn goal(&self) -> f64 {
        match *self {
            Target::Duty(v) | Target::HotOutlet(v) | Target::ColdOutlet(v) => v,
        }
    }
    /// The target quantity of a result.
    pub fn of(&self, q: &crate::results::KeyQuantities) -> f64 {
        match self {
            Target::Duty(_) => q.duty_w,
            Target::HotOutlet(_) => q.hot_outlet_c,
            Target::ColdOutlet(_) => q.cold_outlet_c,
        }
    }
    /// Whether `achieved` meets the target or does better: at least the duty, a hot outlet
    /// at most the goal (cooled at least that far), a cold outlet at least the goal.
    pub fn met(&self, achieved: f64) -> bool {
        match *self {
            Target::Duty(g) | Target::ColdOutlet(g) => achieved >= g,
            Target::HotOutlet(g) => achieved <= g,
        }
    }
    /// The unit of the target, for messages.
    pub fn unit(&self) -> &'static str {
        match self {
            Target::Duty(_) => "W",
            _ => "°C",
        }
    }
}

/// Validated `[size]`.
#[derive(Debug, Clone, PartialEq)]
pub struct SizeSpec {
    /// What to meet.
    pub target: Target,
    /// Dotted key of the free input.
    pub vary: String,
    /// Its value in the case file (and whether it is a whole number).
    pub start: KeyValue,
    /// Search bounds.
    pub lowest: f64,
    /// Upper search bound.
    pub highest: f64,
}

/// How the values of a sweep's inputs combine.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Combine {
    /// Every combination (the first input varies slowest).
    Factorial,
    /// The i-th value of every input together (equal counts).
    Paired,
}

/// One swept input.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct SweepInput {
    /// Dotted key.
    pub key: String,
    /// Values in order.
    pub values: Vec<f64>,
    /// A whole-number key.
    pub whole: bool,
}

/// Validated `[sweep]`.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct SweepSpec {
    /// How values combine.
    pub combine: Combine,
    /// The inputs.
    pub inputs: Vec<SweepInput>,
}

/// Validated `[uncertainty]`: ± half-widths (None: the default for the case).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct UncertaintySpec {
    /// Samples.
    pub samples: usize,
    /// Seed.
    pub seed: u64,
    /// ± % film coefficient, hot and cold.
    pub film_percent: [Option<f64>; 2],
    /// ± % fouling.
    pub fouling_percent: [Option<f64>; 2],
    /// ± % mass flow.
    pub mass_flow_percent: [Option<f64>; 2],
    /// ± K inlet temperature.
    pub inlet_k: [Option<f64>; 2],
}

impl UncertaintySpec {
    /// Every default: 200 samples, seed 1, each input's default half-width.
    pub fn defaults() -> Self {
        Self { samples: 200, seed: 1, ..Self::default() }
    }
}

/// The study tables of a case.
#[derive(Debug, Clone, Default)]
pub struct DesignSpec {
    /// `[size]`.
    pub size: Option<SizeSpec>,
    /// `[sweep]`.
    pub sweep: Option<SweepSpec>,
    /// `[uncertainty]`.
    pub uncertainty: Option<UncertaintySpec>,
}

/// Why one evaluation of a variant failed.
#[derive(Debug, Clone, thiserror::Error)]
pub enum PointError {
    /// The values make an invalid case.
    #[error("{0}")]
    Input(String),
    /// The solver failed.
    #[error("{0}")]
    Solve(String),
}

impl PointError {
    /// "input" or "solver", for the status column.
    pub fn status(&self) -> &'static str {
        match self {
            PointError::Input(_) => "invalid_input",
            PointError::Solve(_) => "solver_failed",
        }
    }
}

/// One line of an error, for a CSV cell or a log line.
pub fn one_line(e: &dyn std::fmt::Display) -> String {
    let s = e.to_string();
    let s: String = s.split('\n').map(str::trim).filter(|l| !l.is_empty()).collect::<Vec<_>>().join("; ");
    crate::text::safe_message(&s, 400, 1)
}

/// One grid solve of an exchanger for a study: the target quantities, the heat-transfer
/// area, the Newton iterations, and the unknowns to warm-start a neighbouring point.
#[derive(Debug, Clone)]
pub struct Evaluation {
    /// Duty and outlets.
    pub q: crate::results::KeyQuantities,
    /// Heat-transfer area on the reference surface, m².
    pub area_m2: f64,
    /// Newton iterations.
    pub iterations: usize,
    /// The solution's unknowns (empty for a network, which starts cold).
    pub unknowns: Vec<nalgebra::Vector3<f64>>,
}

/// Solve `ex` on its grid (thermal solution only: no grid-error solve, no pressure march),
/// from `warm` where it fits.
pub fn evaluate(
    ex: &crate::Exchanger,
    settings: &crate::solve::SteadySettings,
    warm: Option<&[nalgebra::Vector3<f64>]>,
) -> Result<Evaluation, crate::solve::SolveError> {
    use crate::solve::{solve_network, solve_steady_from, SilentObserver};
    let area_m2 = ex.reference_area_per_length_m * ex.length_m;
    match ex.arrangement.layout() {
        None => {
            let s = solve_steady_from(ex, settings, warm, &mut SilentObserver)?;
            Ok(Evaluation { q: crate::study::key_quantities(ex, &s), area_m2, iterations: s.iterations, unknowns: s.unknowns })
        }
        Some(layout) => {
            let s = solve_network(ex, &layout, settings, &mut SilentObserver)?;
            Ok(Evaluation { q: crate::study::network::key_quantities(ex, &s), area_m2, iterations: s.iterations, unknowns: Vec::new() })
        }
    }
}
