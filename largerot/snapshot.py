"""The frozen model a trace works on: arrays taken from a Structure when a trace starts.

A :class:`Model` is what the solvers, the path and the plots read. It is immutable
(its arrays are read-only), so a path keeps describing the structure it was traced
on, whatever is done to the :class:`~largerot.model.Structure` afterwards. It offers
the same read-only queries as a Structure (``xy``, ``element_table``,
``load_vector``...), so drawing code takes either.

Derived data that costs time at scale (the assembly's sparse pattern) is computed
once per Model and cached on it; an immutable object needs no invalidation. The
cache is not pickled: an unpickled Model rebuilds it when first asked.
"""
from __future__ import annotations

from dataclasses import MISSING, dataclass, field
from functools import cached_property

import numpy as np

from .errors import ModelError, checked_node, warn_input
from .units import Units

__all__ = ["Model", "Labels", "check_traceable"]

_TABLES = ("beam", "bar")
_DOFS = ("ux", "uy", "rz")
_FORCES = ("fx", "fy", "mz")


class Labels:
    """Names, ids and unit-bearing labels of nodes, DOFs and members.

    Shared by :class:`~largerot.model.Structure` and :class:`Model`, so code that
    labels a figure or a table takes either. A subclass provides ``units``,
    ``n_nodes``, ``members`` and the two look-ups ``_node_names()`` (name → id)
    and ``_names_of_nodes()`` (id → name); only nodes named by the user appear
    in them (nodes made by meshing have none).
    """

    units: Units

    def _node_names(self) -> dict:
        raise NotImplementedError

    def _names_of_nodes(self) -> dict:
        raise NotImplementedError

    @property
    def node_names(self) -> dict:
        """Named nodes: a new dict of name → node id."""
        return dict(self._node_names())

    @property
    def member_names(self) -> dict:
        """Named members: a new dict of name → member id."""
        return {m.name: m.id for m in self.members if getattr(m, "name", None) is not None}

    def node_id(self, node, what: str = "node") -> int:
        """The id of a node given by its id or its name (``what`` names the asker in errors)."""
        return checked_node(node, self.n_nodes, what, self._node_names())

    def node_name(self, node) -> str | None:
        """The name given to a node, or None."""
        return self._names_of_nodes().get(self.node_id(node))

    def node_label(self, node) -> str:
        """``"tip"`` for a named node, ``"node 3"`` otherwise."""
        i = self.node_id(node)
        name = self._names_of_nodes().get(i)
        return name if name is not None else f"node {i}"

    def dof_label(self, node, dof: str) -> str:
        """A node's DOF with its unit: ``"uy of tip [m]"``, ``"rz of node 3 [rad]"``.

        ``dof`` may also be a force component, ``"fx"``, ``"fy"`` or ``"mz"``: then
        ``"fy at tip [N]"`` (a load or a reaction).
        """
        if dof in _FORCES:
            return self.units.label(f"{dof} at {self.node_label(node)}", "moment" if dof == "mz" else "force")
        if dof not in _DOFS:
            raise ModelError(f"Unknown DOF {dof!r}; use one of {', '.join(_DOFS + _FORCES)}.")
        return self.units.label(f"{dof} of {self.node_label(node)}", "rotation" if dof == "rz" else "length")

    def member_id(self, member, what: str = "member") -> int:
        """The id of a member given as a Member, its id or its name."""
        if isinstance(member, str):
            names = self.member_names
            if member in names:
                return names[member]
            listed = (f"; named members: {', '.join(map(repr, sorted(names)))}" if names
                      else "; the structure has no named members")
            raise ModelError(f"{what}: unknown member name {member!r}{listed}.")
        mid = member if isinstance(member, (int, np.integer)) else getattr(member, "id", member)
        if isinstance(mid, (bool, np.bool_)) or not isinstance(mid, (int, np.integer)):
            raise TypeError(f"{what}: a member is given as a Member, its integer id or its name, "
                            f"got {member!r}.")
        if not 0 <= mid < len(self.members):
            raise ModelError(f"Unknown member {member!r} for {what} (the structure has "
                             f"{len(self.members)} members).")
        return int(mid)

    def member_label(self, member) -> str:
        """``"mast"`` for a named member, ``"member 2"`` otherwise."""
        m = self.members[self.member_id(member)]
        name = getattr(m, "name", None)
        return name if name is not None else f"member {m.id}"


