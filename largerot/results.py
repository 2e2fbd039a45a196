"""The equilibrium path: what a trace returns."""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .errors import ModelError, checked_integer
from .elements import beam as beam_kernel, releases
from .model import DOFS, dof_index
from .snapshot import Model

__all__ = ["EquilibriumPath", "Point", "CriticalPoint", "Event"]


@dataclass
class CriticalPoint:
    """A point where the tangent becomes singular along the path.

    Attributes
    ----------
    kind : str
        ``"limit"`` (the critical mode has a component along the reference load) or
        ``"bifurcation"`` (it has none).
    load_factor : float
    index : int
        The path point before it.
    u : ndarray, shape (3·n_nodes,)
        Displacements at the critical point.
    mode : ndarray, shape (3·n_nodes,)
        Critical mode (null vector of the tangent), largest translation 1.
    located : bool
        False when the search failed and the values are interpolated.
    load_cosine : float
        |mode·F| / (|mode|·|F|) over the free DOFs, the basis of ``kind``.
    """

    kind: str
    load_factor: float
    index: int
    u: np.ndarray = field(repr=False)
    mode: np.ndarray = field(repr=False)
    located: bool = True
    load_cosine: float = float("nan")


@dataclass
class Event:
    """Something that happened between two points of a path.

    Attributes
    ----------
    kind : str
        ``"first yield"``, ``"contact closes"``, ``"contact opens"``, ``"cable slack"``,
        ``"cable taut"``, or the name of a user's event function.
    index : int
        The path point before it.
    load_factor : float
        Where it happened, located by root finding on the path between the two
        points (:mod:`largerot.solvers.events`).
    detail : str
        Which node or element.
    """

    kind: str
    index: int
    load_factor: float
    detail: str = ""


class _Displacements:
    """Shared look-ups of node displacements in a full DOF vector or stack of them."""

    structure: Model

    def _column(self, node: int | str, dof: str) -> int:
        node = self.structure.node_id(node, "displacement")
        return 3 * node + dof_index(dof)


class Point(_Displacements):
    """One converged point of a path, as handed to ``stop`` and ``callback``.

    Attributes
    ----------
    structure : Model
        The frozen model of the trace.
    index : int
    load_factor : float
    u : ndarray, shape (3·n_nodes,)
        Full displacement vector (restrained DOFs zero).
    iterations : int
    """

    def __init__(self, structure: Model, index: int, load_factor: float,
                 u: np.ndarray, iterations: int = 0) -> None:
        self.structure, self.index, self.load_factor = structure, index, float(load_factor)
        self.u, self.iterations = u, iterations

    def displacement(self, node: int | str, dof: str) -> float:
        """One DOF (``"ux"``, ``"uy"``, ``"rz"``) of one node (id or name) at this point."""
        return float(self.u[self._column(node, dof)])

    def coordinates(self) -> np.ndarray:
        """Deformed node positions, shape (n_nodes, 2)."""
        return self.structure.xy + self.u.reshape(-1, 3)[:, :2]

    def __repr__(self) -> str:
        return f"Point(index={self.index}, load_factor={self.load_factor:.6g})"


