"""Loads that follow the deformation: vectorised kernels with their load stiffness.

Each kernel takes the displacements of the DOFs it acts on for all loads of its
kind and returns the nodal forces and their derivative with respect to those
displacements (the load stiffness, not symmetric in general). Dead loads are
constant nodal vectors and need no kernel (:meth:`Structure.load_vector`).
"""
from __future__ import annotations

import numpy as np

__all__ = ["node_follower", "line_follower"]


def node_follower(F0: np.ndarray, u: np.ndarray):
    """A force that turns with its node: f = R(rz)·F0.

    Parameters
    ----------
    F0 : ndarray, shape (n_loads, 2)
        The force at zero rotation.
    u : ndarray, shape (n_loads, 3)
        The node's (ux, uy, rz).

    Returns
    -------
    f : ndarray, shape (n_loads, 3)
    dfdu : ndarray, shape (n_loads, 3, 3)
        Only the column of rz is non-zero: ∂f/∂rz = R(rz + π/2)·F0.
    """
    c, s = np.cos(u[:, 2]), np.sin(u[:, 2])
    fx = c * F0[:, 0] - s * F0[:, 1]
    fy = s * F0[:, 0] + c * F0[:, 1]
    f = np.stack([fx, fy, np.zeros_like(fx)], axis=1)
    dfdu = np.zeros((len(F0), 3, 3))
    dfdu[:, 0, 2] = -fy
    dfdu[:, 1, 2] = fx
    return f, dfdu


def line_follower(dX: np.ndarray, pt: np.ndarray, u: np.ndarray):
    """Uniform normal and tangential load per unit deformed length on element chords.

    With x the current chord (end 1 to end 2), the element's total load is
    p·R₉₀·x + t·x (R₉₀ turns by +90°, so p > 0 pushes toward the chord's left), half
    to each end: linear in the displacements, with a constant, non-symmetric load
    stiffness (a pressure; common practice, no source).

    Parameters
    ----------
    dX : ndarray, shape (n_elements, 2)
        Undeformed chord vectors.
    pt : ndarray, shape (n_elements, 2)
        (normal p, tangential t) load per unit deformed length.
    u : ndarray, shape (n_elements, 4)
        End translations (ux1, uy1, ux2, uy2).

    Returns
    -------
    f : ndarray, shape (n_elements, 4)
    dfdu : ndarray, shape (n_elements, 4, 4)
    """
    x = dX + u[:, 2:] - u[:, :2]
    p, t = pt[:, 0], pt[:, 1]
    A = np.empty((len(p), 2, 2))
    A[:, 0, 0], A[:, 0, 1], A[:, 1, 0], A[:, 1, 1] = t, -p, p, t
    half = 0.5 * np.einsum("eij,ej->ei", A, x)
    f = np.concatenate([half, half], axis=1)
    dfdu = np.zeros((len(p), 4, 4))
    for r in (slice(0, 2), slice(2, 4)):
        dfdu[:, r, 0:2] = -0.5 * A
        dfdu[:, r, 2:4] = 0.5 * A
    return f, dfdu
