"""Frictionless contact of nodes with rigid obstacles by the augmented Lagrangian.

Obstacles are a :class:`Line` (a half-plane: the admissible side is where its normal
points) and a :class:`Circle` (a round stop, touched from outside). Each contact pairs
one node with one obstacle; its gap g(x) is the signed distance of the node's current
position x from the obstacle, positive when apart:

    line:    g = n·(x − p),        ∇g = n,                ∇²g = 0;
    circle:  g = |x − c| − R,      ∇g = (x − c)/|x − c|,   ∇²g = (I − ∇g∇gᵀ)/|x − c|.

Method (augmented Lagrangian with Uzawa updates; Bertsekas 1982, *Constrained
Optimization and Lagrange Multiplier Methods*; Wriggers 2006, *Computational Contact
Mechanics*, §6.3; from memory). For a fixed multiplier λ ≥ 0 and penalty ε > 0 each
contact adds the potential (1/2ε)·(⟨λ − ε·g⟩² − λ²), ⟨·⟩ = max(·, 0), so inside
Newton the contact force on the node, its internal-force contribution and tangent are

    p = ⟨λ − ε·g⟩ ≥ 0,     f = −p·∇g,     K = ε·∇g∇gᵀ − p·∇²g   (where p > 0).

The global problem stays the stationary point of a potential, so K is symmetric and
the stability test of the total tangent keeps its meaning. After Newton converges
at a point the multiplier is updated λ ← p (:func:`updated_multipliers`) and the same
point is solved again, until every contact that carries force touches to within
``tol_gap``, |g| ≤ tol_gap where p > 0 (:func:`converged`, :func:`violation`; default
:data:`GAP_TOL` times a length); open contacts have g > 0 and p = 0 exactly. Each update shrinks the
penetration by about k/(k + ε), k the structure's stiffness at the node, so with
ε = :data:`PENALTY_FACTOR`·k a handful of updates reach 1e-8 of a length; the
converged state satisfies g ≥ −tol_gap, p ≥ 0 and p·|g| ≤ p·tol_gap. On unloading
a committed λ larger than needed holds the node off the obstacle (g > 0, p > 0);
the complementarity part of the test catches this, and the updates release it
(λ → 0 once the contact opens).

Events: :func:`event_value` is g − p/ε, continuous along a path, positive while the
contact is open and negative while it is closed; a sign change between two converged
points is a contact closing (+ → −) or opening (− → +).

Examples
--------
>>> obs = table([Line(point=(0.0, 0.0), normal=(0.0, 1.0))], [0])
>>> res = response(np.array([[0.0, 0.1]]), np.array([[0.0, -0.1001]]), obs,
...                lam=np.zeros(1), penalty=1e6)
>>> round(float(res.g[0]), 6), round(float(res.p[0]), 3), res.f[0].round(3).tolist()
(-0.0001, 100.0, [-0.0, -100.0])
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple, Sequence

import numpy as np

from ..errors import ModelError, checked_number

__all__ = ["Line", "Circle", "ObstacleTable", "Gap", "ContactResponse", "table", "gap",
           "response", "updated_multipliers", "converged", "violation", "event_value",
           "penalty_from_stiffness", "N_DOF", "NODE_DOFS", "GAP_TOL", "PENALTY_FACTOR",
           "MAX_UPDATES"]

N_DOF = 2
NODE_DOFS = (0, 1)
#: Accepted penetration, relative to a length of the structure: well below any
#: displacement of interest, well above the round-off of positions (1e-16 relative).
GAP_TOL = 1e-8
#: Penalty over the structure's own stiffness at the node: large enough that each
#: Uzawa update divides the penetration by about 1000, small enough to cost fewer than
#: three digits of the tangent's condition number.
PENALTY_FACTOR = 1e3
#: Uzawa updates per converged point before the stepper should cut the step.
MAX_UPDATES = 20


def _vector(name: str, value) -> np.ndarray:
    v = np.asarray(value)
    if v.dtype.kind not in "iuf":               # no string-to-number conversion
        raise TypeError(f"Obstacle `{name}` must be a pair of numbers, got {value!r}.")
    v = v.astype(float)
    if v.shape != (2,) or not np.all(np.isfinite(v)):
        raise ModelError(f"Obstacle `{name}` must be a finite 2-vector, got {value!r}.")
    return v


@dataclass(frozen=True, eq=False)
class Line:
    """Rigid half-plane bounded by the line through ``point``; ``normal`` points to the free side."""

    point: tuple
    normal: tuple

    def __post_init__(self) -> None:
        p, n = _vector("point", self.point), _vector("normal", self.normal)
        size = float(np.hypot(*n))
        if size == 0.0:
            raise ModelError(f"Obstacle `normal` must be non-zero, got {self.normal!r}.")
        object.__setattr__(self, "point", tuple(p))
        object.__setattr__(self, "normal", tuple(n / size))


@dataclass(frozen=True, eq=False)
class Circle:
    """Rigid disc of ``radius`` about ``centre``; nodes stay outside it."""

    centre: tuple
    radius: float

    def __post_init__(self) -> None:
        c = _vector("centre", self.centre)
        r = checked_number("Obstacle", "radius", self.radius, positive=True)
        object.__setattr__(self, "centre", tuple(c))
        object.__setattr__(self, "radius", r)


class ObstacleTable(NamedTuple):
    """Obstacle of each contact, arrays with contacts first."""

    circle: np.ndarray     #: True for a circle, False for a line, shape (n_contacts,)
    point: np.ndarray      #: a point of the line or the centre, shape (n_contacts, 2)
    normal: np.ndarray     #: unit normal of a line, shape (n_contacts, 2)
    radius: np.ndarray     #: radius of a circle (0 for a line), shape (n_contacts,)


class Gap(NamedTuple):
    g: np.ndarray          #: signed gap, shape (n_contacts,)
    n: np.ndarray          #: gradient ∇g (unit outward normal), shape (n_contacts, 2)
    H: np.ndarray          #: curvature ∇²g, shape (n_contacts, 2, 2)


class ContactResponse(NamedTuple):
    f: np.ndarray          #: internal force on the node (ux, uy), shape (n_contacts, 2)
    K: np.ndarray | None   #: tangent, shape (n_contacts, 2, 2)
    g: np.ndarray          #: gap, shape (n_contacts,)
    p: np.ndarray          #: normal contact force ≥ 0 (obstacle on node, along n), shape (n_contacts,)
    n: np.ndarray          #: outward normal ∇g, shape (n_contacts, 2)
    active: np.ndarray     #: p > 0, shape (n_contacts,)
    trial: np.ndarray      #: λ − ε·g, the force before the cut-off at zero, shape (n_contacts,)


def table(obstacles: Sequence, index) -> ObstacleTable:
    """Per-contact arrays from a list of obstacles and each contact's obstacle index."""
    index = np.asarray(index, dtype=int)
    if index.ndim != 1 or (len(index) and (index.min() < 0 or index.max() >= len(obstacles))):
        raise ModelError(f"Contact obstacle indices must lie in 0..{len(obstacles) - 1}, got {index!r}.")
    rows = []
    for ob in obstacles:
        if isinstance(ob, Line):
            rows.append((False, ob.point, ob.normal, 0.0))
        elif isinstance(ob, Circle):
            rows.append((True, ob.centre, (0.0, 0.0), ob.radius))
        else:
            raise ModelError(f"An obstacle must be a Line or a Circle, got {ob!r}.")
    rows = [rows[i] for i in index]
    return ObstacleTable(np.array([r[0] for r in rows], dtype=bool).reshape(-1),
                         np.array([r[1] for r in rows], dtype=float).reshape(-1, 2),
                         np.array([r[2] for r in rows], dtype=float).reshape(-1, 2),
                         np.array([r[3] for r in rows], dtype=float).reshape(-1))


