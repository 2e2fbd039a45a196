"""Corotational bar: axial force only, exact length, any rotation.

N = EA·(l − L0)/L0 along the current chord (common practice, no source; e.g.
Crisfield 1991, *Non-linear Finite Element Analysis of Solids and Structures*, vol. 1,
ch. 3). DOFs per element: (ux1, uy1, ux2, uy2).
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ._chord import chord

__all__ = ["BarResponse", "response", "N_DOF", "NODE_DOFS", "SLACK_STIFFNESS"]

#: Axial stiffness a slack tension-only element keeps in the *tangent only*, as a
#: share of EA/L0. Its force stays exactly zero, so converged answers carry no
#: trace of it; it keeps the tangent regular when a weightless cable's interior
#: nodes have nothing else holding them (a slack cable has no shape of its own).
SLACK_STIFFNESS = 1e-6

N_DOF = 4
#: Which of a node's DOFs (ux, uy, rz) the element uses, per end.
NODE_DOFS = (0, 1)


class BarResponse(NamedTuple):
    N: np.ndarray          #: axial force, shape (n_elements,)
    f: np.ndarray          #: internal force, shape (n_elements, 4)
    K: np.ndarray | None   #: tangent, shape (n_elements, 4, 4)
    l: np.ndarray          #: current length, shape (n_elements,)


def response(dX: np.ndarray, L0: np.ndarray, u: np.ndarray, EA: np.ndarray,
             tension_only: np.ndarray | None = None, tangent: bool = True) -> BarResponse:
    """Internal forces and consistent tangent of corotational bars.

    Parameters
    ----------
    dX : ndarray, shape (n_elements, 2)
        Undeformed vector from end 1 to end 2.
    L0 : ndarray, shape (n_elements,)
        Unstretched length (may differ from ``|dX|``, e.g. a sagging cable).
    u : ndarray, shape (n_elements, 4)
        End displacements (ux1, uy1, ux2, uy2).
    EA : ndarray, shape (n_elements,)
        Axial stiffness.
    tension_only : ndarray of bool, shape (n_elements,), optional
        Elements that carry no compression. When slack (l ≤ L0) their force is
        zero and their tangent only :data:`SLACK_STIFFNESS`·EA/L0 along the chord.
    tangent : bool
        Also compute the tangent.
    """
    l, stretch, c, s = chord(dX, u[:, 2:] - u[:, :2], L0)
    N = EA * stretch / L0
    k = EA / L0
    if tension_only is not None:
        slack = tension_only & (stretch <= 0.0)
        N = np.where(slack, 0.0, N)
        k = np.where(slack, SLACK_STIFFNESS * k, k)
    r = np.stack([-c, -s, c, s], axis=1)
    f = N[:, None] * r
    K = None
    if tangent:
        z = np.stack([s, -c, -s, c], axis=1)
        K = (k[:, None, None] * r[:, :, None] * r[:, None, :]
             + (N / l)[:, None, None] * z[:, :, None] * z[:, None, :])
    return BarResponse(N, f, K, l)
