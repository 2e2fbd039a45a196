"""Sparse factorisation of the tangent: solves, inertia and singularity from one factor.

Two back ends behind one :class:`Factorization` interface, chosen by the tangent's kind
(:func:`factor`):

* **Symmetric tangents** (every path without follower loads) go through an LDLᵀ
  factorisation without pivoting, QDLDL (the ``qdldl`` wheel). Its symbolic analysis
  (AMD ordering, elimination tree, the pattern of L) depends only on the sparsity
  pattern, which is fixed for a model, so it is done once per pattern and every later
  tangent only refactors the numbers (``Solver.update``): 0.07–0.18 of a SuperLU
  factorisation and solve on 1,000–100,000-element chains (``benchmarks/run.py``).
  By Sylvester's law of inertia the number of negative entries of D is the number of
  negative eigenvalues of K (common practice, no source): the stability check comes
  with the factor.
* **Non-symmetric tangents** (follower loads) go through SuperLU with partial
  pivoting, its fill-reducing ordering reused per pattern. SuperLU is also the
  stand-in when ``qdldl`` is not installed (``BACKEND``): for a symmetric K in
  symmetric mode with diagonal pivoting (then P·K·Pᵀ = L·U with U's diagonal the D
  of an LDLᵀ).
* The **mechanism diagnosis** (:func:`factorize`) reads the pivots of whichever
  factor it gets.

Why QDLDL: a small wheel on PyPI for every common platform (no compiler, no system
library), a numeric refactorisation that reuses the symbolic one, and D available for
the inertia. Supernodal Cholesky packages need SuiteSparse built on the user's machine
and a plain Cholesky fails on the indefinite tangents past a limit point. Unpivoted
LDLᵀ is what the symmetric SuperLU path did already (diagonal pivot threshold 0).

Ordering reuse (SuperLU)
    The tangent's sparsity pattern is fixed for a structure, so its fill-reducing
    ordering (minimum degree on the structure of Kᵀ + K, SuperLU's ``MMD_AT_PLUS_A``)
    is the same at every iteration. The first factorisation of a pattern records the
    ordering SuperLU chose; later matrices of that pattern are permuted by one gather
    of their data (:class:`Ordering`) and factorised with ``permc_spec="NATURAL"``,
    which skips the ordering step (20–60 % of a factorisation of a beam model).

Ownership (QDLDL)
    One ``qdldl.Solver`` per pattern holds the numbers of the last matrix it
    factorised. A :class:`LDLFactorization` remembers which one it is; asked to solve
    after another matrix of its pattern was factorised, it refactors its own numbers
    first (rare: the stepper keeps the factor of its last point while the next
    Newton runs).
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

try:                                   # optional at import: SuperLU stands in without it
    import qdldl
except ImportError:                    # pragma: no cover - exercised by monkeypatching BACKEND
    qdldl = None

__all__ = ["Factorization", "LDLFactorization", "LUFactorization", "factor", "factorize", "shifted",
           "SingularTangent", "Ordering", "scaled_norm", "SINGULAR_PIVOT", "BACKEND"]

#: A pivot below ``SINGULAR_PIVOT · eps · ‖K̃‖₁`` of its matrix diagonal is taken as
#: exactly singular, K̃ = D^-½·K·D^-½ being K scaled to a unit diagonal (so the test
#: does not depend on the units of translations and rotations). The pivot ratio of a
#: true mechanism is round-off, measured at 0.01–11 eps·‖K̃‖₁ for mechanisms of up to
#: 100,000 beam elements; a genuine pivot of a clamped 8 m pole meshed into 30,000
#: elements is 96 eps·‖K̃‖₁, of 1,000 elements 1e6. (A few long chains of 10⁴–10⁵
#: elements have round-off pivots up to 200 eps·‖K̃‖₁: no pivot threshold separates
#: those from genuine ones; benchmarks/RESULTS.md, conditioning.)
SINGULAR_PIVOT = 16.0
#: Sparsity patterns whose ordering (SuperLU) or symbolic factor (QDLDL) is kept: the
#: structures a session alternates between; each costs a few arrays the size of the
#: pattern (QDLDL: also the factor).
N_ORDERINGS = 4
#: Symmetric tangents: ``"ldl"`` (QDLDL when installed) or ``"superlu"``.
BACKEND = "ldl" if qdldl is not None else "superlu"

_EPS = np.finfo(float).eps
_SUPERLU_ORDERING = "MMD_AT_PLUS_A"


class SingularTangent(ArithmeticError):
    """The tangent could not be factorised (singular to working precision)."""

    def __init__(self, message: str, dofs: np.ndarray | None = None) -> None:
        super().__init__(message)
        self.dofs = dofs


def _same_pattern(K, indptr: np.ndarray, indices: np.ndarray) -> bool:
    if K.indices is indices and K.indptr is indptr:      # the assembly's own arrays
        return True
    return (len(K.indices) == len(indices) and np.array_equal(K.indptr, indptr)
            and np.array_equal(K.indices, indices))


class Ordering:
    """A fill-reducing symmetric permutation of one CSC sparsity pattern.

    Parameters
    ----------
    indptr, indices : ndarray
        The pattern (canonical CSC: sorted, no duplicates), shape (n + 1,) and (nnz,).
    perm : ndarray, shape (n,)
        New position of each DOF (SuperLU's ``perm_c``); ``order`` is its inverse:
        position k holds DOF ``order[k]``.

    Attributes
    ----------
    src : ndarray, shape (nnz,)
        Data index in the original matrix of each entry of the permuted one, so that
        ``Kp.data = K.data[src]``.
    """

    def __init__(self, indptr: np.ndarray, indices: np.ndarray, perm: np.ndarray) -> None:
        n = len(indptr) - 1
        self.n = n
        self.indptr_ref, self.indices_ref = indptr.copy(), indices.copy()
        self.perm = np.asarray(perm, dtype=np.int64)
        self.order = np.empty(n, dtype=np.int64)
        self.order[self.perm] = np.arange(n)
        # entry e of column j, row i moves to column perm[j], row perm[i]
        nnz = len(indices)
        M = sp.csc_matrix((np.arange(1, nnz + 1, dtype=float), indices, indptr), shape=(n, n))
        Mp = M[self.order][:, self.order].tocsc()
        Mp.sort_indices()
        self.src = Mp.data.astype(np.int64) - 1
        self.indices = Mp.indices.astype(np.int32)
        self.indptr = Mp.indptr.astype(np.int32)

    def matches(self, K: sp.csc_matrix) -> bool:
        """True when ``K`` has exactly this pattern."""
        if K.shape != (self.n, self.n) or K.nnz != len(self.src):
            return False
        return _same_pattern(K, self.indptr_ref, self.indices_ref)

    def permuted(self, K: sp.csc_matrix) -> sp.csc_matrix:
        """P·K·Pᵀ for a matrix of this pattern: entry (order[i], order[j]) of K at (i, j)."""
        return sp.csc_matrix((K.data[self.src], self.indices, self.indptr), shape=K.shape)


_orderings: list[Ordering] = []


def _known_ordering(K) -> Ordering | None:
    if K.format != "csc":
        return None
    for i, o in enumerate(_orderings):
        if o.matches(K):
            if i:                                    # most recently used first
                _orderings.insert(0, _orderings.pop(i))
            return o
    return None


def _remember(K, perm) -> None:
    if K.format != "csc" or not K.has_canonical_format:
        return                           # a gather map needs sorted, unique entries
    _orderings.insert(0, Ordering(K.indptr, K.indices, perm))
    del _orderings[N_ORDERINGS:]


#: Entries per block of :func:`scaled_norm`: its temporaries are two buffers of this
#: size, reused block to block, instead of two arrays the size of K (2 × 21 MB at
#: 100,000 beams, whose first touches cost 0.06-0.14 s on a VM against 0.016 s warm).
NORM_BLOCK = 1 << 16


def scaled_norm(K: sp.spmatrix) -> float:
    """‖D^-½·|K|·D^-½‖₁ with D = |diag K| (zero diagonals count as one)."""
    if K.format != "csc":
        K = sp.csc_matrix(K)               # a CSC tangent is read as it is (no copy)
    n = K.shape[1]
    d = np.abs(K.diagonal())
    w = 1.0 / np.sqrt(np.where(d > 0, d, 1.0))
    indptr, indices, data = K.indptr, K.indices, K.data
    # column sums of |K|·w[row], then × w[col], over blocks of whole columns
    sums = np.zeros(n)
    size = min(NORM_BLOCK, len(data))
    a_buf, w_buf = np.empty(size), np.empty(size)
    col = 0
    while col < n:                         # each pass takes at least one column
        end = max(int(np.searchsorted(indptr, indptr[col] + NORM_BLOCK, side="right")) - 1, col + 1)
        lo, hi = int(indptr[col]), int(indptr[end])
        m = hi - lo
        if m > len(a_buf):                 # a single column longer than a block
            a_buf, w_buf = np.empty(m), np.empty(m)
        a = np.abs(data[lo:hi], out=a_buf[:m])
        a *= np.take(w, indices[lo:hi], out=w_buf[:m])
        starts = indptr[col:end] - lo
        filled = starts < indptr[col + 1:end + 1] - lo
        if m and filled.any():
            sums[col:end][filled] = np.add.reduceat(a, starts[filled])
        col = end
    return float((sums * w).max(initial=0.0))


class Factorization:
    """A factorisation of a sparse tangent (base of the two back ends).

    The pivots and what derives from them are computed when first asked for (a
    Newton iteration that only solves never pays for them).

    Attributes
    ----------
    n_negative : int
        Negative pivots; equals the number of negative eigenvalues when
        ``symmetric`` (otherwise the count is of pivots only and indicative).
    symmetric : bool
    backend : str
        ``"ldl"`` (QDLDL) or ``"superlu"``.
    pivots : ndarray, shape (n,)
        D of the LDLᵀ (diagonal of U for SuperLU), in elimination order.
    pivot_dof : ndarray, shape (n,)
        The DOF (index into K) each pivot eliminates.
    pivot_ratio : ndarray, shape (n,)
        |pivot| over the matrix diagonal of the same DOF; a tiny value flags a
        singular direction.
    """

    backend = ""

    def __init__(self, K: sp.csc_matrix, symmetric: bool) -> None:
        self.symmetric = symmetric
        self.n = K.shape[0]
        self.K = K            # kept for eigenvalue checks (stability, critical points)
        self._pivots = None

    def solve(self, b: np.ndarray) -> np.ndarray:
        """Solve K·x = b for one right-hand side (n,) or several (n, m)."""
        raise NotImplementedError

    def _pivots_in_order(self) -> tuple[np.ndarray, np.ndarray]:
        """(pivots, DOF each eliminates), in elimination order."""
        raise NotImplementedError

    def _diagonal(self) -> np.ndarray:
        return self.K.diagonal()

    def _compute_pivots(self) -> None:
        pivots, order = self._pivots_in_order()
        if not all_finite(pivots):
            raise SingularTangent("The factorisation produced non-finite pivots.")
        self._pivots = pivots
        self._pivot_dof = order
        self._pivot_ratio = None           # when asked (the mechanism check), not per point

    @property
    def pivots(self) -> np.ndarray:
        if self._pivots is None:
            self._compute_pivots()
        return self._pivots

    @property
    def pivot_dof(self) -> np.ndarray:
        self.pivots
        return self._pivot_dof

    @property
    def pivot_ratio(self) -> np.ndarray:
        order = self.pivot_dof
        if self._pivot_ratio is None:
            diag = np.abs(self._diagonal())
            with np.errstate(divide="ignore", invalid="ignore"):
                self._pivot_ratio = np.abs(self._pivots) / np.where(diag[order] > 0, diag[order], np.inf)
        return self._pivot_ratio

    @property
    def n_negative(self) -> int:
        return int(np.count_nonzero(self.pivots < 0.0))

    @property
    def diagonal_pivoting(self) -> bool:
        """True when every pivot was taken on the diagonal (rows permuted like columns).

        Only then is P·K·Pᵀ = L·D·Lᵀ and ``n_negative`` the inertia of a symmetric K.
        """
        return True

    def singular_threshold(self) -> float:
        """The pivot ratio below which a pivot counts as exactly singular."""
        return SINGULAR_PIVOT * _EPS * scaled_norm(self.K)

    def near_singular_dofs(self, tol: float | None = None) -> np.ndarray:
        """Free-DOF indices eliminated with a pivot ratio below ``tol``
        (default :meth:`singular_threshold`)."""
        tol = self.singular_threshold() if tol is None else tol
        return self.pivot_dof[self.pivot_ratio < tol]


class LUFactorization(Factorization):
    """SuperLU: symmetric mode with diagonal pivoting for a symmetric K, partial
    pivoting otherwise; the fill-reducing ordering reused per pattern."""

    backend = "superlu"

    def __init__(self, K: sp.csc_matrix, symmetric: bool = True) -> None:
        super().__init__(K, symmetric)
        opts = dict(SymmetricMode=True) if symmetric else {}
        thresh = 0.0 if symmetric else 1.0
        known = _known_ordering(K) if self.n else None
        self.order = known.order if known is not None else None
        try:
            if known is None:
                self.lu = spla.splu(K, permc_spec=_SUPERLU_ORDERING, diag_pivot_thresh=thresh,
                                    options=opts)
                if self.n:
                    _remember(K, self.lu.perm_c)
            else:
                self.lu = spla.splu(known.permuted(K), permc_spec="NATURAL",
                                    diag_pivot_thresh=thresh, options=opts)
        except RuntimeError as exc:  # "Factor is exactly singular"
            raise SingularTangent(str(exc)) from None

    def _pivots_in_order(self):
        inner = np.empty_like(self.lu.perm_c)
        inner[self.lu.perm_c] = np.arange(self.n)          # pivot k eliminates row inner[k]
        order = inner if self.order is None else self.order[inner]
        return self.lu.U.diagonal(), order

    @property
    def diagonal_pivoting(self) -> bool:
        return bool(np.array_equal(self.lu.perm_r, self.lu.perm_c))

    def solve(self, b: np.ndarray) -> np.ndarray:
        b = np.asarray(b, dtype=float)
        if self.order is None:
            return self.lu.solve(b)
        x = np.empty_like(b)
        x[self.order] = self.lu.solve(b[self.order])
        return x


class _Symbolic:
    """One sparsity pattern's QDLDL solver and the gather of K's upper triangle."""

    def __init__(self, K: sp.csc_matrix) -> None:
        self.indptr_ref, self.indices_ref = K.indptr, K.indices
        n = K.shape[0]
        cols = np.repeat(np.arange(n, dtype=K.indices.dtype), np.diff(K.indptr))
        self.upper = np.flatnonzero(K.indices <= cols)       # entries of triu(K), in order
        diagonal = np.flatnonzero(K.indices == cols)
        self.diagonal = diagonal if len(diagonal) == n else None   # None: a zero by pattern
        self.indices = K.indices[self.upper].astype(np.int32)
        self.indptr = np.concatenate([[0], np.cumsum(np.bincount(cols[self.upper], minlength=n))]
                                     ).astype(np.int32)
        self.n = n
        self.template = pattern_matrix(self.indices, self.indptr, n)
        self.solver = None
        self.owner = None                  # the factorisation whose numbers it holds

    def matches(self, K) -> bool:
        if K.shape != (self.n, self.n) or not _same_pattern(K, self.indptr_ref, self.indices_ref):
            return False
        # equal arrays: hold on to these, the ones the assembly's tangents share, so
        # that the next match is by identity (tangents' index arrays are never modified)
        self.indptr_ref, self.indices_ref = K.indptr, K.indices
        return True

    def upper_triangle(self, K) -> sp.csc_matrix:
        return with_data(self.template, K.data[self.upper])

    def factor(self, Ku, owner) -> None:
        """Factorise ``Ku`` (the upper triangle of a checked K) for ``owner``."""
        self.owner = None                  # until the new numbers are complete
        try:
            if self.solver is None:
                self.solver = qdldl.Solver(Ku, upper=True)
            else:
                self.solver.update(Ku, upper=True)
        except (ValueError, RuntimeError) as exc:        # a zero pivot in a new solver
            self.solver = None
            raise SingularTangent(f"The LDLᵀ factorisation failed: {exc}") from None
        self.owner = owner


_symbolics: list[_Symbolic] = []


def _symbolic(K) -> _Symbolic:
    for i, s in enumerate(_symbolics):
        if s.matches(K):
            if i:
                _symbolics.insert(0, _symbolics.pop(i))
            return s
    s = _Symbolic(K)
    _symbolics.insert(0, s)
    del _symbolics[N_ORDERINGS:]
    return s


class LDLFactorization(Factorization):
    """QDLDL: K = P·(I + L)·D·(I + L)ᵀ·Pᵀ, no pivoting; the symbolic factor reused per
    pattern, only the numbers refactored (module docstring)."""

    backend = "ldl"

    def __init__(self, K: sp.csc_matrix) -> None:
        super().__init__(K, True)
        if K.format != "csc" or not K.has_sorted_indices:
            K = sp.csc_matrix(K)
            K.sum_duplicates()
            K.sort_indices()
            self.K = K
        self._symbolic = sym = _symbolic(K)
        # QDLDL's numeric update reports no failure: a zero pivot stops it and leaves
        # stale numbers. A zero pivot in floating point comes from a zero row (a node
        # whose every member went slack), caught here for O(n); D itself is checked
        # when the pivots are read (inertia, mechanism check).
        if sym.diagonal is None or np.count_nonzero(K.data[sym.diagonal]) < self.n:
            raise SingularTangent("The tangent has a zero on its diagonal.")
        if not all_finite(K.data):
            raise SingularTangent("The tangent has non-finite entries.")
        self._Ku = sym.upper_triangle(K)
        sym.factor(self._Ku, self)

    def _solver(self):
        s = self._symbolic
        if s.owner is not self:                       # another matrix was factorised since
            s.factor(self._Ku, self)
        return s.solver

    def _diagonal(self) -> np.ndarray:
        return self.K.data[self._symbolic.diagonal]        # no zero by pattern (checked)

    def _pivots_in_order(self):
        _, d, perm = self._solver().factors()
        d = np.asarray(d)
        if np.count_nonzero(d) < len(d):
            raise SingularTangent("The LDLᵀ factorisation met a zero pivot.")
        return d, np.asarray(perm, dtype=np.int64)

    def solve(self, b: np.ndarray) -> np.ndarray:
        b = np.asarray(b, dtype=float)
        solver = self._solver()
        if b.ndim == 1:
            return solver.solve(b)
        return np.column_stack([solver.solve(np.ascontiguousarray(col)) for col in b.T])

    def __getstate__(self):
        raise TypeError("A factorisation holds a native solver and does not pickle; "
                        "refactorise K after loading.")


def all_finite(x: np.ndarray) -> bool:
    """True when every entry of ``x`` is finite (the ufunc's reduce directly: ``.all()``
    goes through two Python-level wrappers, and this runs several times a Newton
    iteration)."""
    return bool(np.logical_and.reduce(np.isfinite(x), axis=None))


def pattern_matrix(indices: np.ndarray, indptr: np.ndarray, n: int) -> sp.csc_matrix:
    """A validated (n, n) CSC matrix of zeros on a canonical pattern: the template of
    :func:`with_data`. Its sorted/canonical flags are checked here once and cached on
    it (scipy keeps them on the object), so every copy inherits them instead of
    re-checking at every factorisation."""
    template = sp.csc_matrix((np.zeros(len(indices)), indices, indptr), shape=(n, n))
    template.has_sorted_indices, template.has_canonical_format
    return template


def with_data(template: sp.csc_matrix, data: np.ndarray) -> sp.csc_matrix:
    """A matrix sharing ``template``'s (validated) pattern with the numbers ``data``.

    A shallow copy: the index arrays are shared and never modified in place, and
    scipy's validation (several times the cost of the copy on small models) was paid
    once for the template. Faster than ``copy.copy``, whose reduce protocol is most
    of a small tangent's copy.
    """
    K = template.__class__.__new__(template.__class__)
    K.__dict__.update(template.__dict__)
    K.data = data
    return K


def shifted(K: sp.csc_matrix, diagonal: np.ndarray) -> sp.csc_matrix:
    """K + diag(``diagonal``) with K's sparsity pattern (explicit zeros kept), so that
    its factorisation reuses the pattern's symbolic analysis; shape (n, n)."""
    n = K.shape[0]
    if K.format == "csc" and K.has_canonical_format:
        cols = np.repeat(np.arange(n), np.diff(K.indptr))
        on_diagonal = K.indices == cols
        if np.count_nonzero(on_diagonal) == n:
            Ks = with_data(K, K.data.copy())
            Ks.data[on_diagonal] += diagonal
            return Ks
    return (K + sp.diags(diagonal)).tocsc()


def factor(K: sp.csc_matrix, symmetric: bool = True) -> Factorization:
    """Factorise a tangent with the back end for its kind (module docstring).

    Raises :class:`SingularTangent` only when the factorisation itself breaks down
    (an exactly zero pivot); use :func:`factorize` to reject near-singular tangents.
    """
    if symmetric and BACKEND == "ldl" and qdldl is not None and K.shape[0]:
        return LDLFactorization(K)
    return LUFactorization(K, symmetric)


def factorize(K: sp.csc_matrix, symmetric: bool = True) -> Factorization:
    """Factorise a tangent with :func:`factor` and raise :class:`SingularTangent` if it
    is singular to working precision (a pivot ratio below :meth:`singular_threshold`).

    The threshold was calibrated on SuperLU's pivots; QDLDL's separate a mechanism at
    least as well (a 10,000-element pole on a pin: smallest pivot ratio 1.8e-15 against
    SuperLU's 4.8e-14, threshold 1.2e-14; clamped, 1.3e-13 and 1.0e-12), and the
    start then needs one factorisation, whose analysis Newton reuses.
    """
    F = factor(K, symmetric)
    if F.n:
        dofs = F.near_singular_dofs()
        if len(dofs):
            raise SingularTangent("The tangent is singular to working precision.", dofs)
    return F
