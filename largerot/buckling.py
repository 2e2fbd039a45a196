"""Linear buckling about the state under the constant loads, and imperfections from its modes.

The eigenproblem
    (K0 + Kσ(u_c) + λ·Kσ(u_1))·φ = 0,   u_c = K0⁻¹·(F_const − f_int(0)),   u_1 = K0⁻¹·F_ref,
gives the factors λ of the reference load F_ref at which the structure, already
carrying its constant loads F_const in full, loses stability. K0 is the tangent of
the unloaded structure; Kσ(u) the geometric (stress) stiffness of the element forces
of the linear state u. Without constant loads it is the classical (K0 + λ·Kσ)·φ = 0
(Timoshenko & Gere 1961, *Theory of Elastic Stability*, 2nd ed., for the problem).
The loads: none is dropped. Constant loads stay in full at every λ; λ scales only
the reference loads.

Pre-buckling state under the constant loads: linear, by choice
    The constant loads (self-weight from ``gravity(constant=True)``, constant nodal
    and line loads, and the out-of-balance force −f_int(0) of a cable's pretension
    or shortened length, whose own rest forces already stiffen K0) enter through
    their *linear* state u_c, not through the nonlinear equilibrium that a trace
    settles into at λ = 0 (``solvers/equilibrium.settle``). Reasons: (i) Kσ is linear in the element
    forces, so Kσ(u_c) + λ·Kσ(u_1) = Kσ(u_c + λ·u_1) and the answer is exactly the
    classical linear buckling of the combined load F_const + λ·F_ref, with no
    iteration that could fail or depend on a tolerance; (ii) for the structures a
    linear buckling analysis is meant for (columns, frames, arches before they sag
    visibly), the pre-buckling rotations are small and the element forces of the
    linear state are those of the nonlinear one to first order; (iii) where they are
    not (a slack cable, a deep sag), K0 at the undeformed geometry is itself wrong
    and only a path (``lr.trace``) answers the question. The element forces of
    cable segments are taken from the tension-only kernel, so a cable that starts
    slack carries none.

Element forces and geometric stiffness
    The element forces of a linear state (N, M1, M2 for beams, N for bars) are taken
    from the element kernels by a central difference about u = 0, exact to O(ε²)
    as their quadratic part cancels. Fibre-section beams are taken with their
    elastic section stiffness (``FibreSection.EA``, ``.EI``, the sums over the
    fibres), through the elastic beam kernel: linear buckling is about the virgin,
    elastic structure, and their K0 at rest is that of the same elastic beam. Kσ
    is then a pure function of those forces and the undeformed geometry per
    element group (``stress_stiffness``, :mod:`largerot.groups`):
    for beams the consistent (cubic) axial term plus the chord's moment term of the
    corotational tangent, for bars N/L·z⊗z (common practice, no source; the element
    files for the tangent). Contacts add nothing to Kσ: at rest their multipliers are
    zero, and a linear analysis cannot open or close them, so they keep what their
    kernel gives K0 at rest.

Follower loads
    Their value at rest is part of F_const or F_ref, and their load stiffness at rest
    −∂F/∂u joins K0 (constant ones) or λ·Kσ (reference ones). The problem is then
    non-symmetric; only real critical factors (divergence) are returned, flutter is
    not sought.

Solved as −B·φ = μ·A·φ with μ = 1/λ, A = K0 + Kσ(u_c) and B = Kσ(u_1): dense LAPACK
for small models, ARPACK (``scipy.sparse.linalg.eigsh``/``eigs``) for large ones.
A must be positive definite (checked by its inertia): if the constant loads alone
make it singular or indefinite they are at or beyond the buckling load (λ_cr ≤ 0)
and :class:`~largerot.errors.ModelError` says so. Only positive λ (the reference
load's own sense) are returned.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import scipy.linalg as sla
import scipy.sparse.linalg as spla

from .errors import ModelError, checked_integer, checked_number
from .linalg import SingularTangent, factorize
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
        i = checked_integer("", "i", i)
        if not -len(self) <= i < len(self):
            raise ModelError(f"Mode index {i!r} out of range: {len(self)} modes were computed.")
        return imperfect(self.structure, self.modes[i], amplitude)


def _unit_mode(phi_full: np.ndarray) -> np.ndarray:
    t = phi_full.reshape(-1, 3)[:, :2].ravel()
    ref = t if np.any(t) else phi_full
    k = int(np.argmax(np.abs(ref)))
    return phi_full / ref[k]


def buckling(structure: Structure, modes: int = 3) -> Buckling:
    """Critical factors of the reference load, and modes, with the constant loads in place.

    Solves (K0 + Kσ(u_c) + λ·Kσ(u_1))·φ = 0 (see the module notes):

    * **Constant loads** (``constant=True`` nodal and line loads, self-weight from
      ``gravity()`` with its default ``constant=True``, and the out-of-balance force
      of pretensioned cables) are applied in full — never dropped, never scaled by
      λ — and only the reference load is scaled: λ answers "how many times the reference load can the structure take on
      top of the constant loads". Their pre-buckling state is the *linear* one,
      u_c = K0⁻¹·(F_const − f_int(0)), whose element forces give Kσ(u_c). If the
      constant loads alone are at or beyond buckling (K0 + Kσ(u_c) not positive
      definite, λ_cr ≤ 0), a ModelError says so.
    * **Reference loads** (including ``gravity(constant=False)``): linear state
      u_1 = K0⁻¹·F_ref, Kσ(u_1) scaled by λ.
    * **Follower loads** (``follower=True``, pressures): taken at their value at rest,
      and their load stiffness at rest −∂F/∂u joins K0 (constant ones) or λ·Kσ
      (reference ones). The eigenproblem is then non-symmetric and only real factors
      (divergence) are returned.
    * Fibre-section beams count with their elastic section stiffness (EA, EI),
      whatever an earlier trace left in their history; contacts as at rest.

    Parameters
    ----------
    structure : Structure
    modes : int
        How many of the lowest positive critical load factors to return (fewer
        when the structure has fewer).

    Returns
    -------
    Buckling

    Raises
    ------
    ModelError
        Without a reference load; when the unloaded structure is a mechanism; when the
        constant loads alone reach the buckling load; for an element kind without a
        geometric stiffness.

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
    >>> s.load(b, fy=-0.25 * math.pi**2 / 4, constant=True)    # a quarter of it held
    >>> print(round(float(lr.buckling(s, modes=1).load_factors[0]) / (math.pi**2 / 4), 4))
    0.75
    """
    if checked_integer("", "modes", modes) < 1:
        raise ModelError(f"`modes` must be a positive integer, got {modes!r}.")
    if not hasattr(structure, "snapshot"):
        raise TypeError(f"Expected a largerot.Structure, got {structure!r}.")
    asm = structure.snapshot().assembly        # stateless: the virgin structure, always
    if len(asm.prescribed) and (asm.model.imposed_ref.any() or asm.model.imposed_const.any()):
        raise ModelError("Linear buckling scales loads only; the structure has imposed "
                         "displacements. Trace its path instead (lr.trace).")
    rest = np.zeros(asm.n_dof)
    F_ref, F_const = asm.external(rest)                      # follower loads as at rest
    F_ref, F_const = asm.framed(F_ref), asm.framed(F_const)  # inclined rollers' frames
    F = F_ref[asm.free]
    if not F.any():
        raise ModelError("Linear buckling needs a reference load; the structure has none.")
    ev = asm.evaluate(rest, asm.initial_states(), True)
    f0, K0 = ev.f, ev.K
    F_c = (F_const - f0)[asm.free]            # constant loads and the pretension at rest
    try:
        lu = spla.splu(K0.tocsc())
        u1, uc = lu.solve(F), lu.solve(F_c)
    except RuntimeError:
        raise ModelError("The unloaded structure is a mechanism: its stiffness is singular.") from None
    A = (K0 + asm.stress_stiffness(asm.expand(uc))).tocsc()
    B = asm.stress_stiffness(asm.expand(u1))
    symmetric = not asm.has_followers
    if not symmetric:
        # follower loads: their load stiffness −∂F/∂u at rest joins A (constant ones)
        # and B (per unit λ, reference ones)
        A = (A + asm.load_stiffness(rest, 0.0, 1.0)).tocsc()
        B = (B + asm.load_stiffness(rest, 1.0, 0.0)).tocsc()
    if F_c.any():
        _check_constant_loads(K0, A, symmetric)
    if symmetric:
        return _symmetric(structure, asm, A, B, modes)
    return _nonsymmetric(structure, asm, A, B, modes)


def _check_constant_loads(K0, A, symmetric: bool) -> None:
    """Raise if the constant loads alone buckle the structure (A singular or not stable).

    Symmetric A: its inertia (negative pivots of one LDLᵀ). Non-symmetric A (constant
    follower loads): A = K0 + γ·(A − K0) must not turn singular for a real γ in (0, 1].
    """
    msg = ("The constant loads alone are {} the structure's buckling load (λ_cr ≤ 0 for "
           "the reference load): the stiffness under them, K0 + Kσ, {}. Reduce the "
           "constant loads, or trace the path (lr.trace) to see what they do.")
    if symmetric:
        try:
            fact = factorize(A, symmetric=True)
        except SingularTangent:
            raise ModelError(msg.format("at", "is singular")) from None
        if fact.n_negative > 0:
            raise ModelError(msg.format("beyond", "is not positive definite"))
        return
    gamma = _nonsymmetric_factors(K0, (A - K0).tocsc(), 1)[0]
    if len(gamma) and gamma[0] <= 1.0:
        raise ModelError(msg.format(
            "at or beyond", f"turns singular at {gamma[0]:.4g} times them"))


def _symmetric(structure, asm, A, B, modes: int) -> Buckling:
    """Positive critical load factors of a symmetric (A + λ·B)·φ = 0, A positive definite."""
    n = asm.n_free
    if n <= DENSE_MAX:
        try:
            mu, v = sla.eigh(-B.toarray(), A.toarray())
        except np.linalg.LinAlgError:
            raise ModelError("The unloaded structure's stiffness is not positive definite.") from None
    else:
        k = min(modes + 2, n - 1)
        mu, v = spla.eigsh(-B, k=k, M=A, which="LA")
    tiny = 1e-12 * max(float(np.abs(mu).max()), 1e-300)
    keep = np.flatnonzero(mu > tiny)
    keep = keep[np.argsort(-mu[keep])][:modes]
    lams = 1.0 / mu[keep]
    shapes = np.array([_unit_mode(asm.expand(v[:, k])) for k in keep]).reshape(len(keep), asm.n_dof)
    return Buckling(structure, lams, shapes)


def _nonsymmetric_factors(A, B, modes: int):
    """Real positive λ of a non-symmetric (A + λ·B)·φ = 0, ascending, and their vectors."""
    n = A.shape[0]
    if n <= DENSE_MAX:
        mu, v = sla.eig(-B.toarray(), A.toarray())
    else:
        mu, v = spla.eigs(-B, k=min(modes + 4, n - 2), M=A, which="LR")
    real = np.abs(mu.imag) <= 1e-8 * np.maximum(np.abs(mu.real), 1e-300)
    tiny = 1e-12 * max(float(np.abs(mu).max()), 1e-300)
    keep = np.flatnonzero(real & (mu.real > tiny))
    keep = keep[np.argsort(-mu.real[keep])][:modes]
    return 1.0 / mu.real[keep], np.real(v[:, keep])


def _nonsymmetric(structure, asm, A, B, modes: int) -> Buckling:
    """Real positive critical load factors of a non-symmetric (A + λ·B)·φ = 0."""
    lams, v = _nonsymmetric_factors(A, B, modes)
    shapes = np.array([_unit_mode(asm.expand(v[:, k])) for k in range(len(lams))])
    return Buckling(structure, lams, shapes.reshape(len(lams), asm.n_dof))


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
        raise TypeError(f"Expected a largerot.Structure, got {structure!r}.")
    mode = np.asarray(mode)
    if mode.dtype.kind not in "iuf":
        raise TypeError(f"`mode` must be an array of numbers, got dtype {mode.dtype}.")
    mode = mode.astype(float)
    if mode.shape != (3 * structure.n_nodes,):
        raise ModelError(f"`mode` must be a full DOF vector of shape ({3 * structure.n_nodes},), "
                         f"got shape {mode.shape}.")
    amplitude = checked_number("", "amplitude", amplitude)
    t = mode.reshape(-1, 3)[:, :2]
    big = float(np.hypot(t[:, 0], t[:, 1]).max())
    if not np.isfinite(big) or big == 0.0:
        raise ModelError("`mode` has no finite, non-zero translation to seed an imperfection with.")
    return structure.moved(structure.xy + amplitude * t / big)
