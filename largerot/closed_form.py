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


def cable_joint(left: float, right: float, EA: float, pretension: float, P: float):
    """Position (x, y) of the loaded joint of a taut cable in two straight pieces.

    Supports at (0, 0) and (left + right, 0), the joint at (left, 0) before loading;
    both pieces pretensioned to ``pretension`` (unstretched lengths l·EA/(EA + T0)) and
    a vertical force ``P`` at the joint. Exact statics of two straight elastic
    segments (common practice, no source): each carries N = EA·(l − l0)/l0 along its
    chord, and the joint is in equilibrium; solved with scipy's ``fsolve``.

    >>> x, y = cable_joint(12.0, 18.0, 3.2e7, 5e3, 0.0)
    >>> round(float(x), 9), round(float(y), 9)
    (12.0, 0.0)
    """
    from scipy.optimize import fsolve

    span = left + right
    pieces = ((0.0, left * EA / (EA + pretension)), (span, right * EA / (EA + pretension)))

    def balance(p):
        x, y = p
        f = np.zeros(2)
        for end, l0 in pieces:
            d = np.array([end - x, -y])
            l = np.hypot(*d)
            f += EA * (l - l0) / l0 * d / l
        return f + [0.0, P]

    guess = [left, -0.05 * span if P < 0 else 0.05 * span]
    # full output: "xtol too small" is fsolve's way of saying it is at round-off
    p, *_ = fsolve(balance, guess, xtol=1e-14, full_output=True)
    return p


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


def elastica_postbuckling(tip_slope: float) -> tuple[float, float, float]:
    """Post-buckled cantilever column (fixed base, free top, dead axial load P).

    Inextensible elastica in complete elliptic integrals (Timoshenko & Gere 1961,
    *Theory of Elastic Stability*, §2.7): with tip slope α, p = sin(α/2) and
    K = K(p), E = E(p) (modulus p, scipy's parameter m = p²),
        P / P_cr = (2K/π)²,  P_cr = π²EI/(4L²),
        lateral tip deflection  δ/L = 2p/K,
        drop of the tip  1 − x_tip/L = 2 − 2E/K.

    Returns
    -------
    (load_ratio, lateral, drop): P/P_cr and the tip's movements as fractions of L.
    """
    p = np.sin(0.5 * tip_slope)
    m = p * p
    K, E = ellipk(m), ellipe(m)
    return (2.0 * K / np.pi) ** 2, 2.0 * p / K, 2.0 - 2.0 * E / K


def _circular_arch_coefficients(rise: float, span: float, n_terms: int) -> np.ndarray:
    from scipy.integrate import quad

    R = (0.25 * span**2 + rise**2) / (2.0 * rise)
    x0 = 0.5 * span

    def y0(x):
        return np.sqrt(R * R - (x - x0) ** 2) - (R - rise)

    n = np.arange(1, n_terms + 1)
    return np.array([2.0 / span * quad(lambda x: y0(x) * np.sin(k * np.pi * x / span), 0.0, span,
                                       limit=200)[0] for k in n])


