//! The Newton matrix of the cell network: block tridiagonal when each cell reaches only its
//! neighbours, banded for TVD; assembled from the cell model's derivatives through the scheme.

use super::{Banded, BlockTridiagonal};
use crate::model::{Exchanger, Grid};
use nalgebra::Vector3;

/// The Newton matrix: block tridiagonal when each cell reaches only its neighbours,
/// banded otherwise (TVD).
#[derive(Debug, Clone)]
pub(crate) enum Jacobian {
    /// 3×3 blocks, neighbours only.
    Tri(BlockTridiagonal),
    /// Scalar band, reach two cells.
    Band(Banded),
}

impl Jacobian {
    /// A zero matrix suited to the grid's reach.
    pub(crate) fn for_grid(grid: &Grid) -> Self {
        if grid.reach() <= 1 {
            Jacobian::Tri(BlockTridiagonal::zeros(grid.n))
        } else {
            let k = 3 * grid.reach() + 2;
            Jacobian::Band(Banded::zeros(3 * grid.n, k, k))
        }
    }

    fn clear(&mut self) {
        match self {
            Jacobian::Tri(m) => m.clear(),
            Jacobian::Band(m) => m.clear(),
        }
    }

    /// Add `v` to the derivative of cell `i`'s residual `row` by cell (i + off)'s unknown `comp`.
    #[inline]
    pub(crate) fn add(&mut self, i: usize, row: usize, off: isize, comp: usize, v: f64) {
        match self {
            Jacobian::Tri(m) => {
                let block = match off {
                    -1 => &mut m.lower[i],
                    0 => &mut m.diag[i],
                    _ => &mut m.upper[i],
                };
                block[(row, comp)] += v;
            }
            Jacobian::Band(m) => m.add(3 * i + row, (3 * i as isize + 3 * off) as usize + comp, v),
        }
    }

    /// The matrix multiplied by `s`.
    pub(crate) fn scaled(mut self, s: f64) -> Self {
        match &mut self {
            Jacobian::Tri(m) => {
                for b in m.lower.iter_mut().chain(m.diag.iter_mut()).chain(m.upper.iter_mut()) {
                    *b *= s;
                }
            }
            Jacobian::Band(m) => m.scale(s),
        }
        self
    }

    /// Add `v` on the diagonal of cell `i`, component `comp` (storage terms).
    pub(crate) fn add_diagonal(&mut self, i: usize, comp: usize, v: f64) {
        self.add(i, comp, 0, comp, v);
    }

    /// Solve J Δ = b in place; Err(cell) if singular.
    pub(crate) fn solve(&mut self, b: &mut [Vector3<f64>]) -> Result<(), usize> {
        match self {
            Jacobian::Tri(m) => m.solve(b),
            Jacobian::Band(m) => {
                let mut flat: Vec<f64> = b.iter().flat_map(|v| [v[0], v[1], v[2]]).collect();
                m.solve(&mut flat).map_err(|k| k / 3)?;
                for (i, v) in b.iter_mut().enumerate() {
                    *v = Vector3::new(flat[3 * i], flat[3 * i + 1], flat[3 * i + 2]);
                }
                Ok(())
            }
        }
    }
}

/// Assemble the Jacobian of the residuals: the cell model's derivatives with respect to its
/// seven inputs, chained through the scheme's reconstruction.
pub(crate) fn jacobian(ex: &Exchanger, lay: &Grid, dx: f64, x: &[Vector3<f64>], jac: &mut Jacobian) {
    jac.clear();
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
