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

from ._chord import as_complex, chord, chord_products, chord_turn, length_misfit, stretch_of

__all__ = ["BeamResponse", "Beams", "BLOCK", "response", "corotate", "local_rotations", "curve", "N_DOF", "NODE_DOFS"]

N_DOF = 6
NODE_DOFS = (0, 1, 2)
#: Local tangent per EI/L0: ∂(M1, M2)/∂(θ1, θ2) in the lower block, the axial entry set apart.
_BENDING = np.array([[0.0, 0.0, 0.0], [0.0, 4.0, 2.0], [0.0, 2.0, 4.0]])


class BeamResponse(NamedTuple):
    q: np.ndarray          #: local forces (N, M1, M2), shape (n_elements, 3)
    f: np.ndarray          #: internal force, shape (n_elements, 6)
    K: np.ndarray | None   #: tangent, shape (n_elements, 6, 6)
    l: np.ndarray          #: current chord length, shape (n_elements,)


_TWO_PI = 2.0 * np.pi


def _relative(rz: np.ndarray, alpha: np.ndarray) -> np.ndarray:
    """rz − α wrapped to [−π, π], shape like ``rz`` (n_elements, 2); exact (no
    wrap, no rounding beyond the difference) for the usual |rz − α| < π."""
    t = rz - alpha[:, None]
    turns = np.rint(t * (1.0 / _TWO_PI))
    return t - _TWO_PI * turns if np.count_nonzero(turns) else t


def local_rotations(dX: np.ndarray, u: np.ndarray):
    """End rotations relative to the current chord, each shape (n_elements,), from the
    undeformed chords dX (n_elements, 2) and end displacements u (n_elements, 6)."""
    dXc = as_complex(dX)
    conj_dX = np.conj(dXc)
    alpha = chord_turn(conj_dX * as_complex(u[:, 3:5] - u[:, 0:2]), (dXc * conj_dX).real)
    t = _relative(u[:, 2::3], alpha)                          # both ends at once
    return t[:, 0], t[:, 1]


#: Elements per block of :class:`Beams`: the temporaries of a block (about 0.7 KB per
#: element) are reused from block to block instead of ~85 MB of fresh memory per
#: evaluation at 100,000 elements, and stay in cache (the kernel over a 100,440-element
#: lattice: 26 ms in blocks of 8,192 against 32–51 ms in one piece, warm)
BLOCK = 8192


class _Constants(NamedTuple):
    """What :class:`Beams` prepares once, for one block of elements."""
    dX: np.ndarray          #: (n, 2) undeformed chords
    L0: np.ndarray          #: (n,)
    dXc: np.ndarray         #: (n,) complex, the chords as x + iy
    conj_dX: np.ndarray     #: (n,) complex
    length2: np.ndarray     #: (n,) |dX|²
    misfit: np.ndarray      #: (n,) |dX|² − L0² (:func:`~._chord.length_misfit`)
    ka: np.ndarray          #: (n,) EA/L0
    kB: np.ndarray          #: (n, 2, 2) ∂(M1, M2)/∂(θ1, θ2)
    material: np.ndarray    #: (n, 4, 4) H's constant part (see :func:`corotate`)


class Beams:
    """Corotational beams with their constant data prepared once (a group's kernel).

    :func:`response` for the same arguments, without recomputing per call what does
    not change along a path (undeformed chords, stiffness factors, the material part
    of the local tangent): on the small models people re-trace interactively the
    kernel is call overhead, not arithmetic. Large groups are evaluated in blocks of
    ``BLOCK`` elements written into the full outputs.

    Parameters
    ----------
    dX : ndarray, shape (n_elements, 2)
    L0, EA, EI : ndarray, shape (n_elements,)
    bending : ndarray, shape (n_elements, 2, 2), optional
        As for :func:`response`.
    """

    def __init__(self, dX, L0, EA, EI, bending=None) -> None:
        dX = np.ascontiguousarray(dX, dtype=float)
        L0 = np.asarray(L0, dtype=float)
        self.n = n = len(L0)
        dXc = as_complex(dX)                                  # chords as x + iy
        conj_dX = np.conj(dXc)
        ka, kb = EA / L0, EI / L0
        kB = kb[:, None, None] * (_BENDING[1:, 1:] if bending is None else bending)
        material = np.zeros((n, 4, 4))
        material[:, 0, 0] = ka
        material[:, 1:3, 1:3] = kB
        whole = _Constants(dX, L0, dXc, conj_dX, (dXc * conj_dX).real, length_misfit(dX, L0),
                           ka, kB, material)
        self.blocks = [(slice(None), whole)] if n <= BLOCK else [
            (slice(a, a + BLOCK), _Constants(*(c[a:a + BLOCK] for c in whole)))
            for a in range(0, n, BLOCK)]

    def response(self, u: np.ndarray, tangent: bool = True) -> BeamResponse:
        """Internal forces and tangent at end displacements ``u``, shape (n_elements, 6)."""
        if len(self.blocks) == 1:
            return _block(self.blocks[0][1], u, tangent)
        n = self.n
        q, f, l = np.empty((n, 3)), np.empty((n, 6)), np.empty(n)
        K = np.empty((n, 6, 6)) if tangent else None
        for sl, c in self.blocks:
            r = _block(c, u[sl], tangent, f[sl], None if K is None else K[sl])
            q[sl], l[sl] = r.q, r.l
        return BeamResponse(q, f, K, l)


