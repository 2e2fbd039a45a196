"""Built-in demonstrations (invented scenarios).

* :func:`lighting_pole`: an 8 m glass-fibre tube pole (E = 25 GPa, a typical value
  from memory), clamped at its base, pulled sideways at its top by a horizontal load
  that grows to 4 kN (P·L²/EI ≈ 2.9) — ``python -m largerot demo``;
* :func:`guyed_mast`: a 30 m steel tube mast, pinned at its base, held by two
  pretensioned guys, under its own weight and a growing lateral load at the top,
  traced until the leeward guy goes slack and beyond — ``python -m largerot demo mast``;
* :func:`leaning_pole`: a 10 m steel tube pole, clamped, pushed sideways at the top
  until it yields at its base and leans onto the face of a neighbouring building;
  traced until the top has moved 2.4 m — ``python -m largerot demo lean``.

Each demo ends on the goal it sets itself: the pole and the mast on their target load
factor (status ``"target"``), the leaning pole on a terminal event at its top's
travel (status ``"event"``).
"""
from __future__ import annotations

import numpy as np

from .model import Structure
from .sections import Section
from .solvers import by_load, trace

__all__ = ["lighting_pole", "guyed_mast", "leaning_pole", "run_demo", "run_mast_demo",
           "run_lean_demo", "TopTravel"]


def lighting_pole(segments: int = 32, tip_load: float = 4.0e3):
    """The demo pole: returns ``(structure, base, top)``."""
    s = Structure(name="Lighting pole, 8 m")
    base, top = s.node(0.0, 0.0, name="base"), s.node(0.0, 8.0, name="top")
    tube = Section.tube(E=25e9, diameter=0.12, wall=0.006)
    s.beam(base, top, tube, segments=segments)
    s.fix(base)
    s.load(top, fx=tip_load)
    return s, base, top


def guyed_mast(segments: int = 12, pretension: float = 40e3, lateral_load: float = 10e3):
    """The demo mast: returns ``(structure, nodes)`` with nodes ``base, top, windward, leeward``.

    Steel tube 400 × 12 mm, 30 m tall, pinned at the base; guys of 4 cm² steel rope
    (metallic area; E = 160 GPa, a typical rope modulus from memory) from the top to anchors 15 m either side, pretensioned to
    ``pretension``; self-weight held constant; the reference load ``lateral_load``
    pushes the top toward the leeward anchor.
    """
    s = Structure(name="Guyed mast, 30 m")
    base, top = s.node(0.0, 0.0, name="base"), s.node(0.0, 30.0, name="top")
    windward, leeward = s.node(-15.0, 0.0, name="windward anchor"), s.node(15.0, 0.0, name="leeward anchor")
    tube = Section.tube(E=210e9, diameter=0.4, wall=0.012, density=7850.0, fy=355e6)
    rope = Section(E=160e9, A=4.0e-4)
    s.beam(base, top, tube, segments=segments)
    s.cable(windward, top, rope, pretension=pretension)
    s.cable(leeward, top, rope, pretension=pretension)
    s.fix(base, "ux", "uy")
    s.fix(windward, "ux", "uy")
    s.fix(leeward, "ux", "uy")
    s.gravity()
    s.load(top, fx=lateral_load)
    return s, {"base": base, "top": top, "windward": windward, "leeward": leeward}


def run_mast_demo(png: str | None = "largerot-mast.png") -> str:
    """Trace the guyed mast until past the leeward guy going slack; text table and PNG."""
    s, nodes = guyed_mast()
    top = nodes["top"]
    path = trace(s, by_load(0.25), target_load_factor=6.0)
    N = path.member_forces()["bar"]["N"]
    lines = ["largerot demo: 30 m guyed mast, lateral load at the top (invented scenario)",
             f"{'load [kN]':>10} {'top ux [m]':>11} {'windward [kN]':>14} {'leeward [kN]':>13}"]
    for i in range(0, len(path), 2):
        lines.append(f"{10.0 * path.load_factor[i]:10.2f} {path.displacement(top, 'ux')[i]:11.4f}"
                     f" {N[i, 0] / 1e3:14.2f} {N[i, 1] / 1e3:13.2f}")
    slack = path.slack[:, 1]
    if slack.any():
        i = int(np.argmax(slack))
        lines.append(f"the leeward guy is slack from load {10.0 * path.load_factor[i]:.2f} kN on")
    return _report(lines, path, top, png)


