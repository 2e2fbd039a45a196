"""Notebook widgets: explore a traced path, step a trace live, study parameters, export.

Each is an ipywidgets container, displayable in any notebook cell::

    lr.widgets.explore(path)                       # shape beside the path, slider, play
    lr.widgets.live(structure, lr.by_load(0.05))   # step / run / pause / back / reset
    lr.widgets.study(build, height=(4, 12))        # sliders rebuild and re-trace
    lr.widgets.sweep_panel(table, build, control, x=..., y=..., by=...)  # a sweep's cases
    lr.widgets.export_animation(path, "pole.gif")  # GIF or self-contained HTML

The widgets draw; they compute no mechanics (that lives in the library).
"""
import functools

from ..export import export_animation, save_figure
from ..model import dof_index
from . import explorer as _explorer, live as _live
from .explorer import Explorer
from .live import Live
from .study import Study, study
from .sweep_panel import SweepPanel, sweep_panel


def _check_curve(structure, node, dof, what: str) -> None:
    """The curve's node (id or name) and DOF, checked where they come in (TypeError / ModelError)."""
    if node is not None:
        structure.node_id(node, what)
    if dof is not None:
        dof_index(dof)


@functools.wraps(_explorer.explore)
def explore(path, node=None, dof=None, **options):
    from ..motion import Motion
    from ..results import EquilibriumPath
    if not isinstance(path, (EquilibriumPath, Motion)):
        raise TypeError(f"`path` must be an EquilibriumPath or a Motion, got {type(path).__name__}.")
    _check_curve(path.structure, node, dof, "explore")
    return _explorer.explore(path, node, dof, **options)


@functools.wraps(_live.live)
def live(structure, control, **options):
    if not hasattr(structure, "snapshot"):
        raise TypeError(f"Expected a largerot.Structure, got {structure!r}.")
    _check_curve(structure, options.get("node"), options.get("dof"), "live")
    return _live.live(structure, control, **options)


__all__ = ["Explorer", "explore", "Live", "live", "Study", "study", "SweepPanel", "sweep_panel",
           "export_animation", "save_figure"]
