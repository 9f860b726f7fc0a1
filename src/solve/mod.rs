//! Solvers over the cell model. The steady solver is Newton on the whole coupled system
//! with an O(N) block-tridiagonal (or banded) linear solve; the transient integrates the
//! same cell balances with storage added.

mod banded;
mod blockband;
mod checks;
mod error;
mod jacobian;
pub(crate) mod network;
pub(crate) mod sparse;
mod steady;
pub mod transient;

pub use banded::Banded;
pub use blockband::BlockBanded;
/// Most cells a case may ask for.
pub const MAX_CELLS: usize = 10_000_000;

pub use network::{solve_network, NetworkSolution, MAX_NETWORK_CELLS};
pub use steady::{solve_steady, solve_steady_from, Observer, SilentObserver, SolveError, SteadySettings, SteadySolution};

/// A small deterministic random generator for the linear-algebra tests (values in ±½).
#[cfg(test)]
pub(crate) fn test_random(mut seed: u64) -> impl FnMut() -> f64 {
    move || {
        seed = seed.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
        ((seed >> 33) as f64 / (1u64 << 31) as f64) - 0.5
    }
}
