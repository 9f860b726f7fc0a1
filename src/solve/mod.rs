//! Solvers over the cell model. The steady solver is Newton on the whole coupled system
//! with an O(N) block-tridiagonal linear solve.

mod blocktri;
mod steady;

pub use blocktri::BlockTridiagonal;
pub use steady::{solve_steady, Observer, SilentObserver, SolveError, SteadySettings, SteadySolution};
