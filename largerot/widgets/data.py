"""What the widgets draw, as plain arrays: computed here, testable without a browser.

Nothing here is mechanics. Shapes come from :meth:`EquilibriumPath.shape`'s member
lines, curves from :meth:`EquilibriumPath.displacement`, and member forces only from
what the path provides (``path.member_forces(i)`` or ``path.extra``), when it does.

Layout of the drawn shape: the deformed members are cut into *strokes*, chains of
elements that join end to end. All strokes of one point are ``n_vertices`` points;
the frames of a path are stacked into one float32 array of shape
``(n_frames, n_vertices, 2)`` that goes to the browser once.
"""
from __future__ import annotations

import logging

import numpy as np

from ..errors import warn_input
from ..model import DOFS, Structure
from ..plotting import obstacle_outlines
from ..results import EquilibriumPath, member_lines

__all__ = ["Layout", "layout", "frames", "frame_points", "curve", "curve_options",
           "readout", "readout_table", "readout_units", "readout_lines", "readout_line", "format_value",
           "dof_label", "dof_key", "member_force_table", "FORCE_NAMES", "FORCE_SIGNS",
           "symbols", "bounds", "hover_nodes", "node_displacements", "play_seconds",
           "model_notes", "motion_play_seconds", "play_times", "lowest_frequencies",
           "FREQUENCY", "TIME_LABEL"]

log = logging.getLogger(__name__)

#: Largest coordinate the browser's float32 frames hold (beyond: inf, nothing drawn).
DRAWABLE = float(np.finfo(np.float32).max)
#: Most float32 numbers of shapes sent to the browser per path (8 MB): stays well
#: below the 10 MB default limit of a Jupyter websocket message.
FRAME_BUDGET = 2_000_000
#: Most points of a path drawn in a widget; longer paths are subsampled evenly.
MAX_FRAMES = 2000
#: Points along one beam element's curve (at least its two ends).
MAX_SUB, MIN_SUB = 9, 2
#: Force diagram quantities, by the names the path's member results use.
FORCE_NAMES = {"N": "axial force N", "V": "shear force V", "M": "bending moment M"}
#: Legend words of a diagram's two signs (positive, negative): the two colours.
FORCE_SIGNS = {"N": ("tension", "compression"), "V": ("V > 0", "V < 0"), "M": ("M > 0", "M < 0")}
#: Significant digits of the numbers in readouts and on diagrams: enough to read a
#: value off, few enough to read at a glance (common practice, no source).
DIGITS = 4
#: Playback: a whole path plays in at most this many seconds (longer paths skip frames),
#: at most POINTS_PER_SECOND points a second (short paths are not rushed), and at least
#: MIN_PLAY_SECONDS.
PLAY_SECONDS, POINTS_PER_SECOND, MIN_PLAY_SECONDS = 8.0, 40.0, 1.0
#: A motion plays in real time when it lasts between these many seconds; a shorter one
#: is slowed to the first, a longer one sped up to the second (slower than 1 s nothing
#: can be followed by eye; beyond 30 s a play is a wait; common practice, no source).
MOTION_PLAY_RANGE = (1.0, 30.0)
#: Node labels drawn on the shape at most (named nodes first, then member ends): more
#: cover the drawing.
MAX_NODE_LABELS = 30
#: Points at most where the explorer computes the lowest natural frequency (one
#: generalised eigenproblem each, milliseconds to a second per point): longer paths
#: are sampled evenly and the curve joins the samples by straight lines.
MAX_FREQUENCY_POINTS = 200
#: The curve choice "lowest natural frequency against λ" in the explorer's menu.
FREQUENCY = (-1, "f1")
#: Ordinate and readout label of a motion: time in seconds. The unit systems label
#: force and length only; all of them are consistent with seconds (masses are
#: defined through accelerations in length/s², see :mod:`largerot.units`).
TIME_LABEL = "time t [s]"


