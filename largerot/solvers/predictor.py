"""Moving along an increment with the beams' chords kept whole (predictor and corrections).

The tangent predictor u + Δλ·δu_F moves every node along a straight line. A beam
element whose chord turns by φ in the step then comes out stretched by about
l·φ²/2 and turned by φ − φ³/3 instead of φ. Both are second- and third-order
errors, harmless on a coarse mesh; on a fine one they are not: the axial force
EA·φ²/2 of a stiff section is far above the loads (the lighting pole's 0.8 mm
elements: EA·φ²/2 ≈ 600 kN against a 3 kN tip load), and the end moments of an
element turned wrongly by φ³/3 grow like EI/l (≈ 300 kN·m against 8 kN·m). Newton's
first correction from such a point is wild, and a 10,000-element cantilever took
7–8 iterations per point and cut its steps.

So the predictor keeps the linear increments of what the beams feel and rebuilds
the positions from them: each beam chord x₀ (at the last point) gets the length
l₀ + Δl and the direction φ₀ + Δφ of the tangent increment to first order
(Δl = e·Δd, Δφ = e⊥·Δd / l₀, Δd the increment of the chord vector), and the node
translations are the least-squares fit to those chords, weighted by EA/l₀
(exactly the chords, integrated from the supports, on a tree of beams such as a
cantilever; the closure error of a closed frame shared out by axial stiffness).
Rotations, the other kinds' DOFs and DOFs no beam touches keep the tangent
increment. The change from the tangent predictor is of second order in the step.

The same rebuild moves the nodes along each Newton correction (``Problem.moved``,
``newton.CHORD_CORRECTION``): a correction on a fine mesh turns the short chords just
as a predictor does.

The normal equations are (GᵀWG + εI)·δ = GᵀW·m, where G maps the free translations
to chord vectors (one row per chord and direction, ±1 at its two ends), W the
weights, m the chords' misfit at the tangent predictor and ε = ``ANCHOR`` × the
mean weight ties translations that no support holds (a floating beam) to the
tangent predictor. A factorisation that fails, or a fit that is not finite, leaves
the tangent predictor as it is.
"""
from __future__ import annotations

import logging

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from ..linalg import all_finite

__all__ = ["chord_consistent", "chord_fit", "ChordFit"]

log = logging.getLogger(__name__)

#: Tie of every fitted translation to the tangent predictor, share of the mean chord
#: weight. The softest mode of a chain of n beams fixed at one end has weight about
#: 2.5/n² of a chord's (1e-8 at 10⁴, 1e-10 at 10⁵ elements): 1e-12 changes the fit
#: there by 1e-4 to 1e-2 of the misfit (itself of second order), while a beam no
#: support holds keeps the predictor's rigid motion instead of a singular system.
ANCHOR = 1e-12
#: Up to this many fitted translations the fit is one dense product with the
#: precomputed (GᵀWG + εI)⁻¹·GᵀW (at most 300 × 600 doubles, 1.4 MB): on the small
#: models people re-trace interactively the sparse product and SuperLU solve are
#: mostly call overhead, three times per point (a 40-element pole: 80 translations).
DENSE_FIT_MAX = 300


