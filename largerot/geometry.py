"""Initial shapes of members: the hanging chain that places a sagging cable's nodes, and
the circular, parabolic and sinusoidal arcs of curved members."""
from __future__ import annotations

import math

import numpy as np
from scipy.optimize import brentq

from .errors import ModelError, is_real

__all__ = ["hanging_chain", "arc_points", "ARC_SHAPES"]


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


#: Shapes :func:`arc_points` draws.
ARC_SHAPES = ("circle", "parabola", "sine")


def arc_points(p1, p2, segments: int, *, rise: float | None = None, radius: float | None = None,
               shape: str = "circle") -> np.ndarray:
    """Points along a curve from ``p1`` to ``p2``, both ends included.

    In the frame of the chord (x along p1→p2 of length c, y to its left, the chord
    turned by +90°), with rise f at mid-span:

    * ``"circle"``: the circular arc through both ends, radius
      R = (c²/4 + f²)/(2f) and half-angle α with tan(α/2) = 2f/c (so more than a
      semicircle when |f| > c/2); points at equal angles, x = c/2 + R·sin t,
      y = R·cos t − (R − f) for t from −α to α;
    * ``"parabola"``: y = 4f·x(c − x)/c², points at equal steps of x;
    * ``"sine"``: y = f·sin(πx/c), points at equal steps of x.

    Parameters
    ----------
    p1, p2 : array_like, shape (2,)
        End points; returned exactly as given.
    segments : int
        Pieces between the points.
    rise : float
        f, non-zero; positive to the left of p1→p2.
    radius : float
        Instead of ``rise`` (circle only): |radius| ≥ c/2, the shorter arc, to the
        left of p1→p2 for a positive radius.
    shape : {"circle", "parabola", "sine"}

    Returns
    -------
    ndarray, shape (segments + 1, 2)

    Examples
    --------
    >>> pts = arc_points((0.0, 0.0), (2.0, 0.0), 2, rise=1.0)     # a half circle
    >>> np.allclose(pts, [[0, 0], [1, 1], [2, 0]])
    True
    """
    if shape not in ARC_SHAPES:
        raise ModelError(f"`shape` must be one of {', '.join(map(repr, ARC_SHAPES))}, got {shape!r}.")
    p1, p2 = np.asarray(p1, dtype=float), np.asarray(p2, dtype=float)
    d = p2 - p1
    c = float(np.hypot(*d))
    if c == 0.0:
        raise ModelError("An arc needs two distinct end points.")
    if (rise is None) == (radius is None):
        raise ModelError(f"Give the curve's `rise` or its `radius`, one of them; got rise={rise!r}, "
                         f"radius={radius!r}.")
    if radius is not None:
        if shape != "circle":
            raise ModelError(f"A `radius` sets a circle; a {shape} needs its `rise`.")
        R = _real("radius", radius)
        if abs(R) < 0.5 * c:
            raise ModelError(f"`radius` {radius!r} is smaller than half the chord ({0.5 * c!r}): "
                             "no circle of that radius joins the end points.")
        f = math.copysign(abs(R) - math.sqrt(max(R * R - 0.25 * c * c, 0.0)), R)
    else:
        f = _real("rise", rise)
    if f == 0.0:
        raise ModelError("`rise` must be non-zero; a straight member is a beam or a bar.")
    n = int(segments)
    if shape == "circle":
        h = abs(f)
        R = (0.25 * c * c + h * h) / (2.0 * h)
        half = 2.0 * math.atan(2.0 * h / c)
        t = -half + 2.0 * half * np.arange(n + 1) / n
        x = 0.5 * c + R * np.sin(t)
        y = math.copysign(1.0, f) * (R * np.cos(t) - (R - h))
    else:
        x = c * np.arange(n + 1) / n
        y = 4.0 * f * x * (c - x) / (c * c) if shape == "parabola" else f * np.sin(np.pi * x / c)
    e = d / c
    normal = np.array([-e[1], e[0]])
    pts = p1 + x[:, None] * e + y[:, None] * normal
    pts[0], pts[-1] = p1, p2
    return pts


def _real(name: str, value) -> float:
    if not is_real(value):
        raise TypeError(f"`{name}` must be a number, got {value!r}.")
    v = float(value)
    if not math.isfinite(v):
        raise ModelError(f"`{name}` must be finite, got {value!r}.")
    return v
