"""Exceptions and warnings for misuse; numerical failure is a status, never an exception.

One vocabulary for every public entry point:

- a wrong *type* (a string where a number belongs, ``None`` for a section) is a
  :class:`TypeError`; strings are never converted to numbers;
- a bad *value* (negative, zero, non-finite, out of range, an unknown node) is a
  :class:`ModelError`, a :class:`ValueError` whose message names the parameter,
  node or member and the value;
- suspicious but legal input (no load, a load on a fixed DOF) is an
  :class:`InputWarning`.

The three checkers below (numbers, whole numbers, node ids) are the only places
where these rules are written; numpy scalars (``np.float64``, ``np.int64``) pass.
"""
from __future__ import annotations

import math
import numbers
import os
import sys
import warnings

import numpy as np

__all__ = ["ModelError", "InputWarning", "checked_number", "checked_integer", "checked_node",
           "is_real", "warn_input"]


class ModelError(ValueError):
    """A structure or an option that cannot be used as given.

    The message names the offending node, member, DOF, parameter or value.
    """


class InputWarning(UserWarning):
    """Input that is legal but probably not what was meant (a trace without load...)."""


def warn_input(message: str) -> None:
    """Issue an :class:`InputWarning` attributed to the first caller outside largerot."""
    package = os.path.dirname(os.path.abspath(__file__))
    frame, level = sys._getframe(0), 1
    while frame is not None and os.path.abspath(frame.f_code.co_filename).startswith(package):
        frame, level = frame.f_back, level + 1      # bounded by the depth of the stack
    warnings.warn(message, InputWarning, stacklevel=level)


def is_real(value) -> bool:
    """A real number of Python or numpy (0-d arrays too), never a bool or a string."""
    if isinstance(value, (bool, np.bool_)):
        return False
    if isinstance(value, numbers.Real):
        return True
    return isinstance(value, np.ndarray) and value.ndim == 0 and value.dtype.kind in "iuf"


def _prefix(owner: str) -> str:
    return f"{owner} " if owner else ""


def checked_number(owner: str, name: str, value, *, positive: bool = False,
                   nonnegative: bool = False, nonzero: bool = False, lower=None, upper=None,
                   allow_none: bool = False):
    """``value`` as a float, checked; else a TypeError or ModelError naming it.

    Parameters
    ----------
    owner : str
        Who owns the parameter ("Section", "Member 3"...); "" for a solver option.
    name : str
        The parameter's name, shown in backquotes.
    positive, nonnegative, nonzero : bool
        Demand > 0, ≥ 0 or ≠ 0. Non-finite values are always refused.
    lower, upper : float, optional
        Demand ``lower ≤ value < upper``.
    allow_none : bool
        Pass ``None`` through.

    Raises
    ------
    TypeError
        ``value`` is not a real number (strings are not converted).
    ModelError
        ``value`` is not finite or outside the range asked for. A model parameter
        (``owner`` given) is worded "must be a finite positive number"; a solver
        option "must be positive".
    """
    if value is None and allow_none:
        return None
    who = f"{_prefix(owner)}`{name}`"
    if not is_real(value):
        raise TypeError(f"{who} must be a number, got {value!r}.")
    v = float(value)
    if owner:
        kind = ("positive" if positive else "non-negative" if nonnegative
                else "non-zero" if nonzero else "")
        bad = (not math.isfinite(v) or (positive and v <= 0.0) or (nonnegative and v < 0.0)
               or (nonzero and v == 0.0))
        if bad:
            raise ModelError(f"{who} must be a finite {kind + ' ' if kind else ''}number, got {value!r}.")
    else:
        if not math.isfinite(v):
            raise ModelError(f"{who} must be finite, got {value!r}.")
        for flag, word, fails in ((positive, "positive", v <= 0.0), (nonnegative, "non-negative", v < 0.0),
                                  (nonzero, "non-zero", v == 0.0)):
            if flag and fails:
                raise ModelError(f"{who} must be {word}, got {value!r}.")
    if lower is not None and v < lower:
        raise ModelError(f"{who} must be at least {lower}, got {value!r}.")
    if upper is not None and v >= upper:
        raise ModelError(f"{who} must be below {upper}, got {value!r}.")
    return v


def checked_integer(owner: str, name: str, value, *, lower: int | None = None,
                    upper: int | None = None, allow_none: bool = False):
    """``value`` as an int, checked; else a TypeError or ModelError naming it.

    Python and numpy integers pass, and so do floats with a whole value (``10.0``);
    ``2.5`` and non-finite values are a ModelError (never truncated, never an
    OverflowError); strings and bools are a TypeError.
    """
    if value is None and allow_none:
        return None
    who = f"{_prefix(owner)}`{name}`"
    if not is_real(value):
        raise TypeError(f"{who} must be an integer, got {value!r}.")
    if not isinstance(value, (numbers.Integral, np.integer)):
        v = float(value)
        if not math.isfinite(v) or v != math.floor(v):
            raise ModelError(f"{who} must be a whole number, got {value!r}.")
    v = int(value)
    if lower is not None and v < lower:
        raise ModelError(f"{who} must be at least {lower}, got {value!r}.")
    if upper is not None and v > upper:
        raise ModelError(f"{who} must be at most {upper}, got {value!r}.")
    return v


def checked_node(node, n_nodes: int, what: str, names=None) -> int:
    """A node id as an int, from an id or a node's name.

    Parameters
    ----------
    node : int or str
        A node id, or the name given to :meth:`Structure.node`.
    n_nodes : int
    what : str
        Who asks ("Member 3", "fix", "path.displacement").
    names : mapping of str to int, optional
        The structure's node names.

    Raises
    ------
    TypeError
        Neither an integer nor a string.
    ModelError
        An unknown id or name (the message names it and lists some known names).
    """
    if isinstance(node, str):
        if names and node in names:
            return int(names[node])
        known = sorted(names or ())
        listed = (f"; named nodes: {', '.join(map(repr, known[:MAX_LISTED]))}"
                  + (f" and {len(known) - MAX_LISTED} more" if len(known) > MAX_LISTED else "")
                  if known else "; the structure has no named nodes")
        raise ModelError(f"{what}: unknown node name {node!r}{listed}.")
    if isinstance(node, (bool, np.bool_)) or not isinstance(node, (numbers.Integral, np.integer)):
        raise TypeError(f"{what}: node id must be an integer, got {node!r} (a node is given by its id or its name).")
    if not 0 <= node < n_nodes:
        raise ModelError(f"{what}: unknown node {node!r} (the structure has {n_nodes} nodes).")
    return int(node)


#: Names listed in the message of an unknown name (a structure may name many nodes).
MAX_LISTED = 10
