"""Linear buckling: the eigenproblem (K0 + λ·Kσ)·φ = 0 and imperfections from its modes.

K0 is the tangent of the unloaded structure and Kσ the geometric (stress) stiffness
of the linear state under the reference load, u1 = K0⁻¹F. The element forces of
that state (N, M1, M2) are taken from the element kernels by a central difference
about u = 0, exact to O(ε²) as their quadratic part cancels, and Kσ is the
stress-dependent part of the corotational tangent at the undeformed geometry
(common practice, no source; e.g. Timoshenko & Gere 1961, *Theory of Elastic
Stability*, for the problem, and the element files for the tangent). Constant
loads are not part of the pre-buckling state here.

Solved as −Kσ·φ = μ·K0·φ with μ = 1/λ, since K0 is positive definite: dense LAPACK
for small models, ARPACK (``scipy.sparse.linalg.eigsh``) for large ones. Only
positive λ (the reference load's own sense) are returned.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from .errors import ModelError
from .model import Structure

__all__ = ["buckling", "Buckling", "imperfect"]

#: Free DOFs up to which the generalised eigenproblem is solved densely (LAPACK is
#: fast and failure-free at this size).
DENSE_MAX = 800


@dataclass
class Buckling:
    """Result of :func:`buckling`.

    Attributes
    ----------
    structure : Structure
    load_factors : ndarray, shape (n_modes,)
        Critical load factors, ascending, all positive.
    modes : ndarray, shape (n_modes, 3·n_nodes)
        Mode shapes as full DOF vectors (restrained DOFs zero), largest
        translation 1 and positive.
    """

    structure: Structure = field(repr=False)
    load_factors: np.ndarray
    modes: np.ndarray = field(repr=False)

    def __len__(self) -> int:
        return len(self.load_factors)

    def perturbed(self, i: int, amplitude: float) -> Structure:
        """A new structure imperfect by ``amplitude`` times mode ``i`` (see :func:`imperfect`)."""
        if not -len(self) <= int(i) < len(self):
            raise IndexError(f"Mode index {i!r} out of range: {len(self)} modes were computed.")
        return imperfect(self.structure, self.modes[int(i)], amplitude)


def _unit_mode(phi_full: np.ndarray) -> np.ndarray:
    t = phi_full.reshape(-1, 3)[:, :2].ravel()
    ref = t if np.any(t) else phi_full
    k = int(np.argmax(np.abs(ref)))
    return phi_full / ref[k]


def buckling(structure: Structure, modes: int = 3) -> Buckling:
    """Linear buckling load factors and modes under the structure's reference load.

    Parameters
    ----------
    structure : Structure
    modes : int
        How many of the lowest positive critical load factors to return (fewer
        when the structure has fewer).

    Returns
    -------
    Buckling

    Examples
    --------
    >>> import math, largerot as lr
    >>> s = lr.Structure()
    >>> a, b = s.node(0.0, 0.0), s.node(0.0, 1.0)
    >>> _ = s.beam(a, b, lr.Section(E=1.0, A=1e4, I=1.0), segments=10)
    >>> s.fix(a); s.load(b, fy=-1.0)
    >>> res = lr.buckling(s, modes=1)
    >>> print(round(float(res.load_factors[0]) / (math.pi**2 / 4), 4))    # π²EI/(4L²)
    1.0
    """
    if isinstance(modes, bool) or not isinstance(modes, (int, np.integer)) or modes < 1:
        raise ValueError(f"`modes` must be a positive integer, got {modes!r}.")
    if not hasattr(structure, "snapshot"):
        raise ModelError(f"Expected a largerot.Structure, got {structure!r}.")
    model = structure.snapshot()
    asm = model.assembly
    F = asm.external(np.zeros(asm.n_dof))[0][asm.free]      # follower loads as at rest
    if not F.any():
        raise ModelError("Linear buckling needs a reference load; the structure has none.")
    n = asm.n_free
    K0 = asm.evaluate(np.zeros(asm.n_dof), asm.initial_states(), True).K
    try:
        lu = spla.splu(K0.tocsc())
        u1 = lu.solve(F)
    except RuntimeError:
        raise ModelError("The unloaded structure is a mechanism: its stiffness is singular.") from None
    Ks = asm.stress_stiffness(asm.expand(u1))
    if asm.has_followers:
        # follower loads: their load stiffness −∂F/∂u per unit λ joins Kσ
        Ks = (Ks + asm.load_stiffness(np.zeros(asm.n_dof), 1.0, 0.0)).tocsc()
        return _nonsymmetric(structure, asm, K0, Ks, modes)
    if n <= DENSE_MAX:
        try:
            mu, v = sla.eigh(-Ks.toarray(), K0.toarray())
        except np.linalg.LinAlgError:
            raise ModelError("The unloaded structure's stiffness is not positive definite.") from None
    else:
        k = min(modes + 2, n - 1)
        mu, v = spla.eigsh(-Ks, k=k, M=K0.tocsc(), which="LA")
    tiny = 1e-12 * max(float(np.abs(mu).max()), 1e-300)
    keep = np.flatnonzero(mu > tiny)
    keep = keep[np.argsort(-mu[keep])][:modes]
    lams = 1.0 / mu[keep]
    shapes = np.array([_unit_mode(asm.expand(v[:, k])) for k in keep]).reshape(len(keep), asm.n_dof)
    return Buckling(structure, lams, shapes)


def _nonsymmetric(structure, asm, K0, Ks, modes: int) -> Buckling:
    """Real positive critical load factors of a non-symmetric (K0 + λ·Ks)·φ = 0."""
    n = asm.n_free
    if n <= DENSE_MAX:
        mu, v = sla.eig(-Ks.toarray(), K0.toarray())
    else:
        mu, v = spla.eigs(-Ks, k=min(modes + 4, n - 2), M=K0.tocsc(), which="LR")
    real = np.abs(mu.imag) <= 1e-8 * np.maximum(np.abs(mu.real), 1e-300)
    tiny = 1e-12 * max(float(np.abs(mu).max()), 1e-300)
    keep = np.flatnonzero(real & (mu.real > tiny))
    keep = keep[np.argsort(-mu.real[keep])][:modes]
    lams = 1.0 / mu.real[keep]
    shapes = np.array([_unit_mode(asm.expand(np.real(v[:, k]))) for k in keep]).reshape(len(keep), asm.n_dof)
    return Buckling(structure, lams, shapes)


def imperfect(structure: Structure, mode: np.ndarray, amplitude: float) -> Structure:
    """A new structure whose nodes are moved by ``amplitude`` along a mode's translations.

    The mode (full DOF vector, shape (3·n_nodes,)) is scaled so that its largest
    node translation is ``amplitude`` (a length); rotations are ignored, since a
    geometric imperfection is a change of node positions. The new structure is
    stress-free in its perturbed shape; the original is unchanged.

    Examples
    --------
    >>> import numpy as np, largerot as lr
    >>> s = lr.Structure(); a, b = s.node(0, 0), s.node(0, 1)
    >>> mode = np.array([0, 0, 0, 2.0, 0, 0])
    >>> lr.imperfect(s, mode, 0.01).xy[b].tolist(), s.xy[b].tolist()
    ([0.01, 1.0], [0.0, 1.0])
    """
    if not isinstance(structure, Structure):
        raise ModelError(f"Expected a largerot.Structure, got {structure!r}.")
    mode = np.asarray(mode, dtype=float)
    if mode.shape != (3 * structure.n_nodes,):
        raise ValueError(f"`mode` must be a full DOF vector of shape ({3 * structure.n_nodes},), "
                         f"got shape {mode.shape}.")
    amplitude = float(amplitude)
    if not np.isfinite(amplitude):
        raise ValueError(f"`amplitude` must be finite, got {amplitude!r}.")
    t = mode.reshape(-1, 3)[:, :2]
    big = float(np.hypot(t[:, 0], t[:, 1]).max())
    if not np.isfinite(big) or big == 0.0:
        raise ValueError("`mode` has no finite, non-zero translation to seed an imperfection with.")
    return structure.moved(structure.xy + amplitude * t / big)
