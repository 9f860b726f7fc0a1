//! The report of a transient run: plain serialisable data (transient.json, and the series
//! and snapshots written as CSV).

use crate::solve::transient::{Sample, Snapshot, Stats};
use serde::Serialize;

/// How one outlet responded over a window of the run (from an input change, or from the
/// reference time, to the next change or the end).
#[derive(Debug, Clone, Serialize)]
#[allow(non_snake_case)]
pub struct Response {
    /// At the window's start, °C.
    pub initial_C: f64,
    /// At the window's end, °C.
    pub final_C: f64,
    /// Final − initial, K.
    pub change_K: f64,
    /// Time from the window's start until the outlet stays within 37 % of the change, s
    /// (null: no change worth the name, see `overshoot_percent`, or not settled in the window).
    pub settling_63_s: Option<f64>,
    /// … within 5 %, s.
    pub settling_95_s: Option<f64>,
    /// … within 1 %, s.
    pub settling_99_s: Option<f64>,
    /// Largest excursion beyond the final value in the direction of the change, % of |change|;
    /// null where the net change is under 0.1 K or under 5 % of the outlet's swing in the
    /// window (a disturbance that returns: read `swing_K` and the peaks instead).
    pub overshoot_percent: Option<f64>,
    /// Largest − smallest value in the window, K.
    pub swing_K: f64,
}

/// How one outlet responded from the reference time to the end, beside the steady answer.
#[derive(Debug, Clone, Serialize)]
#[allow(non_snake_case)]
pub struct OutletResponse {
    /// The response from the reference time to the end.
    #[serde(flatten)]
    pub response: Response,
    /// Steady solver's outlet for the final inputs, °C (null where no steady state is
    /// defined: both flows stopped at the end).
    pub steady_final_C: Option<f64>,
    /// final − steady, K (how far from settled the run ended).
    pub difference_from_steady_K: Option<f64>,
    /// Lowest value over the whole run, °C, and when, s.
    pub min_C: f64,
    /// When the lowest value was reached, s.
    pub min_at_s: f64,
    /// Highest value over the whole run, °C.
    pub max_C: f64,
    /// When the highest value was reached, s.
    pub max_at_s: f64,
}

/// One change of one input schedule (a step, a ramp, or one segment of a table) and both
/// outlets' responses to it, measured from its start to the next change of any input (or
/// the end of the run).
#[derive(Debug, Clone, Serialize)]
pub struct InputChange {
    /// Which input ("hot inlet temperature", "hot mass flow", …).
    pub input: &'static str,
    /// Its unit.
    pub unit: &'static str,
    /// "step" or "ramp".
    pub kind: &'static str,
    /// Start of the change, s.
    pub start_s: f64,
    /// End of the change (= start for a step), s.
    pub end_s: f64,
    /// Value before.
    pub from: f64,
    /// Value after.
    pub to: f64,
    /// End of the window the responses are measured over, s.
    pub window_end_s: f64,
    /// Hot outlet's response.
    pub hot_outlet: Response,
    /// Cold outlet's response.
    pub cold_outlet: Response,
}

/// A value reached at one time and place.
#[derive(Debug, Clone, Serialize)]
pub struct Peak {
    /// The value.
    pub value: f64,
    /// When, s.
    pub at_s: f64,
    /// Where, m along the exchanger (a network: the first direction).
    pub at_m: f64,
}

/// The wall's extremes over the run (at the output times).
#[derive(Debug, Clone, Serialize)]
#[allow(non_snake_case)]
pub struct WallExtremes {
    /// Hottest wall temperature, °C.
    pub hottest_C: Peak,
    /// Fastest wall temperature change, K/s (signed).
    pub fastest_change_K_s: Peak,
    /// Largest temperature difference through the wall's thickness (hot metal face − cold
    /// metal face, from the conduction resistance and the heat flows on both sides), K.
    pub largest_difference_K: Peak,
}

/// Everything a transient run reports.
#[derive(Debug, Clone, Serialize)]
#[allow(non_snake_case)]
pub struct TransientReport {
    /// Case name.
    pub case: String,
    /// "completed", or "stopped" when a physical limit ended the run early (see `stop`).
    pub status: &'static str,
    /// Where, when and why the run stopped early; the results end there.
    pub stop: Option<crate::solve::transient::Stop>,
    /// Spatial scheme.
    pub scheme: &'static str,
    /// hxgrid version that wrote the result.
    pub version: &'static str,
    /// SHA-256 of the case file's text, hex (None for an exchanger built in code).
    pub input_sha256: Option<String>,
    /// Metal heat capacities in the model (set by the caller that knows the case).
    pub storage: Option<crate::case::Storage>,
    /// Integrator.
    pub integrator: &'static str,
    /// Cells.
    pub cells: usize,
    /// Simulated time, s.
    pub duration_s: f64,
    /// How the run started.
    pub initial_state: String,
    /// Settling times and overshoot describe the response from this time on, s.
    pub reference_time_s: f64,
    /// Hot outlet response.
    pub hot_outlet: OutletResponse,
    /// Cold outlet response.
    pub cold_outlet: OutletResponse,
    /// Heat given up by the hot stream over the run, J.
    pub hot_heat_J: f64,
    /// Net enthalpy inflow − change of stored energy, J (first-law check).
    pub energy_closure_J: f64,
    /// |closure| / |hot heat|.
    pub energy_closure_relative: f64,
    /// Hottest wall temperature reached, °C.
    pub max_wall_C: f64,
    /// Fastest wall temperature change reached, K/s (signed).
    pub max_wall_rate_K_s: f64,
    /// The wall's extremes with their times and positions.
    pub wall: WallExtremes,
    /// Every change of every input schedule, each with both outlets' response to it.
    pub input_changes: Vec<InputChange>,
    /// Integrator statistics.
    pub stats: Stats,
    /// Standing caution.
    pub caution: &'static str,
    /// Time series (CSV, not JSON).
    #[serde(skip)]
    pub samples: Vec<Sample>,
    /// Profile snapshots (CSV and plot).
    #[serde(skip)]
    pub snapshots: Vec<Snapshot>,
    /// Face positions, m (empty for a network).
    #[serde(skip)]
    pub faces_m: Vec<f64>,
    /// A network's cells (their snapshots hold one value per cell: hot bulk, cold bulk,
    /// wall); None on an axial line, whose snapshots hold face values.
    #[serde(skip)]
    pub network: Option<crate::model::Network>,
    /// The arrangement, as the case file names it.
    pub arrangement: &'static str,
    /// What the position along the exchanger is, for plot axes.
    #[serde(skip)]
    pub position_label: &'static str,
    /// The case as given and as interpreted (report only).
    #[serde(skip)]
    pub input: Option<std::sync::Arc<crate::results::InputEcho>>,
}

impl TransientReport {
    /// The report with the case behind it (its SHA-256 goes into transient.json).
    pub fn with_input(self, echo: crate::results::InputEcho) -> Self {
        TransientReport { input_sha256: Some(echo.sha256.clone()), input: Some(std::sync::Arc::new(echo)), ..self }
    }
}
