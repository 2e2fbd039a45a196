"""The model as built, drawn before any trace: check the input by eye.

:func:`plot_model` draws a :class:`~largerot.model.Structure` or its
:class:`~largerot.snapshot.Model`: members (beams, bars, cables), the nodes the user
made with their names (or ids), member labels, supports drawn from the restrained
DOFs (clamp, pin, rollers, a rotation held alone), grounded springs with their
stiffness, nodal loads as arrows with their values and units (reference loads,
scaled by λ, apart from constant ones), follower loads, line loads, gravity and
contact obstacles. Labels are placed so that their text does not overlap where
that can be avoided (each label tries a ring of offsets around its anchor).
Drawing only: no mechanics here.
"""
from __future__ import annotations

import numpy as np

__all__ = ["plot_model", "MODEL_COLOURS"]

#: Colours: reference (scaled) loads and constant loads must differ at a glance,
#: also for colour-blind readers (blue/orange pair of the Okabe–Ito palette).
MODEL_COLOURS = {
    "beam": "#222222", "bar": "#555555", "cable": "#0072b2", "support": "#333333",
    "reference": "#d55e00", "constant": "#6a3d9a", "spring": "#009e73", "node": "#222222",
}
#: Node labels drawn at most; a finely built model (many user nodes) gets ids of
#: the named nodes and the member ends only up to this count, to stay readable.
MAX_NODE_LABELS = 60
#: Offsets (points) tried in turn for a label, around its anchor, until one does
#: not overlap the labels already placed; 3 rings of 8 directions.
_RING = [(np.cos(a), np.sin(a)) for a in np.deg2rad([45, 135, -45, -135, 90, -90, 0, 180])]
LABEL_OFFSETS = [(r * c, r * s) for r in (7.0, 14.0, 22.0) for c, s in _RING]


def _fmt(v: float) -> str:
    return f"{v:.4g}"


def _unit_vec(v) -> np.ndarray:
    v = np.asarray(v, float)
    n = float(np.hypot(*v))
    return v / n if n else np.array([0.0, -1.0])


class _Labels:
    """Labels placed one by one at the first offset whose box overlaps none placed."""

    def __init__(self, ax) -> None:
        self.ax, self.texts = ax, []

    def add(self, xy, text: str, offsets=None, **style):
        t = self.ax.annotate(text, xy=xy, xytext=(0, 0), textcoords="offset points",
                             fontsize=style.pop("fontsize", 8), zorder=8,
                             bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.8),
                             **style)
        t._lr_offsets = offsets or LABEL_OFFSETS
        self.texts.append(t)
        return t

    def place(self) -> None:
        fig = self.ax.figure
        renderer = fig.canvas.get_renderer()
        frame = self.ax.get_window_extent(renderer)
        placed = []
        for t in self.texts:
            best = None
            for dx, dy in t._lr_offsets:
                t.set_position((dx, dy))
                t.set_ha("left" if dx > 0.5 else "right" if dx < -0.5 else "center")
                t.set_va("bottom" if dy > 0.5 else "top" if dy < -0.5 else "center")
                box = t.get_window_extent(renderer).expanded(1.05, 1.1)
                hits = sum(box.overlaps(b) for b in placed)
                inside = (box.x0 >= frame.x0 and box.x1 <= frame.x1 and box.y0 >= frame.y0
                          and box.y1 <= frame.y1)
                hits += 0 if inside else 0.5       # outside the axes: only if nothing else fits
                if best is None or hits < best[0]:
                    best = (hits, dx, dy, box)
                if hits == 0:
                    break
            _, dx, dy, box = best
            t.set_position((dx, dy))
            t.set_ha("left" if dx > 0.5 else "right" if dx < -0.5 else "center")
            t.set_va("bottom" if dy > 0.5 else "top" if dy < -0.5 else "center")
            placed.append(box)


