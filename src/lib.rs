//! hxgrid: finite-volume rating of two-stream heat exchangers.
//!
//! Pipeline: case file → [`case::CaseFile`] → validated [`case::Case`] → [`model::Exchanger`]
//! → [`solve::solve_steady`] → [`results::SteadyReport`] (with the lumped ε–NTU/LMTD result
//! from [`lumped`] and a grid-error estimate from [`study`]) → writers in [`output`].
//! Physics modules (`fluid`, `transfer`, `model`, `solve`, `lumped`, `study`) do no I/O.
#![warn(missing_docs)]

pub mod case;
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