def _block(c: _Constants, u: np.ndarray, tangent: bool, f_out=None, K_out=None) -> BeamResponse:
    """:meth:`Beams.response` of one block; f and K written into ``f_out``, ``K_out``
    when given."""
    du = u[:, 3:5] - u[:, 0:2]                                # new, contiguous
    duc = du.view(complex)[:, 0]
    x = c.dXc + duc
    l = np.abs(x)
    p, du2 = chord_products(c.conj_dX, duc)
    stretch = stretch_of(c.misfit, p.real, du2, l, c.L0)
    cs = x / l
    t = _relative(u[:, 2::3], chord_turn(p, c.length2))
    q = np.empty((len(l), 3))
    np.multiply(c.ka, stretch, out=q[:, 0])
    np.matmul(c.kB, t[:, :, None], out=q[:, 1:, None])
    H = c.material.copy() if tangent else None
    f, K = _global(cs.view(float).reshape(len(l), 2), l, q, H, f_out, K_out)
    return BeamResponse(q, f, K, l)


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
    return Beams(dX, L0, EA, EI, bending).response(np.asarray(u, dtype=float), tangent)


#: C = (r, b1, b2, z) of :func:`corotate`, shape (4, 6), as a product coef·_C_BASIS with
#: coef = (1, c, s, c/l, s/l) per element: one small matrix product instead of a dozen
#: slice writes
_C_BASIS = np.zeros((5, 4, 6))
_C_BASIS[0, 1, 2] = _C_BASIS[0, 2, 5] = 1.0                   # b1, b2: drz1, drz2
_C_BASIS[1, 0, [0, 3]] = -1.0, 1.0                            # r = (−c, −s, 0, c, s, 0)
_C_BASIS[2, 0, [1, 4]] = -1.0, 1.0
for _row, _sign in ((3, 1.0), (1, -1.0), (2, -1.0)):          # z = (s, −c, 0, −s, c, 0)/l,
    _C_BASIS[4, _row, [0, 3]] = _sign, -_sign                 # b1 = b2 = −z beside
    _C_BASIS[3, _row, [1, 4]] = -_sign, _sign
_C_BASIS = _C_BASIS.reshape(5, 24)


def _global(cs: np.ndarray, l: np.ndarray, q: np.ndarray, H: np.ndarray | None,
            f_out: np.ndarray | None = None, K_out: np.ndarray | None = None):
    """f and K of :func:`corotate` from cs = (c, s), shape (n, 2), and H's local part
    (k in its upper-left block, zeros elsewhere; completed here), or None; written
    into ``f_out`` (n, 6) and ``K_out`` (n, 6, 6) when given."""
    n = len(l)
    coef = np.empty((n, 5))
    coef[:, 0] = 1.0
    coef[:, 1:3] = cs
    np.divide(cs, l[:, None], out=coef[:, 3:5])
    C = (coef @ _C_BASIS).reshape(n, 4, 6)
    f = np.empty((n, 6)) if f_out is None else f_out
    np.matmul(q[:, None, :], C[:, :3], out=f[:, None, :])
    if H is None:
        return f, None
    H[:, 0, 3] = H[:, 3, 0] = (q[:, 1] + q[:, 2]) / l
    H[:, 3, 3] = q[:, 0] * l
    return f, np.matmul(C.transpose(0, 2, 1), H @ C, out=K_out)


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
    H = None
    if k is not None:
        H = np.zeros((len(l), 4, 4))
        H[:, :3, :3] = k
    return _global(np.column_stack([c, s]), l, q, H)


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
    t1, t2 = local_rotations(dX, u)
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
