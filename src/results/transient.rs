//! The report of a transient run: plain serialisable data (transient.json, and the series
//! and snapshots written as CSV).

use crate::solve::transient::{Sample, Snapshot, Stats};
use serde::Serialize;

/// How one outlet responded.
#[derive(Debug, Clone, Serialize)]
#[allow(non_snake_case)]
pub struct OutletResponse {
    /// At the reference time, °C.
    pub initial_C: f64,
    /// At the end, °C.
    pub final_C: f64,
    /// Final − initial, K.
    pub change_K: f64,
    /// Time from the reference time until the outlet stays within 37 % of the change, s.
    pub settling_63_s: Option<f64>,
    /// … within 5 %, s.
    pub settling_95_s: Option<f64>,
    /// … within 1 %, s.
    pub settling_99_s: Option<f64>,
    /// Largest excursion beyond the final value in the direction of the change, % of |change|.
    pub overshoot_percent: f64,
    /// Steady solver's outlet for the final inputs, °C (null where no steady state is
    /// defined: both flows stopped at the end).
    pub steady_final_C: Option<f64>,
    /// final − steady, K (how far from settled the run ended).
    pub difference_from_steady_K: Option<f64>,
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
