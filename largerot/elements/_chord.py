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
    p, du2 = chord_products(np.conj(as_complex(dX)), as_complex(du))
    stretch = stretch_of(length_misfit(dX, L0), p.real, du2, l, L0)
    return l, stretch, x[:, 0] / l, x[:, 1] / l


def length_misfit(dX: np.ndarray, L0: np.ndarray) -> np.ndarray:
    """|dX|² − L0² as (|dX| − L0)(|dX| + L0), shape (n_elements,) (see :func:`chord`)."""
    chord0 = np.hypot(dX[:, 0], dX[:, 1])
    return (chord0 - L0) * (chord0 + L0)


def stretch_of(misfit: np.ndarray, dot: np.ndarray, du2: np.ndarray, l: np.ndarray,
               L0: np.ndarray) -> np.ndarray:
    """``l - L0`` without cancellation (see :func:`chord`) from ``misfit`` = |dX|² − L0²,
    ``dot`` = dX·du and ``du2`` = |du|², shape (n_elements,) each."""
    return (misfit + 2.0 * dot + du2) / (l + L0)


def chord_products(conj_dX: np.ndarray, du: np.ndarray):
    """p = conj(dX)·du (dX·du + i·dX × du) and |du|², shape (n_elements,) each, from
    chords and their changes as x + iy: what :func:`stretch_of` and :func:`chord_turn`
    read, formed the same way for every element kind so that they agree to the bit."""
    return conj_dX * du, (du * np.conj(du)).real


def as_complex(v: np.ndarray) -> np.ndarray:
    """Planar vectors (n, 2) as complex numbers x + iy, shape (n,) (a view when
    ``v`` is C-contiguous float64)."""
    return np.ascontiguousarray(v, dtype=float).view(complex)[:, 0]


def chord_turn(p: np.ndarray, length2: np.ndarray) -> np.ndarray:
    """Angle α by which each chord dX + du is turned from dX, shape (n_elements,).

    α = atan2(dX × du, |dX|² + dX·du), both read off p = conj(dX)·du: exactly zero for
    du = 0 and accurate to round-off *relative to α* for small turns at any chord
    angle (a difference of the two chord angles has an absolute error of eps·π,
    which at small loads on stiff members is the whole bending moment's round-off).

    Parameters
    ----------
    p : ndarray of complex, shape (n_elements,)
        conj(dX)·du = dX·du + i·dX × du, with dX and du (the change of the chord,
        end 2 minus end 1) as x + iy.
    length2 : ndarray, shape (n_elements,)
        |dX|².
    """
    return np.arctan2(p.imag, length2 + p.real)