def leaning_pole(segments: int = 40, lateral_load: float = 10e3):
    """The demo pole that yields and leans: returns ``(structure, nodes, wall)``.

    Steel tube 200 × 8 mm (fy = 355 MPa, a common structural grade — typical value
    from memory; bilinear fibres hardening at 1 % of E, an invented round figure), 10 m
    tall, clamped; the rigid wall of a neighbouring building 1.2 m away and 8 m high,
    which the pole may touch between 5 m and the wall's top; the reference load
    ``lateral_load`` pushes the top toward it, and above the wall the pole bends over.
    """
    from .elements.contact import Line
    from .fibres import FibreSection

    s = Structure(name="Steel pole leaning on a wall, 10 m")
    base, top = s.node(0.0, 0.0, name="base"), s.node(0.0, 10.0, name="top")
    # hardening modulus 1 % of E: mild steel past yield (a round figure, invented)
    tube = FibreSection.tube(E=210e9, fy=355e6, diameter=0.2, wall=0.008, H=2.1e9, density=7850.0)
    pole = s.beam(base, top, tube, segments=segments)
    s.fix(base)
    post = Line(point=(1.2, 0.0), normal=(-1.0, 0.0))
    s.contact([n for n in pole.nodes if 5.0 <= s.xy[n, 1] <= 8.0], post)
    s.load(top, fx=lateral_load)
    return s, {"base": base, "top": top}, post


#: Sideways travel of the leaning pole's top at which its demo ends [m]: well past the
#: wall (first touched at about 1.6 m), so the rise of the load on the wall shows.
LEAN_TOP_TRAVEL = 2.4
#: Bound on the lean demo's points: LEAN_TOP_TRAVEL / 0.05 m = 48 steps, with room for
#: cut steps; the trace is meant to end on the event, never here.
LEAN_MAX_STEPS = 200


class TopTravel:
    """Terminal event: ``node``'s ``ux`` reaches ``target`` (a picklable event function).

    Crosses zero rising where the node has moved ``target`` along x; ``terminal`` ends
    the trace there, located on the path by root finding.
    """

    terminal = True
    direction = 1

    def __init__(self, node: int, target: float) -> None:
        self.node, self.target = node, float(target)
        self.__name__ = f"top reaches ux = {self.target:g} m"

    def __call__(self, point) -> float:
        return point.displacement(self.node, "ux") - self.target


def run_lean_demo(png: str | None = "largerot-lean.png") -> str:
    """Trace the leaning pole: yield at the base, then the wall; table and PNG.

    The trace ends, as planned, at the first point past a top travel of
    ``LEAN_TOP_TRAVEL`` (a terminal event located on the path; status ``"event"``).
    """
    from .solvers import by_displacement

    s, nodes, wall = leaning_pole()
    top = nodes["top"]
    # the top's sideways travel as control: the load plateaus once the base has
    # yielded through (a limit in load) and rises again when the pole meets the wall
    path = trace(s, by_displacement(top, "ux", 0.05), events=[TopTravel(top, LEAN_TOP_TRAVEL)],
                 max_steps=LEAN_MAX_STEPS)
    lines = ["largerot demo: 10 m steel pole yields at its base and leans on a wall (invented scenario)",
             f"{'load [kN]':>10} {'top ux [m]':>11} {'wall force [kN]':>16} {'base yielded':>13}"]
    step = max(1, len(path) // 14)
    for i in sorted(set(range(0, len(path), step)) | {len(path) - 1}):
        lines.append(f"{10.0 * path.load_factor[i]:10.2f} {path.displacement(top, 'ux')[i]:11.4f}"
                     f" {path.contact_forces[i].sum() / 1e3:16.2f} {path.yielded[i, 0, 0]:13.0%}")
    for e in path.events:
        lines.append(f"{e.kind} at load {10.0 * e.load_factor:.2f} kN {e.detail}".rstrip())
    end = None
    if path.status == "event":
        end = (f"ended as planned: the top has passed {LEAN_TOP_TRAVEL:g} m of travel toward "
               "the wall, the event above")
    return _report(lines, path, top, png, end=end)


def _report(lines: list, path, node: int, png: str | None, end: str | None = None) -> str:
    """End a demo's table: status, the figure (shapes beside the path of ``node``'s ux), caution.

    ``end`` says in words why a trace that ended well ended (instead of the status
    table's general message).
    """
    lines.append(f"status: {path.status} ({end or path.message})")
    if png:
        import matplotlib
        matplotlib.use("Agg")
        from .plotting import plot_overview
        fig = plot_overview(path, node, "ux")
        fig.savefig(png, dpi=110)
        lines.append(f"figure written to {png}")
    lines.append(CAUTION)
    return "\n".join(lines)


#: Printed under every demo.
CAUTION = ("Results are for study; design and checking of real structures follow local "
           "codes and licensed engineering practice.")


def run_demo(png: str | None = "largerot-demo.png") -> str:
    """Trace the demo pole, return a text table, and write a PNG figure."""
    s, base, top = lighting_pole()
    path = trace(s, by_load(0.05), target_load_factor=1.0)
    lines = ["largerot demo: 8 m glass-fibre pole, horizontal tip load (invented scenario)",
             f"{'load [kN]':>10} {'tip ux [m]':>11} {'tip uy [m]':>11} {'iterations':>11}"]
    for i in range(0, len(path), 4):
        lines.append(f"{4.0 * path.load_factor[i]:10.3f} {path.displacement(top, 'ux')[i]:11.4f}"
                     f" {path.displacement(top, 'uy')[i]:11.4f} {path.iterations[i]:11d}")
    return _report(lines, path, top, png)
