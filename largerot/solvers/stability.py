"""Stability of an equilibrium point from its tangent.

Symmetric tangent (conservative loads)
    The number of negative eigenvalues comes free with the Newton factorisation:
    with diagonal pivoting P·K·Pᵀ = L·D·Lᵀ and, by Sylvester's law of inertia, the
    negative pivots count the negative eigenvalues (common practice, no source).
    Should SuperLU ever leave the diagonal (a zero pivot), the count is redone with
    eigenvalues instead.

Non-symmetric tangent (follower loads, ``Problem.symmetric`` False)
    Pivot signs say nothing then. The eigenvalues of smallest magnitude are found
    with ``scipy.sparse.linalg.eigs`` in shift-invert mode about zero (dense
    ``numpy.linalg.eigvals`` for small models); a point counts as unstable when one
    of them has a negative real part. Only the ``N_NONSYMMETRIC`` eigenvalues nearest
    zero are examined, so the count is a lower bound; it is exact at a loss of
    stability from a stable state, which is what the critical-point search needs.

The point is stable when the count is zero.
"""
from __future__ import annotations

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from ..linalg import Factorization, SingularTangent, factor

__all__ = ["count_negative", "eigenpair", "DENSE_MAX"]

#: Up to this many free DOFs eigenvalues are computed densely: the LAPACK call on a
#: few hundred unknowns takes milliseconds and has no convergence failures.
DENSE_MAX = 600
#: Eigenvalues nearest zero examined for a non-symmetric tangent (a handful
#: suffices: stability is lost one or two eigenvalues at a time).
N_NONSYMMETRIC = 6
#: Eigenpairs nearest zero computed for a large symmetric tangent: the eigenvalue that
#: changes sign at a critical point is among them.
N_NEAREST = 4
#: Restarts of ARPACK at most. Its default (10·n) is unbounded in practice: without
#: shift-invert the smallest eigenvalues of a 90,000-DOF tangent took over 10 minutes.
ARPACK_MAXITER = 300


def count_negative(fact: Factorization) -> int:
    """Negative eigenvalues (real parts) of the factorised tangent ``fact.K``."""
    if fact.symmetric:
        if fact.diagonal_pivoting:
            return fact.n_negative
        return int(np.count_nonzero(_symmetric_values(fact.K, fact.n_negative + 2) < 0.0))
    w = _nonsymmetric_values(fact.K)
    return int(np.count_nonzero(w.real < 0.0))


def _symmetric_values(K: sp.spmatrix, k: int) -> np.ndarray:
    n = K.shape[0]
    if n <= DENSE_MAX:
        return np.linalg.eigvalsh(K.toarray())
    k = min(max(k, 1), n - 1)
    return np.sort(spla.eigsh(K, k=k, which="SA", maxiter=ARPACK_MAXITER,
                              return_eigenvectors=False))


def _nonsymmetric_values(K: sp.spmatrix) -> np.ndarray:
    n = K.shape[0]
    if n <= DENSE_MAX:
        return np.linalg.eigvals(K.toarray())
    k = min(N_NONSYMMETRIC, n - 2)
    return spla.eigs(K, k=k, sigma=0.0, which="LM", maxiter=ARPACK_MAXITER,
                     return_eigenvectors=False)


def _nearest_pair(K: sp.spmatrix, j: int) -> tuple[float, np.ndarray]:
    """Eigenpair number ``j`` (ascending) of a large symmetric K, from the ``N_NEAREST``
    eigenpairs nearest zero by shift-invert (``K⁻¹`` by the LDLᵀ factor, whose D also
    counts the eigenvalues below them); the one nearest zero if ``j`` is not among them."""
    n = K.shape[0]
    k = min(N_NEAREST, n - 1)
    try:
        fact = factor(K)
        inverse = spla.LinearOperator(K.shape, matvec=fact.solve, dtype=float)
        w, v = spla.eigsh(K, k=k, sigma=0.0, which="LM", OPinv=inverse, maxiter=ARPACK_MAXITER)
    except (SingularTangent, spla.ArpackNoConvergence, spla.ArpackError):
        w, v = spla.eigsh(K, k=min(j + 2, n - 1), which="SA", maxiter=ARPACK_MAXITER)
        order = np.argsort(w)
        return float(w[order[j]]), v[:, order[j]]
    order = np.argsort(w)
    w, v = w[order], v[:, order]
    i = j - (fact.n_negative - int(np.count_nonzero(w < 0.0)))   # index among the nearest
    if not 0 <= i < k:
        i = int(np.argmin(np.abs(w)))
    return float(w[i]), v[:, i]


def eigenpair(K: sp.spmatrix, j: int, symmetric: bool = True) -> tuple[float, np.ndarray]:
    """The eigenvalue that decides a change of stability, with its eigenvector.

    Parameters
    ----------
    K : sparse matrix, shape (n, n)
    j : int
        For a symmetric K, the index (ascending, from 0) of the eigenvalue tracked:
        between points with a and b negative eigenvalues it is ``min(a, b)``.
        Ignored for a non-symmetric K, where the real eigenvalue nearest zero is used.
    symmetric : bool

    Returns
    -------
    mu : float
        The eigenvalue (real part), changing sign at the critical point.
    phi : ndarray, shape (n,)
        Its unit eigenvector (real part for a non-symmetric K).
    """
    n = K.shape[0]
    if symmetric:
        if n <= DENSE_MAX:
            # one eigenpair by index (LAPACK's MRRR): several times faster than all
            w, v = sla.eigh(K.toarray(), subset_by_index=[j, j], driver="evr")
            return float(w[0]), v[:, 0]
        return _nearest_pair(K, j)
    if n <= DENSE_MAX:
        w, v = np.linalg.eig(K.toarray())
    else:
        w, v = spla.eigs(K, k=min(N_NONSYMMETRIC, n - 2), sigma=0.0, which="LM")
    i = int(np.argmin(np.abs(w)))
    phi = np.real(v[:, i])
    return float(w[i].real), phi / np.linalg.norm(phi)
