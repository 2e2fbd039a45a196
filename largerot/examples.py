"""Small built-in scenarios for examples, tests and notebooks (invented structures).

Each function returns a :class:`Scenario`: the structure, the options that trace its
interesting part with ``lr.trace(sc.structure, control, **sc.trace_options)``, a
description, and the ids of the nodes worth looking at (``sc.apex``, ``sc.tip``...).
The numbers are our own; they are chosen to show one kind of path each:

* :func:`toggle_frame` — a shallow two-bar frame pulled through a soft hanger:
  snap-through in load and snap-back in the load point's displacement;
* :func:`shallow_arch` — a shallow circular arch under a central point load:
  symmetric snap-through at a limit point;
* :func:`deep_arch` — a higher pinned arch: an asymmetric bifurcation comes before
  the symmetric limit point;
* :func:`column` — a cantilever or pinned-pinned column loaded axially: Euler
  buckling, a bifurcation on the perfect path, and the post-buckled elastica.

>>> from largerot.examples import shallow_arch
>>> sc = shallow_arch()
>>> sc.curve
(16, 'uy')
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field


from .errors import ModelError, checked_integer, checked_number
from .model import Structure
from .sections import Section

__all__ = ["Scenario", "two_bar_truss", "inclined_cantilever", "toggle_frame", "shallow_arch", "deep_arch", "column"]


@dataclass(frozen=True)
class Scenario:
    """A ready-made structure with what is needed to trace and read it.

    Attributes
    ----------
    structure : Structure
    trace_options : dict
        Keyword arguments for :func:`largerot.trace` that end the trace where the
        interesting part of the path is over (``stop``, ``max_steps``...).
    description : str
    nodes : dict
        Named node ids; each is also an attribute (``sc.apex``).
    curve : tuple
        ``(node, dof)`` whose displacement is worth plotting against λ.
    parameters : dict
        The numbers the scenario was built from (lengths, stiffnesses, loads).
    """

    structure: Structure
    trace_options: dict
    description: str
    nodes: dict = field(default_factory=dict)
    curve: tuple = ()
    parameters: dict = field(default_factory=dict)

    def __getattr__(self, name):
        nodes = self.__dict__.get("nodes", {})
        if name in nodes:
            return nodes[name]
        raise AttributeError(f"Scenario has no attribute or node named {name!r}.")


def _positive(name: str, value) -> float:
    v = checked_number("", name, value)          # TypeError for a string
    if not v > 0.0:
        raise ModelError(f"`{name}` must be a positive number, got {value!r}.")
    return v


def _segments(value, even: bool = False) -> int:
    n = checked_integer("", "segments", value)   # TypeError for a string, 2.5 refused
    if n < 1:
        raise ModelError(f"`segments` must be a positive integer, got {value!r}.")
    if even and n % 2:
        raise ModelError(f"`segments` must be even (a node at mid-span), got {value!r}.")
    return n


def _choice(name: str, value, choices: tuple) -> str:
    if not isinstance(value, str) or value not in choices:
        raise ModelError(f"`{name}` must be {' or '.join(map(repr, choices))}, got {value!r}.")
    return value


def two_bar_truss(half_span: float = 2.0, rise: float = 0.5, EA: float = 1.0e4) -> Scenario:
    """Shallow two-bar truss pinned at both feet, a unit load down at the apex (λ is the load).

    Exact curve (statics): :func:`largerot.closed_form.two_bar_truss_load`; a limit
    point in load, no snap-back at the apex.
    """
    a, h, EA = _positive("half_span", half_span), _positive("rise", rise), _positive("EA", EA)
    s = Structure(name="Shallow two-bar truss")
    left, apex, right = (s.node(-a, 0.0, name="left"), s.node(0.0, h, name="apex"),
                         s.node(a, 0.0, name="right"))
    sec = Section(E=EA, A=1.0)
    s.bar(left, apex, sec)
    s.bar(apex, right, sec)
    s.fix(left, "ux", "uy")
    s.fix(right, "ux", "uy")
    s.load(apex, fy=-1.0)
    options = {"stop": lambda p: -p.displacement(apex, "uy") > 2.4 * h, "max_steps": 400}
    return Scenario(s, options, "Shallow two-bar truss with a load at its apex: snap-through.",
                    nodes={"apex": apex, "left": left, "right": right}, curve=(apex, "uy"),
                    parameters={"half_span": a, "rise": h, "EA": EA})


def two_piece_cable(pretension: float = 5e3, load: float = 20e3) -> Scenario:
    """A weightless steel rope (E = 160 GPa, a typical rope modulus from memory; 2 cm²) between pins 30 m apart,
    pretensioned, pulled down 12 m from one end by ``load`` × λ (newtons).

    Meshed into 4 and 6 segments, which stay straight: exact curve from the statics
    of two straight elastic pieces, :func:`largerot.closed_form.cable_joint`.
    """
    T0, P = _positive("pretension", pretension), _positive("load", load)
    s = Structure(name="Pretensioned rope, 30 m")
    a, joint, b = (s.node(0.0, 0.0, name="left"), s.node(12.0, 0.0, name="joint"),
                   s.node(30.0, 0.0, name="right"))
    rope = Section(E=160e9, A=2e-4)
    s.cable(a, joint, rope, segments=4, pretension=T0)
    s.cable(joint, b, rope, segments=6, pretension=T0)
    s.fix(a, "ux", "uy")
    s.fix(b, "ux", "uy")
    s.load(joint, fy=-P)
    return Scenario(s, {"target_load_factor": 1.0}, "Pretensioned rope pulled down at one point.",
                    nodes={"joint": joint, "left": a, "right": b}, curve=(joint, "uy"),
                    parameters={"left_length": 12.0, "right_length": 18.0, "EA": rope.EA,
                                "pretension": T0, "load": -P})


def inclined_cantilever(angle: float = 30.0, length: float = 4.0, load: float = 1.0,
                        segments: int = 32) -> Scenario:
    """A steel tube (100 × 5 mm) clamped at ``angle`` degrees, a tip load across it.

    The load (``load``, newtons, perpendicular to the member, turned +90° from it)
    scales with λ, so with the default 1 N the load factor is the load in newtons:
    the everyday idiom that must trace with default options. Exact curve: the
    elastica (:func:`largerot.closed_form.elastica_tip_load`) turned by ``angle``.
    """
    L, ang = _positive("length", length), math.radians(checked_number("", "angle", angle))
    sec = Section.tube(E=210e9, diameter=0.1, wall=0.005)
    s = Structure(name=f"Cantilever tube at {float(angle):g}°")
    base, tip = s.node(0.0, 0.0, name="base"), s.node(L * math.cos(ang), L * math.sin(ang), name="tip")
    s.beam(base, tip, sec, segments=_segments(segments))
    s.fix(base)
    n = (-math.sin(ang), math.cos(ang))
    P = _positive("load", load)
    s.load(tip, fx=P * n[0], fy=P * n[1])
    return Scenario(s, {"target_load_factor": 3.0 * sec.EI / L**2 / P},
                    "Steel tube clamped at an angle with a tip load across it (λ in newtons).",
                    nodes={"base": base, "tip": tip}, curve=(tip, "uy"),
                    parameters={"angle": float(angle), "length": L, "load": P, "EI": sec.EI,
                                "normal": n})


def toggle_frame(half_span: float = 2.0, rise: float = 0.5, EA: float = 1.0e4,
                 spring: float = 50.0, hanger: float = 100.0, hanger_length: float = 1.0) -> Scenario:
    """Shallow two-bar toggle frame with a grounded spring at its apex, pulled down
    through a soft hanger.

    Two pin-ended bars (axial stiffness ``EA``) span ``2·half_span`` with the apex at
    ``rise``; a vertical spring ``spring`` ties the apex to the ground, and the load
    (1 downward, so λ is the load) hangs from the apex on a bar of stiffness
    ``hanger`` (= its EA/length), whose lower end slides on a vertical guide. The
    apex snaps through (two limit points in load); where the frame softens faster
    than the hanger is stiff the load point moves back up: snap-back.

    Exact curve (statics): with the apex down by v, P = P_truss(v) + spring·v
    (:func:`largerot.closed_form.two_bar_truss_load`) and the load point is down by
    w = v + P/hanger.
    """
    a, h, EA = _positive("half_span", half_span), _positive("rise", rise), _positive("EA", EA)
    k_g = checked_number("", "spring", spring, nonnegative=True)
    k_s, Lh = _positive("hanger", hanger), _positive("hanger_length", hanger_length)
    s = Structure(name="Toggle frame with a soft hanger")
    left, apex, right = (s.node(-a, 0.0, name="left"), s.node(0.0, h, name="apex"),
                         s.node(a, 0.0, name="right"))
    load = s.node(0.0, h - Lh, name="load point")
    sec = Section(E=EA, A=1.0)
    s.bar(left, apex, sec)
    s.bar(apex, right, sec)
    s.bar(apex, load, Section(E=k_s * Lh, A=1.0))
    s.fix(left, "ux", "uy")
    s.fix(right, "ux", "uy")
    s.fix(load, "ux")
    if k_g > 0.0:
        s.spring(apex, "uy", k_g)
    s.load(load, fy=-1.0)
    # the frame is inverted (apex as far below the supports as it started above) and
    # stiffening again: the whole story of the path has been told
    options = {"stop": lambda p: -p.displacement(apex, "uy") > 2.4 * h, "max_steps": 400}
    return Scenario(s, options,
                    "Shallow two-bar toggle frame with a grounded spring at the apex, loaded "
                    "through a soft hanger: snap-through in load, snap-back in displacement.",
                    nodes={"apex": apex, "load": load, "left": left, "right": right},
                    curve=(load, "uy"),
                    parameters={"half_span": a, "rise": h, "EA": EA, "spring": k_g,
                                "hanger": k_s, "hanger_length": Lh})


def _arch(rise, span, segments, support, width, depth, E, load, stop_share, kind):
    rise, span = _positive("rise", rise), _positive("span", span)
    n = _segments(segments, even=True)
    _choice("support", support, ("pinned", "clamped"))
    if rise >= 0.5 * span:
        raise ModelError(f"`rise` must be less than half the span ({0.5 * span!r}), got {rise!r}.")
    sec = Section.rectangle(E=_positive("E", E), width=_positive("width", width),
                            depth=_positive("depth", depth))
    P = _positive("load", load)
    R = (0.25 * span**2 + rise**2) / (2.0 * rise)
    half = math.asin(0.5 * span / R)
    s = Structure(name=f"{kind.capitalize()} {support} arch, span {span:g}, rise {rise:g}")
    ids = []
    named = {0: "left", n // 2: "crown", n: "right"}
    for k in range(n + 1):
        t = -half + 2.0 * half * k / n
        ids.append(s.node(R * math.sin(t) + 0.5 * span, R * math.cos(t) - (R - rise),
                          name=named.get(k)))
    for k in range(n):
        s.beam(ids[k], ids[k + 1], sec)
    dofs = ("ux", "uy") if support == "pinned" else ("ux", "uy", "rz")
    s.fix(ids[0], *dofs)
    s.fix(ids[-1], *dofs)
    crown = ids[n // 2]
    s.load(crown, fy=-P)
    r = math.sqrt(sec.I / sec.A)
    options = {"stop": lambda p: -p.displacement(crown, "uy") > stop_share * rise,
               "max_steps": 400}
    what = ("symmetric snap-through at a limit point" if kind == "shallow"
            else "an asymmetric bifurcation before the symmetric limit point")
    desc = (f"{support.capitalize()} circular arch, span {span:g}, rise {rise:g} "
            f"(rise/span {rise / span:.3g}, rise/radius of gyration {rise / r:.3g}), "
            f"{width:g} × {depth:g} rectangular section, central point load: {what}.")
    return Scenario(s, options, desc,
                    nodes={"crown": crown, "left": ids[0], "right": ids[-1],
                           "quarter": ids[n // 4], "three_quarter": ids[3 * n // 4]},
                    curve=(crown, "uy"),
                    parameters={"rise": rise, "span": span, "segments": n, "support": support,
                                "EI": sec.EI, "EA": sec.EA, "load": P, "radius": R,
                                "node_ids": tuple(ids)})


def shallow_arch(rise: float = 0.2, span: float = 10.0, segments: int = 32,
                 support: str = "pinned", width: float = 0.1, depth: float = 0.2,
                 E: float = 210e9, load: float = 1.0e3) -> Scenario:
    """A shallow circular steel rib under a central point load (SI units).

    Span 10 m and rise 0.2 m by default, solid 100 × 200 mm steel section, ends
    pinned (or ``support="clamped"``); reference load 1 kN downward at the crown, so
    λ is the load in kN. With rise/(radius of gyration) ≈ 3.5 the crown snaps
    through symmetrically at a limit point; the trace ends once the crown is
    2.2 rises down (the rib inverted). Clamped ends stiffen the rib so much that the
    default rise no longer snaps: a clamped rib needs a rise of about 0.5 m here.
    """
    return _arch(rise, span, segments, support, width, depth, E, load, 2.2, "shallow")


def deep_arch(rise: float = 0.5, span: float = 10.0, segments: int = 32,
              width: float = 0.1, depth: float = 0.2, E: float = 210e9,
              load: float = 1.0e3) -> Scenario:
    """A higher pinned circular steel rib: asymmetric bifurcation before the limit point.

    As :func:`shallow_arch` but with rise 0.5 m (rise/radius of gyration ≈ 8.7):
    the thrust reaches the antisymmetric buckling value 4π²EI/L² while the load is
    still rising along the symmetric path, so the rib would buckle sideways into an
    S shape first. The trace ends once the crown is 1.2 rises down.
    """
    return _arch(rise, span, segments, "pinned", width, depth, E, load, 1.2, "deep")


def column(kind: str = "cantilever", length: float = 3.0, segments: int = 10,
           diameter: float = 0.06, wall: float = 0.004, E: float = 210e9) -> Scenario:
    """A straight steel tube column loaded axially at its top (SI units).

    ``kind="cantilever"``: clamped base, free top; ``"pinned"``: pinned base, top on
    a vertical roller. The reference load is the Euler load of the column,
    π²EI/(4L²) or π²EI/L², downward at the top, so λ = P/P_E (Euler; Timoshenko &
    Gere 1961). The perfect column bifurcates at λ ≈ 1; the trace ends at λ = 1.8 or
    a tip rotation of 2 rad, so that with ``follow="secondary"`` it runs well up the
    post-buckled branch.
    """
    _choice("kind", kind, ("cantilever", "pinned"))
    L = _positive("length", length)
    n = _segments(segments)
    sec = Section.tube(E=_positive("E", E), diameter=_positive("diameter", diameter),
                       wall=_positive("wall", wall))
    s = Structure(name=f"{'Cantilever' if kind == 'cantilever' else 'Pinned-pinned'} column, {L:g} m")
    base, top = s.node(0.0, 0.0, name="base"), s.node(0.0, L, name="top")
    m = s.beam(base, top, sec, segments=n)
    if kind == "cantilever":
        s.fix(base)
        P_E = math.pi**2 * sec.EI / (4.0 * L**2)
    else:
        s.fix(base, "ux", "uy")
        s.fix(top, "ux")
        P_E = math.pi**2 * sec.EI / L**2
    s.load(top, fy=-P_E)
    mid = m.nodes[len(m.nodes) // 2]
    watch = top if kind == "cantilever" else base
    options = {"stop": lambda p: p.load_factor > 1.8 or abs(p.displacement(watch, "rz")) > 2.0,
               "max_steps": 300}
    desc = (f"{'Cantilever' if kind == 'cantilever' else 'Pinned-pinned'} steel tube column, "
            f"length {L:g}, tube {diameter:g} × {wall:g}, axial reference load = Euler load "
            f"{P_E:.4g}: a bifurcation at λ ≈ 1.")
    return Scenario(s, options, desc, nodes={"base": base, "tip": top, "top": top, "mid": mid},
                    curve=(top, "ux") if kind == "cantilever" else (mid, "ux"),
                    parameters={"kind": kind, "length": L, "segments": n, "EI": sec.EI,
                                "EA": sec.EA, "euler_load": P_E, "node_ids": m.nodes})
