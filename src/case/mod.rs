//! Case input: the TOML mirror ([`CaseFile`]), validation into a typed [`Case`] that
//! reports every problem at once, and building the [`Exchanger`](crate::model::Exchanger).

mod file;
pub mod read;
mod schema;
mod validate;

pub use file::*;
pub use validate::{load, parse_in, parse_str, Case, CaseError, FilmSpec, Geometry, Problem, Storage, StreamSpec, TransientSpec};

/// A commented starter case (an invented scenario) written by `hxgrid new`.
pub const STARTER: &str = include_str!("starter.toml");
