//! Case input: the TOML mirror ([`CaseFile`]), validation into a typed [`Case`] that
//! reports every problem at once, and building the [`Exchanger`](crate::model::Exchanger).

pub mod advice;
mod arrangement_input;
mod build;
mod design_input;
mod file;
mod geometry_input;
mod problem;
pub mod read;
mod schema;
mod spec;
mod stream_input;
mod transient_input;
mod validate;

pub use file::*;
pub use problem::{CaseError, Problem, ProblemKind};
pub use spec::{Case, FilmSpec, Geometry, Storage, StreamSpec, TransientSpec, TubeSide};
pub use transient_input::{SNAPSHOTS_MAX, SNAPSHOT_MAX_ROWS, TIMESERIES_MAX_ROWS};
pub use validate::{check_name, load, parse_built, parse_in, parse_str, velocity_warnings, NAME_MAX};

/// A commented starter case (an invented scenario) written by `hxgrid new`.
pub const STARTER: &str = include_str!("starter.toml");

/// The case file's JSON Schema (draft 2020-12), derived from the serde types of
/// [`CaseFile`]: what `hxgrid schema` prints and what the shape check walks.
pub fn json_schema() -> serde_json::Value {
    schema_root().clone()
}

/// The schema, derived once per process (the shape check reads it for every case parsed,
/// and a sweep parses one case per point).
pub(crate) fn schema_root() -> &'static serde_json::Value {
    static ROOT: std::sync::OnceLock<serde_json::Value> = std::sync::OnceLock::new();
    ROOT.get_or_init(|| serde_json::to_value(schemars::schema_for!(CaseFile)).expect("a schema serialises"))
}

/// The shape problems of case text (unknown keys, missing keys, wrong types, invalid
/// words) as the shape check finds them from [`json_schema`]; Err for a TOML syntax error.
pub fn shape_problems(text: &str) -> Result<Vec<Problem>, String> {
    schema::check(text).map(|s| s.problems)
}
