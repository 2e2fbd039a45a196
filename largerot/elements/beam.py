"""Corotational planar Euler–Bernoulli beam.

The element's rigid-body motion is removed exactly: the current chord defines a
frame in which the element is a linear beam with an axial stretch and two end
rotations relative to the chord (Crisfield 1991, *Non-linear Finite Element Analysis
of Solids and Structures*, vol. 1, §7.1; Battini & Pacoste 2002, Comput. Methods
Appl. Mech. Engrg 191). The tangent is the consistent one, material and geometric
parts, derived from the same variations as the internal force.

DOFs per element: (ux1, uy1, rz1, ux2, uy2, rz2). Local forces q = (N, M1, M2):
N = EA·(l − L0)/L0, M1 = EI/L0·(4θ1 + 2θ2), M2 = EI/L0·(2θ1 + 4θ2).

Node rotations accumulate without bound (several full turns); the local rotation
θ = rz − α is taken from its sine and cosine, so it is wrapped to (−π, π] and the
element needs no bookkeeping of turns as long as each element bends by less than π.
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ._chord import chord

__all__ = ["BeamResponse", "response", "corotate", "local_rotations", "curve", "N_DOF", "NODE_DOFS"]

N_DOF = 6
NODE_DOFS = (0, 1, 2)
#: Local tangent per EI/L0: ∂(M1, M2)/∂(θ1, θ2) in the lower block, the axial entry set apart.
_BENDING = np.array([[0.0, 0.0, 0.0], [0.0, 4.0, 2.0], [0.0, 2.0, 4.0]])


class BeamResponse(NamedTuple):
    q: np.ndarray          #: local forces (N, M1, M2), shape (n_elements, 3)
    f: np.ndarray          #: internal force, shape (n_elements, 6)
    K: np.ndarray | None   #: tangent, shape (n_elements, 6, 6)
    l: np.ndarray          #: current chord length, shape (n_elements,)


def local_rotations(dX: np.ndarray, u: np.ndarray, c: np.ndarray, s: np.ndarray):
    """End rotations relative to the current chord, each shape (n_elements,)."""
    L = np.hypot(dX[:, 0], dX[:, 1])
    c0, s0 = dX[:, 0] / L, dX[:, 1] / L
    ca, sa = (c * c0 + s * s0)[:, None], (s * c0 - c * s0)[:, None]   # rigid rotation α
    rz = u[:, 2::3]                                   # both ends at once: (n_elements, 2)
    cr, sr = np.cos(rz), np.sin(rz)
    t = np.arctan2(sr * ca - cr * sa, cr * ca + sr * sa)
    return t[:, 0], t[:, 1]


def response(dX: np.ndarray, L0: np.ndarray, u: np.ndarray, EA: np.ndarray,
             EI: np.ndarray, tangent: bool = True, bending: np.ndarray | None = None) -> BeamResponse:
    """Internal forces and consistent tangent of corotational beams.

    Parameters
    ----------
    dX : ndarray, shape (n_elements, 2)
        Undeformed vector from end 1 to end 2.
    L0 : ndarray, shape (n_elements,)
        Undeformed length.
    u : ndarray, shape (n_elements, 6)
        End displacements and rotations.
    EA, EI : ndarray, shape (n_elements,)
        Axial and bending stiffness.
    tangent : bool
        Also compute the tangent.
    bending : ndarray, shape (n_elements, 2, 2), optional
        ∂(M1, M2)/∂(θ1, θ2) per EI/L0 of elements with released ends
        (:func:`largerot.elements.releases.bending_factors`); default the rigidly
        connected [[4, 2], [2, 4]].
    """
    l, stretch, c, s = chord(dX, u[:, 3:5] - u[:, 0:2], L0)
    t1, t2 = local_rotations(dX, u, c, s)
    ka, kb = EA / L0, EI / L0
    q = np.empty((len(l), 3))
    q[:, 0] = ka * stretch
    if bending is not None:
        return _released(q, ka, kb[:, None, None] * bending, t1, t2, c, s, l, tangent)
    q[:, 1] = kb * (4.0 * t1 + 2.0 * t2)
    q[:, 2] = kb * (2.0 * t1 + 4.0 * t2)
    k = None
    if tangent:
        k = kb[:, None, None] * _BENDING
        k[:, 0, 0] = ka
    f, K = corotate(c, s, l, q, k)
    return BeamResponse(q, f, K, l)


def _released(q, ka, kB, t1, t2, c, s, l, tangent) -> BeamResponse:
    """The rest of :func:`response` for a bending stiffness kB, shape (n_elements, 2, 2)."""
    q[:, 1] = kB[:, 0, 0] * t1 + kB[:, 0, 1] * t2
    q[:, 2] = kB[:, 1, 0] * t1 + kB[:, 1, 1] * t2
    k = None
    if tangent:
        k = np.zeros((len(l), 3, 3))
        k[:, 1:, 1:] = kB
        k[:, 0, 0] = ka
    f, K = corotate(c, s, l, q, k)
    return BeamResponse(q, f, K, l)


def corotate(c, s, l, q, k=None):
    """Global force and tangent of corotational planar beams from local ones.

    Parameters
    ----------
    c, s, l : ndarray, shape (n_elements,)
        Cosine, sine and length of the current chord.
    q : ndarray, shape (n_elements, 3)
        Local forces (N, M1, M2), work conjugates of (l − L0, θ1, θ2).
    k : ndarray, shape (n_elements, 3, 3), optional
        Local tangent ∂q/∂(l − L0, θ1, θ2).

    Returns
    -------
    f : ndarray, shape (n_elements, 6)
    K : ndarray, shape (n_elements, 6, 6) or None
        Bᵀ·k·B (material) + N·l·z⊗z + (M1 + M2)/l·(r⊗z + z⊗r) (geometric), with the
        rows of B: dl = r·du, dθ1 = drz1 − z·du, dθ2 = drz2 − z·du (z already over l).
        Built as one stacked product Cᵀ·H·C with C = (r, b1, b2, z), shape
        (n_elements, 4, 6), and H, shape (n_elements, 4, 4): k in its upper-left
        block, the geometric coefficients in its last row and column.
    """
    # C filled in place: a few slice writes instead of stacks and copies (half the
    # time at 100,000 elements, the calls' overhead at 40)
    C = np.zeros((len(l), 4, 6))
    r, z = C[:, 0], C[:, 3]
    r[:, 0], r[:, 1], r[:, 3], r[:, 4] = -c, -s, c, s
    zc, zs = c / l, s / l
    z[:, 0], z[:, 1], z[:, 3], z[:, 4] = zs, -zc, -zs, zc
    np.negative(z, out=C[:, 1])
    np.negative(z, out=C[:, 2])
    C[:, 1, 2] = C[:, 2, 5] = 1.0
    f = np.einsum("ea,eai->ei", q, C[:, :3])
    if k is None:
        return f, None
    H = np.zeros((len(l), 4, 4))
    H[:, :3, :3] = k
    H[:, 0, 3] = H[:, 3, 0] = (q[:, 1] + q[:, 2]) / l
    H[:, 3, 3] = q[:, 0] * l
    return f, np.matmul(C.transpose(0, 2, 1), H @ C)


def curve(X1: np.ndarray, dX: np.ndarray, u: np.ndarray, n_points: int = 9,
          rotation_map: np.ndarray | None = None) -> np.ndarray:
    """Deflected centre line of each element from its cubic shape functions.

    ``rotation_map``, shape (n_elements, 2, 2), turns the node rotations relative to
    the chord into the element's own end rotations at released ends
    (:func:`largerot.elements.releases.rotation_map`); default the identity.

    Returns
    -------
    ndarray, shape (n_elements, n_points, 2)
        Points along each element, end 1 to end 2, in global coordinates.
    """
    L0 = np.hypot(dX[:, 0], dX[:, 1])
    l, _, c, s = chord(dX, u[:, 3:5] - u[:, 0:2], L0)
    t1, t2 = local_rotations(dX, u, c, s)
    if rotation_map is not None:
        A = rotation_map
        t1, t2 = A[:, 0, 0] * t1 + A[:, 0, 1] * t2, A[:, 1, 0] * t1 + A[:, 1, 1] * t2
    xi = np.linspace(0.0, 1.0, n_points)[None, :]
    w = l[:, None] * (t1[:, None] * xi * (1 - xi) ** 2 - t2[:, None] * xi**2 * (1 - xi))
    along = l[:, None] * xi
    x1 = X1 + u[:, 0:2]
    px = x1[:, 0:1] + along * c[:, None] - w * s[:, None]
    py = x1[:, 1:2] + along * s[:, None] + w * c[:, None]
    return np.stack([px, py], axis=2)
