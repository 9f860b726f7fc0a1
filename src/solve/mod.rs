//! Solvers over the cell model. The steady solver is Newton on the whole coupled system
//! with an O(N) block-tridiagonal (or banded) linear solve; the transient integrates the
//! same cell balances with storage added.

mod banded;
mod blocktri;
mod steady;
pub mod transient;

pub use banded::Banded;
pub use blocktri::BlockTridiagonal;
pub use steady::{solve_steady, Observer, SilentObserver, SolveError, SteadySettings, SteadySolution};
