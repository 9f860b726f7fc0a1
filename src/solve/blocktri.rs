//! Block-tridiagonal linear systems with 3×3 blocks (block Thomas algorithm).
//!
//! Why blocks and not a general banded LU: each cell couples only to its neighbours, and
//! ordering the unknowns cell by cell (hot face, cold face, wall) gives 3×3 blocks whose
//! diagonal blocks carry the dominant flow and wall terms, so eliminating block by block
//! with a small pivoted LU in each block is stable here and costs O(N).

use nalgebra::{Matrix3, Vector3};

/// A block-tridiagonal matrix and reusable work space; row i is
/// `lower[i]·x[i−1] + diag[i]·x[i] + upper[i]·x[i+1]`.
#[derive(Debug, Clone)]
pub struct BlockTridiagonal {
    /// Sub-diagonal blocks (`lower[0]` unused).
    pub lower: Vec<Matrix3<f64>>,
    /// Diagonal blocks.
    pub diag: Vec<Matrix3<f64>>,
    /// Super-diagonal blocks (upper[n−1] unused).
    pub upper: Vec<Matrix3<f64>>,
    gain: Vec<Matrix3<f64>>,
    carry: Vec<Vector3<f64>>,
}

impl BlockTridiagonal {
    /// Zero matrix of `n` block rows.
    pub fn zeros(n: usize) -> Self {
        let z = Matrix3::zeros();
        Self { lower: vec![z; n], diag: vec![z; n], upper: vec![z; n], gain: vec![z; n], carry: vec![Vector3::zeros(); n] }
    }

    /// Number of block rows.
    pub fn len(&self) -> usize {
        self.diag.len()
    }

    /// True if there are no rows.
    pub fn is_empty(&self) -> bool {
        self.diag.is_empty()
    }

    /// Reset all blocks to zero, keeping the allocation.
    pub fn clear(&mut self) {
        for m in self.lower.iter_mut().chain(self.diag.iter_mut()).chain(self.upper.iter_mut()) {
            m.fill(0.0);
        }
    }

    /// Solve A x = b in place (`rhs` becomes x). Returns the block row whose pivot block
    /// was singular, if any.
    pub fn solve(&mut self, rhs: &mut [Vector3<f64>]) -> Result<(), usize> {
        let n = self.len();
        assert_eq!(rhs.len(), n);
        for i in 0..n {
            let (d, b) =
                if i == 0 { (self.diag[0], rhs[0]) } else { (self.diag[i] - self.lower[i] * self.gain[i - 1], rhs[i] - self.lower[i] * self.carry[i - 1]) };
            let lu = d.lu();
            self.carry[i] = lu.solve(&b).ok_or(i)?;
            if i + 1 < n {
                self.gain[i] = lu.solve(&self.upper[i]).ok_or(i)?;
            }
        }
        rhs[n - 1] = self.carry[n - 1];
        for i in (0..n.saturating_sub(1)).rev() {
            rhs[i] = self.carry[i] - self.gain[i] * rhs[i + 1];
        }
        if rhs.iter().all(|v| v.iter().all(|x| x.is_finite())) {
            Ok(())
        } else {
            Err(0)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Compare with nalgebra's dense LU on a random diagonally dominant system.
    #[test]
    fn matches_dense_solve() {
        let n = 7;
        let mut a = BlockTridiagonal::zeros(n);
        let mut rnd = crate::solve::test_random(12345u64);
        let mut dense = nalgebra::DMatrix::<f64>::zeros(3 * n, 3 * n);
        for i in 0..n {
            for r in 0..3 {
                for c in 0..3 {
                    a.diag[i][(r, c)] = rnd() + if r == c { 4.0 } else { 0.0 };
                    dense[(3 * i + r, 3 * i + c)] = a.diag[i][(r, c)];
                    if i > 0 {
                        a.lower[i][(r, c)] = rnd();
                        dense[(3 * i + r, 3 * (i - 1) + c)] = a.lower[i][(r, c)];
                    }
                    if i + 1 < n {
                        a.upper[i][(r, c)] = rnd();
                        dense[(3 * i + r, 3 * (i + 1) + c)] = a.upper[i][(r, c)];
                    }
                }
            }
        }
        let b: Vec<f64> = (0..3 * n).map(|_| rnd()).collect();
        let mut rhs: Vec<Vector3<f64>> = (0..n).map(|i| Vector3::new(b[3 * i], b[3 * i + 1], b[3 * i + 2])).collect();
        a.solve(&mut rhs).unwrap();
        let x = dense.lu().solve(&nalgebra::DVector::from_vec(b)).unwrap();
        for i in 0..n {
            for r in 0..3 {
                assert!((rhs[i][r] - x[3 * i + r]).abs() < 1e-12);
            }
        }
    }
}
