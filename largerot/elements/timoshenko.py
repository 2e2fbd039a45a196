"""Corotational planar Timoshenko (shear-flexible) beam.

The element
    Two nodes; in the frame of the current chord (:func:`largerot.elements.beam.corotate`
    removes the rigid motion and supplies the consistent global tangent) the element
    has Reissner's finite strains, measured in the frame of the *cross-section* at
    its middle (Reissner 1972, "On one-dimensional finite-strain beam theory: the
    plane problem", ZAMP 23), with linear interpolation of displacements and
    rotation and one-point (reduced) integration (Simo & Vu-Quoc 1986, "On the
    dynamics of flexible beams under large overall motions — the plane case",
    J. Appl. Mech. 53; from memory). With λ = l/L0, the mean rotation of the
    sections relative to the chord t̄ = (θ1 + θ2)/2 and the chord's local rotations
    θ1, θ2 of :func:`largerot.elements.beam.local_rotations`:

        ε = λ·cos t̄ − 1,   γ = −λ·sin t̄,   κ = (θ2 − θ1)/L0,
        U = L0·(EA·ε²/2 + S·γ²/2 + EI·κ²/2),

    the section forces N = EA·ε (along the section's normal), V = S·γ (in its
    plane), M = EI·κ. The local forces q = ∂U/∂(l − L0, θ1, θ2) and the local
    tangent k = ∂q/∂(...) are exact derivatives, so with ``corotate`` the global
    tangent is the consistent one (checked by finite differences in the tests).

Why this element, and why it does not lock
    Reduced integration alone (S = κGA) is free of shear locking but represents
    bending only by constant curvature: a slender cantilever of n elements is
    too flexible by ~1/(4n²). Here S is the shear stiffness corrected for the
    element's residual bending flexibility (MacNeal 1978, "A simple quadrilateral
    shell element", Computers & Structures 8; from memory):

        1/S = 1/(κGA) + L0²/(12·EI).

    In the linear range this makes the element *exactly* the interdependent-
    interpolation Timoshenko element (Reddy 1997, "On locking-free shear deformable
    beam finite elements", CMAME 149, from memory): the bending block is
    EI/(L0(1 + Φ))·[[4 + Φ, 2 − Φ], [2 − Φ, 4 + Φ]] with Φ = 12EI/(κGA·L0²), exact
    for a linear Timoshenko beam under end loads, the Euler–Bernoulli beam's
    EI/L0·[[4, 2], [2, 4]] as κGA → ∞ (so no locking, whatever L0/depth), and
    S → κGA as the mesh is refined (the geometrically exact beam of Reissner).

Buckling: Haringx, not Engesser
    Because ε and γ are measured in the section's frame (the shear force lies in
    the plane of the cross-section), a compressed column converges, as the mesh is
    refined, to Haringx's load P(1 + P/κGA) = P_E, not Engesser's
    P = P_E/(1 + P_E/κGA) (Timoshenko & Gere 1961, *Theory of Elastic Stability*,
    §2.17, from memory, for both). The local stress term of the tangent,
    −N·L0/4 on (θ1, θ2) (from ∂²ε/∂t̄² = −λ), is what makes the difference: with the
    shear force in the section's plane, a shear angle c adds +P·c²/2 to the energy of
    a column under P, and eliminating c from EI·θ'² + κGA·c² − P·(θ − c)² + P·c²
    gives Haringx's; a corotational element with a *linear* local relation (shear
    force normal to the chord, no such term) gives Engesser's (my derivation; measured
    on a cantilever column with κGA = P_E, 64 elements: 1.23373 against Engesser's
    1.23370, Haringx's 1.52494). Both
    are in use; Reissner's beam, which the large-deflection test compares against,
    is Haringx's, and for κGA ≫ P_E the two agree to O((P_E/κGA)²).

DOFs per element: (ux1, uy1, rz1, ux2, uy2, rz2), as the Euler–Bernoulli beam.
"""
from __future__ import annotations

import numpy as np

from ._chord import chord
from .beam import BeamResponse, corotate, local_rotations

__all__ = ["response", "shear_stiffness", "stress_tangent", "N_DOF", "NODE_DOFS"]

N_DOF = 6
NODE_DOFS = (0, 1, 2)


def shear_stiffness(L0: np.ndarray, EI: np.ndarray, GAs: np.ndarray) -> np.ndarray:
    """Element shear stiffness S = 1/(1/κGA + L0²/(12EI)), shape (n_elements,)."""
    return 1.0 / (1.0 / GAs + L0**2 / (12.0 * EI))


