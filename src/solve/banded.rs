//! Banded linear systems: Gaussian elimination with partial pivoting in O(n·kl·(kl+ku)),
//! the same algorithm as LAPACK's `gbtrf`/`gbtrs`, for Jacobians whose reach exceeds one
//! cell (the TVD scheme couples a cell to two cells upstream).

/// A square banded matrix with `kl` sub- and `ku` super-diagonals (room for the fill-in of
/// pivoting is kept), and its factorisation in place.
#[derive(Debug, Clone)]
pub struct Banded {
    n: usize,
    kl: usize,
    ku: usize,
    /// Row i holds columns i − kl ..= i + kl + ku (the window), `width` values per row.
    width: usize,
    data: Vec<f64>,
    pivots: Vec<usize>,
}

impl Banded {
    /// Zero matrix of size n with the given bandwidths.
    pub fn zeros(n: usize, kl: usize, ku: usize) -> Self {
        let width = 2 * kl + ku + 1;
        Self { n, kl, ku, width, data: vec![0.0; n * width], pivots: vec![0; n] }
    }

    /// Multiply every entry by `s`.
    pub fn scale(&mut self, s: f64) {
        for v in self.data.iter_mut() {
            *v *= s;
        }
    }

    /// Reset to zero, keeping the allocation.
    pub fn clear(&mut self) {
        self.data.fill(0.0);
    }

    #[inline]
    fn idx(&self, i: usize, j: usize) -> Option<usize> {
        let lo = i as isize - self.kl as isize;
        let off = j as isize - lo;
        (off >= 0 && (off as usize) < self.width).then(|| i * self.width + off as usize)
    }

    /// Add `v` at (i, j); entries outside the band are a programming error.
    pub fn add(&mut self, i: usize, j: usize, v: f64) {
        let k = self.idx(i, j).expect("entry inside the band");
        self.data[k] += v;
    }

    /// Entry (i, j) (zero outside the band).
    #[inline]
    pub fn get(&self, i: usize, j: usize) -> f64 {
        self.idx(i, j).map(|k| self.data[k]).unwrap_or(0.0)
    }

    #[inline]
    fn set(&mut self, i: usize, j: usize, v: f64) {
        if let Some(k) = self.idx(i, j) {
            self.data[k] = v;
        } else {
            debug_assert!(v == 0.0, "fill outside the band");
        }
    }

    /// Factorise and solve A x = b in place (`b` becomes x). Returns the row of a zero
    /// pivot if the matrix is singular.
    pub fn solve(&mut self, b: &mut [f64]) -> Result<(), usize> {
        let (n, kl, ku) = (self.n, self.kl, self.ku);
        for k in 0..n {
            let last = (k + kl).min(n - 1);
            let p = (k..=last).max_by(|&a, &c| self.get(a, k).abs().total_cmp(&self.get(c, k).abs())).unwrap_or(k);
            if self.get(p, k) == 0.0 || !self.get(p, k).is_finite() {
                return Err(k);
            }
            self.pivots[k] = p;
            let right = (k + kl + ku).min(n - 1);
            if p != k {
                for j in k..=right {
                    let (a, c) = (self.get(k, j), self.get(p, j));
                    self.set(k, j, c);
                    self.set(p, j, a);
                }
                b.swap(k, p);
            }
            let pivot = self.get(k, k);
            for i in k + 1..=last {
                let f = self.get(i, k) / pivot;
                if f == 0.0 {
                    continue;
                }
                self.set(i, k, 0.0);
                for j in k + 1..=right {
                    let v = self.get(i, j) - f * self.get(k, j);
                    self.set(i, j, v);
                }
                b[i] -= f * b[k];
            }
        }
        for k in (0..n).rev() {
            let right = (k + kl + ku).min(n - 1);
            let mut sum = b[k];
            for (j, bj) in b.iter().enumerate().take(right + 1).skip(k + 1) {
                sum -= self.get(k, j) * bj;
            }
            b[k] = sum / self.get(k, k);
        }
        if b.iter().all(|v| v.is_finite()) {
            Ok(())
        } else {
            Err(0)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Against nalgebra's dense LU on a random banded system that needs pivoting.
    #[test]
    fn matches_dense_solve() {
        let (n, kl, ku) = (17, 5, 4);
        let mut rnd = crate::solve::test_random(987654321u64);
        let mut band = Banded::zeros(n, kl, ku);
        let mut dense = nalgebra::DMatrix::<f64>::zeros(n, n);
        for i in 0..n {
            for j in i.saturating_sub(kl)..=(i + ku).min(n - 1) {
                let v = rnd();
                band.add(i, j, v);
                dense[(i, j)] = v;
            }
        }
        let mut b: Vec<f64> = (0..n).map(|_| rnd()).collect();
        let x = dense.lu().solve(&nalgebra::DVector::from_vec(b.clone())).unwrap();
        band.solve(&mut b).unwrap();
        for i in 0..n {
            assert!((b[i] - x[i]).abs() < 1e-9 * (1.0 + x[i].abs()), "{i}: {} vs {}", b[i], x[i]);
        }
    }
}