def shallow_arch_central_load(rise: float, span: float, EI: float, EA: float,
                              shape: str = "circular", n_terms: int = 41,
                              n_points: int = 200) -> dict:
    """Pinned shallow arch under a central point load: symmetric path and critical loads.

    Shallow-arch (Marguerre) theory as in Timoshenko & Gere 1961, ch. 7, and the
    Fourier-series solution of Fung & Kaplan 1952 (NACA TN 2840, "Buckling of low
    arches or curved beams of small curvature"). With the initial shape
    y0 = Σ b_n sin(nπx/L) and the loaded shape y = Σ q_n sin(nπx/L), k_n = nπ/L,
    the thrust of immovable pinned ends is H = (EA/4)·Σ k_n²(b_n² − q_n²) and each
    mode satisfies
        (EI k_n⁴ − H k_n²)·q_n = EI k_n⁴ b_n − (2P/L)·sin(nπ/2)
    (P downward at mid-span). Symmetric (odd) modes carry the load; an antisymmetric
    mode (n = 2) can branch off where H = 4π²EI/L² (asymmetric bifurcation). The
    symmetric path is parametrised by q_1, from b_1 down to −b_1: P follows from the
    first mode's equation, which is linear in H, and H from the thrust equation by
    root finding (scipy brentq) below H = 9π²EI/L².

    Returns
    -------
    dict with ``P``, ``H``, ``deflection`` (mid-span, downward) along the symmetric
    path, shape (n_points,); ``limit_load`` (first maximum of P), ``bifurcation_load``
    (P where H first reaches 4π²EI/L², NaN if the limit point comes first or it
    never does) and ``first`` (``"limit"``, ``"bifurcation"``, or ``"none"`` for an
    arch too flat to snap).
    """
    if shape == "circular":
        b = _circular_arch_coefficients(rise, span, n_terms)
    elif shape == "sinusoidal":
        b = np.zeros(n_terms)
        b[0] = rise
    else:
        raise ValueError(f"`shape` must be 'circular' or 'sinusoidal', got {shape!r}.")
    n = np.arange(1, n_terms + 1)
    odd = n % 2 == 1
    n, b = n[odd], b[odd]
    k = n * np.pi / span
    s = np.sin(0.5 * n * np.pi)
    PE = np.pi**2 * EI / span**2

    def load(q1, H):
        return 0.5 * span * s[0] * (EI * k[0] ** 4 * b[0] - q1 * (EI * k[0] ** 4 - H * k[0] ** 2))

    def modes(q1, H):
        P = load(q1, H)
        q = (EI * k**4 * b - (2.0 * P / span) * s) / (EI * k**4 - H * k**2)
        q[0] = q1
        return q, P

    def mismatch(H, q1):
        H = np.asarray(H, dtype=float)[..., None]
        P = load(q1, H)
        q = (EI * k**4 * b - (2.0 * P / span) * s) / (EI * k**4 - H * k**2)
        q[..., 0] = q1
        return 4.0 * H[..., 0] / EA - np.sum(k**2 * (b**2 - q**2), axis=-1)

    q1s = np.linspace(b[0], -b[0], n_points)
    H_hi = 9.0 * PE * (1.0 - 1e-9)
    grid = np.linspace(-PE, H_hi, 500)
    out_H, out_P, out_w = [], [], []
    for q1 in q1s:
        g = mismatch(grid, q1)
        roots = [brentq(mismatch, grid[i], grid[i + 1], args=(q1,), xtol=1e-14 * PE)
                 for i in np.flatnonzero(np.sign(g[:-1]) * np.sign(g[1:]) < 0)]
        if not roots:
            break
        # continuation: the root nearest the previous thrust
        H = roots[0] if not out_H else min(roots, key=lambda r: abs(r - out_H[-1]))
        q, P = modes(q1, H)
        out_H.append(H)
        out_P.append(P)
        out_w.append(float(np.sum((b - q) * s)))
    H, P, w = map(np.array, (out_H, out_P, out_w))
    i_lim = next((i for i in range(1, len(P) - 1) if P[i] >= P[i - 1] and P[i] >= P[i + 1]), None)
    limit = np.nan
    if i_lim is not None:
        from scipy.optimize import minimize_scalar

        def negP(q1):
            lo = max(i_lim - 2, 0)
            Hs = brentq(mismatch, H[lo] - 0.5 * PE if lo == 0 else min(H[lo:i_lim + 3]) - 0.05 * PE,
                        max(H[lo:i_lim + 3]) + 0.05 * PE, args=(q1,), xtol=1e-15 * PE)
            return -load(q1, Hs)

        r = minimize_scalar(negP, bracket=(q1s[i_lim - 1], q1s[i_lim], q1s[i_lim + 1]),
                            options={"xtol": 1e-12})
        limit = -float(r.fun)
    i_bif = next((i for i in range(1, len(H)) if H[i] >= 4.0 * PE), None)
    bif = np.nan
    if i_bif is not None and (i_lim is None or i_bif <= i_lim):
        j = i_bif
        q1 = brentq(lambda q: brentq(mismatch, H[j - 1] - 0.05 * PE, H[j] + 0.05 * PE, args=(q,),
                                     xtol=1e-15 * PE) - 4.0 * PE, q1s[j - 1], q1s[j], xtol=1e-15 * abs(b[0]))
        bif = float(load(q1, 4.0 * PE))
    first = "bifurcation" if np.isfinite(bif) else "limit" if np.isfinite(limit) else "none"
    return {"P": P, "H": H, "deflection": w, "limit_load": limit, "bifurcation_load": bif,
            "first": first}


