"""Closed-form solutions of classical problems, computed with scipy.

Independent of the finite-element code (nothing here imports it): the verification
tests and notebooks compare largerot's paths with these. The source of each formula
is named in its docstring.
"""
from __future__ import annotations

import numpy as np
from scipy.optimize import brentq
from scipy.special import ellipeinc, ellipe, ellipk, ellipkinc


def elastica_tip_load(alpha: float) -> tuple[float, float, float]:
    """Cantilever under a dead tip load perpendicular to its undeformed axis.

    Inextensible elastica in elliptic integrals (Bisshopp & Drucker 1945, Quart. Appl.
    Math. 3, "Large deflection of cantilever beams"). With α = P·L²/EI, tip slope θ0
    and k² = (1 + sin θ0)/2, sin φ1 = 1/(k√2):
        √α = K(k) − F(φ1, k),
        transverse tip deflection  δ/L = 1 − (2/√α)·[E(k) − E(φ1, k)]  … along the load,
        axial projection of the tip  x/L = √(2 sin θ0 / α).

    Returns
    -------
    (along_load, shortening, tip_slope) as fractions of L (slope in radians).
    """
    def mismatch(theta0):
        m = (1.0 + np.sin(theta0)) / 2.0
        phi1 = np.arcsin(1.0 / np.sqrt(2.0 * m))
        return ellipk(m) - ellipkinc(phi1, m) - np.sqrt(alpha)

    theta0 = brentq(mismatch, 1e-12, np.pi / 2 - 1e-12, xtol=1e-15)
    m = (1.0 + np.sin(theta0)) / 2.0
    phi1 = np.arcsin(1.0 / np.sqrt(2.0 * m))
    along = 1.0 - 2.0 / np.sqrt(alpha) * (ellipe(m) - ellipeinc(phi1, m))
    x_tip = np.sqrt(2.0 * np.sin(theta0) / alpha)
    return along, 1.0 - x_tip, theta0


def end_moment_tip(theta: float) -> tuple[float, float]:
    """Tip of a cantilever (along x, length 1) bent by an end moment to tip angle θ = M·L/EI.

    Pure bending into a circular arc of radius L/θ (common practice, no source).
    Returns (ux, uy) of the tip as fractions of L.
    """
    if theta == 0.0:
        return 0.0, 0.0
    return np.sin(theta) / theta - 1.0, (1.0 - np.cos(theta)) / theta


def two_bar_truss_load(v, half_span: float, rise: float, EA: float):
    """Apex load P of a symmetric two-bar truss pushed down by v (statics, exact).

    Bars from (±a, 0) to the apex (0, h), N = EA·(l − L0)/L0 along the current chord,
    vertical equilibrium of the apex: P = −2·N·(h − v)/l, P positive downward
    (common practice, no source: two-force members and equilibrium of a node).
    """
    v = np.asarray(v, dtype=float)
    L0 = np.hypot(half_span, rise)
    l = np.hypot(half_span, rise - v)
    N = EA * (l - L0) / L0
    return -2.0 * N * (rise - v) / l
