"""Sparse factorisation of the tangent, giving solves and the inertia from one LU.

For a symmetric tangent the LU is computed with diagonal pivoting in SuperLU's
symmetric mode, so P·K·Pᵀ = L·D·Lᵀ in effect and, by Sylvester's law of inertia, the
number of negative pivots (diagonal of U) is the number of negative eigenvalues of K
(common practice, no source). One factorisation thus serves the Newton solve, the
stability check and the mechanism check.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

__all__ = ["Factorization", "factorize", "SingularTangent"]

#: A pivot this small next to its matrix diagonal is taken as exactly singular
#: (round-off level of an eliminated mechanism is ~1e-16 of the diagonal).
SINGULAR_PIVOT = 1e-14


class SingularTangent(ArithmeticError):
    """The tangent could not be factorised (singular to working precision)."""

    def __init__(self, message: str, dofs: np.ndarray | None = None) -> None:
        super().__init__(message)
        self.dofs = dofs


class Factorization:
    """An LU factorisation of a sparse tangent.

    Attributes
    ----------
    n_negative : int
        Negative pivots; equals the number of negative eigenvalues when
        ``symmetric`` (otherwise the count is of pivots only and indicative).
    symmetric : bool
    pivot_ratio : ndarray, shape (n,)
        |pivot| over the matrix diagonal of the same DOF; a tiny value flags a
        singular direction.
    """

    def __init__(self, K: sp.csc_matrix, symmetric: bool = True) -> None:
        self.symmetric = symmetric
        self.n = K.shape[0]
        self.K = K            # kept for eigenvalue checks (stability, critical points)
        opts = dict(SymmetricMode=True) if symmetric else {}
        thresh = 0.0 if symmetric else 1.0
        try:
            self.lu = spla.splu(K, permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=thresh,
                                options=opts)
        except RuntimeError as exc:  # "Factor is exactly singular"
            raise SingularTangent(str(exc)) from None
        pivots = self.lu.U.diagonal()
        if not np.all(np.isfinite(pivots)):
            raise SingularTangent("The factorisation produced non-finite pivots.")
        self.pivots = pivots
        diag = np.abs(K.diagonal())
        order = np.empty_like(self.lu.perm_c)
        order[self.lu.perm_c] = np.arange(self.n)          # pivot k eliminates DOF order[k]
        self.pivot_dof = order
        with np.errstate(divide="ignore", invalid="ignore"):
            self.pivot_ratio = np.abs(pivots) / np.where(diag[order] > 0, diag[order], np.inf)
        self.n_negative = int(np.count_nonzero(pivots < 0.0))

    @property
    def diagonal_pivoting(self) -> bool:
        """True when every pivot was taken on the diagonal (rows permuted like columns).

        Only then is P·K·Pᵀ = L·D·Lᵀ and ``n_negative`` the inertia of a symmetric K.
        """
        return bool(np.array_equal(self.lu.perm_r, self.lu.perm_c))

    def solve(self, b: np.ndarray) -> np.ndarray:
        """Solve K·x = b for one right-hand side (n,) or several (n, m)."""
        return self.lu.solve(np.asarray(b, dtype=float))

    def near_singular_dofs(self, tol: float = SINGULAR_PIVOT) -> np.ndarray:
        """Free-DOF indices eliminated with a pivot below ``tol`` of their diagonal."""
        return self.pivot_dof[self.pivot_ratio < tol]


def factorize(K: sp.csc_matrix, symmetric: bool = True) -> Factorization:
    """Factorise a tangent; raise :class:`SingularTangent` if it is singular."""
    F = Factorization(K, symmetric)
    if F.n and np.count_nonzero(F.pivot_ratio < SINGULAR_PIVOT):
        raise SingularTangent("The tangent is singular to working precision.",
                              F.near_singular_dofs())
    return F
