"""The motion: what a transient run (:func:`largerot.transient`) returns."""
from __future__ import annotations

import numpy as np

from .results import EquilibriumPath, Point, _Displacements
from .snapshot import Model

__all__ = ["Motion"]


class Motion(_Displacements):
    """The computed motion of a structure: one row per converged time step.

    Attributes
    ----------
    structure : Model
        The frozen model integrated (also ``motion.model``).
    times : ndarray, shape (n_steps,)
        Time of each row; row 0 is the start.
    load_factor : ndarray, shape (n_steps,)
        λ(t) at each row.
    iterations : ndarray of int, shape (n_steps,)
        Newton iterations of each step (0 for the start).
    kinetic : ndarray, shape (n_steps,)
        Kinetic energy ½·vᵀ·M·v.
    strain : ndarray, shape (n_steps,)
        Work of the internal forces since the start, ∫ f_int·du over the free DOFs
        (trapezoidal rule per step). For an elastic structure it is the strain
        energy gained since the start, to O(Δt²); with yielding fibres it includes
        the plastic work.
    external : ndarray, shape (n_steps,)
        Work of the applied loads since the start, ∫ F·du (trapezoidal rule).
    damping : ndarray, shape (n_steps,)
        Energy taken by the Rayleigh damping: the work of the damping forces the
        scheme applied, Σ Δu·C·v₁₋αf (∫ vᵀ·C·v dt to O(Δt²)).
    status, status_code, message
        As for paths (:data:`largerot.STATUS`): ``"target"`` when the end time was
        reached, ``"failed"``, ``"max_steps"`` or ``"interrupted"``.
    counters : dict
        Steps, step cuts, Newton iterations, factorisations, residual evaluations.
    options : dict
        ρ∞, dt, min_dt, lumped, the Rayleigh coefficients, duration, the start.
    """

    #: what :func:`largerot.save` writes it as
    saved_kind = "motion"

    def __init__(self, structure: Model, free, *, times, load_factor, u_free, v_free, a_free,
                 iterations, kinetic, strain, external, damping, status: str, message: str,
                 status_code: int, counters=None, options=None) -> None:
        self.structure = structure.snapshot()
        self.free = np.asarray(free)
        self.times = np.asarray(times, dtype=float)
        n = len(self.times)
        self.load_factor = np.asarray(load_factor, dtype=float)
        self._u_free = np.asarray(u_free, dtype=float).reshape(n, len(self.free))
        self._v_free = np.asarray(v_free, dtype=float).reshape(n, len(self.free))
        self._a_free = np.asarray(a_free, dtype=float).reshape(n, len(self.free))
        self.iterations = np.asarray(iterations, dtype=int)
        self.kinetic = np.asarray(kinetic, dtype=float)
        self.strain = np.asarray(strain, dtype=float)
        self.external = np.asarray(external, dtype=float)
        self.damping = np.asarray(damping, dtype=float)
        self.status, self.message, self.status_code = status, message, int(status_code)
        self.counters = dict(counters or {})
        self.options = dict(options or {})
        self._u_full = None

    def __len__(self) -> int:
        return len(self.times)

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state["_u_full"] = None           # a cache, rebuilt on demand
        return state

    def __repr__(self) -> str:
        t = self.times[-1] if len(self) else 0.0
        return f"<Motion: {len(self)} steps to t = {t:.6g}, status {self.status!r}>"

    @property
    def model(self) -> Model:
        return self.structure

    @property
    def success(self) -> bool:
        """True for a run that ended well (any positive status code)."""
        return self.status_code > 0

    # -- states ----------------------------------------------------------------------------
    @property
    def u(self) -> np.ndarray:
        """Full displacement vectors (x, y), shape (n_steps, 3·n_nodes)."""
        if self._u_full is None:
            self._u_full = self.structure.expanded(self.free, self._u_free, self.load_factor)
        return self._u_full

    @property
    def velocities(self) -> np.ndarray:
        """Full velocity vectors, shape (n_steps, 3·n_nodes) (zero on restrained DOFs)."""
        return self.structure.expanded(self.free, self._v_free)

    @property
    def accelerations(self) -> np.ndarray:
        """Full acceleration vectors, shape (n_steps, 3·n_nodes)."""
        return self.structure.expanded(self.free, self._a_free)

    def displacement(self, node: int | str, dof: str) -> np.ndarray:
        """One DOF (``"ux"``, ``"uy"``, ``"rz"``) of one node over time, shape (n_steps,)."""
        return self.u[:, self._column(node, dof)].copy()

    def velocity(self, node: int | str, dof: str) -> np.ndarray:
        """One DOF's velocity over time, shape (n_steps,)."""
        return self.velocities[:, self._column(node, dof)].copy()

    def coordinates(self, i: int) -> np.ndarray:
        """Deformed node positions at row ``i``, shape (n_nodes, 2)."""
        return self.structure.xy + self.u[self._index(i)].reshape(-1, 3)[:, :2]

    def point(self, i: int) -> Point:
        """Row ``i`` as a :class:`~largerot.results.Point` (its load factor is λ(t))."""
        k = self._index(i)
        return Point(self.structure, k, self.load_factor[k], self.u[k], int(self.iterations[k]))

    def _index(self, i) -> int:
        return EquilibriumPath._index(self, i)

    # -- energies ----------------------------------------------------------------------------
    @property
    def total_energy(self) -> np.ndarray:
        """Kinetic energy plus the internal work since the start, shape (n_steps,)."""
        return self.kinetic + self.strain

    @property
    def dissipated(self) -> np.ndarray:
        """Energy the time integration removed, shape (n_steps,): the work of the loads
        less the gain of kinetic energy, the internal work and the damping's share.
        Zero (to the quadrature's O(Δt²)) with ``rho_inf=1`` and no damping."""
        return self.external - (self.kinetic - self.kinetic[0]) - self.strain - self.damping

    # -- views --------------------------------------------------------------------------
    def as_path(self) -> EquilibriumPath:
        """The motion as a path whose "load factor" column is the time, for the tools
        that take a path (``lr.widgets.explore``, the figures of ``lr.plotting``).

        Its readouts name the column "load factor"; it holds t. Imposed displacements
        scaled by λ are placed from that column, so a model with them shows its
        supports where λ = t would put them.
        """
        n = len(self)
        return EquilibriumPath(self.structure, self.free, self.times, self._u_free,
                               self.iterations, [np.array([])] * n, np.zeros(n, dtype=int),
                               self.status, self.message, status_code=self.status_code,
                               counters=self.counters)

    def plot(self, node: int | str, dof: str, path: EquilibriumPath | None = None, ax=None):
        """The motion of one DOF over time beside the static path (:func:`largerot.motion_plot.landing`)."""
        from .motion_plot import landing
        return landing(self, node, dof, path=path, ax=ax)
