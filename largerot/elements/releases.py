"""Member end releases: bending stiffness of beam elements with hinged or semi-rigid ends.

A released end is joined to its node through a rotational spring of stiffness k
(k = 0: a free hinge; k = ∞: the rigid joint of an unreleased end). In the
corotational frame the beam is linear in (stretch, θ1, θ2), so the element's own end
rotation at a release is condensed out exactly, and what remains is a 2×2 bending
stiffness on the node rotations relative to the chord. With the fixity factor of
each end, r = k/(k + 3EI/L0) (r = 1 rigid, r = 0 hinged),

    ∂(M1, M2)/∂(θ1, θ2) = EI/L0 / (4 − r1·r2) · [[12·r1, 6·r1·r2], [6·r1·r2, 12·r2]]

(Monforton & Wu 1963, "Matrix analysis of semi-rigidly connected frames",
J. Struct. Div. ASCE 89(6); from memory, and checked in the tests against a direct
condensation of the springs). r1 = r2 = 1 gives the rigid [[4, 2], [2, 4]]; a hinge
at end 2 gives M1 = 3EI/L0·θ1, M2 = 0.

The local forces stay q = k·(l − L0, θ1, θ2) with a constant k, so
:func:`largerot.elements.beam.corotate` gives the consistent global force and tangent.
"""
from __future__ import annotations

import numpy as np

__all__ = ["fixity", "bending_factors", "rotation_map"]


def fixity(k: np.ndarray, EI: np.ndarray, L0: np.ndarray) -> np.ndarray:
    """Fixity factor r = k/(k + 3EI/L0) of each end, shape like ``k``; 1 where k = ∞."""
    k = np.asarray(k, dtype=float)
    stiff = 3.0 * np.asarray(EI, float) / np.asarray(L0, float)
    stiff = np.broadcast_to(stiff[..., None] if k.ndim > stiff.ndim else stiff, k.shape)
    with np.errstate(invalid="ignore"):
        r = k / (k + stiff)
    return np.where(np.isinf(k), 1.0, r)


def bending_factors(k: np.ndarray, EI: np.ndarray, L0: np.ndarray) -> np.ndarray:
    """Bending stiffness per EI/L0 of elements with end springs, shape (n_elements, 2, 2).

    Parameters
    ----------
    k : ndarray, shape (n_elements, 2)
        Rotational stiffness joining each end to its node: 0 hinge, ∞ rigid.
    EI, L0 : ndarray, shape (n_elements,)
    """
    r = fixity(k, EI, L0)
    r1, r2 = r[:, 0], r[:, 1]
    d = 4.0 - r1 * r2                      # ≥ 3: never singular
    out = np.empty((len(r), 2, 2))
    out[:, 0, 0] = 12.0 * r1 / d
    out[:, 1, 1] = 12.0 * r2 / d
    out[:, 0, 1] = out[:, 1, 0] = 6.0 * r1 * r2 / d
    return out


#: Flexibility of the rigidly connected element per L0/EI: the inverse of [[4, 2], [2, 4]].
_FLEXIBILITY = np.array([[2.0, -1.0], [-1.0, 2.0]]) / 6.0


def rotation_map(factors: np.ndarray) -> np.ndarray:
    """The element's own end rotations from the node rotations, both relative to the chord.

    φ = A·θ with A = F·B (F the element's flexibility, B the factors of
    :func:`bending_factors`, both per EI/L0): the identity at rigid ends; a hinge
    at end 2 gives φ2 = −θ1/2. Shape (n_elements, 2, 2).
    """
    return np.matmul(_FLEXIBILITY, factors)
