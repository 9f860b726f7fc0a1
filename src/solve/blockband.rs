//! Block-banded linear systems with 3×3 blocks: block tridiagonal when each cell couples
//! only to its neighbours (reach 1), block five-diagonal for TVD (reach 2).
//!
//! Why blocks and not a general banded LU: ordering the unknowns cell by cell (hot, cold,
//! wall) gives 3×3 blocks whose diagonal blocks carry the dominant flow and wall terms, so
//! eliminating block by block (block Gaussian elimination, the block Thomas algorithm for
//! reach 1) with a small pivoted LU of each diagonal block is stable here and costs
//! O(N·reach²) with fixed-size 3×3 arithmetic and no bounds checks in the inner loop.
//!
//! The factorisation is kept apart from the solve so that Newton can reuse one
//! factorisation over many iterations and time steps (modified Newton).

use nalgebra::{Matrix3, Vector3};

/// A square block-banded matrix of `n` block rows with `reach` block diagonals on each side
/// of the diagonal; row i is Σ_{|o| ≤ reach} `block(i, o)`·x[i + o]. After
/// [`BlockBanded::factor`] it holds the block LU factors instead.
#[derive(Debug, Clone)]
pub struct BlockBanded {
    n: usize,
    reach: usize,
    /// Row-major blocks, 2·reach + 1 per block row (offset −reach first).
    blocks: Vec<Matrix3<f64>>,
    /// Inverses of the eliminated diagonal blocks (after `factor`).
    inverse: Vec<Matrix3<f64>>,
    factored: bool,
}

impl BlockBanded {
    /// Zero matrix of `n` block rows reaching `reach` blocks each side.
    pub fn zeros(n: usize, reach: usize) -> Self {
        let z = Matrix3::zeros();
        Self { n, reach, blocks: vec![z; n * (2 * reach + 1)], inverse: vec![z; n], factored: false }
    }

    /// Number of block rows.
    pub fn len(&self) -> usize {
        self.n
    }

    /// True if there are no rows.
    pub fn is_empty(&self) -> bool {
        self.n == 0
    }

    /// Blocks each side of the diagonal.
    pub fn reach(&self) -> usize {
        self.reach
    }

    #[inline]
    fn at(&self, i: usize, off: isize) -> usize {
        debug_assert!(off.unsigned_abs() <= self.reach);
        i * (2 * self.reach + 1) + (off + self.reach as isize) as usize
    }

    /// The block of row `i` at block offset `off` (−reach ..= reach).
    #[inline]
    pub fn block(&self, i: usize, off: isize) -> &Matrix3<f64> {
        &self.blocks[self.at(i, off)]
    }

    /// Mutable block of row `i` at offset `off`.
    #[inline]
    pub fn block_mut(&mut self, i: usize, off: isize) -> &mut Matrix3<f64> {
        let k = self.at(i, off);
        &mut self.blocks[k]
    }

    /// Reset to zero (unfactored), keeping the allocation.
    pub fn clear(&mut self) {
        self.blocks.fill(Matrix3::zeros());
        self.factored = false;
    }

    /// Multiply every entry by `s`.
    pub fn scale(&mut self, s: f64) {
        for b in self.blocks.iter_mut() {
            *b *= s;
        }
    }

    /// Overwrite with `s`·`other` (same shape), reusing the allocation.
    pub fn assign_scaled(&mut self, other: &BlockBanded, s: f64) {
        assert!(self.n == other.n && self.reach == other.reach, "same shape");
        for (a, b) in self.blocks.iter_mut().zip(&other.blocks) {
            *a = b * s;
        }
        self.factored = false;
    }

    /// Factorise in place (block LU, pivoting inside each diagonal block). Err(block row) if
    /// an eliminated diagonal block is singular or not finite.
    pub fn factor(&mut self) -> Result<(), usize> {
        assert!(!self.factored, "factor once");
        let (n, r) = (self.n, self.reach as isize);
        for k in 0..n {
            let d = *self.block(k, 0);
            let inv = d.lu().try_inverse().filter(|m| m.iter().all(|v| v.is_finite())).ok_or(k)?;
            self.inverse[k] = inv;
            for i in k + 1..(k + 1 + self.reach).min(n) {
                let oik = k as isize - i as isize;
                let l = self.block(i, oik) * inv;
                *self.block_mut(i, oik) = l;
                for j in k + 1..(k + 1 + self.reach).min(n) {
                    let (okj, oij) = (j as isize - k as isize, j as isize - i as isize);
                    debug_assert!(oij.abs() <= r);
                    let u = *self.block(k, okj);
                    *self.block_mut(i, oij) -= l * u;
                }
            }
        }
        self.factored = true;
        Ok(())
    }