def gap(obstacles: ObstacleTable, x: np.ndarray) -> Gap:
    """Gap, its gradient and curvature at current node positions ``x``, shape (n_contacts, 2)."""
    d = x - obstacles.point
    rho = np.hypot(d[:, 0], d[:, 1])
    safe = np.where(rho > 0.0, rho, 1.0)
    n_circle = np.where((rho > 0.0)[:, None], d / safe[:, None], [1.0, 0.0])
    circle = obstacles.circle
    n = np.where(circle[:, None], n_circle, obstacles.normal)
    g = np.where(circle, rho - obstacles.radius, np.einsum("ci,ci->c", d, obstacles.normal))
    eye = np.eye(2)[None]
    H = np.where(circle[:, None, None],
                 (eye - n[:, :, None] * n[:, None, :]) / safe[:, None, None], 0.0)
    return Gap(g, n, H)


def response(X: np.ndarray, u: np.ndarray, obstacles: ObstacleTable, lam, penalty,
             tangent: bool = True, bilateral=None) -> ContactResponse:
    """Contact forces and tangents of nodes at fixed multipliers.

    Parameters
    ----------
    X : ndarray, shape (n_contacts, 2)
        Undeformed position of each contact's node.
    u : ndarray, shape (n_contacts, 2)
        Displacement (ux, uy) of the node.
    obstacles : ObstacleTable
        Obstacle of each contact.
    lam : ndarray, shape (n_contacts,)
        Committed multipliers (contact force estimates) ≥ 0; zeros at the start.
    penalty : float or ndarray, shape (n_contacts,)
        Penalty ε > 0 (force per length), e.g. from :func:`penalty_from_stiffness`.
    tangent : bool
        Also compute the tangent.
    bilateral : ndarray of bool, shape (n_contacts,), optional
        Contacts held closed whatever the sign of their force (p = λ − ε·g may be
        negative): the closed side of the path continued, to locate where a contact
        opens (its force reaching zero).
    """
    gp = gap(obstacles, X + u)
    eps = np.broadcast_to(np.asarray(penalty, dtype=float), gp.g.shape)
    trial = lam - eps * gp.g
    active = trial > 0.0
    if bilateral is not None:
        active = active | np.asarray(bilateral, dtype=bool)
    p = np.where(active, trial, 0.0)
    f = -p[:, None] * gp.n
    K = None
    if tangent:
        K = np.where(active[:, None, None],
                     eps[:, None, None] * gp.n[:, :, None] * gp.n[:, None, :]
                     - p[:, None, None] * gp.H, 0.0)
    return ContactResponse(f, K, gp.g, p, gp.n, active, trial)