@dataclass(frozen=True, eq=False)
class Model(Labels):
    """An immutable, arrays-only snapshot of a structure.

    Attributes
    ----------
    xy : ndarray, shape (n_nodes, 2)
        Undeformed node coordinates.
    beam_nodes, bar_nodes : ndarray of int, shape (n_beam, 2), (n_bar, 2)
        End nodes of each element (cable segments are bars).
    beam_sections, bar_sections : ndarray of int, shape (n_beam,), (n_bar,)
        Index of each element's section in ``sections``.
    bar_length : ndarray, shape (n_bar,)
        Unstretched length of each bar element (a cable's may differ from its chord).
    bar_cable : ndarray of bool, shape (n_bar,)
        Tension-only cable segments.
    sections : tuple
        ``Section`` and ``FibreSection`` objects (themselves immutable).
    members : tuple of Member
    fixed : ndarray of int
        Restrained global DOFs (3·node + dof), sorted.
    spring_dofs, spring_k : ndarray, shape (n_springs,)
        Grounded springs: global DOF and stiffness.
    F_ref, F_const : ndarray, shape (3·n_nodes,)
        Dead reference (scaled by λ) and constant nodal loads.
    followers : tuple of two (nodes, F0) pairs
        Follower nodal forces, scaled ones first, then constant ones; F0 shape (n, 2).
    pressures : tuple of two (kinds, elements, values) triples
        Follower line loads per element, scaled then constant.
    contact_nodes : ndarray of int, shape (n_contacts,)
    obstacles : tuple
        Distinct obstacles, in order of first use.
    contact_obstacle : ndarray of int, shape (n_contacts,)
        Index into ``obstacles`` of each contact.
    units : Units
        The system the structure's numbers are in (labels only).
    named_nodes : tuple of (int, str) pairs
        Nodes the user named, by id (see :meth:`node_label`, :attr:`node_names`).
    nodal_loads : ndarray, shape (n_loads, 4)
        Nodal loads as given, for drawing: node, component (0 fx, 1 fy, 2 mz),
        value, constant (1.0) or reference (0.0). Follower loads are in ``followers``.
    line_loads : tuple of (member, qx, qy, normal, tangential, constant)
        Line loads as given, for drawing.
    gravity : tuple (g, dx, dy, constant) or None
    beam_hinge : ndarray, shape (n_beam, 2), or None
        Rotational stiffness joining each beam element's ends to their nodes: ∞ a
        rigid joint, 0 a hinge, else a semi-rigid release. None when no member end
        is released.
    imposed : ndarray of int, shape (n_imposed,)
        Global DOFs with an imposed displacement (``Structure.impose``), sorted.
    imposed_ref, imposed_const : ndarray, shape (n_imposed,)
        Their values scaled by λ and held constant: u = λ·imposed_ref + imposed_const.
    inclined_nodes : ndarray of int, shape (n_inclined,)
        Nodes on an inclined roller (``Structure.roller``), sorted.
    inclined_direction : ndarray, shape (n_inclined, 2)
        Unit direction each rolls along; its translation along the normal
        (−dy, dx) is fixed.
    mass_nodes : ndarray of int, shape (n_masses,)
        Nodes with a concentrated mass (``Structure.mass``), sorted.
    mass_values : ndarray, shape (n_masses, 2)
        Their mass (on both translations) and rotary inertia (on the rotation).
    """

    xy: np.ndarray
    beam_nodes: np.ndarray
    beam_sections: np.ndarray
    bar_nodes: np.ndarray
    bar_sections: np.ndarray
    bar_length: np.ndarray
    bar_cable: np.ndarray
    sections: tuple
    members: tuple
    fixed: np.ndarray
    spring_dofs: np.ndarray
    spring_k: np.ndarray
    F_ref: np.ndarray
    F_const: np.ndarray
    followers: tuple
    pressures: tuple
    contact_nodes: np.ndarray
    obstacles: tuple
    contact_obstacle: np.ndarray
    label: str = field(default="")
    # defaults: a Model saved before units and names existed loads with SI and no names
    units: Units = field(default=Units())
    named_nodes: tuple = field(default=())
    nodal_loads: np.ndarray = field(default_factory=lambda: np.zeros((0, 4)))
    line_loads: tuple = field(default=())
    gravity: tuple | None = field(default=None)
    beam_hinge: np.ndarray | None = None
    imposed: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))
    imposed_ref: np.ndarray = field(default_factory=lambda: np.zeros(0))
    imposed_const: np.ndarray = field(default_factory=lambda: np.zeros(0))
    inclined_nodes: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))
    inclined_direction: np.ndarray = field(default_factory=lambda: np.zeros((0, 2)))
    mass_nodes: np.ndarray = field(default_factory=lambda: np.zeros(0, np.int64))
    mass_values: np.ndarray = field(default_factory=lambda: np.zeros((0, 2)))

    def __post_init__(self) -> None:
        for value in vars(self).values():
            for a in (value if isinstance(value, tuple) else (value,)):
                for b in (a if isinstance(a, tuple) else (a,)):
                    if isinstance(b, np.ndarray):
                        b.setflags(write=False)

    # -- sizes ------------------------------------------------------------------
    @property
    def n_nodes(self) -> int:
        return len(self.xy)

    @property
    def n_dof(self) -> int:
        return 3 * len(self.xy)

    @cached_property
    def length_scale(self) -> float:
        """Size of the structure (bounding-box diagonal), to weigh rotations against lengths."""
        if len(self.xy) == 0:
            return 1.0
        span = np.ptp(self.xy, axis=0)
        return float(np.hypot(*span)) or 1.0

    # -- the queries a Structure also answers ----------------------------------------
    def element_table(self, kind: str) -> tuple[np.ndarray, np.ndarray]:
        """Node pairs, shape (n_elements, 2), and section ids, shape (n_elements,)."""
        if kind not in _TABLES:
            raise ValueError(f"Element table must be one of {', '.join(_TABLES)}, got {kind!r}.")
        return (self.beam_nodes, self.beam_sections) if kind == "beam" else (self.bar_nodes, self.bar_sections)

    def fixed_dofs(self) -> np.ndarray:
        """Global indices (3·node + dof) of restrained DOFs, sorted."""
        return self.fixed

    def load_vector(self, constant: bool = False) -> np.ndarray:
        """Dead reference (or constant) loads as nodal forces, shape (3·n_nodes,)."""
        return self.F_const if constant else self.F_ref

    def element_lengths(self, kind: str) -> np.ndarray:
        """Unstretched length of every element of a kind, shape (n_elements,)."""
        if kind == "bar":
            return self.bar_length
        nodes, _ = self.element_table(kind)
        return np.hypot(*(self.xy[nodes[:, 1]] - self.xy[nodes[:, 0]]).T) if len(nodes) else np.zeros(0)

    def tension_only(self) -> np.ndarray:
        """Which bar elements are cable segments, shape (n_bar_elements,), bool."""
        return self.bar_cable

    def follower_table(self, constant: bool = False) -> tuple[np.ndarray, np.ndarray]:
        """Nodes with follower forces and the forces at zero rotation, shapes (n,), (n, 2)."""
        return self.followers[int(bool(constant))]

    def pressure_table(self, constant: bool = False):
        """Follower line loads per element: kind of each row, element index, (normal, tangential)."""
        return self.pressures[int(bool(constant))]

    def spring_table(self) -> tuple[np.ndarray, np.ndarray]:
        """Global DOF indices and stiffnesses of grounded springs."""
        return self.spring_dofs, self.spring_k

    def contact_table(self) -> list:
        """(node, obstacle) pairs in the order given."""
        return [(int(n), self.obstacles[k]) for n, k in zip(self.contact_nodes, self.contact_obstacle)]

    def snapshot(self) -> "Model":
        """A Model is its own snapshot."""
        return self

    # -- names ----------------------------------------------------------------------
    @cached_property
    def _name_maps(self) -> tuple:
        return {name: i for i, name in self.named_nodes}, dict(self.named_nodes)

    def _node_names(self) -> dict:
        return self._name_maps[0]

    def _names_of_nodes(self) -> dict:
        return self._name_maps[1]
    def expanded(self, free: np.ndarray, u_free: np.ndarray, lam=None,
                 const_factor: float = 1.0) -> np.ndarray:
        """Full displacement vectors in x, y from the free unknowns.

        Parameters
        ----------
        free : ndarray of int, shape (n_free,)
            Global DOF of each unknown (``Assembly.free``); at an inclined roller the
            node's ``"ux"`` slot holds its displacement along the rolling direction.
        u_free : ndarray, shape (n_free,) or (n_points, n_free)
        lam : float or ndarray of shape (n_points,), optional
            Load factor of each vector: imposed DOFs get λ·imposed_ref +
            const_factor·imposed_const. None leaves them zero (modes, increments).
        const_factor : float

        Returns
        -------
        ndarray, shape (n_dof,) or (n_points, n_dof)
            Restrained DOFs zero.
        """
        u_free = np.asarray(u_free, dtype=float)
        out = np.zeros(u_free.shape[:-1] + (self.n_dof,))
        out[..., free] = u_free
        if len(self.inclined_nodes):
            gx = 3 * self.inclined_nodes
            along = out[..., gx]
            out[..., gx] = along * self.inclined_direction[:, 0]
            out[..., gx + 1] = along * self.inclined_direction[:, 1]
        if lam is not None and len(self.imposed):
            lam = np.asarray(lam, dtype=float)[..., None]
            out[..., self.imposed] = lam * self.imposed_ref + const_factor * self.imposed_const
        return out

    # -- derived data, cached ---------------------------------------------------------
    @cached_property
    def assembly(self):
        """The assembly (DOF classification, sparse pattern) of this model, built once."""
        from .assembly import Assembly
        return Assembly(self)

    def __getstate__(self) -> dict:
        state = dict(vars(self))
        state.pop("assembly", None)           # caches, rebuilt on demand
        state.pop("_name_maps", None)
        return state

    def __setstate__(self, state: dict) -> None:
        for name, f in self.__dataclass_fields__.items():      # fields added since a save
            if name not in state and f.default_factory is not MISSING:
                object.__setattr__(self, name, f.default_factory())
        for k, v in state.items():
            object.__setattr__(self, k, v)
        self.__post_init__()

    def __repr__(self) -> str:
        nb, nc = len(self.beam_nodes), int(self.bar_cable.sum())
        nr = len(self.bar_nodes) - nc
        cables = f", {nc} cable" if nc else ""
        return (f"Model({self.n_nodes} nodes, {len(self.members)} members: "
                f"{nb} beam and {nr} bar{cables} elements; frozen)")


def check_traceable(model: Model) -> None:
    """Refuse a model with nothing to solve; warn when it has no load.

    Raises
    ------
    ModelError
        No free DOF (an empty structure, or every DOF fixed).

    Warns
    -----
    InputWarning
        No load at all (imposed displacements count as loads): every point of a
        trace is the same equilibrium. (Constant
        loads alone are a legal use: the first point settles under them.)
    """
    if len(model.assembly.free) == 0:
        raise ModelError(f"The structure has no free DOF ({model.n_nodes} nodes, all restrained "
                         "or none at all): nothing to solve.")
    loaded = (model.F_ref.any() or model.F_const.any()
              or any(len(nodes) for nodes, _ in model.followers)
              or any(len(elements) for _, elements, _ in model.pressures)
              or model.imposed_ref.any() or model.imposed_const.any())
    if not loaded:
        warn_input("The structure has no load at all: every point of the trace is the same "
                   "equilibrium at rest. Add a load with s.load(...), s.line_load(...), "
                   "s.gravity(...) or an imposed displacement with s.impose(...).")