def elastic_catenary(span: float, rise: float, length: float, w: float, EA: float) -> dict:
    """Elastic cable hanging under its own weight between two fixed points.

    Irvine 1981, *Cable Structures*, MIT Press, ch. 1 (the elastic catenary; the section number from memory): with s the
    unstretched arc length from the left support (0, 0), w the weight per unit
    unstretched length, H the horizontal tension and V the upward reaction at the
    left support, T(s) = √(H² + (w·s − V)²) and
        x(s) = H·s/EA + (H/w)·[asinh((w·s − V)/H) + asinh(V/H)],
        y(s) = (w·s²/2 − V·s)/EA + (T(s) − T(0))/w        (y up).
    H and V solve x(L0) = span, y(L0) = rise (scipy fsolve from the parabolic guess).

    Returns
    -------
    dict with ``H``, ``V`` (left), ``V_right`` (= w·L0 − V) and ``shape(s) -> (x, y)``,
    and ``sag``: the vertical distance of the cable below the chord at mid-span.
    """
    from scipy.optimize import fsolve

    def xy(s, H, V):
        T, T0 = np.hypot(H, w * s - V), np.hypot(H, V)
        x = H * s / EA + H / w * (np.arcsinh((w * s - V) / H) + np.arcsinh(V / H))
        y = (0.5 * w * s * s - V * s) / EA + (T - T0) / w
        return x, y

    chord = np.hypot(span, rise)
    sag0 = span * np.sqrt(max(3.0 * (length - chord) / (8.0 * span), 1e-6))
    H0 = w * length * span / (8.0 * sag0)
    V0 = 0.5 * w * length - H0 * rise / span

    def mismatch(p):
        x, y = xy(length, p[0] * H0, p[1] * H0)
        return [x / span - 1.0, (y - rise) / span]

    p, info, ok, msg = fsolve(mismatch, [1.0, V0 / H0], xtol=1e-14, full_output=True)
    # "xtol too small" is fsolve's way of saying it can do no better: fine if solved
    if ok != 1 and not np.max(np.abs(info["fvec"])) < 1e-12:
        raise RuntimeError(f"elastic catenary not solved: {msg}")
    H, V = p[0] * H0, p[1] * H0
    s_mid = brentq(lambda s: xy(s, H, V)[0] - 0.5 * span, 0.0, length, xtol=1e-14 * length)
    sag = 0.5 * rise - float(xy(s_mid, H, V)[1])
    return {"H": H, "V": V, "V_right": w * length - V, "sag": sag,
            "shape": lambda s: xy(np.asarray(s, float), H, V)}


def heavy_cantilever(q: float, L: float, EI: float, n_nodes: int = 400) -> dict:
    """Horizontal cantilever bending under its own weight q per unit length, large rotation.

    Inextensible elastica with a dead distributed load (common practice, no source:
    equilibrium of the part beyond s). With θ the slope, M the bending moment
    (counter-clockwise on the part before s):
        θ' = M/EI,  M' = q·(L − s)·cos θ,  x' = cos θ,  y' = sin θ,
        θ(0) = x(0) = y(0) = 0,  M(L) = 0,
    solved with scipy.integrate.solve_bvp, continued in the load from the small
    deflection solution.

    Returns
    -------
    dict with the tip's ``ux``, ``uy`` (down negative) and ``slope``, and the base
    moment ``M0``.
    """
    from scipy.integrate import solve_bvp

    s = np.linspace(0.0, L, n_nodes)
    guess = np.zeros((4, n_nodes))
    sol = None
    for f in np.linspace(0.1, 1.0, 10):
        qf = f * q

        def rhs(s, y, qf=qf):
            th, M = y[0], y[1]
            return np.vstack([M / EI, qf * (L - s) * np.cos(th), np.cos(th), np.sin(th)])

        def bc(ya, yb):
            return np.array([ya[0], yb[1], ya[2], ya[3]])

        if sol is None:
            guess[2] = s
        sol = solve_bvp(rhs, bc, s, guess, tol=1e-10, max_nodes=100000)
        if not sol.success:
            raise RuntimeError(f"heavy cantilever not solved: {sol.message}")
        guess = sol.sol(s)
    th, M, x, y = sol.sol(L)
    return {"ux": float(x - L), "uy": float(y), "slope": float(th), "M0": float(sol.sol(0.0)[1])}


