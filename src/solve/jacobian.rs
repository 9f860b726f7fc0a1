//! The Newton matrix of the cell network: block tridiagonal when each cell reaches only its
//! neighbours, banded for TVD; assembled from the cell model's derivatives through the scheme.

use super::{Banded, BlockBanded};
use crate::model::{Exchanger, Grid};
use nalgebra::Vector3;

/// The Newton matrix: 3×3 blocks, block tridiagonal when each cell reaches only its
/// neighbours, block five-diagonal for TVD (reach two cells).
#[derive(Debug, Clone)]
pub(crate) struct Jacobian(pub(crate) BlockBanded);

impl Jacobian {
    /// A zero matrix suited to the grid's reach.
    pub(crate) fn for_grid(grid: &Grid) -> Self {
        Jacobian(BlockBanded::zeros(grid.n, grid.reach()))
    }

    /// Add `v` to the derivative of cell `i`'s residual `row` by cell (i + off)'s unknown `comp`.
    #[inline]
    pub(crate) fn add(&mut self, i: usize, row: usize, off: isize, comp: usize, v: f64) {
        self.0.block_mut(i, off)[(row, comp)] += v;
    }

    /// Factorise and solve J Δ = b in place; Err(cell) if singular. Block elimination first;
    /// should a diagonal block vanish (it pivots only inside blocks), the same matrix is
    /// solved again by banded LU with row pivoting across blocks.
    pub(crate) fn solve(&mut self, b: &mut [Vector3<f64>]) -> Result<(), usize> {
        let copy = (self.0.reach() > 1).then(|| self.0.clone());
        match (self.0.solve(b), copy) {
            (Ok(()), _) => Ok(()),
            (Err(cell), None) => Err(cell),
            (Err(_), Some(m)) => banded_solve(&m, b),
        }
    }
}

/// Solve with partial pivoting across blocks (the fallback of [`Jacobian::solve`]).
fn banded_solve(m: &BlockBanded, b: &mut [Vector3<f64>]) -> Result<(), usize> {
    let (n, reach) = (m.len(), m.reach());
    let k = 3 * reach + 2;
    let mut band = Banded::zeros(3 * n, k, k);
    for i in 0..n {
        for j in i.saturating_sub(reach)..(i + reach + 1).min(n) {
            for r in 0..3 {
                for c in 0..3 {
                    band.add(3 * i + r, 3 * j + c, m.get(i, r, j, c));
                }
            }
        }
    }
    let mut flat: Vec<f64> = b.iter().flat_map(|v| [v[0], v[1], v[2]]).collect();
    band.solve(&mut flat).map_err(|k| k / 3)?;
    for (i, v) in b.iter_mut().enumerate() {
        *v = Vector3::new(flat[3 * i], flat[3 * i + 1], flat[3 * i + 2]);
    }
    Ok(())
}

/// Assemble the Jacobian of the residuals: the cell model's derivatives with respect to its
/// seven inputs, chained through the scheme's reconstruction.
pub(crate) fn jacobian(ex: &Exchanger, lay: &Grid, dx: f64, x: &[Vector3<f64>], jac: &mut Jacobian) {
    jac.0.clear();
    for i in 0..lay.n {
        let (_, local) = ex.cell_with_jacobian(dx, &lay.cell_temps(x, i));
        let deps = lay.dependencies(x, i);
        for (k, dep) in deps.iter().enumerate() {
            for &(off, comp, w) in dep {
                if w == 0.0 {
                    continue;
                }
                for (row, local_row) in local.iter().enumerate() {
                    jac.add(i, row, off, comp, local_row[k] * w);
                }
            }
        }
    }
}
