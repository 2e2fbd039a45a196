"""Solvers: Newton's method inside path-following steppers."""
from .controls import StepControl, by_arc_length, by_displacement, by_load, iterate, resume, run, trace
from .status import STATUS, Status
from .stepper import PathStepper

__all__ = ["StepControl", "by_arc_length", "by_displacement", "by_load", "iterate", "resume", "run", "trace",
           "PathStepper", "STATUS", "Status"]
