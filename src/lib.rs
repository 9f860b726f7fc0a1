//! hxgrid: finite-volume rating of two-stream heat exchangers.
//!
//! Pipeline: case file → [`case::CaseFile`] → validated [`case::Case`] → [`model::Exchanger`]
//! → [`solve::solve_steady`] → [`results::SteadyReport`] (with the lumped ε–NTU/LMTD result
//! from [`lumped`] and a grid-error estimate from [`study`]) → writers in [`output`].
//! Physics modules (`fluid`, `transfer`, `model`, `solve`, `lumped`, `study`) do no I/O.
//!
//! # The front door
//!
//! - [`load_case`] / [`parse_case`]: a case file (or its text) to a validated [`Case`];
//! - [`rate`]: the steady rating of an [`Exchanger`] — grid solution, lumped ε–NTU beside it,
//!   grid-error estimate — as a [`SteadyReport`];
//! - [`simulate`]: a transient scenario as a [`TransientReport`];
//! - [`write_steady`] / [`write_transient`]: the report's files into a results folder.
//!
//! An exchanger can also be built in code, without a case file (see `examples/`):
//!
//! ```
//! // The invented starter case: hot water cooled by cooling water in a double pipe.
//! let case = hxgrid::parse_case(hxgrid::case::STARTER, "starter").unwrap();
//! let report = hxgrid::rate(&case.name, &case.build(), &case.solver).unwrap();
//! // The grid and the lumped method agree on the duty within a few per cent here.
//! assert!((report.duty_W - report.lumped.duty_w).abs() < 0.05 * report.duty_W);
//! // Energy closes to the solver tolerance.
//! assert!(report.energy_imbalance_W.abs() < 1e-6 * report.duty_W);
//! ```
#![warn(missing_docs)]

pub mod case;
pub mod design;
pub mod fluid;
pub mod lumped;
pub mod model;
pub mod output;
pub mod results;
pub mod scenario;
pub mod solve;
pub mod study;
pub mod text;
pub mod transfer;
pub mod verify;

#[cfg(test)]
mod scratch;

pub use case::Case;
pub use model::Exchanger;
pub use output::{write_steady, write_transient};
pub use results::SteadyReport;
pub use scenario::TransientReport;

/// Read and validate a case file (tables and data files relative to it).
pub fn load_case(path: &std::path::Path) -> Result<Case, case::CaseError> {
    case::load(path)
}

/// Validate case text; `name` is used when the text has no `name` (table files relative to
/// the current folder).
pub fn parse_case(text: &str, name: &str) -> Result<Case, case::CaseError> {
    case::parse_str(text, name, name)
}

/// Rate an exchanger at steady state on `settings.cells` cells: the grid solution, the
/// lumped ε–NTU/LMTD result and the grid-error estimate.
pub fn rate(name: &str, exchanger: &Exchanger, settings: &solve::SteadySettings) -> Result<SteadyReport, solve::SolveError> {
    study::rate(name, exchanger, settings, &study::RatingOptions::default(), &mut solve::SilentObserver)
}

/// Run a case's transient scenario (its `[transient]` section); None if it has none.
pub fn simulate(case: &Case) -> Option<Result<TransientReport, solve::transient::TransientError>> {
    let spec = case.transient.as_ref()?;
    let ex = case.build();
    let run = scenario::run(&case.name, &ex, &spec.inputs(&ex), &spec.settings_for(&ex, case), spec.response_from_s, &mut solve::SilentObserver);
    Some(run.map(|r| TransientReport { storage: Some(spec.storage(&ex, case)), ..r }))
}
