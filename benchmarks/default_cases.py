"""Standard problems for the defaults benchmark (``benchmarks/defaults.py``).

Each builder returns a :class:`Setup`: the structure, the reference check, and what a
new user would naturally give the controls (a load step, a displacement DOF and
step, a target or stop). Only the public API is used (``largerot``,
``largerot.examples``, ``largerot.closed_form``, ``largerot.demo``), so these keep
working while the internals are rewritten. The structures are invented; the
references are the closed forms of :mod:`largerot.closed_form` (sources named there)
or statics, named beside each check.

A check is ``check(path) -> (max relative error, what was compared)``; the error
is NaN when nothing could be compared (e.g. the trace ended before the reference
region).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable

import numpy as np
from scipy.optimize import brentq

import largerot as lr
from largerot import closed_form as cf
from largerot import examples
from largerot import demo

#: Points of a path compared with the reference (spread evenly over the path).
N_CHECK = 8


@dataclass
class Setup:
    """A problem ready to trace with every control that applies.

    Attributes
    ----------
    structure : lr.Structure
    check : callable
        ``check(path) -> (error, note)``: largest relative error against the reference.
    tol : float
        Error up to which the path "matches" (discretisation error of the mesh).
    load_step : float or None
        Step of ``lr.by_load`` (None: load control does not apply).
    disp : tuple or None
        ``(node, dof, step)`` of ``lr.by_displacement`` (None: no natural DOF).
    target : float or None
        ``target_load_factor`` for every control.
    stop : callable or None
        ``stop(point)`` for every control.
    expect_error : str or None
        A text the ModelError must contain when misuse/mechanism is expected.
    """

    structure: lr.Structure
    check: Callable
    tol: float
    load_step: float | None = None
    disp: tuple | None = None
    target: float | None = None
    stop: Callable | None = None
    expect_error: str | None = None
    note: str = ""
    arc: bool = True


def _sample(path, mask=None):
    """Indices of up to N_CHECK points spread over the path (point 0 left out)."""
    idx = np.arange(1, len(path))
    if mask is not None:
        idx = idx[mask[1:]]
    if len(idx) <= N_CHECK:
        return idx
    return idx[np.linspace(0, len(idx) - 1, N_CHECK).round().astype(int)]


def _slender(L=1.0, EI=1.0, segments=32, angle=0.0):
    """Cantilever of length L, EA/EI = 1e6 (practically inextensible), along ``angle``."""
    s = lr.Structure()
    a = s.node(0.0, 0.0)
    b = s.node(L * math.cos(angle), L * math.sin(angle))
    s.beam(a, b, lr.Section(E=EI * 1e6, A=1.0, I=1e-6), segments=segments)
    s.fix(a)
    return s, a, b


# -- columns --------------------------------------------------------------------------
def column_perfect():
    """Cantilever column (examples.column), perfect, to 1.5 × Euler load.

    Reference: the bifurcation at the Euler load π²EI/(4L²) (Timoshenko & Gere 1961),
    λ = 1; 10 elements: discretisation error < 0.1 %, tolerance 1 %.
    """
    sc = examples.column("cantilever", segments=10)
    tip = sc.tip
    shorten = sc.parameters["euler_load"] * 3.0 / sc.parameters["EA"]   # axial, at λ = 1

    def check(path):
        cps = [c for c in path.critical_points if c.kind == "bifurcation"]
        if not cps:
            return float("inf"), "no bifurcation reported"
        return abs(cps[0].load_factor - 1.0), "bifurcation λ vs Euler"
    return Setup(sc.structure, check, 1e-2, load_step=0.15, disp=(tip, "uy", -1.5 * shorten / 10),
                 target=1.5, note="load step target/10; displacement: axial top, travel/10")


def _postbuckled_lateral(lam):
    """Lateral tip deflection / L of the perfect cantilever elastica at P/P_cr = lam."""
    if lam <= 1.0:
        return 0.0
    a = brentq(lambda t: cf.elastica_postbuckling(t)[0] - lam, 1e-9, math.pi - 1e-6)
    return cf.elastica_postbuckling(a)[1]


def column_imperfect():
    """As column_perfect with a lateral load of 1e-3 × Euler load at the top.

    Reference: the post-buckled elastica (Timoshenko & Gere 1961, §2.7) for λ ≥ 1.2,
    lateral tip deflection; the imperfection and 20 elements shift it by ~1 %:
    tolerance 3 %.
    """
    sc = examples.column("cantilever", segments=20)
    s, tip, L = sc.structure, sc.tip, sc.parameters["length"]
    s.load(tip, fx=1e-3 * sc.parameters["euler_load"])

    def check(path):
        lam = path.load_factor
        ux = path.displacement(tip, "ux")
        idx = _sample(path, lam >= 1.2)
        if not len(idx):
            return float("nan"), "no point with λ ≥ 1.2"
        err = max(abs(ux[i] / L - _postbuckled_lateral(lam[i])) / _postbuckled_lateral(lam[i])
                  for i in idx)
        return err, "lateral tip vs post-buckled elastica"
    return Setup(s, check, 3e-2, load_step=0.15,
                 disp=(tip, "ux", _postbuckled_lateral(1.5) * L / 10), target=1.5,
                 note="load step target/10; displacement: top ux, travel/10")


# -- elastica and roll-up -------------------------------------------------------------
def elastica():
    """Cantilever, dead tip load perpendicular, P·L²/EI to 10 (32 elements).

    Reference: Bisshopp & Drucker 1945 (closed_form.elastica_tip_load), tip deflection
    along the load; 32 elements: 0.2 % (README), tolerance 0.5 %.
    """
    s, a, b = _slender()
    s.load(b, fy=-1.0)

    def check(path):
        lam, v = path.load_factor, -path.displacement(b, "uy")
        idx = _sample(path, lam > 0.05)
        if not len(idx):
            return float("nan"), "no loaded point"
        return max(abs(v[i] / cf.elastica_tip_load(lam[i])[0] - 1.0) for i in idx), \
            "tip deflection vs elastica"
    return Setup(s, check, 5e-3, load_step=1.0,
                 disp=(b, "uy", -cf.elastica_tip_load(10.0)[0] / 20), target=10.0,
                 note="load step target/10; displacement: tip uy, travel/20")


def rollup():
    """Cantilever rolled up by an end moment into one full circle (M = 2πEI/L).

    Reference: circular arc of radius EI/M (closed_form.end_moment_tip); error is the
    tip's distance from it / L. Chords of an arc: exact nodes, tolerance 1e-3.
    """
    s, a, b = _slender()
    s.load(b, mz=2 * math.pi)

    def check(path):
        lam, ux, uy = path.load_factor, path.displacement(b, "ux"), path.displacement(b, "uy")
        idx = _sample(path)
        if not len(idx):
            return float("nan"), "no point"
        errs = []
        for i in idx:
            rx, ry = cf.end_moment_tip(2 * math.pi * lam[i])
            errs.append(math.hypot(ux[i] - rx, uy[i] - ry))
        return max(errs), "tip vs circular arc (/L)"
    return Setup(s, check, 1e-3, load_step=0.1, disp=(b, "rz", 2 * math.pi / 20), target=1.0,
                 note="load step target/10; displacement: tip rz, 2π/20")


# -- trusses and toggles --------------------------------------------------------------
def _truss_limit(a, h, EA):
    v = np.linspace(0.0, h, 20001)
    return float(cf.two_bar_truss_load(v, a, h, EA).max())


def two_bar_truss():
    """Shallow two-bar truss (as tests/helpers.two_bar_truss), unit load at the apex.

    Reference: exact statics (closed_form.two_bar_truss_load), |λ − P(v)| / P_max;
    exact up to Newton's tolerance: tolerance 1e-6. Load control aims at 1.2·P_max
    (beyond the limit point: it should stop there or say it snapped).
    """
    a_, h, EA = 2.0, 0.5, 1e4
    sc = examples.two_bar_truss(a_, h, EA)
    s, apex = sc.structure, sc.apex
    Pm = _truss_limit(a_, h, EA)

    def check(path):
        v = -path.displacement(apex, "uy")
        P = cf.two_bar_truss_load(v, a_, h, EA)
        return float(np.abs(path.load_factor - P).max() / Pm), "λ vs statics P(v) (/P_max)"
    return Setup(s, check, 1e-6, load_step=0.12 * Pm, disp=(apex, "uy", -2.2 * h / 20),
                 target=None, stop=lambda p: -p.displacement(apex, "uy") > 2.2 * h
                 or p.load_factor > 1.2 * Pm,
                 note="stop: apex 2.2 rises down or λ > 1.2 P_max; load step 0.12 P_max")


def _toggle(spring):
    sc = examples.toggle_frame(spring=spring)
    p = sc.parameters
    a_, h, EA, k, kh = p["half_span"], p["rise"], p["EA"], p["spring"], p["hanger"]
    apex, load = sc.apex, sc.load
    vv = np.linspace(0.0, h, 20001)
    Pm = float((cf.two_bar_truss_load(vv, a_, h, EA) + k * vv).max())

    def check(path):
        v = -path.displacement(apex, "uy")
        w = -path.displacement(load, "uy")
        lam = path.load_factor
        P = cf.two_bar_truss_load(v, a_, h, EA) + k * v
        e1 = np.abs(lam - P).max() / Pm
        e2 = np.abs(w - (v + lam / kh)).max() / (2.4 * h)
        return float(max(e1, e2)), "λ vs statics, load point vs hanger stretch"
    stop = sc.trace_options["stop"]
    return Setup(sc.structure, check, 1e-6, load_step=0.12 * Pm, disp=(load, "uy", -2.4 * h / 20),
                 stop=lambda q: stop(q) or q.load_factor > 1.2 * Pm,
                 note="stop: scenario's (apex 2.4 rises down) or λ > 1.2 P_max; load step 0.12 P_max; "
                      "displacement: the load point (snap-back there)")


def truss_hanger():
    """Two-bar truss pulled through a soft hanger (examples.toggle_frame, spring = 0).

    Snap-back at the load point. Reference: statics (toggle_frame's docstring),
    tolerance 1e-6.
    """
    return _toggle(0.0)


def toggle_frame():
    """examples.toggle_frame with its defaults (spring at the apex, soft hanger)."""
    return _toggle(50.0)


# -- arches ---------------------------------------------------------------------------
def _arch(sc, which, scale):
    p = sc.parameters
    ref = cf.shallow_arch_central_load(p["rise"], p["span"], p["EI"], p["EA"])
    want = ref["limit_load"] if which == "limit" else ref["bifurcation_load"]
    lam_ref = want / p["load"]

    def check(path):
        cps = [c for c in path.critical_points if c.kind == which]
        if cps:
            return abs(cps[0].load_factor / lam_ref - 1.0), f"first {which} λ vs shallow-arch theory"
        if which == "limit" and len(path) > 1:
            return abs(path.load_factor.max() / lam_ref - 1.0), "max λ vs limit (no critical point)"
        return float("inf"), f"no {which} point reported"
    stop = sc.trace_options["stop"]
    return Setup(sc.structure, check, 1.5e-2, load_step=0.12 * scale * lam_ref,
                 disp=(sc.crown, "uy", -2.2 * p["rise"] / 20),
                 stop=lambda q: stop(q) or q.load_factor > 1.2 * scale * lam_ref,
                 note="stop: scenario's or λ > 1.2 × reference; load step 0.12 × reference; "
                      "tolerance 1.5 % (shallow-arch theory, tests/test_stability.py)")


def shallow_arch():
    """examples.shallow_arch: limit point vs Fung & Kaplan 1952 (closed_form)."""
    return _arch(examples.shallow_arch(), "limit", 1.0)


def deep_arch():
    """examples.deep_arch: asymmetric bifurcation vs shallow-arch theory (closed_form)."""
    return _arch(examples.deep_arch(), "bifurcation", 1.0)


def arch_1N():
    """examples.shallow_arch with a 1 N reference load: λ in newtons (everyday idiom)."""
    return _arch(examples.shallow_arch(load=1.0), "limit", 1.0)


# -- frames, rings --------------------------------------------------------------------
def _l_frame(segments, L=2.0):
    s = lr.Structure()
    a, c, t = s.node(0.0, 0.0), s.node(0.0, L), s.node(L, L)
    sec = lr.Section.tube(E=210e9, diameter=0.1, wall=0.005)
    s.beam(a, c, sec, segments=segments)
    s.beam(c, t, sec, segments=segments)
    s.fix(a)
    s.load(t, fy=-3.0 * sec.EI / L**2)          # P·L²/EI = 3
    return s, t


def l_frame():
    """Cantilevered L-frame (column and arm 2 m, steel tube), tip load P·L²/EI = 3.

    Reference: none in closed form; a mesh-converged self-check: the same frame with
    4× the elements traced by load control in 40 steps, tip position compared at the
    same λ (a check of the path following, not of the mechanics). Tolerance 2e-3·L.
    """
    s, t = _l_frame(16)
    fine = {}

    def check(path):
        if "p" not in fine:
            sf, tf = _l_frame(64)
            fine["p"] = lr.trace(sf, lr.by_load(1 / 40), target_load_factor=1.0)
            fine["t"] = tf
        ref = fine["p"]
        lr_, ux_r, uy_r = ref.load_factor, ref.displacement(fine["t"], "ux"), ref.displacement(fine["t"], "uy")
        lam, ux, uy = path.load_factor, path.displacement(t, "ux"), path.displacement(t, "uy")
        idx = _sample(path, (lam > 0) & (lam <= lr_.max()))
        if not len(idx):
            return float("nan"), "no point in the reference's range"
        err = max(math.hypot(ux[i] - np.interp(lam[i], lr_, ux_r), uy[i] - np.interp(lam[i], lr_, uy_r))
                  for i in idx) / 2.0
        return err, "tip vs 4× finer mesh (self-check, /L)"
    return Setup(s, check, 2e-3, load_step=0.1, disp=(t, "uy", -2.0 / 40), target=1.0,
                 note="load step target/10; displacement: tip uy, L/40; reference is a self-check")


def ring_pressure():
    """Ring under follower pressure (64 elements; as tests/test_cables_loads.ring).

    Reference: buckling at q = 3EI/R³ (Timoshenko & Gere 1961, §7.4), λ = 1;
    tolerance 1 % (64 chords).
    """
    n, R, EI, EA = 64, 2.0, 1.0e3, 1.0e8
    s = lr.Structure()
    th = 2 * np.pi * np.arange(n) / n
    nodes = [s.node(R * np.cos(a), R * np.sin(a)) for a in th]
    sec = lr.Section(E=EA, A=1.0, I=EI / EA)
    members = [s.beam(nodes[k], nodes[(k + 1) % n], sec) for k in range(n)]
    s.fix(nodes[0], "uy")
    s.fix(nodes[n // 2], "uy")
    s.fix(nodes[n // 4], "ux")
    q = 3 * EI / R**3
    for m in members:
        s.line_load(m, normal=q)

    def check(path):
        cps = path.critical_points
        if not cps:
            return float("inf"), "no critical point reported"
        return abs(cps[0].load_factor - 1.0), "first critical λ vs 3EI/R³"
    return Setup(s, check, 1e-2, load_step=0.13, disp=(nodes[n // 4], "uy", -1.3 * q * R**2 / EA / 10),
                 target=1.3, note="load step target/10; displacement: top node radial, travel/10")


# -- cables ---------------------------------------------------------------------------
ROPE = lr.Section(E=160e9, A=2.0e-4, density=7850.0)


def cable_catenary():
    """Sagging cable (span 100 m, length 1.027 × chord, 80 segments), its weight
    scaled by λ (``s.gravity(constant=False)``) to λ = 1.

    Reference: elastic catenary (Irvine 1981; closed_form.elastic_catenary) with the
    weight λ·w, mid-span sag; 80 segments: 1e-4, tolerance 5e-3 (as the tests).
    """
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(100.0, 0.0)
    s.gravity(constant=False)
    L0 = 1.027 * 100.0
    m = s.cable(a, b, ROPE, segments=80, unstretched_length=L0)
    s.fix(a, "ux", "uy")
    s.fix(b, "ux", "uy")
    mid = m.nodes[len(m.nodes) // 2]
    w = ROPE.density * ROPE.A * 9.81

    def check(path):
        lam = path.load_factor
        idx = _sample(path, lam > 1e-3)
        if not len(idx):
            return float("nan"), "no loaded point"
        errs = []
        for i in idx:
            sag = -path.coordinates(i)[mid][1]
            ref = cf.elastic_catenary(100.0, 0.0, L0, lam[i] * w, ROPE.EA)["sag"]
            errs.append(abs(sag / ref - 1.0))
        return max(errs), "mid-span sag vs elastic catenary"
    return Setup(s, check, 5e-3, load_step=0.1, disp=None, target=1.0,
                 note="load step target/10; no natural displacement DOF")


def cable_point_load():
    """Pretensioned cable (5 kN) in two straight pieces, point load 20 kN × λ.

    Reference: exact statics of two straight elastic segments (closed_form.cable_joint), joint
    sag; exact up to Newton's tolerance: tolerance 1e-5.
    """
    sc = examples.two_piece_cable()
    s, c, q = sc.structure, sc.joint, sc.parameters

    def joint(lam):
        return cf.cable_joint(q["left_length"], q["right_length"], q["EA"], q["pretension"],
                              lam * q["load"])
    y1 = joint(1.0)[1]

    def check(path):
        lam, v = path.load_factor, path.displacement(c, "uy")
        idx = _sample(path, lam > 0.05)
        if not len(idx):
            return float("nan"), "no loaded point"
        return max(abs(v[i] - joint(lam[i])[1]) / abs(y1) for i in idx), "joint sag vs statics"
    return Setup(s, check, 1e-5, load_step=0.1, disp=(c, "uy", y1 / 20), target=1.0,
                 note="load step target/10; displacement: loaded joint uy, travel/20")


def guyed_mast():
    """demo.guyed_mast to λ = 6 (60 kN at the top).

    Reference: the leeward guy goes slack when the lateral load takes its pretension,
    H = 2·T0·sin θ (statics of two equal guys, small displacements; common practice,
    no source); P-Δ of the mast ≈ 0.5 %: tolerance 2 %. T0 is the guys' tension at
    rest as traced (point 0): the 40 kN given to each guy is partly lost to the
    mast's shortening under the guys' pull and its own weight (measured 3.6 %: the
    reference with the nominal 40 kN, λ = 3.58, missed by that much).
    """
    s, nodes = demo.guyed_mast()
    top = nodes["top"]
    sin = 15.0 / math.hypot(15.0, 30.0)

    def check(path):
        T0 = float(path.member_forces(0)["bar"]["N"][-1])          # the leeward guy at rest
        lam_slack = 2 * T0 * sin / 10e3
        ev = [e for e in path.events if e.kind == "cable slack"]
        if not ev:
            return (float("nan"), "did not reach slack") if path.load_factor.max() < lam_slack \
                else (float("inf"), "no slack event")
        return abs(ev[0].load_factor / lam_slack - 1.0), "slack λ vs statics"
    return Setup(s, check, 2e-2, load_step=0.6, disp=(top, "ux", 0.11 / 20), target=6.0,
                 note="load step target/10; displacement: top ux, ~travel/20")


# -- yielding, contact ----------------------------------------------------------------
B, H, FY, E = 0.05, 0.1, 250e6, 200e9


def fibre_cantilever():
    """Fibre-section (rectangle 50 × 100, fy 250 MPa, no hardening) cantilever, 2 m,
    20 elements, tip load Mp/L × λ.

    Reference: first yield at My/Mp = 2/3 and the plateau λ(2δc) ≈ 1 (plastic-hinge
    theory, Neal 1977; from memory); 20 elements spread the hinge: tolerance 3 %.
    Load control aims at λ = 1 (the collapse load).
    """
    L = 2.0
    sec = lr.FibreSection.rectangle(E=E, fy=FY, width=B, depth=H, n_fibres=40)
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, sec, segments=20)
    s.fix(a)
    Mp = FY * B * H**2 / 4
    s.load(b, fy=-Mp / L)
    EI = E * B * H**3 / 12
    dc = Mp / L * L**3 / (3 * EI)

    def check(path):
        first = [e.load_factor for e in path.events if e.kind == "first yield"]
        if not first:
            return float("inf"), "no first-yield event"
        err = abs(first[0] / (2 / 3) - 1.0)
        v = -path.displacement(b, "uy")
        if v.max() >= 2 * dc and np.all(np.diff(v) > 0):
            err = max(err, abs(np.interp(2 * dc, v, path.load_factor) - 1.0))
            return err, "first yield and plateau vs plastic-hinge theory"
        return err, "first yield vs My/Mp"
    return Setup(s, check, 3e-2, load_step=0.1, disp=(b, "uy", -3 * dc / 20), target=None,
                 stop=lambda p: -p.displacement(b, "uy") > 3 * dc or p.load_factor >= 1.0 - 1e-12,
                 note="stop: tip 3δc down or λ = 1 (load control's goal); load step 0.1")


def leaning_pole():
    """demo.leaning_pole: yields at the base, leans on a wall; stop at top ux 2.5 m.

    Reference: first yield at M_y = fy·W at the base, λ = My/(P_ref·L) (small
    rotation at first yield; common practice, no source), tolerance 1 %.
    """
    s, nodes, wall = demo.leaning_pole()
    top = nodes["top"]
    D, t = 0.2, 0.008
    I = math.pi / 64 * (D**4 - (D - 2 * t) ** 4)
    lam_y = 355e6 * 2 * I / D / (10e3 * 10.0)

    def check(path):
        first = [e.load_factor for e in path.events if e.kind == "first yield"]
        if not first:
            return float("inf"), "no first-yield event"
        return abs(first[0] / lam_y - 1.0), "first yield vs fy·W/L"
    return Setup(s, check, 1e-2, load_step=0.2, disp=(top, "ux", 0.05),
                 stop=lambda p: p.displacement(top, "ux") > 2.5 or p.load_factor > 4.0,
                 note="stop: top ux > 2.5 m (the demo's travel) or λ > 4; load step 0.2 (10 kN units)")


def contact_floor():
    """Cantilever (40 elements) pressed far onto a floor 0.3·L below, P·L²/EI to 3.

    Reference: the elastica before contact (Bisshopp & Drucker 1945) and the floor
    force at λ = 3 (closed_form.cantilever_on_stop, solve_bvp); tolerance 2e-3 (tests).
    """
    L, EI = 1.0, 1.0
    s, a, b = _slender(L, EI, 40)
    gap = 0.3 * L
    s.contact(b, lr.Line(point=(0.0, -gap), normal=(0.0, 1.0)))
    s.load(b, fy=-1.0)

    def check(path):
        lam, v = path.load_factor, -path.displacement(b, "uy")
        free = (path.contact_forces[:, 0] == 0.0) & (lam > 0.05)
        idx = _sample(path, free)
        errs = [abs(v[i] / cf.elastica_tip_load(lam[i])[0] - 1.0) for i in idx]
        if abs(lam[-1] - 3.0) < 1e-9:
            errs.append(abs(path.contact_forces[-1, 0] / cf.cantilever_on_stop(3.0, gap, L, EI)["R"] - 1.0))
        return (max(errs), "elastica before contact, floor force at λ=3") if errs else (float("nan"), "")
    return Setup(s, check, 2e-3, load_step=0.3, disp=None, target=3.0,
                 note="load step target/10; no displacement control (the tip stops on the floor)")


def contact_small_gap():
    """Cantilever (3 m, 20 elements) meeting a stop 2 mm below its tip; to λ = 3
    (λ = 1 closes the gap).

    Reference: small-deflection superposition, R = (λ − 1)·P_touch after contact,
    v = −λ·gap before (common practice, no source); tolerance 1e-3.
    """
    L, gap = 3.0, 2e-3
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, lr.Section.rectangle(E=E, width=B, depth=H), segments=20)
    s.fix(a)
    s.contact(b, lr.Line(point=(L, -gap), normal=(0.0, 1.0)))
    P_touch = 3 * E * B * H**3 / 12 * gap / L**3
    s.load(b, fy=-P_touch)

    def check(path):
        lam, v, R = path.load_factor, path.displacement(b, "uy"), path.contact_forces[:, 0]
        errs = []
        for i in _sample(path, lam > 0.05):
            if lam[i] < 0.999:
                errs.append(abs(v[i] / (-lam[i] * gap) - 1.0))
            elif lam[i] > 1.05:
                errs.append(abs(R[i] / ((lam[i] - 1.0) * P_touch) - 1.0))
        return (max(errs), "tip before, stop force after contact") if errs else (float("nan"), "")
    return Setup(s, check, 1e-3, load_step=0.3, disp=None, target=3.0,
                 note="load step target/10; no displacement control (the tip stops)")


def round_stop():
    """Aluminium pole (4 m, 16 elements) pushed sideways onto a round stop (Circle).

    Reference: no penetration of the disc beyond 1e-6 of the size (frictionless
    unilateral contact, common practice, no source).
    """
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, 4.0)
    s.beam(a, b, lr.Section.tube(E=70e9, diameter=0.06, wall=0.003), segments=16)
    s.fix(a)
    centre, radius = np.array([1.8, 3.0]), 0.5
    s.contact(b, lr.Circle(centre=tuple(centre), radius=radius))
    s.load(b, fx=2.0e3)

    def check(path):
        d = [np.hypot(*(path.coordinates(i)[b] - centre)) for i in range(len(path))]
        return max(0.0, (radius - min(d)) / 4.0), "penetration of the disc (/size)"
    return Setup(s, check, 1e-6, load_step=0.1, disp=(b, "ux", 1.6 / 20), target=1.0,
                 note="load step target/10; displacement: tip ux, ~travel/20")


# -- 1 N loads, mechanisms, big meshes ------------------------------------------------
def inclined_beam_1N():
    """Steel tube (4 m, 100 × 5 mm) clamped at 30°, 1 N tip load perpendicular to it:
    λ in newtons, to P·L²/EI = 3 (λ ≈ 2.6e4).

    Reference: the elastica (Bisshopp & Drucker 1945) turned by 30°, tip deflection
    along the load; 32 elements: tolerance 5e-3.
    """
    sc = examples.inclined_cantilever(30.0, 4.0, 1.0, 32)
    s, b = sc.structure, sc.tip
    L, ang, EI = 4.0, math.radians(30.0), sc.parameters["EI"]
    n = np.array(sc.parameters["normal"])
    target = sc.trace_options["target_load_factor"]
    along, short, _ = cf.elastica_tip_load(3.0)
    uy_end = (along * n[1] - short * math.sin(ang)) * L

    def check(path):
        lam = path.load_factor
        idx = _sample(path, lam > 0.05 * target)
        if not len(idx):
            return float("nan"), "no loaded point"
        d = path.u[:, 3 * b:3 * b + 2] @ n
        return max(abs(d[i] / (cf.elastica_tip_load(lam[i] * L**2 / EI)[0] * L) - 1.0)
                   for i in idx), "deflection along the load vs elastica"
    return Setup(s, check, 5e-3, load_step=target / 10, disp=(b, "uy", uy_end / 20), target=target,
                 note="λ in newtons; load step target/10; displacement: tip uy, travel/20")


def pinned_triangle():
    """Three bars in a triangle held by a single pin: free to spin about it.

    Expected: a ModelError naming a mechanism, at once.
    """
    s = lr.Structure()
    p, q, t = s.node(0, 0), s.node(4, 0), s.node(2, 1)
    sec = lr.Section(E=1e5, A=1.0)
    for i, j in ((p, q), (q, t), (t, p)):
        s.bar(i, j, sec)
    s.fix(p, "ux", "uy")
    s.load(t, fx=1.0)

    def check(path):
        return float("inf"), "traced a mechanism without complaint"
    return Setup(s, check, 0.0, load_step=0.1, disp=(t, "ux", 0.01), target=1.0,
                 expect_error="mechanism", note="expected: ModelError (mechanism)")


def _pole(segments, alpha, load_steps):
    EI = lr.Section.tube(E=25e9, diameter=0.12, wall=0.006).EI
    L = 8.0
    s, base, top = demo.lighting_pole(segments=segments, tip_load=alpha * EI / L**2)
    along = cf.elastica_tip_load(alpha)[0]

    def check(path):
        lam, ux = path.load_factor, path.displacement(top, "ux")
        idx = _sample(path, lam > 0.05)
        if not len(idx):
            return float("nan"), "no loaded point"
        return max(abs(ux[i] / (cf.elastica_tip_load(alpha * lam[i])[0] * L) - 1.0) for i in idx), \
            "tip deflection vs elastica"
    return Setup(s, check, 2e-3, load_step=1.0 / load_steps, disp=(top, "ux", along * L / load_steps),
                 target=1.0, note=f"load step target/{load_steps}; displacement: top ux, travel/{load_steps}")


def pole_10k():
    """demo.lighting_pole with 10,000 elements, P·L²/EI = 2.4, 8 load steps.

    Reference: elastica (Bisshopp & Drucker 1945); tolerance 2e-3 (a residual floor
    on this mesh, README "Known limits").
    """
    return _pole(10000, 2.4, 8)


def pole_1k():
    """demo.lighting_pole with 1,000 elements, its 4 kN load (P·L²/EI ≈ 2.9)."""
    EI = lr.Section.tube(E=25e9, diameter=0.12, wall=0.006).EI
    return _pole(1000, 4.0e3 * 64.0 / EI, 10)


#: Every case, in the order of the table.
CASES = {f.__name__: f for f in (
    column_perfect, column_imperfect, elastica, rollup, two_bar_truss, truss_hanger,
    toggle_frame, shallow_arch, deep_arch, l_frame, ring_pressure, cable_catenary,
    cable_point_load, guyed_mast, fibre_cantilever, leaning_pole, contact_floor,
    contact_small_gap, round_stop, inclined_beam_1N, arch_1N, pinned_triangle,
    pole_10k, pole_1k)}
