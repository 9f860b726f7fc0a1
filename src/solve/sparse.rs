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