class EquilibriumPath(_Displacements):
    """A traced equilibrium path: point 0 is the unloaded state.

    Attributes
    ----------
    load_factor : ndarray, shape (n_points,)
    iterations : ndarray of int, shape (n_points,)
        Newton iterations of each point (0 for point 0).
    residuals : list of ndarray
        Relative residual after each iteration, per point.
    n_negative : ndarray of int, shape (n_points,)
        Negative eigenvalues of the tangent at each point.
    structure : Model
        The frozen model the path was traced on (also ``path.model``): editing the
        Structure afterwards changes nothing here.
    status : str
        A word of :data:`largerot.solvers.status.STATUS`.
    status_code : int
        Its code: negative for a failure, positive for a trace that ended well.
    message : str
    critical_points : list of CriticalPoint
    counters : dict
        Residual evaluations, factorisations, step cuts.
    arc_length : ndarray, shape (n_points,)
        Cumulative length of the path's polygon in (u, λ), with rotations weighed by
        the structure's size and λ by the linear displacement response per unit λ;
        zero at point 0 (NaN when not recorded).
    """

    #: what :func:`largerot.save` writes it as
    saved_kind = "path"

    def __init__(self, structure: Model, free: np.ndarray, load_factor, u_free,
                 iterations, residuals, n_negative, status: str, message: str,
                 critical_points=None, counters=None, extra=None, arc_length=None,
                 events=None, status_code: int = 0) -> None:
        self.structure = structure.snapshot()
        self.status_code = int(status_code)
        self.free = np.asarray(free)
        self.load_factor = np.asarray(load_factor, dtype=float)
        # width given, so that a path of zero points has a shape too
        self._u_free = np.asarray(u_free, dtype=float).reshape(len(self.load_factor), len(self.free))
        self.iterations = np.asarray(iterations, dtype=int)
        self.residuals = list(residuals)
        self.n_negative = np.asarray(n_negative, dtype=int)
        self.status, self.message = status, message
        self.critical_points = list(critical_points or [])
        self.events = list(events or [])
        self.counters = dict(counters or {})
        self.extra = dict(extra or {})
        self.arc_length = (np.full(len(self.load_factor), np.nan) if arc_length is None
                           else np.asarray(arc_length, dtype=float))
        self._u_full = None

    # -- basic access -----------------------------------------------------------
    def __len__(self) -> int:
        return len(self.load_factor)

    @property
    def model(self) -> Model:
        return self.structure

    @property
    def success(self) -> bool:
        """True for a trace that ended well: any positive status code.

        That is every status but ``"failed"``: ``"target"``, ``"stopped"``,
        ``"event"``, ``"limit"`` (load control stopped at a limit point, as it
        should), ``"interrupted"`` and also ``"max_steps"`` (the number of steps
        asked for was taken, whether or not a goal was reached). To know whether a
        target load factor was reached, test ``path.status == "target"``.
        """
        return self.status_code > 0

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state["_u_full"] = None           # a cache, rebuilt on demand
        return state

    @property
    def stable(self) -> np.ndarray:
        """True where the tangent has no negative eigenvalue, shape (n_points,).

        A static check (``n_negative == 0``). For a symmetric tangent (conservative
        loads) that is stability. For a non-symmetric tangent (follower loads) it
        finds divergence only — a real eigenvalue through zero — and not flutter, a
        growing oscillation that a static analysis cannot see (it needs the masses):
        a follower-loaded point marked stable may still be unstable by flutter.
        """
        return self.n_negative == 0

    @property
    def u(self) -> np.ndarray:
        """Full displacement vectors, shape (n_points, 3·n_nodes)."""
        if self._u_full is None:
            # imposed DOFs at λ·ū_ref + ū_const, inclined rollers' motion in x and y
            self._u_full = self.structure.expanded(self.free, self._u_free, self.load_factor)
        return self._u_full

    def displacement(self, node: int | str, dof: str) -> np.ndarray:
        """One DOF of one node (id or name) at every point, shape (n_points,).

        Its label, with the unit: ``path.model.dof_label(node, dof)``.
        """
        return self._u_free_column(self._column(node, dof))

    def _u_free_column(self, g: int) -> np.ndarray:
        m = self.structure
        if len(m.imposed) or len(m.inclined_nodes):
            return self.u[:, g].copy()
        j = np.searchsorted(self.free, g)
        if j < len(self.free) and self.free[j] == g:
            return self._u_free[:, j].copy()
        return np.zeros(len(self))

    def _index(self, i) -> int:
        """Point ``i`` as an index in 0..n_points−1 (negative counts from the end)."""
        i = checked_integer("", "i", i)
        if not -len(self) <= i < len(self):
            raise ModelError(f"Point index {i} is out of range: the path has {len(self)} points"
                             + (f" (0..{len(self) - 1}, or negative from the end)." if len(self) else "."))
        return i % len(self)

    def point(self, i: int) -> Point:
        i = self._index(i)
        return Point(self.structure, i, self.load_factor[i], self.u[i], int(self.iterations[i]))

    def __getitem__(self, i: int) -> Point:
        return self.point(i)

    def coordinates(self, i: int) -> np.ndarray:
        """Deformed node positions at point ``i``, shape (n_nodes, 2)."""
        return self.point(i).coordinates()

    # -- shapes for drawing -------------------------------------------------------
    def shape(self, i: int, n_sub: int = 9) -> dict:
        """Deformed member lines at point ``i`` for drawing.

        Returns
        -------
        dict
            ``"beam"``: shape (n_beam_elements, n_sub, 2), the cubic deflected curves;
            ``"bar"``: shape (n_bar_elements, 2, 2), straight chords.
        """
        u = self.u[self._index(i)]
        n_sub = checked_integer("", "n_sub", n_sub, lower=2)
        return member_lines(self.structure, u, n_sub)

    # -- member forces --------------------------------------------------------------
    def member_forces(self, i: int | None = None) -> dict:
        """End forces of every element at point ``i`` (all points when None).

        Returns
        -------
        dict
            ``"beam"``: ``"N"`` (tension positive) and ``"V"`` (= dM/ds), shape
            (n_beam_elements,), and ``"M"`` at both ends, shape (n_beam_elements, 2),
            positive when it stretches the element's right-hand side seen from end 1
            toward end 2; ``"bar"``: ``"N"`` and ``"slack"``, shape (n_bar_elements,),
            cable segments included. With ``i=None`` every array gains a leading
            axis of length n_points. Recomputed from the stored displacements.
        """
        asm = self.structure.assembly
        if i is not None:
            i = self._index(i)
            return asm.element_forces(self.u[i], self._record(i))
        each = [asm.element_forces(u, self._record(j)) for j, u in enumerate(self.u)]
        return {k: {name: np.array([f[k][name] for f in each]) for name in each[0][k]}
                for k in ("beam", "bar")} if each else {}

    def _record(self, i: int) -> dict:
        """What the trace recorded at point ``i`` (history-dependent forces among it)."""
        return {k: v[i] for k, v in self.extra.items()}

    def reaction_vector(self, i: int) -> np.ndarray:
        """Support reactions at point ``i`` as a full DOF vector, shape (3·n_nodes,).

        The force (moment at ``"rz"``) each restrained DOF receives from its
        support: internal force minus the loads applied there; zero at free DOFs
        and at rotations dropped for want of a beam. Imposed DOFs
        (``Structure.impose``) are restrained: their entry is the force (moment)
        that holds the imposed motion. At an inclined roller both x and y entries
        hold the roller's force, which is normal to its direction
        (:meth:`inclined_reactions` gives its size). :meth:`reactions` gives the
        same numbers as a labelled table.
        """
        asm = self.structure.assembly
        i = self._index(i)
        u = self.u[i]
        f = asm.internal_force(u, self._record(i))
        F_ref, F_const = asm.external(u)
        R = f - self.load_factor[i] * F_ref - F_const
        Rn = self._normal_part(R)
        R[asm.free] = 0.0
        R[asm.dropped] = 0.0
        nodes = self.structure.inclined_nodes
        if len(nodes):
            d = self.structure.inclined_direction
            R[3 * nodes], R[3 * nodes + 1] = -d[:, 1] * Rn, d[:, 0] * Rn
        return R

    def reactions(self, i: int):
        """Support reactions at point ``i`` as a table (pandas DataFrame), one row per
        restrained DOF.

        Columns: ``"node"`` (id), ``"name"`` (the node's name, "" when unnamed),
        ``"dof"`` (the restrained DOF, ``"ux"``, ``"uy"`` or ``"rz"``), ``"force"``
        (its component, ``"fx"``, ``"fy"`` or ``"mz"``), ``"value"`` (what the
        support exerts on the structure) and ``"unit"`` (the structure's force or
        moment unit). Rotations restrained at a node without a beam carry nothing
        and are left out. For the bare array (all DOFs): :meth:`reaction_vector`.
        """
        import pandas as pd

        R = self.reaction_vector(i)
        model = self.structure
        # supports and imposed DOFs; an inclined roller's force is in x and y
        rollers = np.concatenate([3 * model.inclined_nodes, 3 * model.inclined_nodes + 1])
        g = np.setdiff1d(np.union1d(np.union1d(model.fixed, model.imposed), rollers),
                         model.assembly.dropped).astype(np.int64)
        node, d = g // 3, g % 3
        names = model._names_of_nodes()
        forces = ("fx", "fy", "mz")
        return pd.DataFrame({
            "node": node,
            "name": [names.get(int(n), "") for n in node],
            "dof": [DOFS[k] for k in d],
            "force": [forces[k] for k in d],
            "value": R[g],
            "unit": [model.units.reaction_unit(forces[k]) for k in d],
        })

    def _normal_part(self, R: np.ndarray) -> np.ndarray:
        d = self.structure.inclined_direction
        nodes = self.structure.inclined_nodes
        return -d[:, 1] * R[3 * nodes] + d[:, 0] * R[3 * nodes + 1]

    def inclined_reactions(self, i: int) -> np.ndarray:
        """Force of each inclined roller on its node at point ``i``, shape (n_inclined,).

        The component along the roller's normal n = (−dy, dx) (its direction turned
        by +90°), one value per node of ``path.model.inclined_nodes``; in x and y it
        is n times this value (:meth:`reactions`).
        """
        return self._normal_part(self.reaction_vector(i))

    @property
    def yielded(self) -> np.ndarray:
        """Area fraction of each fibre-beam section point that has yielded.

        Shape (n_points, n_fibre_elements, n_section_points); empty without fibre beams.
        """
        return np.asarray(self.extra.get("yielded", np.zeros((len(self), 0, 0))))

    @property
    def contact_forces(self) -> np.ndarray:
        """Force of each contact on its node at each point, shape (n_points, n_contacts)."""
        return np.asarray(self.extra.get("contact_force", np.zeros((len(self), 0))))

    @property
    def slack(self) -> np.ndarray:
        """Which cable segments are slack at each point, shape (n_points, n_cable_elements)."""
        if "slack" in self.extra:
            return np.asarray(self.extra["slack"], dtype=bool)
        return np.zeros((len(self), 0), dtype=bool)

    def forces_table(self, i: int):
        """Element end forces at point ``i``, one row per element (pandas DataFrame).

        Columns: ``"kind"``, ``"member"`` (its name, or "member 2"), ``"node_1"``,
        ``"node_2"`` (ids), then the forces with the structure's units in their
        names (SI: ``"N [N]"``, ``"V [N]"``, ``"M_1 [N·m]"``, ``"M_2 [N·m]"``;
        N tension positive, M as in :meth:`member_forces`) and ``"slack"``.
        """
        import pandas as pd

        f = self.member_forces(i)
        model = self.structure
        beam_nodes, _ = model.element_table("beam")
        bar_nodes, _ = model.element_table("bar")
        cable = model.tension_only()
        force, moment = model.units.label("N", "force")[1:], model.units.label("M", "moment")[1:]
        rows = {
            "kind": ["beam"] * len(beam_nodes) + ["cable" if c else "bar" for c in cable],
            "member": element_members(model),
            "node_1": np.concatenate([beam_nodes[:, 0], bar_nodes[:, 0]]),
            "node_2": np.concatenate([beam_nodes[:, 1], bar_nodes[:, 1]]),
            "N" + force: np.concatenate([f["beam"]["N"], f["bar"]["N"]]),
            "V" + force: np.concatenate([f["beam"]["V"], np.zeros(len(bar_nodes))]),
            "M_1" + moment: np.concatenate([f["beam"]["M"][:, 0], np.zeros(len(bar_nodes))]),
            "M_2" + moment: np.concatenate([f["beam"]["M"][:, 1], np.zeros(len(bar_nodes))]),
            "slack": np.concatenate([np.zeros(len(beam_nodes), bool), f["bar"]["slack"]]),
        }
        return pd.DataFrame(rows).rename_axis("element")

    # -- tables -------------------------------------------------------------------
    def to_dataframe(self, nodes=None, forces: bool = False):
        """One row per point: load factor, Newton effort, stability, node displacements.

        Columns carry the structure's units in their names: ``"load factor"``,
        ``"iterations"``, ``"residual"``, ``"n_negative"``, ``"stable"``, then three
        per node, ``model.dof_label(node, dof)`` (``"ux of tip [m]"``,
        ``"rz of node 3 [rad]"``).

        Parameters
        ----------
        nodes : sequence of int or str, optional
            Nodes (ids or names) whose DOFs get columns. Default: loaded nodes, or
            every node of a structure with at most 20 nodes.
        forces : bool
            Add the extremes of the member forces at each point: ``"max |M| [N·m]"``,
            ``"max N [N]"``, ``"min N [N]"`` (SI shown) and ``"slack cables"``
            (the number of slack cable segments).
        """
        import pandas as pd

        s = self.structure
        if nodes is None:
            F = s.load_vector() + s.load_vector(constant=True)
            loaded = sorted({g // 3 for g in np.flatnonzero(F)})
            nodes = range(s.n_nodes) if s.n_nodes <= 20 else loaded
        elif isinstance(nodes, (str, int, np.integer)):
            nodes = [nodes]
        cols = {
            "load factor": self.load_factor,
            "iterations": self.iterations,
            "residual": [r[-1] if len(r) else 0.0 for r in self.residuals],
            "n_negative": self.n_negative,
            "stable": self.stable,
        }
        for n in nodes:
            n = s.node_id(n, "to_dataframe")
            for d in DOFS:
                cols[s.dof_label(n, d)] = self.displacement(n, d)
        if forces and len(self):
            f = self.member_forces()
            N = np.concatenate([f["beam"]["N"], f["bar"]["N"]], axis=1)
            M = np.abs(f["beam"]["M"]).reshape(len(self), -1)
            cols[s.units.label("max |M|", "moment")] = M.max(axis=1) if M.shape[1] else np.zeros(len(self))
            cols[s.units.label("max N", "force")] = N.max(axis=1) if N.shape[1] else np.zeros(len(self))
            cols[s.units.label("min N", "force")] = N.min(axis=1) if N.shape[1] else np.zeros(len(self))
            cols["slack cables"] = self.slack.sum(axis=1)
        return pd.DataFrame(cols, index=pd.RangeIndex(len(self), name="point"))

    def __repr__(self) -> str:
        if not len(self):
            return f"EquilibriumPath(0 points, status={self.status!r})"
        return (f"EquilibriumPath({len(self)} points, load factor "
                f"{self.load_factor.min():.4g}…{self.load_factor.max():.4g}, status={self.status!r})")


def element_members(model) -> np.ndarray:
    """Label of the member of each element, beams then bars (cables among the bars).

    Returns
    -------
    ndarray of object, shape (n_beam_elements + n_bar_elements,)
        ``model.member_label(m)`` of each element's member ("mast", "member 2").
    """
    n_beam = len(model.element_table("beam")[0])
    ids = np.full(n_beam + len(model.element_table("bar")[0]), -1, dtype=np.int64)
    for m in model.members:                 # one slice per member, not per element
        ids[np.asarray(m.elements) + (0 if m.kind == "beam" else n_beam)] = m.id
    labels = np.array([model.member_label(m) for m in model.members] + [""], dtype=object)
    return labels[ids]


def member_lines(structure, u: np.ndarray, n_sub: int = 9) -> dict:
    """Deformed beam curves and bar chords for a full displacement vector ``u``."""
    xy = structure.xy
    out = {}
    nodes, _ = structure.element_table("beam")
    if len(nodes):
        ue = u[np.concatenate([3 * nodes[:, [0]] + [0, 1, 2], 3 * nodes[:, [1]] + [0, 1, 2]], axis=1)]
        X1 = xy[nodes[:, 0]]
        out["beam"] = beam_kernel.curve(X1, xy[nodes[:, 1]] - X1, ue, n_sub,
                                        _own_rotations(structure.snapshot(), xy, nodes))
    else:
        out["beam"] = np.zeros((0, n_sub, 2))
    nodes, _ = structure.element_table("bar")
    pos = xy + u.reshape(-1, 3)[:, :2]
    out["bar"] = pos[nodes] if len(nodes) else np.zeros((0, 2, 2))
    return out


def _own_rotations(model, xy: np.ndarray, nodes: np.ndarray):
    """Released beams' own end rotations from their nodes', shape (n_beam, 2, 2), or None."""
    hinge = getattr(model, "beam_hinge", None)
    if hinge is None:
        return None
    L0 = np.hypot(*(xy[nodes[:, 1]] - xy[nodes[:, 0]]).T)
    EI = np.array([model.sections[k].EI for k in model.beam_sections], dtype=float)
    return releases.rotation_map(releases.bending_factors(hinge, EI, L0))
