"""The discrete equilibrium problem r(u, λ) = λ·F_ref + F_const − f_int(u) on free DOFs.

Imposed displacements are eliminated: the imposed DOFs are not unknowns, the full
displacement vector holds them at λ·ū_ref + ū_const (:meth:`Problem.full`), so
f_int depends on λ through them too and ∂r/∂λ — the "load vector" ``Problem.F`` of
the bordered Newton and of every predictor — is F_ref − K_fp·ū_ref (free rows of
the tangent times the imposed motion per unit λ), updated at every evaluation with
a tangent, as the follower loads' F is.

A :class:`Problem` is a stepper's view of its model: residual and tangent as
functions of the free displacements and λ, evaluated with the history ``states``
that the stepper owns and hands it. It remembers its last evaluation, so the
work done at a converged point (forces, trial history, per-point data) is reused
instead of recomputed.
"""
from __future__ import annotations

import copy
import math

import numpy as np

from ..assembly import Assembly, Evaluation
from .predictor import chord_consistent

__all__ = ["Problem"]

_TINY = float(np.finfo(float).tiny)


class Problem:
    """Residual and tangent of a model as functions of free displacements and λ.

    Parameters
    ----------
    assembly : Assembly
    states : list, optional
        The groups' history to evaluate with (default: virgin).
    """

    def __init__(self, assembly: Assembly, states: list | None = None) -> None:
        self.assembly = assembly
        self.states = assembly.initial_states() if states is None else list(states)
        #: the reference loads over the free DOFs; with follower loads the ones at the
        #: last evaluated state
        self.F_loads = assembly.framed(assembly.F_ref)[assembly.free]
        #: ∂r/∂λ over the free DOFs: ``F_loads`` less K_fp·ū_ref of scaled imposed
        #: displacements, at the last state evaluated with its tangent
        self.F = self.F_loads
        self.F_const = assembly.framed(assembly.F_const)[assembly.free]
        # follower loads have a non-symmetric load stiffness
        self.symmetric = not assembly.has_followers
        self.const_factor = 1.0        # < 1 only while the constant loads are ramped in
        self.n_evaluations = 0
        L = assembly.length_scale
        # weights so that rotations count like displacements of the structure's size
        self.weights = np.where(assembly.free % 3 == 2, L, 1.0)
        self.length_scale = L
        self._last: tuple | None = None      # (u, lam, Evaluation) of the last evaluation

    @property
    def n(self) -> int:
        return self.assembly.n_free

    def full(self, u: np.ndarray, lam: float = 0.0) -> np.ndarray:
        """The full displacement vector (x, y) of the state (u, λ), imposed DOFs included."""
        return self.assembly.full(u, lam, self.const_factor)

    def external(self, lam: float) -> np.ndarray:
        return lam * self.F_loads + self.const_factor * self.F_const

    def with_states(self, states: list) -> "Problem":
        """The same problem evaluated with other history (counters shared by value)."""
        p = copy.copy(self)
        p.states, p._last = list(states), None
        return p

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state["_last"] = None             # a cache of the last evaluation
        return state

    def residual(self, u: np.ndarray, lam: float, tangent: bool = True):
        """Return ``(r, K, scale)``: residual (n_free,), tangent, and force yardstick.

        ``scale`` is the larger of the internal force level and the applied load, so
        the relative residual test has a floor set by round-off in the element forces,
        not by a tiny applied load at the start of a path.
        """
        self.n_evaluations += 1
        a = self.assembly
        uf = self.full(u, lam)
        ev = a.evaluate(uf, self.states, tangent, lam, self.const_factor)
        if a.has_followers:
            F_ref, F_const = a.external(uf)
            self.F_loads, self.F_const = a.framed(F_ref)[a.free], a.framed(F_const)[a.free]
            self.F = self.F_loads
        if ev.Ku_ref is not None:
            self.F = self.F_loads - ev.Ku_ref[a.free]
        ext = self.external(lam)
        r = ext - ev.f[a.free]
        scale = max(ev.scale, math.sqrt(float(ext @ ext)), _TINY)
        self._last = (u.copy(), float(lam), ev)
        return r, ev.K, scale

    def evaluation(self, u: np.ndarray, lam: float) -> Evaluation:
        """The evaluation at (u, λ): the last one if it was there, else a new one."""
        last = self._last
        if last is None or last[1] != lam or not np.array_equal(last[0], u):
            self.residual(u, lam, tangent=False)
        return self._last[2]

    def record(self, u: np.ndarray, lam: float) -> dict:
        """Per-point data worth keeping at a converged (u, λ) (see ``Assembly.record``)."""
        return self.assembly.record(self.evaluation(u, lam))

    def moved(self, u: np.ndarray, du: np.ndarray, lam: float = 0.0, dlam: float = 0.0) -> np.ndarray:
        """``u + du`` with the beams' chords kept whole to first order in ``du``
        (:func:`~largerot.solvers.predictor.chord_consistent`), where every group
        allows it (``Group.chord_fit``; not with contacts). ``lam`` and ``dlam`` move
        the imposed DOFs along (from λ to λ + Δλ)."""
        if not all(g.chord_fit for g in self.assembly.groups):
            return u + du
        return chord_consistent(self.assembly, u, u + du, lam, lam + dlam, self.const_factor)

    def norm(self, du: np.ndarray) -> float:
        """Weighted displacement norm (rotations scaled by the structure's size)."""
        w = du * self.weights
        return math.sqrt(float(w @ w))        # np.linalg.norm's checks cost more than this