    /// Solve with the factors in place (`rhs` becomes x); Err(0) if the result is not finite.
    pub fn solve_factored(&self, rhs: &mut [Vector3<f64>]) -> Result<(), usize> {
        assert!(self.factored, "factor first");
        let (n, r) = (self.n, self.reach);
        assert_eq!(rhs.len(), n);
        for i in 1..n {
            let mut y = rhs[i];
            for (k, xk) in rhs.iter().enumerate().take(i).skip(i.saturating_sub(r)) {
                y -= self.block(i, k as isize - i as isize) * xk;
            }
            rhs[i] = y;
        }
        for i in (0..n).rev() {
            let mut y = rhs[i];
            for (j, xj) in rhs.iter().enumerate().take((i + 1 + r).min(n)).skip(i + 1) {
                y -= self.block(i, j as isize - i as isize) * xj;
            }
            rhs[i] = self.inverse[i] * y;
        }
        if rhs.iter().all(|v| v.iter().all(|x| x.is_finite())) {
            Ok(())
        } else {
            Err(0)
        }
    }

    /// Factorise and solve (`rhs` becomes x).
    pub fn solve(&mut self, rhs: &mut [Vector3<f64>]) -> Result<(), usize> {
        self.factor()?;
        self.solve_factored(rhs)
    }

    /// `out` = A·x (unfactored matrix).
    pub fn mul_vec(&self, x: &[Vector3<f64>], out: &mut [Vector3<f64>]) {
        assert!(!self.factored, "multiply before factoring");
        let (n, r) = (self.n, self.reach);
        for (i, o) in out.iter_mut().enumerate().take(n) {
            let mut sum = Vector3::zeros();
            for (j, xj) in x.iter().enumerate().take((i + r + 1).min(n)).skip(i.saturating_sub(r)) {
                sum += self.block(i, j as isize - i as isize) * xj;
            }
            *o = sum;
        }
    }

    /// Entry (row `3i + a`, column `3j + b`) of the unfactored matrix (0 outside the band).
    pub fn get(&self, i: usize, a: usize, j: usize, b: usize) -> f64 {
        let off = j as isize - i as isize;
        if off.unsigned_abs() > self.reach {
            0.0
        } else {
            self.block(i, off)[(a, b)]
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Against nalgebra's dense LU on random block-diagonally dominant systems, reach 1
    /// and 2, solved twice with one factorisation (the reference library: nalgebra's LU with
    /// partial pivoting).
    #[test]
    fn matches_dense_solve() {
        for reach in [1usize, 2] {
            let n = 9;
            let mut a = BlockBanded::zeros(n, reach);
            let mut rnd = crate::solve::test_random(12345u64 + reach as u64);
            let mut dense = nalgebra::DMatrix::<f64>::zeros(3 * n, 3 * n);
            for i in 0..n {
                for j in i.saturating_sub(reach)..(i + reach + 1).min(n) {
                    for r in 0..3 {
                        for c in 0..3 {
                            let v = rnd() + if i == j && r == c { 6.0 } else { 0.0 };
                            a.block_mut(i, j as isize - i as isize)[(r, c)] = v;
                            dense[(3 * i + r, 3 * j + c)] = v;
                        }
                    }
                }
            }
            assert_eq!(a.get(0, 1, 1, 2), dense[(1, 5)]);
            let v: Vec<Vector3<f64>> = (0..n).map(|_| Vector3::new(rnd(), rnd(), rnd())).collect();
            let mut av = vec![Vector3::zeros(); n];
            a.mul_vec(&v, &mut av);
            let flat = nalgebra::DVector::from_iterator(3 * n, v.iter().flat_map(|w| [w[0], w[1], w[2]]));
            let dense_av = &dense * flat;
            for i in 0..3 * n {
                assert!((av[i / 3][i % 3] - dense_av[i]).abs() < 1e-12);
            }
            a.factor().unwrap();
            let dense_lu = dense.lu();
            for _ in 0..2 {
                let b: Vec<f64> = (0..3 * n).map(|_| rnd()).collect();
                let mut rhs: Vec<Vector3<f64>> = (0..n).map(|i| Vector3::new(b[3 * i], b[3 * i + 1], b[3 * i + 2])).collect();
                a.solve_factored(&mut rhs).unwrap();
                let x = dense_lu.solve(&nalgebra::DVector::from_vec(b)).unwrap();
                for i in 0..n {
                    for r in 0..3 {
                        assert!((rhs[i][r] - x[3 * i + r]).abs() < 1e-12, "reach {reach} row {i}.{r}");
                    }
                }
            }
        }
    }

    /// A singular diagonal block is reported with its row.
    #[test]
    fn singular_block_is_reported() {
        let mut a = BlockBanded::zeros(3, 1);
        *a.block_mut(0, 0) = Matrix3::identity();
        *a.block_mut(1, 0) = Matrix3::identity();
        assert_eq!(a.factor(), Err(2));
    }
}