def response(dX: np.ndarray, L0: np.ndarray, u: np.ndarray, EA: np.ndarray, EI: np.ndarray,
             GAs: np.ndarray, tangent: bool = True) -> BeamResponse:
    """Internal forces and consistent tangent of corotational Timoshenko beams.

    Parameters
    ----------
    dX : ndarray, shape (n_elements, 2)
        Undeformed vector from end 1 to end 2.
    L0 : ndarray, shape (n_elements,)
        Undeformed length.
    u : ndarray, shape (n_elements, 6)
        End displacements and rotations.
    EA, EI, GAs : ndarray, shape (n_elements,)
        Axial, bending and shear (κGA) stiffness.
    tangent : bool
        Also compute the tangent.

    Returns
    -------
    BeamResponse
        ``q`` = (N, M1, M2) in the chord's frame (N along the chord, the chord
        force normal to it (M1 + M2)/l), as for the Euler–Bernoulli beam.
    """
    l, stretch, c, s = chord(dX, u[:, 3:5] - u[:, 0:2], L0)
    t1, t2 = local_rotations(dX, u)
    S = shear_stiffness(L0, EI, GAs)
    lam = l / L0
    tb = 0.5 * (t1 + t2)
    ct, st = np.cos(tb), np.sin(tb)
    # ε = λ·cos t̄ − 1 without cancellation: (λ − 1)·cos t̄ − 2 sin²(t̄/2)
    eps = stretch / L0 * ct - 2.0 * np.sin(0.5 * tb) ** 2
    Ns, Vs, M = EA * eps, -S * lam * st, EI * (t2 - t1) / L0
    Nc = Ns * ct - Vs * st                    # section force along the chord
    P = Ns * st + Vs * ct                     # ... and normal to it
    half = 0.5 * L0 * lam * P
    q = np.empty((len(l), 3))
    q[:, 0] = Nc
    q[:, 1] = -half - M
    q[:, 2] = -half + M
    k = None
    if tangent:
        k = np.empty((len(l), 3, 3))
        k[:, 0, 0] = (EA * ct**2 + S * st**2) / L0
        k[:, 0, 1] = k[:, 0, 2] = k[:, 1, 0] = k[:, 2, 0] = (
            0.5 * (S - EA) * lam * st * ct - 0.5 * P)
        a = 0.25 * L0 * lam * (lam * (EA * st**2 + S * ct**2) - Nc)
        b = EI / L0
        k[:, 1, 1] = k[:, 2, 2] = a + b
        k[:, 1, 2] = k[:, 2, 1] = a - b
    f, K = corotate(c, s, l, q, k)
    return BeamResponse(q, f, K, l)


def stress_tangent(dX: np.ndarray, L0: np.ndarray, q: np.ndarray, Phi: np.ndarray) -> np.ndarray:
    """Geometric (stress) stiffness at the undeformed geometry for local forces q.

    For :func:`largerot.buckling`. The corotational terms of ``corotate`` (the
    chord's N·l·z⊗z and the end moments' term), the local coupling −V/2 between the
    stretch and each θ of :func:`response`, and on (θ1, θ2) the *consistent* term of
    the second-order energy N/2·∫[w'² − (θ − w')²] dx (Haringx's form, the linearised
    section-frame strains) with the element's own linear shapes: in the chord's frame
    the interdependent interpolation gives w' − θ = −t̄·Φ/(1 + Φ) and
    ∫w'² = L0·(t_a²/3 + t̄²/(5(1 + Φ)²)) (t_a = (θ2 − θ1)/2; my derivation), so

        N·L0·[t_a²/3 + t̄²·(1/5 − Φ²)/(1 + Φ)²].

    At Φ = 0 this is the consistent cubic term of the Euler–Bernoulli beam
    (:func:`largerot.groups.consistent_axial`), and buckling loads converge as h⁴;
    with shear, as h² (measured: cantilever column with κGA = P_E, 16 elements,
    3e-4 above Haringx's load). As Φ → ∞ it tends to −N·L0·t̄², the tangent's own
    term. The pre-buckling strains (λ ≠ 1) are left out, as for every element.

    Parameters
    ----------
    dX : ndarray, shape (n_elements, 2)
    L0 : ndarray, shape (n_elements,)
    q : ndarray, shape (n_elements, 3)
        Local forces (N, M1, M2) of a linear state.
    Phi : ndarray, shape (n_elements,)
        12·EI/(κGA·L0²).

    Returns
    -------
    ndarray, shape (n_elements, 6, 6)
    """
    c, s = dX[:, 0] / L0, dX[:, 1] / L0
    k = np.zeros((len(L0), 3, 3))
    k[:, 0, 1] = k[:, 0, 2] = k[:, 1, 0] = k[:, 2, 0] = 0.5 * (q[:, 1] + q[:, 2]) / L0
    cs = (0.2 - Phi**2) / (1.0 + Phi) ** 2
    NL = 0.25 * L0 * q[:, 0]
    k[:, 1, 1] = k[:, 2, 2] = NL * (1.0 / 3.0 + cs)
    k[:, 1, 2] = k[:, 2, 1] = NL * (cs - 1.0 / 3.0)
    return corotate(c, s, L0, q, k)[1]
