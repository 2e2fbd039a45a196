"""Benchmark models, invented for measurement (no real structure is modelled).

Geometry used throughout (stated in the README's performance section):

* **pole / cantilever**: an 8 m glass-fibre tube (E = 25 GPa, a typical value from memory; Ø 120 mm, 6 mm wall,
  slenderness L/r ≈ 200), clamped at its base and pulled sideways at its top by
  4 kN (P·L²/EI ≈ 2.9, a tip deflection of about half its length). It is meshed into
  1,000 … 100,000 equal elements; at 100,000 an element is 80 µm long, so the
  element-level ratio EA·Lₑ²/EI is 4e-6 (bending dominates every element).
* **lattice frame**: a rigid-jointed square grid of bays (2 m), one diagonal per bay,
  all members the same steel tube, the base row clamped, a sideways load at every
  top node; members are meshed so that the total element count is as asked.
"""
from __future__ import annotations

import math

import numpy as np

import largerot as lr

__all__ = ["pole", "lattice", "arch", "snap_back_frame", "catenary", "POLE"]

#: The pole's data (SI units).
#: Total sideways load on the lattice frame's top row [N].
LATTICE_LOAD = 2.0e6
POLE = dict(length=8.0, E=25e9, diameter=0.12, wall=0.006, tip_load=4.0e3)


def pole_section() -> lr.Section:
    return lr.Section.tube(E=POLE["E"], diameter=POLE["diameter"], wall=POLE["wall"])


def pole(n_elements: int):
    """The cantilevered pole meshed into ``n_elements``: returns ``(structure, top)``."""
    s = lr.Structure()
    base, top = s.node(0.0, 0.0), s.node(0.0, POLE["length"])
    s.beam(base, top, pole_section(), segments=int(n_elements))
    s.fix(base)
    s.load(top, fx=POLE["tip_load"])
    return s, top


def lattice(n_elements: int, bay: float = 2.0):
    """A square lattice frame with about ``n_elements`` beam elements: ``(structure, node)``.

    The number of bays per side grows with the element count (√ of it, bounded), and
    each member is meshed into equal segments to reach the requested total.
    """
    cells = int(min(max(round(math.sqrt(n_elements / 40.0)), 2), 20))
    members_count = 2 * cells * (cells + 1) + cells * cells
    seg = max(1, round(n_elements / members_count))
    sec = lr.Section.tube(E=210e9, diameter=0.1, wall=0.005)
    s = lr.Structure()
    grid = [[s.node(i * bay, j * bay) for i in range(cells + 1)] for j in range(cells + 1)]
    for j in range(cells + 1):
        for i in range(cells):
            s.beam(grid[j][i], grid[j][i + 1], sec, segments=seg)
    for j in range(cells):
        for i in range(cells + 1):
            s.beam(grid[j][i], grid[j + 1][i], sec, segments=seg)
    for j in range(cells):
        for i in range(cells):
            s.beam(grid[j][i], grid[j + 1][i + 1], sec, segments=seg)
    for n in grid[0]:
        s.fix(n)
    for n in grid[cells]:
        s.load(n, fx=LATTICE_LOAD / (cells + 1))
    return s, grid[cells][cells]


def arch(n_elements: int = 40):
    """A shallow pinned circular arch (span 10 m, rise 1 m) with a crown load: snap-through.

    Returns ``(structure, crown)``; the load is downward, so uy of the crown goes negative.
    """
    span, rise = 10.0, 1.0
    R = (span**2 / 4 + rise**2) / (2 * rise)
    half = math.asin(span / 2 / R)
    phis = np.linspace(-half, half, n_elements + 1)
    sec = lr.Section.rectangle(E=210e9, width=0.1, depth=0.05)
    s = lr.Structure()
    nodes = [s.node(R * math.sin(p), R * math.cos(p) - (R - rise)) for p in phis]
    for a, b in zip(nodes[:-1], nodes[1:]):
        s.beam(a, b, sec)
    s.fix(nodes[0], "ux", "uy")
    s.fix(nodes[-1], "ux", "uy")
    crown = nodes[n_elements // 2]
    s.load(crown, fy=-1.0e5)
    return s, crown


def snap_back_frame(segments: int = 10):
    """A shallow toggle frame with a soft leg: the apex displacement turns back (snap-back).

    Two rafters (span 2×6 m, rise 0.6 m, rigid apex) rest on a clamped left support and
    a right support that is a slender vertical post 3 m tall; the apex is pushed down.
    Returns ``(structure, apex)``.
    """
    rafter = lr.Section.rectangle(E=210e9, width=0.1, depth=0.08)
    post = lr.Section.rectangle(E=210e9, width=0.1, depth=0.03)
    s = lr.Structure()
    left, apex, right = s.node(0.0, 3.0), s.node(6.0, 3.6), s.node(12.0, 3.0)
    foot = s.node(12.0, 0.0)
    s.beam(left, apex, rafter, segments=segments)
    s.beam(apex, right, rafter, segments=segments)
    s.beam(foot, right, post, segments=segments)
    s.fix(left)
    s.fix(foot)
    s.load(apex, fy=-1.0e5)
    return s, apex


def catenary(segments: int = 40):
    """A steel rope hung between two supports 20 m apart with 2 % extra length, under its
    own weight (constant, settled at the start), and a point load at mid-span traced.

    Returns ``(structure, middle node)``; raises AttributeError when ``Structure.cable``
    does not exist and TypeError when its signature differs from the one assumed here.
    """
    s = lr.Structure()
    s.gravity()
    a, b = s.node(0.0, 0.0), s.node(20.0, 0.0)
    rope = lr.Section.rod(E=100e9, diameter=0.02, density=7850.0)
    m = s.cable(a, b, rope, segments=segments, unstretched_length=20.4)
    s.fix(a, "ux", "uy")
    s.fix(b, "ux", "uy")
    mid = m.nodes[len(m.nodes) // 2]
    s.load(mid, fy=-1.0e3)
    return s, mid
