"""Corotational planar beam with elastic–plastic fibre sections.

The rigid-body motion is removed exactly as in :mod:`largerot.elements.beam` (same
chord, same local rotations θ1, θ2 relative to it, same geometric tangent terms);
only the local response (N, M1, M2) of the deformational modes (ul = l − L0, θ1, θ2)
comes from fibre sections integrated at quadrature points along the element instead
of from EA, EI.

Local kinematics (displacement-based, in the chord frame, ξ = x/L0 ∈ [0, 1]):

* transverse w(ξ) cubic Hermite with w(0) = w(1) = 0, w'(0) = θ1, w'(1) = θ2, so the
  curvature is linear, κ(ξ) = [(6ξ − 4)·θ1 + (6ξ − 2)·θ2]/L0;
* axial u linear, and the axial strain at every section point is the element's
  average (chord) strain ε0 = ul/L0, with no local w'²/2 term.

The constant chord strain is the choice that avoids membrane locking: ε0 is not
built pointwise from the linear u and the cubic w (whose mismatched orders lock a
curved element), it is the element average, and the shallow-arch w'² term is left
to the corotational frame, which carries the large rotations exactly while the local
strains stay small (the same hypothesis as the elastic beam, Crisfield 1991,
*Non-linear Finite Element Analysis of Solids and Structures*, vol. 1, §7.1). It is
also what makes the element reduce exactly to :mod:`~largerot.elements.beam` below
yield. When a section yields unsymmetrically its axial force varies along the
element; the element's N is then the average Σ w_g·N_g (weak equilibrium of a
displacement-based element), which converges with mesh refinement.

Virtual work over the quadrature points (weights w_g summing to 1) gives the local
forces and the consistent local tangent from the section tangent D_g:

    N  = Σ w_g·N_g,   M1 = Σ w_g·M_g·(6ξ_g − 4),   M2 = Σ w_g·M_g·(6ξ_g − 2),
    k  = L0·Σ w_g·B_gᵀ·D_g·B_g,   B_g = [[1/L0, 0, 0], [0, (6ξ_g − 4)/L0, (6ξ_g − 2)/L0]].

Gauss–Lobatto points (default 3, Simpson's rule) sample the element ends, where the
moments of a member are largest, so first yield is found at a support; Gauss–Legendre
is available. Both are exact for the elastic element (quadratic integrands).

History: a :class:`largerot.materials.MaterialState` of arrays shaped
(n_elements, n_gauss, n_fibres); the committed state goes in, the trial state comes
out; nothing is modified in place.

Examples
--------
>>> from largerot.fibres import FibreSection
>>> sec = FibreSection.rectangle(E=200e9, fy=250e6, width=0.05, depth=0.1)
>>> dX, L0 = np.array([[1.0, 0.0]]), np.array([1.0])
>>> u = np.array([[0.0, 0.0, 0.0, 0.0, 0.0, 1e-3]])       # tip rotation, elastic
>>> res = response(dX, L0, u, sec.table, initial_state(1, sec.n_fibres))
>>> bool(np.isclose(res.q[0, 2], 4 * sec.EI * 1e-3))
True
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np
from numpy.polynomial import legendre

from ..errors import ModelError
from ..fibres import FibreTable, response as section_response
from ..materials import MaterialState, initial_state as _virgin
from ._chord import chord
from .beam import corotate, local_rotations

__all__ = ["FibreBeamResponse", "response", "initial_state", "quadrature",
           "N_DOF", "NODE_DOFS", "N_GAUSS"]

N_DOF = 6
NODE_DOFS = (0, 1, 2)
#: Default section points per element: 3 Gauss–Lobatto points (ends and middle) are
#: the fewest that integrate the elastic element exactly and see the end moments.
N_GAUSS = 3


class FibreBeamResponse(NamedTuple):
    q: np.ndarray          #: local forces (N, M1, M2), shape (n_elements, 3)
    f: np.ndarray          #: internal force, shape (n_elements, 6)
    K: np.ndarray | None   #: tangent, shape (n_elements, 6, 6)
    l: np.ndarray          #: current chord length, shape (n_elements,)
    state: MaterialState   #: trial fibre state, arrays shape (n_elements, n_gauss, n_fibres)
    eps0: np.ndarray       #: axial strain at the section points, shape (n_elements, n_gauss)
    kappa: np.ndarray      #: curvature at the section points, shape (n_elements, n_gauss)
    NM: np.ndarray         #: section forces (N, M) at the points, shape (n_elements, n_gauss, 2)


def quadrature(n_gauss: int = N_GAUSS, rule: str = "lobatto"):
    """Points ξ and weights (summing to 1) on [0, 1], each shape (n_gauss,).

    ``rule`` is ``"lobatto"`` (ends included, n_gauss ≥ 3) or ``"gauss"`` (n_gauss ≥ 2).
    """
    if rule not in ("lobatto", "gauss"):
        raise ModelError(f"Quadrature `rule` must be 'lobatto' or 'gauss', got {rule!r}.")
    least = 3 if rule == "lobatto" else 2
    if isinstance(n_gauss, bool) or not isinstance(n_gauss, (int, np.integer)) or n_gauss < least:
        raise ModelError(f"`n_gauss` must be an integer of at least {least} for the {rule} "
                         f"rule, got {n_gauss!r}.")
    if rule == "gauss":
        x, w = legendre.leggauss(int(n_gauss))
    else:
        P = legendre.Legendre.basis(int(n_gauss) - 1)
        x = np.concatenate([[-1.0], np.sort(P.deriv().roots().real), [1.0]])
        w = 2.0 / (n_gauss * (n_gauss - 1) * P(x) ** 2)
    return 0.5 * (x + 1.0), 0.5 * w


def initial_state(n_elements: int, n_fibres: int, n_gauss: int = N_GAUSS) -> MaterialState:
    """Virgin history, arrays of shape (n_elements, n_gauss, n_fibres)."""
    return _virgin((n_elements, n_gauss, n_fibres))


def response(dX: np.ndarray, L0: np.ndarray, u: np.ndarray, table: FibreTable,
             state: MaterialState, rule: str = "lobatto",
             tangent: bool = True) -> FibreBeamResponse:
    """Internal forces, consistent tangent and trial history of fibre beams.

    Parameters
    ----------
    dX : ndarray, shape (n_elements, 2)
        Undeformed vector from end 1 to end 2.
    L0 : ndarray, shape (n_elements,)
        Undeformed length.
    u : ndarray, shape (n_elements, 6)
        End displacements and rotations.
    table : FibreTable
        Fibres, arrays of shape (n_fibres,) (one section for all) or
        (n_elements, n_fibres) (see :func:`largerot.fibres.stack`).
    state : MaterialState
        Committed history, arrays of shape (n_elements, n_gauss, n_fibres); n_gauss
        is taken from it.
    rule : {"lobatto", "gauss"}
        Quadrature along the element.
    tangent : bool
        Also compute the tangent.
    """
    n_gauss = state.eps_p.shape[1]
    n_fibres = np.shape(table.y)[-1]
    if state.eps_p.shape != (len(L0), n_gauss, n_fibres):
        raise ModelError(f"Fibre state must have shape (n_elements, n_gauss, n_fibres) = "
                         f"({len(L0)}, n_gauss, {n_fibres}), got {state.eps_p.shape}.")
    xi, w = quadrature(n_gauss, rule)
    if np.ndim(table.y) == 2:
        table = FibreTable(*(a[:, None, :] for a in table))
    l, stretch, c, s = chord(dX, u[:, 3:5] - u[:, 0:2], L0)
    t1, t2 = local_rotations(dX, u)
    g1, g2 = 6.0 * xi - 4.0, 6.0 * xi - 2.0                    # κ·L0 per unit θ1, θ2
    eps0 = np.broadcast_to((stretch / L0)[:, None], (len(L0), n_gauss))
    kappa = (t1[:, None] * g1 + t2[:, None] * g2) / L0[:, None]
    sec = section_response(table, eps0, kappa, state)
    q = np.stack([sec.N @ w, (sec.M * g1) @ w, (sec.M * g2) @ w], axis=1)
    k = None
    if tangent:                      # L0·Σ w_g·B_gᵀ·D_g·B_g written out (B_g is sparse)
        D11, D12, D22 = sec.D[..., 0, 0] @ w, sec.D[..., 0, 1] * w, sec.D[..., 1, 1] * w
        a1, a2 = D12 @ g1, D12 @ g2
        b11, b12, b22 = D22 @ (g1 * g1), D22 @ (g1 * g2), D22 @ (g2 * g2)
        k = np.stack([np.stack([D11, a1, a2], -1), np.stack([a1, b11, b12], -1),
                      np.stack([a2, b12, b22], -1)], -2) / L0[:, None, None]
    f, K = corotate(c, s, l, q, k)
    return FibreBeamResponse(q, f, K, l, sec.state, eps0, kappa,
                             np.stack([sec.N, sec.M], axis=-1))
