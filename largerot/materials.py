"""Uniaxial elastic–linear-hardening (bilinear) material with kinematic hardening.

Return mapping of one-dimensional rate-independent plasticity with a linear
kinematic hardening rule (Simo & Hughes 1998, *Computational Inelasticity*, §1.4;
from memory). With plastic strain εp and back stress α = H·εp:

    σ = E·(ε − εp),    yield function  f = |σ − α| − fy ≤ 0,

and a trial state that violates f ≤ 0 is returned to the yield surface in closed form,
Δγ = f_trial/(E + H). The consistent (algorithmic) tangent is E where the step is
elastic and E·H/(E + H) where it is plastic; in 1D it equals the continuum one.

``H`` is the *plastic* hardening modulus (slope of σ against εp); the slope of σ
against total strain after yield is Et = E·H/(E + H). H = 0 is perfectly plastic.
Kinematic hardening gives the Bauschinger effect: the elastic range keeps its width
2·fy and travels with the back stress.

State is a :class:`MaterialState` of plain arrays, one entry per fibre. Nothing is
modified in place: :func:`return_map` takes the *committed* state and returns a new
*trial* state, which the caller keeps only once the structure is in equilibrium.
Discarding a trial state (a cut step, a failed Newton iteration) therefore needs no
undo.

Examples
--------
>>> steel = Bilinear(E=200e9, fy=250e6, H=2e9)
>>> st = steel.initial_state(3)
>>> sigma, Et, trial = steel.stress(np.array([1e-3, 2e-3, -4e-3]), st)
>>> (sigma / 1e6).round(3).tolist()
[200.0, 251.485, -255.446]
>>> bool(trial.eps_p[2] < 0.0), float(Et[0]) == steel.E
(True, True)
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from .errors import checked_number

__all__ = ["Bilinear", "MaterialState", "return_map", "initial_state", "yielding"]


class MaterialState(NamedTuple):
    """History variables of a set of fibres; all arrays of one shape.

    ``eps_p`` is the plastic strain (the back stress is H·eps_p). ``acc`` is the
    accumulated plastic strain Σ|Δεp| ≥ 0, never decreasing; it does not enter the
    stress and serves for reporting how far yielding has spread (``acc > 0``).
    """

    eps_p: np.ndarray
    acc: np.ndarray


def initial_state(shape) -> MaterialState:
    """Virgin state (no plastic strain) of fibres of the given array shape."""
    return MaterialState(np.zeros(shape), np.zeros(shape))


def return_map(strain, state: MaterialState, E, fy, H):
    """Stress, tangent modulus and trial state of bilinear kinematic-hardening fibres.

    Parameters
    ----------
    strain : ndarray, any shape S
        Total strain of each fibre.
    state : MaterialState
        Committed history, arrays of shape S.
    E, fy, H : float or ndarray broadcastable to S
        Young's modulus, yield stress and plastic hardening modulus.

    Returns
    -------
    sigma : ndarray, shape S
        Stress.
    Et : ndarray, shape S
        Consistent tangent dσ/dε.
    trial : MaterialState
        History after this strain increment; commit it only at converged points.
    """
    strain = np.asarray(strain, dtype=float)
    sigma_tr = E * (strain - state.eps_p)
    xi = sigma_tr - H * state.eps_p                 # relative stress σ − α
    f = np.abs(xi) - fy
    plastic = f > 0.0
    dgamma = np.where(plastic, f, 0.0) / (E + H)
    sign = np.sign(xi)
    sigma = sigma_tr - E * dgamma * sign
    Et = np.where(plastic, E * H / (E + H), E) * np.ones_like(strain)
    trial = MaterialState(state.eps_p + dgamma * sign, state.acc + dgamma)
    return sigma, Et, trial


def yielding(trial: MaterialState, committed: MaterialState) -> np.ndarray:
    """Fibres that flow plastically in the increment from ``committed`` to ``trial``."""
    return trial.acc > committed.acc


def _check(name: str, value, *, positive: bool) -> float:
    return checked_number("Material", name, value, positive=positive, nonnegative=not positive)


@dataclass(frozen=True)
class Bilinear:
    """Elastic–linear-kinematic-hardening uniaxial material.

    Parameters
    ----------
    E : float
        Young's modulus.
    fy : float
        Initial yield stress.
    H : float, optional
        Plastic hardening modulus (dσ/dεp); 0 (default) is perfectly plastic.
    """

    E: float
    fy: float
    H: float = 0.0

    def __post_init__(self) -> None:
        object.__setattr__(self, "E", _check("E", self.E, positive=True))
        object.__setattr__(self, "fy", _check("fy", self.fy, positive=True))
        object.__setattr__(self, "H", _check("H", self.H, positive=False))

    @property
    def eps_y(self) -> float:
        """First-yield strain fy/E from the virgin state."""
        return self.fy / self.E

    @property
    def Et(self) -> float:
        """Slope of stress against total strain while yielding, E·H/(E + H)."""
        return self.E * self.H / (self.E + self.H)

    initial_state = staticmethod(initial_state)

    def stress(self, strain, state: MaterialState):
        """``(sigma, Et, trial_state)`` of fibres at ``strain``; see :func:`return_map`."""
        return return_map(strain, state, self.E, self.fy, self.H)