class Layout:
    """How member lines become strokes of one polyline each.

    Attributes
    ----------
    n_sub : int
        Points per beam element curve.
    order : ndarray of int, shape (n_vertices, 2)
        For each vertex: (element row among beams then bars, point along it).
    starts : ndarray of int32, shape (n_strokes + 1,)
        Where each stroke begins among the vertices (last entry ``n_vertices``).
    kinds : ndarray of uint8, shape (n_strokes,)
        0 for a beam stroke, 1 for a bar.
    element_ends : ndarray of int32, shape (n_elements, 2)
        Vertex of each element's two ends (beams first, then bars).
    node_vertex : dict
        A vertex at each node that an element touches.
    """

    def __init__(self, structure: Structure, n_sub: int) -> None:
        self.n_sub = int(n_sub)
        beams, _ = structure.element_table("beam")
        bars, _ = structure.element_table("bar")
        rows, starts, kinds, ends, node_vertex = [], [], [], [], {}
        pts = [(beams, self.n_sub, 0), (bars, 2, 1)]
        offset = 0
        prev_end = None
        for nodes, n_pts, kind in pts:
            for e, (a, b) in enumerate(nodes):
                joined = kind == 0 and prev_end == a and kinds and kinds[-1] == 0
                if not joined:
                    starts.append(len(rows))
                    kinds.append(kind)
                first = len(rows) - 1 if joined else len(rows)
                for k in range(1 if joined else 0, n_pts):
                    rows.append((offset + e, k))
                ends.append((first, len(rows) - 1))
                node_vertex.setdefault(int(a), first)
                node_vertex.setdefault(int(b), len(rows) - 1)
                prev_end = b if kind == 0 else None
            offset += len(nodes)
            prev_end = None
        self.n_beams = len(beams)
        self.order = np.array(rows, dtype=int).reshape(-1, 2)
        self.starts = np.array(starts + [len(rows)], dtype=np.int32)
        self.kinds = np.array(kinds, dtype=np.uint8)
        self.element_ends = np.array(ends, dtype=np.int32).reshape(-1, 2)
        self.node_vertex = node_vertex

    @property
    def n_vertices(self) -> int:
        return len(self.order)

    def vertices(self, lines: dict) -> np.ndarray:
        """Stroke vertices from :func:`member_lines` output, shape (n_vertices, 2)."""
        beam, bar = lines["beam"], lines["bar"]
        out = np.empty((self.n_vertices, 2))
        isbeam = self.order[:, 0] < self.n_beams
        e, k = self.order[isbeam].T
        out[isbeam] = beam[e, k]
        e, k = self.order[~isbeam].T
        out[~isbeam] = bar[e - self.n_beams, k]
        return out


def layout(structure: Structure, n_frames: int, n_sub: int | None = None) -> Layout:
    """A layout whose frames (and the hover displacements, 3 numbers per node and
    frame) fit :data:`FRAME_BUDGET` (fewer curve points if needed)."""
    if n_sub is None:
        n_el = max(1, len(structure.element_table("beam")[0]))
        budget = max(0, FRAME_BUDGET - 3 * n_frames * structure.n_nodes)
        n_sub = budget // max(1, 2 * n_frames * n_el)
        n_sub = int(min(MAX_SUB, max(MIN_SUB, n_sub)))
    return Layout(structure, n_sub)


def frame_points(n_points: int, max_frames: int = MAX_FRAMES) -> np.ndarray:
    """Path points shown as frames: all of them, or evenly spread, keeping both ends.

    >>> frame_points(5, 3).tolist()
    [0, 2, 4]
    """
    if n_points <= max_frames:
        return np.arange(n_points)
    return np.unique(np.round(np.linspace(0, n_points - 1, max_frames)).astype(int))


def frames(path: EquilibriumPath, points: np.ndarray, lay: Layout, scale: float = 1.0) -> np.ndarray:
    """Deformed stroke vertices at the given points, float32, shape (n_frames, n_vertices, 2).

    ``scale`` magnifies the displacements (1 is true scale).
    """
    s = path.structure
    out = np.empty((len(points), lay.n_vertices, 2), dtype=np.float32)
    u = path.u
    shown = np.abs(scale * u[np.asarray(points, dtype=int)]) if len(points) else np.zeros(0)
    if shown.size and not np.all(shown < DRAWABLE):
        warn_input(f"Displacements up to {np.nanmax(shown):.3g} (scale {scale:g}) are beyond what "
                   f"the widgets draw (float32, |x| < {DRAWABLE:.2g}): those frames show "
                   "nothing useful. Check the path (its status and load factors).")
    with np.errstate(over="ignore", invalid="ignore"):     # warned above
        for j, i in enumerate(points):
            out[j] = lay.vertices(member_lines(s, scale * u[i], lay.n_sub))
    return out