def follower_tip_cantilever(F0, L: float, EI: float, n_nodes: int = 400) -> dict:
    """Cantilever along x with a tip force that turns with the tip: F = R(θ_tip)·F0.

    Inextensible elastica (common practice, no source): the section force is the
    tip force all along, so with θ' = M/EI, M' = −(F_y cos θ − F_x sin θ),
    x' = cos θ, y' = sin θ, θ(0) = x(0) = y(0) = 0, M(L) = 0 and the unknown
    parameters F = R(θ(L))·F0; scipy.integrate.solve_bvp, continued in the load.

    Returns
    -------
    dict with the tip's ``ux``, ``uy`` and ``slope``.
    """
    from scipy.integrate import solve_bvp

    F0 = np.asarray(F0, dtype=float)
    s = np.linspace(0.0, L, n_nodes)
    guess = np.zeros((4, n_nodes))
    guess[2] = s
    p = F0.copy() * 0.1
    for f in np.linspace(0.1, 1.0, 10):
        G = f * F0

        def rhs(s, y, p):
            th, M = y[0], y[1]
            return np.vstack([M / EI, -(p[1] * np.cos(th) - p[0] * np.sin(th)),
                              np.cos(th), np.sin(th)])

        def bc(ya, yb, p, G=G):
            c, sn = np.cos(yb[0]), np.sin(yb[0])
            return np.array([ya[0], yb[1], ya[2], ya[3],
                             p[0] - (c * G[0] - sn * G[1]), p[1] - (sn * G[0] + c * G[1])])

        sol = solve_bvp(rhs, bc, s, guess, p=p, tol=1e-10, max_nodes=100000)
        if not sol.success:
            raise RuntimeError(f"follower cantilever not solved: {sol.message}")
        guess, p = sol.sol(s), sol.p
    th, M, x, y = sol.sol(L)
    return {"ux": float(x - L), "uy": float(y), "slope": float(th)}


def cantilever_on_stop(P: float, gap: float, L: float, EI: float, n_nodes: int = 400) -> dict:
    """Cantilever along x, dead tip load P downward, tip resting on a frictionless floor.

    Inextensible elastica (common practice, no source): the floor at y = −gap
    pushes the tip up with R, so the section force is (0, R − P) all along:
    θ' = M/EI, M' = (P − R)·cos θ, x' = cos θ, y' = sin θ with θ(0) = x(0) = y(0) = 0,
    M(L) = 0 and y(L) = −gap; R is the unknown parameter (scipy solve_bvp,
    continued from the small-deflection answer R = P − 3EI·gap/L³).

    Returns
    -------
    dict with the floor force ``R`` and the tip's ``ux`` and ``slope``.
    """
    from scipy.integrate import solve_bvp

    s = np.linspace(0.0, L, n_nodes)
    guess = np.zeros((4, n_nodes))
    guess[2] = s
    R0 = P - 3.0 * EI * gap / L**3
    sol = None
    for f in np.linspace(0.1, 1.0, 10):
        g = f * gap

        def rhs(s, y, p):
            return np.vstack([y[1] / EI, (P - p[0]) * np.cos(y[0]), np.cos(y[0]), np.sin(y[0])])

        def bc(ya, yb, p, g=g):
            return np.array([ya[0], ya[2], ya[3], yb[1], yb[3] + g])

        p0 = [P - 3.0 * EI * g / L**3] if sol is None else sol.p
        sol = solve_bvp(rhs, bc, s, guess, p=p0, tol=1e-10, max_nodes=100000)
        if not sol.success:
            raise RuntimeError(f"cantilever on a stop not solved: {sol.message}")
        guess = sol.sol(s)
    th, M, x, y = sol.sol(L)
    return {"R": float(sol.p[0]), "ux": float(x - L), "slope": float(th), "R_small": R0}


