"""Notebook widgets: explore a traced path, step a trace live, study parameters, export.

Each is an ipywidgets container, displayable in any notebook cell::

    lr.widgets.explore(path)                       # shape beside the path, slider, play
    lr.widgets.live(structure, lr.by_load(0.05))   # step / run / pause / back / reset
    lr.widgets.study(build, height=(4, 12))        # sliders rebuild and re-trace
    lr.widgets.export_animation(path, "pole.gif")  # GIF or self-contained HTML

The widgets draw; they compute no mechanics (that lives in the library).
"""
from ..export import export_animation, save_figure
from .explorer import Explorer, explore
from .live import Live, live
from .study import Study, study

__all__ = ["Explorer", "explore", "Live", "live", "Study", "study", "export_animation",
           "save_figure"]