def updated_multipliers(res: ContactResponse) -> np.ndarray:
    """Uzawa update at a converged point: the new multipliers are the contact forces p."""
    return res.p.copy()


def violation(res: ContactResponse) -> np.ndarray:
    """Distance from the exact contact conditions per contact, shape (n_contacts,).

    |g| where the contact carries force (it must touch: p·g = 0) and 0 where it is
    open (p = 0 and g > 0, since g < 0 always gives p > 0).
    """
    return np.where(res.active, np.abs(res.g), 0.0)


def converged(res: ContactResponse, tol_gap: float) -> bool:
    """Whether every contact meets the exact conditions to within ``tol_gap`` (a length).

    Checks both non-penetration and complementarity: a multiplier left over from a
    previous point can hold a node off the obstacle (g > 0 with p > 0) while the
    structure unloads, which further updates must remove.
    """
    return bool(len(res.g) == 0 or np.max(violation(res)) <= tol_gap)


def event_value(res: ContactResponse, penalty) -> np.ndarray:
    """g − p/ε per contact: > 0 open, < 0 closed; its zeros are openings and closings."""
    eps = np.broadcast_to(np.asarray(penalty, dtype=float), res.g.shape)
    return res.g - np.divide(res.p, eps, out=np.zeros_like(res.g), where=eps > 0.0)


def penalty_from_stiffness(k_node, factor: float = PENALTY_FACTOR) -> np.ndarray:
    """Penalty ``factor``·k from the structure's translational stiffness k at each contact node.

    ``k_node`` is e.g. the larger diagonal entry of the global tangent at the node's
    ux, uy, shape (n_contacts,); it must be positive.
    """
    k = np.asarray(k_node, dtype=float)
    if np.any(~np.isfinite(k)) or np.any(k <= 0.0):
        raise ModelError(f"Stiffness `k_node` at contact nodes must be positive, got {k!r}.")
    return factor * k