def _spring(ax, x: float, y: float, dof: int, h: float) -> np.ndarray:
    """A zig-zag to the ground along x or y, or a spiral for a rotation; returns its far end."""
    col = MODEL_COLOURS["spring"]
    if dof == 2:
        t = np.linspace(0.0, 3.0 * np.pi, 60)
        r = 0.25 * h + 0.2 * h * t / np.pi
        ax.plot(x + r * np.cos(t), y + r * np.sin(t), color=col, lw=1.1, zorder=4)
        return np.array([x + r[-1], y])
    d = np.array([-1.0, 0.0]) if dof == 0 else np.array([0.0, -1.0])
    p = np.array([-d[1], d[0]])
    s = np.linspace(0.0, 1.0, 10)
    zig = np.where((np.arange(10) % 2 == 1) & (s > 0.1) & (s < 0.9), 1.0, 0.0)
    zig[2::4] *= -1
    L = 2.2 * h
    pts = np.array([x, y]) + L * s[:, None] * d + 0.35 * h * zig[:, None] * p
    ax.plot(pts[:, 0], pts[:, 1], color=col, lw=1.1, zorder=4)
    end = pts[-1]
    ax.plot([end[0] - 0.6 * h * p[0], end[0] + 0.6 * h * p[0]],
            [end[1] - 0.6 * h * p[1], end[1] + 0.6 * h * p[1]], color=col, lw=1.4, zorder=4)
    return end


def _arrow(ax, tip, vec, colour: str, style: str = "-") -> None:
    ax.annotate("", xy=tip, xytext=np.asarray(tip) - vec, zorder=7,
                arrowprops=dict(arrowstyle="-|>", color=colour, lw=1.6, ls=style,
                                shrinkA=0, shrinkB=0))


def _moment(ax, x: float, y: float, m: float, h: float, colour: str) -> None:
    """A curved arrow round the node, counter-clockwise for a positive moment."""
    from matplotlib.patches import FancyArrowPatch
    r = 1.2 * h
    a, b = np.deg2rad(200.0), np.deg2rad(-20.0)
    start, end = (a, b) if m < 0 else (b, a)
    p0 = (x + r * np.cos(start), y + r * np.sin(start))
    p1 = (x + r * np.cos(end), y + r * np.sin(end))
    ax.add_patch(FancyArrowPatch(p0, p1, connectionstyle=f"arc3,rad={'-' if m < 0 else ''}0.9",
                                 arrowstyle="-|>", mutation_scale=10, color=colour, lw=1.4, zorder=7))


