"""A panel over a sweep's table: a summary column against a parameter, one curve per
value of a second parameter; a chosen case opens in the path explorer.

    table = lr.sweep(build, cases, control, store="study")
    lr.widgets.sweep_panel(table, build, control, x="amplitude", y="first_limit",
                           by="rise", store="study")

The case is loaded from the sweep's ``store`` when it was saved there, otherwise
rebuilt (``build(**params)``) and re-traced with the same control and options. The
plot is a small anywidget (:class:`SweepPlot`, SVG drawn in the browser from the
table's numbers): hovering a point shows its case, clicking it opens the case. The
list below the plot is the keyboard route to the same cases; the plot marks the
chosen one.
"""
from __future__ import annotations

import logging
import math
import pathlib
from pathlib import Path

import anywidget
import ipywidgets as w
import numpy as np
import traitlets as t

from ..errors import ModelError
from ..solvers.controls import StepControl, trace
from ..storage import load
from ._errors import ErrorBox, shown_in_widget
from .explorer import Explorer

__all__ = ["SweepPanel", "SweepPlot", "sweep_panel"]

log = logging.getLogger(__name__)

#: Size of the plot in CSS pixels (the legend takes the right 150).
PLOT_SIZE = (760, 360)


class SweepPlot(anywidget.AnyWidget):
    """Curves of a sweep's summary column, drawn as SVG in the browser; a click on a
    point sends its case index back (``on_click``)."""

    _esm = pathlib.Path(__file__).with_name("sweep_plot.js")

    series = t.List([], help="Curves: dicts {label, points: [[case, x, y, tip], ...]}.").tag(sync=True)
    chosen = t.Int(-1, help="Case marked on the plot (-1: none).").tag(sync=True)
    x_label = t.Unicode("", help="Abscissa label.").tag(sync=True)
    y_label = t.Unicode("", help="Ordinate label.").tag(sync=True)
    width = t.Int(PLOT_SIZE[0], help="Width in CSS pixels.").tag(sync=True)
    height = t.Int(PLOT_SIZE[1], help="Height in CSS pixels.").tag(sync=True)

    def __init__(self, **kwargs) -> None:
        super().__init__(**kwargs)
        self._click_handlers: list = []
        self.on_msg(self._message)

    def on_click(self, callback) -> None:
        """Call ``callback(case)`` when a point is clicked in the browser."""
        self._click_handlers.append(callback)

    def _message(self, _widget, content, _buffers) -> None:
        if not isinstance(content, dict) or content.get("event") != "click":
            return
        case = content.get("case")
        if not isinstance(case, int) or isinstance(case, bool):
            log.warning("sweep plot: ignored a click with case %r", case)
            return
        for callback in self._click_handlers:
            callback(case)


class SweepPanel(w.VBox):
    """The panel of :func:`sweep_panel`.

    Attributes
    ----------
    plot : SweepPlot
        The summary plot; a click on a point opens its case.
    case : ipywidgets.Dropdown
        The case to open (row index of the table): the keyboard route.
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
        self.plot = SweepPlot(x_label=str(x), y_label=str(y))
        self.explorer = Explorer()
        self.error = ""
        self.errors = ErrorBox()                  # one line, the traceback behind "details"
        super().__init__(children=[self.plot, w.HBox([self.case, self.open_button]), self.status,
                                   self.errors, self.explorer])
        self.case.observe(self._case_changed, "value")
        self.open_button.on_click(self._open_clicked)
        self.plot.on_click(self._point_clicked)
        self.draw()

    @shown_in_widget
    def _case_changed(self, change) -> None:
        self.plot.chosen = -1 if change["new"] is None else int(change["new"])

    @shown_in_widget
    def _open_clicked(self, _button) -> None:
        self.open_case()

    @shown_in_widget
    def _point_clicked(self, case: int) -> None:
        """A point clicked in the browser: choose its case and open it."""
        self.open_case(case)                  # checks the case first
        self.case.value = case

    def _label(self, i) -> str:
        row = self.table.loc[i]
        params = ", ".join(f"{c}={row[c]:g}" if isinstance(row[c], (int, float)) else f"{c}={row[c]}"
                           for c in (self.x, self.by) if c is not None)
        value = row[self.y]
        shown = f"{value:.4g}" if isinstance(value, (int, float)) and not math.isnan(value) else str(value)
        return f"{i}: {params} → {self.y} {shown} ({row.get('status', '')})"

    def draw(self) -> None:
        """Send the curves to the plot (one per value of ``by``), the chosen case marked."""
        t = self.table
        groups = [(None, t)] if self.by is None else list(t.groupby(self.by, sort=True))
        series = []
        for key, g in groups:
            g = g.sort_values(self.x)
            label = "" if key is None else f"{self.by} = {key:g}" if isinstance(key, float) else f"{self.by} = {key}"
            series.append({"label": label, "points": [
                [int(i), _number(g.loc[i, self.x]), _number(g.loc[i, self.y]), self._label(i)]
                for i in g.index]})
        with self.plot.hold_sync():
            self.plot.series = series
            self.plot.chosen = -1 if self.case.value is None else int(self.case.value)

    def open_case(self, i=None):
        """Load (from the store) or re-trace case ``i`` (default: the chosen one) and
        show it in the explorer; returns its path. (Not ``open``: that name is the
        widget's own, which opens its connection to the browser.)"""
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
        self.error = ""
        self.errors.clear()
        return path

    def _parameters(self) -> list:
        """The table's parameter columns: those before the summary's ``status``."""
        cols = list(self.table.columns)
        return cols[:cols.index("status")] if "status" in cols else cols


def _plain(v):
    return v.item() if isinstance(v, np.generic) else v


def _number(v) -> float | None:
    """A plot coordinate: a float, or None (not drawn) for NaN, inf and non-numbers."""
    try:
        v = float(v)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def sweep_panel(table, build, control, *, x: str, y: str, by: str | None = None, store=None,
                **options) -> SweepPanel:
    """A summary column ``y`` of a sweep's ``table`` against parameter ``x``, one curve
    per value of ``by``; the chosen case opens in the path explorer (loaded from
    ``store`` if the sweep saved it there, else re-traced with ``control`` and the
    trace ``options``)."""
    return SweepPanel(table, build, control, x=x, y=y, by=by, store=store, **options)