def bounds(*arrays: np.ndarray) -> list:
    """``[xmin, xmax, ymin, ymax]`` over point arrays of shape (..., 2)."""
    pts = np.concatenate([np.asarray(a, dtype=float).reshape(-1, 2) for a in arrays])
    pts = pts[np.isfinite(pts).all(axis=1)]
    if not len(pts):
        return [-1.0, 1.0, -1.0, 1.0]
    lo, hi = pts.min(axis=0), pts.max(axis=0)
    return [float(lo[0]), float(hi[0]), float(lo[1]), float(hi[1])]


# -- the equilibrium path plot ---------------------------------------------------------
def curve_options(structure: Structure, max_nodes: int = 40) -> list:
    """Dropdown choices ``(label, (node, dof))``: loaded nodes, then member ends, then others."""
    F = structure.load_vector() + structure.load_vector(constant=True)
    loaded = sorted({int(g) // 3 for g in np.flatnonzero(F)})
    ends = sorted({n for m in structure.members for n in m.ends})
    rest = range(structure.n_nodes)
    nodes = list(dict.fromkeys([*loaded, *ends, *rest]))[:max_nodes]
    return [(dof_label(structure, n, d), (n, d)) for n in nodes for d in DOFS]


def curve(path: EquilibriumPath, node: int, dof: str, points: np.ndarray | None = None, *,
          time: bool = False, frequency: tuple | None = None) -> dict:
    """The load–displacement curve for drawing.

    ``time``: the path is a motion's (:meth:`largerot.Motion.as_path`), its load
    factor column the time. ``(node, dof) == FREQUENCY`` draws the lowest natural
    frequency instead of a displacement; ``frequency`` is then ``(points, f)`` from
    :func:`lowest_frequencies`, joined by straight lines between its points.

    Returns
    -------
    dict
        ``x``, ``y`` (float32, shape (n_frames,)), ``stable`` (uint8), ``critical``:
        list of dicts ``{x, y, kind, index}``, and axis labels.
    """
    if points is None:
        points = np.arange(len(path))
    crit = []
    if (node, dof) == FREQUENCY:
        if frequency is None:
            raise ValueError("The frequency curve needs `frequency` = (points, f) from "
                             "lowest_frequencies(path).")
        at, f = frequency
        x_pts = np.interp(points, at, f)
        x_of = lambda cp: float(np.interp(cp.index, at, f))     # noqa: E731
        x_label = "lowest natural frequency f1 [Hz]"
    else:
        x_all = path.displacement(node, dof)
        x_pts = x_all[points]
        g = 3 * int(node) + DOFS.index(dof)

        def x_of(cp):
            u = np.asarray(cp.u)
            return float(u[g]) if u.shape == (3 * path.structure.n_nodes,) else float(x_all[cp.index])
        x_label = dof_label(path.structure, node, dof)
    for cp in path.critical_points:
        crit.append({"x": x_of(cp), "y": float(cp.load_factor), "kind": str(cp.kind),
                     "index": int(cp.index)})
    stable = np.ones(len(points), np.uint8) if time else path.stable[points].astype(np.uint8)
    return {"x": np.asarray(x_pts, dtype=np.float32), "y": path.load_factor[points].astype(np.float32),
            "stable": stable, "critical": crit, "x_label": x_label,
            "y_label": TIME_LABEL if time else "load factor λ"}


# -- member forces, only as the path provides them -------------------------------------
def _as_ends(a, n: int) -> np.ndarray | None:
    a = np.asarray(a, dtype=float)
    if a.shape == (n,):
        return np.repeat(a[:, None], 2, axis=1)
    if a.shape == (n, 2):
        return a
    return None


def _forces_at(path: EquilibriumPath, i: int) -> dict:
    """Whatever member-force arrays the path has at point ``i`` (may be empty)."""
    fn = getattr(path, "member_forces", None)
    found = {}
    if callable(fn):
        got = fn(i)
        if isinstance(got, dict):
            found = got
        else:                                     # an object with N, V, M attributes
            found = {k: getattr(got, k) for k in FORCE_NAMES if hasattr(got, k)}
    else:
        for k in FORCE_NAMES:
            if k in path.extra:
                found[k] = path.extra[k][i]
    return found


def member_force_table(path: EquilibriumPath, points: np.ndarray, name: str) -> np.ndarray | None:
    """End values of one member force at the given points, shape (n_frames, n_elements, 2).

    Elements are beams first, then bars, as in :class:`Layout`. Accepts from the path
    a dict ``{name: array}`` (or ``{"beam": {...}, "bar": {...}}``) whose arrays are
    shape (n_elements,) or (n_elements, 2). Returns None when the path has none.
    """
    s = path.structure
    n_beam, n_bar = len(s.element_table("beam")[0]), len(s.element_table("bar")[0])
    out = np.zeros((len(points), n_beam + n_bar, 2), dtype=np.float32)
    any_found = False
    for j, i in enumerate(points):
        f = _forces_at(path, int(i))
        if "beam" in f or "bar" in f:
            parts = [(f.get("beam", {}), 0, n_beam), (f.get("bar", {}), n_beam, n_bar)]
        else:
            parts = [(f, 0, n_beam + n_bar)]
        for d, lo, n in parts:
            if name not in d or n == 0:
                continue
            v = _as_ends(d[name], n)
            if v is None and lo == 0 and n == n_beam + n_bar:
                v = _as_ends(d[name], n_beam)
                n = n_beam
            if v is None:
                log.warning("Member force %r has shape %s, not per element; not drawn.",
                            name, np.shape(d[name]))
                continue
            out[j, lo:lo + n] = v
            any_found = True
    return out if any_found else None


# -- text: every label and number the widgets write goes through these ------------------
def dof_label(structure: Structure, node: int, dof: str) -> str:
    """Long label of a node's displacement (axes, menus): ``"ux of tip [m]"``,
    ``"ux of node 3 [m]"`` (the structure's names and units)."""
    return structure.dof_label(node, dof)


def dof_key(structure: Structure, node: int, dof: str) -> str:
    """Short label of a node's displacement (readout columns): ``"ux[tip]"``, ``"ux[3]"``."""
    name = structure.node_name(node)
    return f"{dof}[{name if name is not None else int(node)}]"


def node_label(structure: Structure, node: int) -> str:
    """How a node is named in the hover readout: ``"tip"`` or ``"node 3"``."""
    return structure.node_label(node)


def format_value(v: float, digits: int = DIGITS) -> str:
    """A number with ``digits`` significant digits, powers of ten as ``e5``.

    Between 10⁻³ and 10⁴ plain decimals (trailing zeros dropped), else mantissa and
    exponent. The browser's ``fmt`` in canvas.js follows the same rule.

    >>> [format_value(v) for v in (23760.4, 3347.2, 0.069731, 1.525e5, -2e-5, 0.0)]
    ['2.376e4', '3347', '0.06973', '1.525e5', '-2e-5', '0']
    """
    v = float(v)
    if not np.isfinite(v):
        return "—"
    if v == 0:
        return "0"
    if 1e-3 <= abs(v) < 1e4:
        text = f"{v:.{digits}g}"
        if "e" not in text:
            return text
    mant, exp = f"{v:.{digits - 1}e}".split("e")
    mant = mant.rstrip("0").rstrip(".")
    return f"{mant}e{int(exp)}"


# -- readout ---------------------------------------------------------------------------
def readout_table(path: EquilibriumPath, node: int, points: np.ndarray | None = None, *,
                  time: bool = False, frequency: tuple | None = None) -> dict:
    """Columns shown under the widget, each shape (n_frames,): label -> values.

    Load factor (``"t"``, the time, with ``time=True``), the chosen node's three DOFs,
    ``"f1"`` when ``frequency`` = (points, f) is given (:func:`lowest_frequencies`,
    straight lines between its points) and, when the path has member forces, max |M|,
    min N (the largest compression) and max N (the largest tension) over all
    elements. :func:`readout_units` gives each column's unit.
    """
    if points is None:
        points = np.arange(len(path))
    s = path.structure
    cols = {"t" if time else "λ": path.load_factor[points]}
    for d in DOFS:
        cols[dof_key(s, node, d)] = path.displacement(node, d)[points]
    if frequency is not None:
        cols["f1"] = np.interp(points, *frequency)
    M = member_force_table(path, points, "M")
    N = member_force_table(path, points, "N")
    zeros = np.zeros(len(points))
    if M is not None:
        cols["max |M|"] = np.abs(M).max(axis=(1, 2)) if M.shape[1] else zeros
    if N is not None:
        cols["min N"] = N.min(axis=(1, 2)) if N.shape[1] else zeros
        cols["max N"] = N.max(axis=(1, 2)) if N.shape[1] else zeros
    return {k: np.asarray(v, dtype=float) for k, v in cols.items()}


def readout_units(path: EquilibriumPath, node: int) -> dict:
    """The unit of each column of :func:`readout_table` (``""`` for λ, s for t, Hz for f1)."""
    s, u = path.structure, path.structure.units
    out = {"λ": "", "t": "s", "f1": "Hz"}
    for d in DOFS:
        out[dof_key(s, node, d)] = u.dof_unit(d)
    out.update({"max |M|": u.moment, "min N": u.force, "max N": u.force})
    return out


def readout(path: EquilibriumPath, i: int, node: int, **options) -> dict:
    """The readout at point ``i`` as ``label -> float`` (what the browser shows);
    ``options`` as for :func:`readout_table`."""
    t = readout_table(path, node, np.array([range(len(path))[i]]), **options)
    return {k: float(v[0]) for k, v in t.items()}


def readout_line(values: dict, point: int, last: int, stable: bool | None,
                 units: dict | None = None, word: str = "point") -> str:
    """One point's readout as the browser shows it, each value with its unit
    (``stable=None``: no stability word, as for a motion's steps).

    >>> readout_line({"λ": 0.5, "max N": 23760.4}, 3, 10, True, {"max N": "N"})
    'point 3 of 10   λ = 0.5   max N = 2.376e4 N   stable'
    >>> readout_line({"t": 0.25}, 3, 10, None, {"t": "s"}, word="step")
    'step 3 of 10   t = 0.25 s'
    """
    units = units or {}
    parts = [f"{word} {int(point)} of {int(last)}"]
    parts += [f"{k} = {format_value(v)} {units.get(k, '')}".rstrip() for k, v in values.items()]
    if stable is not None:
        parts.append("stable" if stable else "unstable")
    return "   ".join(parts)


def readout_lines(path: EquilibriumPath, node: int, points: np.ndarray, *, time: bool = False,
                  frequency: tuple | None = None) -> list:
    """The readout text of every frame (sent once; the browser picks the line)."""
    table = readout_table(path, node, points, time=time, frequency=frequency)
    units = readout_units(path, node)
    last = int(points[-1]) if len(points) else 0
    stable = path.stable[points]
    return [readout_line({k: v[j] for k, v in table.items()}, int(p), last,
                         None if time else bool(stable[j]), units, "step" if time else "point")
            for j, p in enumerate(points)]


# -- hover -----------------------------------------------------------------------------
def hover_nodes(structure: Structure, lay: Layout) -> list:
    """Nodes the pointer can hover: ``{v, node, label, dofs}`` (``v`` the vertex drawn
    at the node, ``dofs`` the three displacement labels), in node order."""
    return [{"v": int(lay.node_vertex[n]), "node": int(n), "label": node_label(structure, n),
             "dofs": list(DOFS)} for n in sorted(lay.node_vertex)]


def node_displacements(path: EquilibriumPath, points: np.ndarray, nodes: list) -> np.ndarray:
    """Displacements of the hover nodes, float32, shape (n_frames, n_hover, 3)."""
    idx = np.array([h["node"] for h in nodes], dtype=int)
    u = np.asarray(path.u)[np.asarray(points, dtype=int)].reshape(len(points), -1, 3)
    return u[:, idx].astype(np.float32)


def play_seconds(n_frames: int, longest: float = PLAY_SECONDS) -> float:
    """Seconds a whole path of ``n_frames`` takes to play (skipping frames when needed).

    >>> play_seconds(1000), play_seconds(120), play_seconds(5)
    (8.0, 3.0, 1.0)
    """
    return float(min(longest, max(MIN_PLAY_SECONDS, n_frames / POINTS_PER_SECOND)))


def motion_play_seconds(duration: float, shortest: float = MOTION_PLAY_RANGE[0],
                        longest: float = MOTION_PLAY_RANGE[1]) -> float:
    """Seconds a whole motion of ``duration`` seconds takes to play: its own duration
    (real time) between ``shortest`` and ``longest``, else the nearer bound.

    >>> motion_play_seconds(2.5), motion_play_seconds(0.05), motion_play_seconds(600.0)
    (2.5, 1.0, 30.0)
    """
    return float(min(longest, max(shortest, float(duration))))


def play_times(times: np.ndarray, seconds: float) -> np.ndarray:
    """When each frame of a motion is due in a play of ``seconds``, float32, shape
    (n_frames,): the frames' times shifted to start at 0 and scaled to the play.
    The browser shows at each display refresh the last frame due (uneven time steps
    play at their true pace).

    >>> play_times(np.array([1.0, 1.5, 3.0]), 4.0).tolist()
    [0.0, 1.0, 4.0]
    """
    t = np.asarray(times, dtype=float)
    if not len(t):
        return np.zeros(0, np.float32)
    span = float(t[-1] - t[0])
    rate = seconds / span if span > 0 else 0.0
    return ((t - t[0]) * rate).astype(np.float32)


def lowest_frequencies(path: EquilibriumPath, max_points: int | None = None) -> tuple:
    """The lowest natural frequency (Hz) at up to ``max_points`` points of the path.

    Calls :func:`largerot.frequencies` (``modes=1``) once per point: at every point of
    a path of at most ``max_points``, else at ``max_points`` evenly spread ones (both
    ends kept; :func:`curve` joins them by straight lines).

    Returns
    -------
    points : ndarray of int, shape (n,)
    f : ndarray, shape (n,)
        Negative past a loss of stability (:mod:`largerot.vibration`).
    """
    from ..vibration import frequencies
    pts = frame_points(len(path), MAX_FREQUENCY_POINTS if max_points is None else int(max_points))
    if len(pts) < len(path):
        log.info("Lowest frequency computed at %d of %d points (evenly spread).", len(pts), len(path))
    f = np.asarray(frequencies(path, i=pts.tolist(), modes=1), dtype=float).reshape(len(pts), -1)[:, 0]
    return pts, f


# -- the model as built: names, supports, loads with their values ------------------------
def _force_text(units, fx: float, fy: float, mz: float) -> str:
    """``"fx 4000, fy -2000 N"``, ``"mz 5 N·m"``: a node's load with its units."""
    parts = []
    forces = [f"{c} {format_value(v)}" for c, v in (("fx", fx), ("fy", fy)) if v]
    if forces:
        parts.append(", ".join(forces) + f" {units.force}")
    if mz:
        parts.append(f"mz {format_value(mz)} {units.moment}")
    return "; ".join(parts)


def node_names(structure: Structure, lay: Layout, max_labels: int = MAX_NODE_LABELS) -> list:
    """Node labels drawn on the shape: ``{v, text, named}``, named nodes first, then
    the member ends the user made (by id), at most ``max_labels``; nodes made by
    meshing a member get none."""
    model = structure.snapshot()
    interior = set()
    for m in model.members:
        interior.update(int(n) for n in np.asarray(m.node_array)[1:-1])
    named = {int(n) for n in model.node_names.values()}
    own = [n for n in sorted(lay.node_vertex) if n in named or n not in interior]
    own.sort(key=lambda n: (n not in named, n))
    out = []
    for n in own[:int(max_labels)]:
        name = model.node_name(n)
        out.append({"v": int(lay.node_vertex[n]), "text": name if name is not None else str(n),
                    "named": name is not None})
    return out


def model_notes(structure: Structure) -> list:
    """What the drawing shows no value for, one sentence each: line loads, gravity,
    follower loads, springs (with their units), and the unit system.

    ``λ×`` marks a reference load (scaled by the load factor)."""
    model = structure.snapshot()
    u = model.units
    notes = []
    for mid, qx, qy, p, t, constant in model.line_loads:
        words = [f"{c} {format_value(v)}" for c, v in (("qx", qx), ("qy", qy), ("normal", p),
                                                       ("tangential", t)) if v]
        if words:
            notes.append(f"{'' if constant else 'λ×'}line load {', '.join(words)} "
                         f"{u.of('line load')} on {model.member_label(model.members[int(mid)])}")
    if model.gravity is not None:
        g, dx, dy, constant = model.gravity
        notes.append(f"{'' if constant else 'λ×'}self-weight g = {format_value(g)} "
                     f"{u.of('acceleration')} along ({format_value(dx)}, {format_value(dy)})")
    for constant in (False, True):
        for n, f in zip(*model.follower_table(constant)):
            notes.append(f"{'' if constant else 'λ×'}follower load at {model.node_label(int(n))}: "
                         f"{_force_text(u, f[0], f[1], 0.0)}")
    for g, k in zip(*model.spring_table()):
        n, d = int(g) // 3, int(g) % 3
        kind = "rotational stiffness" if d == 2 else "translational stiffness"
        notes.append(f"spring {DOFS[d]} at {model.node_label(n)}: k = {format_value(k)} {u.of(kind)}")
    notes.append(f"units {u.system}")
    return notes


def symbols(structure: Structure, lay: Layout) -> dict:
    """Supports, loads and node names to draw, as plain data.

    ``supports``: ``{x, y, v, held}`` with ``held`` a string of the fixed DOFs
    (``"xyr"`` a clamp, ``"xy"`` a pin, ``"x"``/``"y"`` a roller, ``"r"`` a rotation
    lock); ``loads``: ``{v, fx, fy, mz, constant, text}`` with ``v`` the vertex of the
    node and ``text`` the node's own loads with their units (``"λ×fx 4000 N"``; ``""``
    where the arrow only carries line loads or self-weight lumped at the node);
    ``obstacles``: rigid obstacles of contacts (:func:`largerot.plotting.obstacle_outlines`);
    ``names``: :func:`node_names`; ``notes``: :func:`model_notes`.
    """
    model = structure.snapshot()
    fixed = structure.fixed_dofs()
    xy = structure.xy
    supports = []
    for n in sorted({int(g) // 3 for g in fixed}):
        held = "".join(c for k, c in enumerate("xyr") if 3 * n + k in set(fixed.tolist()))
        supports.append({"x": float(xy[n, 0]), "y": float(xy[n, 1]),
                         "v": int(lay.node_vertex.get(n, -1)), "held": held})
    own = {}                                    # (node, constant) -> the user's nodal load
    for n, d, v, c in np.asarray(model.nodal_loads, dtype=float).reshape(-1, 4):
        own.setdefault((int(n), bool(c)), np.zeros(3))[int(d)] += v
    loads = []
    for constant in (False, True):
        F = structure.load_vector(constant=constant).reshape(-1, 3)
        for n in np.flatnonzero(np.abs(F).sum(axis=1)):
            if int(n) in lay.node_vertex:
                fx, fy, mz = (float(v) for v in F[n])
                mine = own.get((int(n), constant))
                text = "" if mine is None else _force_text(model.units, *mine)
                loads.append({"v": int(lay.node_vertex[int(n)]), "fx": fx, "fy": fy, "mz": mz,
                              "constant": constant,
                              "text": (("" if constant else "λ×") + text) if text else ""})
    return {"supports": supports, "loads": loads, "obstacles": obstacle_outlines(structure),
            "names": node_names(structure, lay), "notes": model_notes(structure)}
