"""Initial shapes of members: the hanging chain that places a sagging cable's nodes."""
from __future__ import annotations

import numpy as np
from scipy.optimize import brentq

from .errors import ModelError

__all__ = ["hanging_chain"]


def hanging_chain(p1, p2, length: float, segments: int, down=(0.0, -1.0)) -> np.ndarray:
    """Points at equal arc length on the inextensible catenary through two points.

    The catenary y = a·cosh((x − x0)/a) + c of the given length hangs between ``p1``
    and ``p2`` in the direction ``down`` (the shape of a uniform chain under its own
    weight; common practice, no source). Its parameter solves
    √(L² − v²) = 2a·sinh(h/2a) with h, v the span and rise in the frame of ``down``,
    and x0 = h/2 − a·atanh(v/L).

    Parameters
    ----------
    p1, p2 : array_like, shape (2,)
        End points.
    length : float
        Arc length, larger than the chord.
    segments : int
        Number of equal pieces; ``segments - 1`` interior points are returned.
    down : array_like, shape (2,)
        Direction the chain hangs in.

    Returns
    -------
    ndarray, shape (segments - 1, 2)
        Interior points from ``p1`` to ``p2``.

    Examples
    --------
    >>> pts = hanging_chain((0.0, 0.0), (2.0, 0.0), 3.0, 2)
    >>> np.round(pts, 4).tolist()        # the midpoint hangs below the chord
    [[1.0, -1.0053]]
    """
    d = np.asarray(down, float)
    d = d / np.linalg.norm(d)
    e_y = -d                                   # local "up"
    e_x = np.array([e_y[1], -e_y[0]])          # local horizontal
    p1, p2 = np.asarray(p1, float), np.asarray(p2, float)
    chord = p2 - p1
    h, v = float(chord @ e_x), float(chord @ e_y)
    if h < 0:                                  # measure the span from left to right
        return hanging_chain(p2, p1, length, segments, down)[::-1]
    if not length > np.hypot(h, v):
        raise ValueError("The chain must be longer than its chord.")
    if h <= 1e-9 * length:
        raise ModelError("A cable longer than its chord cannot sag along the direction it hangs in "
                         "(its ends lie one above the other); give it a pretension or a shorter length.")
    target = np.sqrt(length**2 - v**2)
    # 2a·sinh(h/2a) falls from ∞ (a → 0) to h (a → ∞); bracket in b = h/2a
    g = lambda b: np.sinh(b) / b - target / h  # noqa: E731
    hi = 1.0
    while g(hi) < 0.0:
        hi *= 2.0
    b = brentq(g, 1e-12, hi, xtol=1e-14, rtol=1e-15)
    a = h / (2.0 * b)
    x0 = h / 2.0 - a * np.arctanh(v / length)
    s0 = np.sinh(-x0 / a)
    s = np.arange(1, segments) * (length / segments)
    x = x0 + a * np.arcsinh(s / a + s0)
    y = a * (np.cosh((x - x0) / a) - np.cosh(x0 / a))
    return p1 + x[:, None] * e_x + y[:, None] * e_y
