//! A sparse LU for Newton on a cell network (faer's), with the pattern analysed once: the
//! fill-reducing ordering and symbolic factorisation are computed on the first
//! factorisation and reused, and the numeric workspace is kept between factorisations.

use faer::dyn_stack::{MemBuffer, MemStack, StackReq};
use faer::sparse::linalg::lu::{factorize_symbolic_lu, LuRef, LuSymbolicParams, NumericLu, SymbolicLu};
use faer::sparse::linalg::SupernodalThreshold;
use faer::sparse::{Argsort, Pair, SparseColMat, SymbolicSparseColMat};
use faer::Spec;
use faer::{Conj, Par};

/// Why a factorisation or solve failed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum LuFailure {
    /// The pattern is structurally singular, or a pivot vanished; at this unknown if known.
    Singular(Option<usize>),
}

/// A square sparse matrix of fixed pattern, refactorised as its values change.
pub(crate) struct SparseLu {
    pattern: SymbolicSparseColMat<usize>,
    argsort: Argsort<usize>,
    symbolic: Option<SymbolicLu<usize>>,
    numeric: NumericLu<usize, f64>,
    buffer: MemBuffer,
    buffer_req: StackReq,
    factored: bool,
}

impl SparseLu {
    /// The pattern of an `n × n` matrix: entries at `pairs` (repeats are summed).
    pub(crate) fn new(n: usize, pairs: &[Pair<usize, usize>]) -> Result<Self, LuFailure> {
        let (pattern, argsort) = SymbolicSparseColMat::try_new_from_indices(n, n, pairs).map_err(|_| LuFailure::Singular(None))?;
        Ok(Self {
            pattern,
            argsort,
            symbolic: None,
            numeric: NumericLu::new(),
            buffer: MemBuffer::new(StackReq::empty()),
            buffer_req: StackReq::empty(),
            factored: false,
        })
    }

    /// Factorise with `values` in the order of the pairs given to [`SparseLu::new`].
    pub(crate) fn factor(&mut self, values: &[f64]) -> Result<(), LuFailure> {
        self.factored = false;
        let matrix = SparseColMat::new_from_argsort(self.pattern.clone(), &self.argsort, values).map_err(|_| LuFailure::Singular(None))?;
        if self.symbolic.is_none() {
            // Simplicial (left-looking) factorisation: the cells couple only to their
            // neighbours along each stream, so supernodes stay small and the supernodal
            // variant's dense kernels do not pay for their set-up (measured: see benches/README.md).
            let params = LuSymbolicParams { supernodal_flop_ratio_threshold: SupernodalThreshold::FORCE_SIMPLICIAL, ..Default::default() };
            self.symbolic = Some(factorize_symbolic_lu(matrix.symbolic(), params).map_err(|_| LuFailure::Singular(None))?);
        }
        let symbolic = self.symbolic.as_ref().expect("analysed above");
        let need = symbolic.factorize_numeric_lu_scratch::<f64>(Par::Seq, Spec::default()).or(symbolic.solve_in_place_scratch::<f64>(1, Par::Seq));
        if need != self.buffer_req {
            self.buffer = MemBuffer::new(need);
            self.buffer_req = need;
        }
        symbolic.factorize_numeric_lu(&mut self.numeric, matrix.as_ref(), Par::Seq, MemStack::new(&mut self.buffer), Spec::default()).map_err(|e| match e {
            faer::sparse::linalg::LuError::SymbolicSingular { index } => LuFailure::Singular(Some(index)),
            _ => LuFailure::Singular(None),
        })?;
        self.factored = true;
        Ok(())
    }

    /// Solve A x = b in place with the last factorisation.
    pub(crate) fn solve(&mut self, rhs: &mut [f64]) {
        assert!(self.factored, "solve before factor");
        let symbolic = self.symbolic.as_ref().expect("factored");
        let lu = unsafe {
            // SAFETY: `numeric` was produced by `symbolic.factorize_numeric_lu` in `factor`.
            LuRef::new_unchecked(symbolic, &self.numeric)
        };
        lu.solve_in_place_with_conj(Conj::No, faer::ColMut::from_slice_mut(rhs).as_mat_mut(), Par::Seq, MemStack::new(&mut self.buffer));
    }
}