def plot_model(structure, ax=None, *, node_labels: bool = True, member_labels: bool = True,
               loads: bool = True, figsize=(7.0, 5.0), title: str | None = None):
    """Draw the model as built: members, named nodes, supports, springs, loads, obstacles.

    Parameters
    ----------
    structure : Structure or Model
        What to draw (a path's model: ``path.model``).
    ax : matplotlib Axes, optional
        Drawn into; a new figure of ``figsize`` otherwise.
    node_labels : bool
        Label the nodes the user made (names, or "3" for an unnamed node); nodes
        made by meshing are drawn as small dots without a label.
    member_labels : bool
        Label each member at its middle with its name or "member 2".
    loads : bool
        Draw nodal loads (values and units; reference loads, scaled by λ, in orange
        and marked "λ×", constant loads in purple, dashed), follower forces,
        line loads and gravity.
    title : str, optional
        Default: the model's label, else "Model", with its units.

    Returns
    -------
    matplotlib Axes
    """
    if not hasattr(structure, "snapshot"):
        raise TypeError(f"plot_model takes a largerot.Structure or Model, got {structure!r}.")
    model = structure.snapshot()
    if ax is None:
        from matplotlib.figure import Figure
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        fig = Figure(figsize=figsize, layout="constrained")
        FigureCanvasAgg(fig)
        ax = fig.add_subplot()
    units = model.units
    xy = model.xy
    size = float(np.ptp(xy, axis=0).max()) if len(xy) > 1 else 1.0
    size = size or 1.0
    h = 0.03 * size
    labels = _Labels(ax)
    reach = [xy]                 # every point drawn, for the limits

    # members, and which nodes are interior to a mesh
    interior = np.zeros(model.n_nodes, bool)
    for m in model.members:
        chain = xy[m.node_array]
        kind = "cable" if m.kind == "cable" else m.kind
        ax.plot(chain[:, 0], chain[:, 1], color=MODEL_COLOURS[kind],
                lw={"beam": 2.2, "bar": 1.4, "cable": 1.2}[kind],
                ls="--" if kind == "cable" else "-", zorder=3, solid_capstyle="round")
        interior[m.node_array[1:-1]] = True
        if member_labels:
            k = len(m.node_array) // 2
            mid = (0.5 * (xy[m.node_array[k - 1]] + xy[m.node_array[k]])
                   if len(m.node_array) % 2 == 0 else xy[m.node_array[k]])
            labels.add(mid, model.member_label(m), fontstyle="italic", color=MODEL_COLOURS[kind])
    if interior.any():
        ax.plot(xy[interior, 0], xy[interior, 1], ".", ms=2.5, color="0.55", zorder=4)
    own = np.flatnonzero(~interior)
    ax.plot(xy[own, 0], xy[own, 1], "o", ms=4, mfc="white", mec=MODEL_COLOURS["node"], zorder=6)
    if node_labels:
        named = set(model.node_names.values())
        shown = sorted(own, key=lambda n: (n not in named, n))[:MAX_NODE_LABELS]
        for n in shown:
            name = model.node_name(int(n))
            labels.add(xy[n], name if name is not None else str(int(n)), fontsize=8,
                       fontweight="bold" if name is not None else "normal")

    # supports and springs (the symbols plotting draws; imported here, as plotting imports
    # this module)
    from .plotting import _draw_obstacles, draw_support
    fixed = set(model.fixed.tolist())
    for n in sorted({g // 3 for g in fixed}):
        draw_support(ax, *xy[n], tuple(3 * n + k in fixed for k in range(3)), h,
                     MODEL_COLOURS["support"])
    for g, k in zip(*model.spring_table()):
        n, d = int(g) // 3, int(g) % 3
        end = _spring(ax, *xy[n], d, h)
        reach.append(end[None, :])
        kind = "rotational stiffness" if d == 2 else "translational stiffness"
        labels.add(end, f"k = {_fmt(k)} {units.of(kind)}", color=MODEL_COLOURS["spring"], fontsize=7)

    if loads:
        reach += _draw_loads(ax, model, labels, h, size)
    _draw_obstacles(ax, model)

    pad = 0.12 * size
    every = np.vstack(reach)
    lo, hi = every.min(axis=0) - pad, every.max(axis=0) + pad
    ax.set_xlim(lo[0], hi[0])
    ax.set_ylim(lo[1], hi[1])
    ax.set_aspect("equal")
    ax.set_xlabel(units.label("x", "length"))
    ax.set_ylabel(units.label("y", "length"))
    heading = title if title is not None else (model.label or "Model")
    ax.set_title(f"{heading} (units {units.system})", fontsize=10)
    handles = _legend_handles(model, loads)
    if handles:
        ax.legend(handles=handles, fontsize=7, loc="upper left", bbox_to_anchor=(1.01, 1.0),
                  frameon=False)
    ax.figure.canvas.draw()
    labels.place()
    return ax


def _draw_loads(ax, model, labels: _Labels, h: float, size: float) -> list:
    """Draw the loads; return the points drawn (arrays of shape (n, 2)) for the limits."""
    units = model.units
    reach = []
    L = 0.14 * size
    table = np.asarray(model.nodal_loads).reshape(-1, 4)
    for constant in (0.0, 1.0):
        colour = MODEL_COLOURS["constant" if constant else "reference"]
        style = "--" if constant else "-"
        rows = table[table[:, 3] == constant]
        for n in np.unique(rows[:, 0]).astype(int):
            f = np.zeros(3)
            for _, d, v, _ in rows[rows[:, 0] == n]:
                f[int(d)] += v
            parts = []
            if f[0] or f[1]:
                vec = L * _unit_vec(f[:2])
                _arrow(ax, xy_of(model, n), vec, colour, style)
                parts += [f"{c} {_fmt(v)}" for c, v in (("fx", f[0]), ("fy", f[1])) if v]
                unit = units.of("force")
                text = ", ".join(parts) + f" {unit}"
                anchor = xy_of(model, n) - vec
            if f[2]:
                _moment(ax, *xy_of(model, n), f[2], h, colour)
                mt = f"mz {_fmt(f[2])} {units.of('moment')}"
                text = f"{text}; {mt}" if parts else mt
                anchor = xy_of(model, n) + np.array([0.0, 1.2 * h]) if not parts else anchor
            labels.add(anchor, ("λ×" if not constant else "") + text, color=colour, fontsize=7)
            reach.append(np.atleast_2d(anchor))
    for constant, (nodes, F0) in enumerate(model.followers):
        colour = MODEL_COLOURS["constant" if constant else "reference"]
        for n, f in zip(nodes, F0):
            vec = L * _unit_vec(f)
            _arrow(ax, xy_of(model, n), vec, colour, "--" if constant else "-")
            reach.append(np.atleast_2d(xy_of(model, n) - vec))
            labels.add(xy_of(model, n) - vec, ("" if constant else "λ×") + "follower "
                       + ", ".join(f"{c} {_fmt(v)}" for c, v in zip(("fx", "fy"), f) if v)
                       + f" {units.of('force')}", color=colour, fontsize=7)
    for mid, qx, qy, p, t, constant in model.line_loads:
        m = model.members[mid]
        colour = MODEL_COLOURS["constant" if constant else "reference"]
        chain = model.xy[m.node_array]
        along = np.linspace(0.0, 1.0, 7)
        s = np.concatenate([[0.0], np.cumsum(np.hypot(*np.diff(chain, axis=0).T))])
        pts = np.column_stack([np.interp(along * s[-1], s, chain[:, k]) for k in range(2)])
        tang = _unit_vec(chain[-1] - chain[0])
        normal = np.array([-tang[1], tang[0]])
        q = np.array([qx, qy]) + p * normal + t * tang
        if not q.any():
            continue
        vec = 0.5 * L * _unit_vec(q)
        for pt in pts:
            _arrow(ax, pt, vec, colour, "--" if constant else "-")
        ax.plot(*(pts - vec).T, color=colour, lw=1.0, ls="--" if constant else "-", zorder=7)
        reach.append(pts - vec)
        words = [f"{c} {_fmt(v)}" for c, v in (("qx", qx), ("qy", qy), ("normal", p),
                                                   ("tangential", t)) if v]
        labels.add(pts[len(pts) // 2] - vec, ("" if constant else "λ×") + ", ".join(words)
                   + f" {units.of('line load')}", color=colour, fontsize=7)
    return reach


def xy_of(model, n: int) -> np.ndarray:
    return np.asarray(model.xy[int(n)], float)


def _legend_handles(model, loads: bool) -> list:
    from matplotlib.lines import Line2D
    handles = []
    kinds = {m.kind for m in model.members}
    for kind in ("beam", "bar", "cable"):
        if kind in kinds:
            handles.append(Line2D([], [], color=MODEL_COLOURS[kind], ls="--" if kind == "cable" else "-",
                                  lw=2, label=kind))
    if loads:
        table = np.asarray(model.nodal_loads).reshape(-1, 4)
        has_ref = (table[:, 3] == 0).any() or len(model.followers[0][0]) or any(
            not r[5] for r in model.line_loads) or (model.gravity is not None and not model.gravity[3])
        has_const = (table[:, 3] == 1).any() or len(model.followers[1][0]) or any(
            r[5] for r in model.line_loads) or (model.gravity is not None and model.gravity[3])
        if has_ref:
            handles.append(Line2D([], [], color=MODEL_COLOURS["reference"], lw=2,
                                  label="reference load (× λ)"))
        if has_const:
            handles.append(Line2D([], [], color=MODEL_COLOURS["constant"], lw=2, ls="--",
                                  label="constant load"))
    if loads and model.gravity is not None:
        g, dx, dy, constant = model.gravity
        arrow = {(0.0, -1.0): "↓", (0.0, 1.0): "↑", (1.0, 0.0): "→", (-1.0, 0.0): "←"}.get(
            (round(dx, 12) + 0.0, round(dy, 12) + 0.0), f"along ({_fmt(dx)}, {_fmt(dy)})")
        handles.append(Line2D([], [], color=MODEL_COLOURS["constant" if constant else "reference"],
                              lw=0, label=f"self-weight: {'' if constant else 'λ×'}g = {_fmt(g)} "
                                          f"{model.units.of('acceleration')} {arrow}"))
    if len(model.spring_dofs):
        handles.append(Line2D([], [], color=MODEL_COLOURS["spring"], lw=1.2, label="spring"))
    return handles
