"""largerot: large-rotation analysis of slender beams, rods and cables in the plane.

Build a :class:`Structure`, choose a step control and :func:`trace` its
equilibrium path.
"""
from .errors import InputWarning, ModelError
from .model import DOFS, Member, Structure
from .results import CriticalPoint, EquilibriumPath, Event, Point
from .sections import Section
from .fibres import FibreSection
from .elements.contact import Circle, Line
from .snapshot import Model
from .units import Units
from .mesh_check import MeshWarning
from .storage import FileFormatError, load, save
from .sweep import grid, sweep
from .solvers import STATUS, by_arc_length, by_displacement, by_load, iterate, resume, run, trace
from .buckling import Buckling, buckling, imperfect
from .vibration import frequencies
from .motion import Motion
from .solvers.transient import ramp_load, rayleigh, step_load, transient
from . import plotting


def __getattr__(name):
    # lr.widgets imports ipywidgets and anywidget: only when first asked for
    if name == "widgets":
        import importlib
        return importlib.import_module(".widgets", __name__)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")

__version__ = "0.1.0"

__all__ = ["ModelError", "InputWarning", "Structure", "Member", "Section", "FibreSection", "Line", "Circle",
           "DOFS", "EquilibriumPath", "Point", "CriticalPoint", "Event", "run", "by_load", "by_displacement", "by_arc_length", "buckling", "Buckling",
           "imperfect", "frequencies", "trace", "iterate", "STATUS", "Model", "Units", "MeshWarning", "FileFormatError", "save", "load", "resume", "sweep", "grid", "plotting", "widgets", "__version__",
           "transient", "Motion", "step_load", "ramp_load", "rayleigh"]