/// Largest strongly connected block the sweep solves densely; larger ones go to the LU.
const SWEEP_BLOCK_MAX: usize = 6;

/// Block forward substitution for a matrix that is block lower-triangular in some order —
/// a network without feedback, such as crossflow with both streams unmixed, where every
/// cell depends only on cells upstream in both streams. The blocks are the strongly
/// connected components of the pattern (Tarjan's algorithm, which emits each after every
/// block it depends on), each solved densely with partial pivoting: no factorisation and
/// no fill.
pub(crate) struct BlockSweep {
    /// Blocks in solve order, each a list of unknowns.
    blocks: Vec<Vec<usize>>,
    /// Per row: (column, position in the value list) of its entries.
    rows: Vec<Vec<(usize, usize)>>,
    values: Vec<f64>,
}

impl BlockSweep {
    /// A sweep for the pattern, or None if a block is larger than the dense limit.
    pub(crate) fn new(n: usize, pairs: &[Pair<usize, usize>]) -> Option<Self> {
        let mut rows: Vec<Vec<(usize, usize)>> = vec![Vec::new(); n];
        for (pos, p) in pairs.iter().enumerate() {
            rows[p.row].push((p.col, pos));
        }
        let blocks = strongly_connected(n, &rows)?;
        Some(Self { blocks, rows, values: Vec::new() })
    }

    /// Take the values (pattern order).
    pub(crate) fn factor(&mut self, values: &[f64]) {
        self.values.clear();
        self.values.extend_from_slice(values);
    }

    /// Solve A x = b in place; Err(unknown) where a block is singular.
    pub(crate) fn solve(&self, rhs: &mut [f64]) -> Result<(), usize> {
        let mut solved = vec![false; rhs.len()];
        let mut a = [[0.0; SWEEP_BLOCK_MAX]; SWEEP_BLOCK_MAX];
        let mut b = [0.0; SWEEP_BLOCK_MAX];
        for block in &self.blocks {
            let s = block.len();
            for (bi, &row) in block.iter().enumerate() {
                a[bi][..s].fill(0.0);
                b[bi] = rhs[row];
                for &(col, pos) in &self.rows[row] {
                    let v = self.values[pos];
                    if solved[col] {
                        b[bi] -= v * rhs[col];
                    } else {
                        let bj = block.iter().position(|&c| c == col).expect("an unsolved column is in the block");
                        a[bi][bj] += v;
                    }
                }
            }
            // Gaussian elimination with partial pivoting on the s × s block.
            for k in 0..s {
                let p = (k..s).max_by(|&i, &j| a[i][k].abs().total_cmp(&a[j][k].abs())).expect("non-empty");
                if a[p][k] == 0.0 || !a[p][k].is_finite() {
                    return Err(block[k]);
                }
                a.swap(k, p);
                b.swap(k, p);
                let (top, below) = a.split_at_mut(k + 1);
                let pivot = &top[k];
                for (i, row) in below.iter_mut().enumerate().take(s - k - 1) {
                    let f = row[k] / pivot[k];
                    for (x, p) in row[k..s].iter_mut().zip(&pivot[k..s]) {
                        *x -= f * p;
                    }
                    b[k + 1 + i] -= f * b[k];
                }
            }
            for k in (0..s).rev() {
                let mut v = b[k];
                for j in k + 1..s {
                    v -= a[k][j] * b[j];
                }
                b[k] = v / a[k][k];
            }
            for (bi, &row) in block.iter().enumerate() {
                rhs[row] = b[bi];
                solved[row] = true;
            }
        }
        Ok(())
    }
}