def greenhill_weight(L: float, EI: float) -> float:
    """Weight per unit length q at which a clamped vertical column buckles under it alone.

    Greenhill's heavy column (Timoshenko & Gere 1961, *Theory of Elastic Stability*,
    §2.10): with x = L − s measured down from the free top, EI·θ'' + q·x·θ = 0 is
    solved by θ = √x·J₋₁/₃(z), z = (2/3)·√(q/EI)·x^(3/2), the branch with θ' = 0 at the
    top; θ = 0 at the clamp (z = j, the first zero of J₋₁/₃) gives
    q·L³/EI = 9·j²/4 ≈ 7.837. j is found with scipy.special.jv and brentq.
    """
    from scipy.special import jv

    j = brentq(lambda z: jv(-1.0 / 3.0, z), 1.0, 2.5, xtol=1e-15)
    return 9.0 * j * j / 4.0 * EI / L**3


def heavy_column_tip_load(q: float, L: float, EI: float, n_scan: int = 200) -> float:
    """Critical dead tip load P of a clamped vertical column that also carries its weight q.

    Small lateral deflection w(s) of a column clamped at s = 0 and free at s = L,
    axial compression P + q·(L − s) (Timoshenko & Gere 1961, *Theory of Elastic
    Stability*, §2.10 for the heavy column): lateral equilibrium of the part above s
    gives EI·w''' + (P + q·(L − s))·w' = 0 (no shear at the free top, since the tip
    load and the weight stay vertical), so with θ = w':

        EI·θ'' + (P + q·(L − s))·θ = 0,  θ(0) = 0 (clamp),  θ'(L) = 0 (no moment at the top).

    The lowest eigenvalue P is found by shooting (scipy.integrate.solve_ivp from the
    clamp with θ(0) = 0, θ'(0) = 1; the mismatch is θ'(L)) and brentq. It lies above
    −q·L (where the axial force P + q·(L − s) is nowhere compressive and θ' cannot
    vanish) and at most at Euler's π²EI/(4L²) (the weight only adds compression); that
    range, widened by 1 % so that q = 0 falls inside, is scanned upward in ``n_scan``
    cells for the first sign change. The cells are far finer than the spacing of the
    eigenvalues for q·L³/EI up to a few hundred. Negative P: the weight alone exceeds Greenhill's
    load (:func:`greenhill_weight`) and the tip must be pulled up.

    Returns
    -------
    float
        Critical P (compression positive).
    """
    from scipy.integrate import solve_ivp

    if q < 0.0:
        raise ValueError(f"`q` must be non-negative, got {q!r}.")

    def mismatch(P):
        """θ'(L) for each P (array): one solve_ivp over all of them at once."""
        P = np.atleast_1d(np.asarray(P, dtype=float))
        f = lambda s, y: np.concatenate([y[len(P):], -(P + q * (L - s)) / EI * y[:len(P)]])
        y0 = np.concatenate([np.zeros(len(P)), np.ones(len(P))])
        sol = solve_ivp(f, (0.0, L), y0, rtol=1e-12, atol=1e-14)
        return sol.y[len(P):, -1]

    lo, hi = -q * L, 1.01 * np.pi**2 * EI / (4.0 * L**2)
    grid = np.linspace(lo, hi, n_scan + 1)
    m = mismatch(grid)
    change = np.flatnonzero(np.sign(m[1:]) != np.sign(m[:-1]))
    if len(change):
        a, b = grid[change[0]], grid[change[0] + 1]
        return float(brentq(lambda P: mismatch(P)[0], a, b, xtol=1e-15 * (hi - lo), rtol=1e-14))
    raise RuntimeError(f"No critical tip load found in [{lo}, {hi}] for q = {q}.")
