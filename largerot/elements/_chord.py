"""Kinematics of an element's chord, shared by the corotational beam and bar."""
from __future__ import annotations

import numpy as np


def chord(dX: np.ndarray, du: np.ndarray, L0: np.ndarray):
    """Current chord of elements.

    Parameters
    ----------
    dX : ndarray, shape (n_elements, 2)
        Undeformed end-to-end vector.
    du : ndarray, shape (n_elements, 2)
        Difference of end displacements (end 2 minus end 1).
    L0 : ndarray, shape (n_elements,)
        Undeformed length.

    Returns
    -------
    l : ndarray, shape (n_elements,)
        Current length.
    stretch : ndarray, shape (n_elements,)
        ``l - L0``, computed without cancellation as
        (|dX|² − L0² + 2 dX·du + du·du) / (l + L0), so that tiny strains in very stiff
        members keep their digits. |dX|² − L0² is formed as (|dX| − L0)(|dX| + L0)
        with |dX| = hypot(dX): exactly zero for an element whose unstretched length is
        its undeformed chord (so an unloaded structure has no round-off forces), the
        misfit of a cable's own length otherwise.
    c, s : ndarray, shape (n_elements,)
        Cosine and sine of the current chord angle.
    """
    x = dX + du
    l = np.hypot(x[:, 0], x[:, 1])
    chord0 = np.hypot(dX[:, 0], dX[:, 1])
    misfit = (chord0 - L0) * (chord0 + L0)
    stretch = (misfit + 2.0 * np.einsum("ei,ei->e", dX, du)
               + np.einsum("ei,ei->e", du, du)) / (l + L0)
    return l, stretch, x[:, 0] / l, x[:, 1] / l
