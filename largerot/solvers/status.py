"""The one status table of a trace: code, word and message, used by steppers, paths and widgets.

As in scipy's ODE solvers, a negative code is a failure, zero is "still going" and a
positive code says why the trace ended well.

>>> STATUS["target"].message
'Reached the target load factor.'
>>> [s.word for s in STATUS.values() if s.code < 0]
['failed']
"""
from __future__ import annotations

from typing import NamedTuple

__all__ = ["Status", "STATUS", "ENDED"]


class Status(NamedTuple):
    code: int
    word: str
    message: str


STATUS = {s.word: s for s in (
    Status(0, "running", "The trace has not finished."),
    Status(1, "target", "Reached the target load factor."),
    Status(2, "stopped", "The stop condition was met."),
    Status(3, "event", "A terminal event ended the trace."),
    Status(4, "max_steps", "Took the number of steps asked for."),
    Status(5, "limit", "Load control reached a limit point: the load cannot grow further on "
                       "this branch. Trace past it with lr.by_arc_length() or lr.by_displacement(...)."),
    Status(6, "interrupted", "Interrupted; the path ends at the last converged point and the "
                             "trace can go on."),
    Status(-1, "failed", "Newton's method did not converge even at the smallest step; "
                         "the path ends at the last converged point."),
)}

#: Words of a trace that has ended (anything but "running").
ENDED = tuple(w for w in STATUS if w != "running")

