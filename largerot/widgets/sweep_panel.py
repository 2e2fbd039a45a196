"""A panel over a sweep's table: a summary column against a parameter, one curve per
value of a second parameter; a chosen case opens in the path explorer.

    table = lr.sweep(build, cases, control, store="study")
    lr.widgets.sweep_panel(table, build, control, x="amplitude", y="first_limit",
                           by="rise", store="study")

The case is loaded from the sweep's ``store`` when it was saved there, otherwise
rebuilt (``build(**params)``) and re-traced with the same control and options. The
plot is a static image (it needs no interactive matplotlib backend); the case is
chosen in the list below it, and the plot marks it.
"""
from __future__ import annotations

import io
import math
from pathlib import Path

import ipywidgets as w
import numpy as np

from ..errors import ModelError
from ..solvers.controls import StepControl, trace
from ..storage import load
from .explorer import Explorer

__all__ = ["SweepPanel", "sweep_panel"]

#: Size of the plot, inches at 100 dpi.
FIGSIZE = (6.0, 3.6)


class SweepPanel(w.VBox):
    """The panel of :func:`sweep_panel`.

    Attributes
    ----------
    plot : ipywidgets.Image
        The summary plot (PNG).
    case : ipywidgets.Dropdown
        The case to open (row index of the table).
    explorer : Explorer
        Shows the opened case.
    path : EquilibriumPath or None
        The path of the case last opened.
    """

    def __init__(self, table, build, control, *, x: str, y: str, by: str | None = None,
                 store=None, node=None, dof=None, **trace_options) -> None:
        if not isinstance(control, StepControl):
            raise TypeError(f"`control` must be lr.by_load(...), lr.by_displacement(...) or "
                            f"lr.by_arc_length(...), got {control!r}.")
        if not callable(build):
            raise TypeError(f"`build` must be a function returning a Structure, got {build!r}.")
        for name, column in (("x", x), ("y", y), ("by", by)):
            if column is not None and column not in table.columns:
                raise ModelError(f"sweep_panel: `{name}` names no column of the table: {column!r} "
                                 f"(columns: {', '.join(map(str, table.columns))}).")
        self.table, self.build, self.control = table, build, control
        self.x, self.y, self.by = x, y, by
        self.store = None if store is None else Path(store)
        self.trace_options = trace_options
        self._curve = (node, dof)
        self.path = None
        labels = [(self._label(i), i) for i in table.index]
        self.case = w.Dropdown(options=labels, description="case", layout=w.Layout(width="auto"))
        self.open_button = w.Button(description="open in explorer", icon="folder-open")
        self.status = w.HTML("")
        self.plot = w.Image(format="png")
        self.explorer = Explorer()
        super().__init__(children=[self.plot, w.HBox([self.case, self.open_button]), self.status,
                                   self.explorer])
        self.case.observe(lambda change: self.draw(), "value")
        self.open_button.on_click(lambda _: self.open())
        self.draw()

    def _label(self, i) -> str:
        row = self.table.loc[i]
        params = ", ".join(f"{c}={row[c]:g}" if isinstance(row[c], (int, float)) else f"{c}={row[c]}"
                           for c in (self.x, self.by) if c is not None)
        value = row[self.y]
        shown = f"{value:.4g}" if isinstance(value, (int, float)) and not math.isnan(value) else str(value)
        return f"{i}: {params} → {self.y} {shown} ({row.get('status', '')})"

    def draw(self) -> None:
        """Redraw the plot, the chosen case marked."""
        from matplotlib.figure import Figure
        fig = Figure(figsize=FIGSIZE, dpi=100, layout="constrained")
        ax = fig.subplots()
        t = self.table
        groups = [(None, t)] if self.by is None else list(t.groupby(self.by, sort=True))
        for key, g in groups:
            g = g.sort_values(self.x)
            ax.plot(g[self.x], g[self.y], "o-", ms=4,
                    label=None if key is None else f"{self.by} = {key:g}" if isinstance(key, float)
                    else f"{self.by} = {key}")
        i = self.case.value
        if i is not None:
            ax.plot([t.loc[i, self.x]], [t.loc[i, self.y]], "s", ms=11, mfc="none", mec="black",
                    label="chosen case")
        ax.set_xlabel(self.x)
        ax.set_ylabel(self.y)
        ax.grid(alpha=0.3)
        if self.by is not None or i is not None:
            ax.legend(fontsize=8, loc="best")
        buf = io.BytesIO()
        fig.savefig(buf, format="png")
        self.plot.value = buf.getvalue()

    def open(self, i=None):
        """Load (from the store) or re-trace case ``i`` (default: the chosen one) and
        show it in the explorer; returns its path."""
        i = self.case.value if i is None else i
        if i not in self.table.index:
            raise ModelError(f"sweep_panel: no case {i!r} in the table (0–{len(self.table) - 1}).")
        params = {c: _plain(self.table.loc[i, c]) for c in self._parameters()}
        stored = None if self.store is None else self.store / f"case-{int(i):05d}.lr"
        if stored is not None and stored.exists():
            path, how = load(stored, kind="path"), f"loaded from {stored.name}"
        else:
            path, how = trace(self.build(**params), self.control, **self.trace_options), "re-traced"
        self.path = path
        self.explorer.show(path, *self._curve, index="last")
        self.status.value = f"case {i} ({how}): {len(path)} points, {path.status}"
        return path

    def _parameters(self) -> list:
        """The table's parameter columns: those before the summary's ``status``."""
        cols = list(self.table.columns)
        return cols[:cols.index("status")] if "status" in cols else cols


def _plain(v):
    return v.item() if isinstance(v, np.generic) else v


def sweep_panel(table, build, control, *, x: str, y: str, by: str | None = None, store=None,
                **options) -> SweepPanel:
    """A summary column ``y`` of a sweep's ``table`` against parameter ``x``, one curve
    per value of ``by``; the chosen case opens in the path explorer (loaded from
    ``store`` if the sweep saved it there, else re-traced with ``control`` and the
    trace ``options``)."""
    return SweepPanel(table, build, control, x=x, y=y, by=by, store=store, **options)