class ChordFit:
    """The constant part of the chord fit of one assembly: G, the weights and the
    factorised normal matrix GᵀWG + εI (the chords' end DOFs and stiffnesses do not
    change along a path, so this is built once; module docstring).

    Attributes
    ----------
    dm : ndarray of int, shape (n, 4)
        Global DOFs ux, uy of each chord's first end, then of its second.
    dX : ndarray, shape (n, 2)
        Undeformed chord vectors.
    used : ndarray of int, shape (m,)
        Free-DOF indices of the fitted translations (at an inclined roller, the one
        along its direction, entering the chords' x and y by its cosine and sine).
    dense : ndarray, shape (m, 2n), or None
        (GᵀWG + εI)⁻¹·GᵀW when m ≤ ``DENSE_FIT_MAX`` (or ``dense=True`` is asked
        for): the fit as one product; else the normal matrix's sparse LU, ``lu``.
    ok : bool
        False when there are no chords or the normal matrix is singular (no fit).
    """

    def __init__(self, assembly, dense: bool | None = None) -> None:
        tables = [g.chords for g in assembly.groups]
        tables = [t for t in tables if t is not None and len(t[0])]
        self.empty = not tables
        self.ok = False
        if self.empty:
            return
        self.dm = np.concatenate([t[0] for t in tables])        # (n, 4)
        self.dX = np.concatenate([t[1] for t in tables])        # (n, 2)
        k = np.concatenate([t[2] for t in tables])              # (n,)
        n = len(k)
        fi = assembly.free_index
        rows = np.tile(np.arange(2 * n), 2)
        g = np.concatenate([self.dm[:, 2:4].ravel(), self.dm[:, 0:2].ravel()])
        vals = np.repeat([1.0, -1.0], 2 * n)
        node, d = g // 3, g % 3
        rolls = assembly._roller[node]                       # inclined rollers: one DOF along
        cols = fi[np.where(rolls, 3 * node, g)]
        vals = vals * np.where(rolls, assembly._roller_dir[node, np.minimum(d, 1)], 1.0)
        held = cols < 0                                        # a supported end stays put
        self.used, cols = np.unique(cols[~held], return_inverse=True)
        rows, vals, m = rows[~held], vals[~held], len(self.used)
        self.w = np.repeat(k, 2)
        eps = ANCHOR * float(k.mean())
        self.lu = self.dense = None
        if m <= DENSE_FIT_MAX if dense is None else dense:
            # small models: all in numpy, no sparse construction (most of a small
            # model's set-up) and the fit one product with a (m, 2n) matrix
            G = np.zeros((2 * n, m))
            np.add.at(G, (rows, cols), vals)
            GtW = G.T * self.w
            A = GtW @ G
            A.flat[::m + 1] += eps
            try:
                dense = np.linalg.solve(A, GtW)
                self.ok = bool(np.isfinite(dense).all())
            except np.linalg.LinAlgError as exc:               # singular: no fit
                log.debug("chord fit unavailable: %s", exc)
            self.dense = dense if self.ok else None
            self.gather = G
        else:
            G = sp.csc_matrix((vals, (rows, cols)), shape=(2 * n, m))
            self.GtW = (G.T @ sp.diags(self.w)).tocsr()
            A = (self.GtW @ G + sp.identity(m) * eps).tocsc()
            try:
                self.lu = spla.splu(A)
                self.ok = True
            except RuntimeError as exc:                        # singular: no fit
                log.debug("chord fit unavailable: %s", exc)
            self.gather = G.tocsr()
        # the chords from the free unknowns: x = dX + G·u[used] + λ·a_ref + c·a_const,
        # (2n,) in x, y per chord; a_* the imposed displacements' part (expanded's own
        # rule, so rollers and imposed DOFs read as everywhere else), None without
        self.chords0 = np.ascontiguousarray(self.dX).ravel()
        self.imposed = None
        model = assembly.model
        if len(model.imposed):
            zero = np.zeros(assembly.n_free)
            parts = [model.expanded(assembly.free, zero, lam, cf) for lam, cf in ((1.0, 0.0), (0.0, 1.0))]
            self.imposed = [(U[self.dm[:, 2:4]] - U[self.dm[:, 0:2]]).ravel() for U in parts]

    def solve(self, misfit: np.ndarray) -> np.ndarray:
        """The fitted translations' change δ, shape (m,), for a chord misfit (2n,)."""
        if self.dense is not None:
            return self.dense @ misfit
        return self.lu.solve(self.GtW @ misfit)

    def __getstate__(self) -> dict:
        raise TypeError("ChordFit holds a native factorisation; rebuild it from the assembly.")


def chord_fit(assembly) -> ChordFit:
    """The assembly's :class:`ChordFit`, built on first use and kept with it."""
    fit = assembly.__dict__.get("_chord_fit")
    if fit is None:
        fit = assembly.__dict__["_chord_fit"] = ChordFit(assembly)
    return fit


def chord_consistent(assembly, u0: np.ndarray, u1: np.ndarray, lam0: float = 0.0,
                     lam1: float | None = None, const_factor: float = 1.0) -> np.ndarray:
    """The tangent predictor ``u1`` from ``u0`` with the beams' chords rebuilt.

    Parameters
    ----------
    assembly : Assembly
        Its groups' ``chords`` give the beam chords.
    u0 : ndarray, shape (n_free,)
        The last converged point.
    u1 : ndarray, shape (n_free,)
        The tangent predictor ``u0 + Δλ·δu_F``.
    lam0, lam1 : float
        Load factors of the two states (``lam1`` default ``lam0``): the imposed DOFs
        move from λ0·ū_ref + const_factor·ū_const by (λ1 − λ0)·ū_ref.
    const_factor : float

    Returns
    -------
    ndarray, shape (n_free,)
        The predictor with the free translations of beam nodes fitted to chords of
        the first-order length and direction (module docstring); ``u1`` itself
        when there are no beams or the fit fails.
    """
    fit = chord_fit(assembly)
    if not fit.ok:
        return u1
    # chords at u0 and their increment, (2n,) each, then as x + iy per chord
    base = u0[fit.used]
    x0 = fit.chords0 + fit.gather @ base
    d = fit.gather @ (u1[fit.used] - base)
    if fit.imposed is not None:
        a_ref, a_const = fit.imposed
        x0 += lam0 * a_ref + const_factor * a_const
        d += ((lam0 if lam1 is None else lam1) - lam0) * a_ref
    z0, dz = x0.view(complex), d.view(complex)
    w = dz / z0                                  # Δl/l0 + i·Δφ to first order
    if log.isEnabledFor(logging.DEBUG):
        log.debug("chord fit: largest turn %.3g rad", float(np.abs(w.imag).max()))
    # target chord − predicted one: (1 + e)·e^{iφ}·z0 − z0 − dz, with (1 + e)·e^{iφ} − 1
    # written as e·e^{iφ} + expm1(iφ): no 1 + e is formed, so a correction far below
    # the chord's round-off keeps its digits (and its axial part) instead of being
    # fitted away
    turn = np.expm1(1j * w.imag)
    misfit = (z0 * (w.real * (turn + 1.0) + turn) - dz).view(float)   # (2n,): x, y per chord
    delta = fit.solve(misfit)
    if not all_finite(delta):
        return u1
    u = u1.copy()
    u[fit.used] += delta
    return u