/// Tarjan's strongly connected components of the graph row → column, iteratively, in the
/// order emitted (dependencies first); None if one has more than [`SWEEP_BLOCK_MAX`] members.
fn strongly_connected(n: usize, rows: &[Vec<(usize, usize)>]) -> Option<Vec<Vec<usize>>> {
    const NONE: usize = usize::MAX;
    let (mut index, mut low, mut on_stack) = (vec![NONE; n], vec![0; n], vec![false; n]);
    let (mut stack, mut out, mut next) = (Vec::new(), Vec::new(), 0);
    for root in 0..n {
        if index[root] != NONE {
            continue;
        }
        // Explicit DFS: (vertex, next edge to look at).
        let mut call: Vec<(usize, usize)> = vec![(root, 0)];
        index[root] = next;
        low[root] = next;
        next += 1;
        stack.push(root);
        on_stack[root] = true;
        while let Some(&mut (v, ref mut e)) = call.last_mut() {
            if let Some(&(w, _)) = rows[v].get(*e) {
                *e += 1;
                if index[w] == NONE {
                    index[w] = next;
                    low[w] = next;
                    next += 1;
                    stack.push(w);
                    on_stack[w] = true;
                    call.push((w, 0));
                } else if on_stack[w] {
                    low[v] = low[v].min(index[w]);
                }
                continue;
            }
            call.pop();
            if let Some(&(u, _)) = call.last() {
                low[u] = low[u].min(low[v]);
            }
            if low[v] == index[v] {
                let mut block = Vec::new();
                loop {
                    let w = stack.pop().expect("v is on the stack");
                    on_stack[w] = false;
                    block.push(w);
                    if w == v {
                        break;
                    }
                }
                if block.len() > SWEEP_BLOCK_MAX {
                    return None;
                }
                out.push(block);
            }
        }
    }
    Some(out)
}

/// The network's linear solver: the sweep where the network has no feedback, else the LU.
pub(crate) enum Linear {
    /// Block forward substitution.
    Sweep(BlockSweep),
    /// Sparse LU (boxed: it carries its workspace).
    Lu(Box<SparseLu>),
}

impl Linear {
    /// Choose for the pattern.
    pub(crate) fn new(n: usize, pairs: &[Pair<usize, usize>]) -> Result<Self, LuFailure> {
        match BlockSweep::new(n, pairs) {
            Some(s) => Ok(Linear::Sweep(s)),
            None => Ok(Linear::Lu(Box::new(SparseLu::new(n, pairs)?))),
        }
    }

    /// Take new values.
    pub(crate) fn factor(&mut self, values: &[f64]) -> Result<(), LuFailure> {
        match self {
            Linear::Sweep(s) => {
                s.factor(values);
                Ok(())
            }
            Linear::Lu(lu) => lu.factor(values),
        }
    }

    /// Solve in place.
    pub(crate) fn solve(&mut self, rhs: &mut [f64]) -> Result<(), LuFailure> {
        match self {
            Linear::Sweep(s) => s.solve(rhs).map_err(|at| LuFailure::Singular(Some(at))),
            Linear::Lu(lu) => {
                lu.solve(rhs);
                Ok(())
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The sweep and the LU give the same solution of a block lower-triangular system with
    /// 2 × 2 blocks and repeated entries.
    #[test]
    fn sweep_matches_lu() {
        let n = 40;
        let mut pairs = Vec::new();
        let mut values = Vec::new();
        let mut rnd = crate::solve::test_random(7);
        for blk in 0..n / 2 {
            let (a, b) = (2 * blk, 2 * blk + 1);
            for (r, c, v) in [(a, a, 4.0), (a, b, 1.0), (b, a, -1.0), (b, b, 3.0), (a, a, 0.5)] {
                pairs.push(Pair { row: r, col: c });
                values.push(v + rnd());
            }
            if blk > 0 {
                pairs.push(Pair { row: a, col: a - 1 });
                values.push(rnd());
                pairs.push(Pair { row: b, col: a - 2 });
                values.push(rnd());
            }
        }
        let rhs: Vec<f64> = (0..n).map(|_| rnd()).collect();
        let mut sweep = BlockSweep::new(n, &pairs).expect("2 × 2 blocks");
        sweep.factor(&values);
        let mut x1 = rhs.clone();
        sweep.solve(&mut x1).unwrap();
        let mut lu = SparseLu::new(n, &pairs).unwrap();
        lu.factor(&values).unwrap();
        let mut x2 = rhs.clone();
        lu.solve(&mut x2);
        for (a, b) in x1.iter().zip(&x2) {
            assert!((a - b).abs() < 1e-12 * (1.0 + b.abs()), "{a} vs {b}");
        }
        // A cycle through every unknown is one block: too big for the sweep.
        let ring: Vec<Pair<usize, usize>> = (0..n).flat_map(|i| [Pair { row: i, col: i }, Pair { row: i, col: (i + 1) % n }]).collect();
        assert!(BlockSweep::new(n, &ring).is_none());
    }
}
