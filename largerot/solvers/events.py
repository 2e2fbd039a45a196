"""Events along a path: plain functions of a converged point, located by root finding.

Two sources, one rule:

* the element groups contribute :class:`~largerot.groups.EventFunction` objects, each
  a quantity of a point's record crossing zero (first yield, a contact closing or
  opening, a cable going slack or taut);
* the user passes functions ``f(point) -> float`` (``trace(..., events=[f])``), as
  in scipy's ``solve_ivp``: optional attributes ``terminal`` (end the trace there)
  and ``direction`` (+1 only rising crossings, −1 only falling, 0 both).

A sign change between two converged points a and b is located by Brent's method on
the path between them (:class:`~largerot.solvers.critical.Bracket`: each trial σ is
corrected onto the path with the history of point a), so an event's load factor
does not depend on the step size. A search that fails falls back to the linear
interpolation of the values between a and b, and says so in the event's detail.
"""
from __future__ import annotations

import logging
from dataclasses import dataclass
from typing import Callable

import numpy as np

from .critical import Bracket, NoPoint

__all__ = ["UserEvent", "user_events", "Crossing", "crossings", "locate_crossings", "EVENT_SIGMA_TOL"]

log = logging.getLogger(__name__)

#: Bracket width in σ at which an event search stops: λ to ~1e-10 of the step.
EVENT_SIGMA_TOL = 1e-10
#: Crossings of one kind located by root finding between two points; the rest (a
#: whole member landing on a wall at once) are interpolated, to bound the work.
MAX_LOCATED = 8


@dataclass(frozen=True)
class UserEvent:
    """A user's event function with its options read off (kind = its name)."""

    fun: Callable
    kind: str
    terminal: bool = False
    direction: int = 0

    def values(self, point) -> float:
        v = float(self.fun(point))
        if not np.isfinite(v):
            raise ValueError(f"Event function {self.kind!r} returned {v!r} at point {point.index}; "
                             "it must return a finite number.")
        return v


def user_events(functions) -> tuple:
    """Validate ``events=`` of :func:`~largerot.trace` into UserEvent objects."""
    if functions is None:
        return ()
    if callable(functions):
        functions = [functions]
    out = []
    for f in functions:
        if not callable(f):
            raise TypeError(f"Each event must be a function of a point returning a number, got {f!r}.")
        d = getattr(f, "direction", 0)
        if d not in (-1, 0, 1):
            raise ValueError(f"Event {getattr(f, '__name__', f)!r}: `direction` must be -1, 0 or +1, got {d!r}.")
        out.append(UserEvent(f, getattr(f, "__name__", "event"), bool(getattr(f, "terminal", False)),
                             int(d)))
    return tuple(out)


@dataclass(frozen=True)
class Crossing:
    """One item of one event function changing sign between two points."""

    event: object            #: EventFunction or UserEvent
    item: int
    f_a: float
    f_b: float

    @property
    def terminal(self) -> bool:
        return bool(getattr(self.event, "terminal", False))

    @property
    def detail(self) -> str:
        return self.event.label(self.item) if hasattr(self.event, "label") else ""


def _user_hit(e: UserEvent, a: float, b: float) -> bool:
    rising, falling = a < 0.0 <= b, a > 0.0 >= b
    return (rising and e.direction >= 0) or (falling and e.direction <= 0)


def crossings(group_events, users, rec_a: dict, rec_b: dict, point_a, point_b) -> list:
    """Every event crossing between two consecutive converged points."""
    out = []
    for e in group_events:
        va, vb = e.values(rec_a), e.values(rec_b)
        out += [Crossing(e, int(k), float(va[k]), float(vb[k])) for k in e.crossings(rec_a, rec_b)]
    for e in users:
        a, b = e.values(point_a), e.values(point_b)
        if _user_hit(e, a, b):
            out.append(Crossing(e, 0, a, b))
    return out


def locate_crossings(found: list, bracket_for, point_at, lam_a: float, lam_b: float) -> list:
    """Load factor (and σ) of each crossing, by root finding along its bracket.

    ``bracket_for(event)`` gives the :class:`Bracket` to search on (the path as the
    event's group continues it from the side before the event), or None where there
    is no path to follow between the points (a slack start): the values are then
    interpolated. ``point_at(res)`` makes the Point a user's event function takes.
    Records are cached by bracket and σ. Returns ``(crossing, sigma, lam, located)``.
    """
    records: dict[tuple, tuple] = {}

    def value(c: Crossing, br: Bracket, sigma: float) -> float:
        key = (id(br), sigma)
        if key not in records:
            res = br.solve(sigma)
            records[key] = (res, br.problem.record(res.u, res.lam), None)
        res, rec, pt = records[key]
        if hasattr(c.event, "key"):
            return float(c.event.locate_values(rec)[c.item])
        if pt is None:
            pt = point_at(res)
            records[key] = (res, rec, pt)
        return c.event.values(pt)

    out, per_kind = [], {}
    dlam = lam_b - lam_a
    for c in found:
        n = per_kind[c.event] = per_kind.get(c.event, 0) + 1
        t = c.f_a / (c.f_a - c.f_b)                       # linear interpolation fallback
        sigma, located = t, False
        br = bracket_for(c.event)
        if br is not None and n <= MAX_LOCATED:
            try:
                f_a, f_b = c.f_a, c.f_b
                if hasattr(c.event, "key"):            # the searched values at the ends
                    f_a, f_b = value(c, br, 0.0), value(c, br, 1.0)
                sigma = br.root(lambda s, c=c, br=br: value(c, br, s), f_a, f_b, EVENT_SIGMA_TOL)
                located = True
            except (NoPoint, ValueError, RuntimeError) as exc:
                log.info("event %r between λ = %.6g and %.6g not located: %s", c.event.kind,
                         lam_a, lam_a + dlam, exc)
        if located and 0.0 < sigma < 1.0:
            lam = br.solve(sigma).lam
        else:
            lam = lam_a + sigma * dlam
        out.append((c, float(sigma), float(lam), located))
    return out
