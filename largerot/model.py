"""The structure: nodes, members, sections, supports, springs and reference loads.

The model only records what the user says and checks it; the numerical arrays the
solvers need are built from it by :mod:`largerot.assembly`.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .errors import ModelError
from .sections import Section

__all__ = ["Structure", "Member", "DOFS", "dof_index"]

#: Names of the three degrees of freedom of every node, in storage order.
DOFS = ("ux", "uy", "rz")
_LOAD_DOFS = {"fx": 0, "fy": 1, "mz": 2}


def dof_index(dof: str) -> int:
    """Position (0, 1, 2) of a DOF name within a node."""
    try:
        return DOFS.index(dof)
    except ValueError:
        raise ModelError(f"Unknown DOF {dof!r}; use one of {', '.join(DOFS)}.") from None


@dataclass(frozen=True)
class Member:
    """A member as the user defined it, meshed into equal elements.

    Attributes
    ----------
    id : int
        Member number, in order of creation.
    kind : str
        ``"beam"`` or ``"bar"``.
    nodes : tuple of int
        Node ids from end to end, including the intermediate nodes of the mesh.
    elements : numpy.ndarray
        Indices of its elements among the elements of its kind.
    section : Section
    """

    id: int
    kind: str
    nodes: tuple
    elements: np.ndarray = field(repr=False)
    section: Section = field(repr=False)

    @property
    def ends(self) -> tuple:
        return self.nodes[0], self.nodes[-1]


def _finite(name: str, value) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise ModelError(f"{name} must be a number, got {value!r}.") from None
    if not math.isfinite(v):
        raise ModelError(f"{name} must be finite, got {value!r}.")
    return v


class Structure:
    """A planar structure of beams and bars with large rotations.

    Every node has three DOFs, ``"ux"``, ``"uy"`` and ``"rz"`` (x right, y up,
    rotation counter-clockwise). A node that no beam touches has no rotational
    stiffness: its rotation is dropped automatically.

    Examples
    --------
    >>> import largerot as lr
    >>> s = lr.Structure()
    >>> a, b = s.node(0.0, 0.0), s.node(0.0, 10.0)
    >>> m = s.beam(a, b, lr.Section(E=200e9, A=1e-3, I=1e-6), segments=4)
    >>> s.fix(a); s.load(b, fx=100.0)
    >>> m.nodes
    (0, 2, 3, 4, 1)
    """

    def __init__(self) -> None:
        self._xy: list[tuple[float, float]] = []
        self._elements: dict[str, list[tuple[int, int, int]]] = {"beam": [], "bar": []}
        self._sections: list[Section] = []
        self.members: list[Member] = []
        self._fixed: set[tuple[int, int]] = set()
        self._loads: dict[tuple[int, int, bool], float] = {}
        self._springs: dict[tuple[int, int], float] = {}
        self._version = 0

    # -- building ------------------------------------------------------------
    def _changed(self) -> None:
        self._version += 1

    @property
    def n_nodes(self) -> int:
        return len(self._xy)

    @property
    def xy(self) -> np.ndarray:
        """Undeformed node coordinates, shape (n_nodes, 2)."""
        return np.array(self._xy, dtype=float).reshape(-1, 2)

    def node(self, x: float, y: float) -> int:
        """Add a node at (x, y) and return its id."""
        n = len(self._xy)
        self._xy.append((_finite(f"Node {n} x", x), _finite(f"Node {n} y", y)))
        self._changed()
        return n

    def _check_node(self, n, what: str) -> int:
        if isinstance(n, (bool, np.bool_)) or not isinstance(n, (int, np.integer)):
            raise ModelError(f"{what}: node id must be an integer, got {n!r}.")
        if not 0 <= n < len(self._xy):
            raise ModelError(f"{what}: unknown node {n!r} (the structure has {len(self._xy)} nodes).")
        return int(n)

    def _section_id(self, section: Section) -> int:
        if not isinstance(section, Section):
            raise ModelError(f"Expected a largerot.Section, got {section!r}.")
        for i, s in enumerate(self._sections):
            if s is section:
                return i
        self._sections.append(section)
        return len(self._sections) - 1

    def _member(self, kind: str, a, b, section: Section, segments) -> Member:
        mid = len(self.members)
        a = self._check_node(a, f"Member {mid}")
        b = self._check_node(b, f"Member {mid}")
        if isinstance(segments, bool) or not isinstance(segments, (int, np.integer)) or segments < 1:
            raise ModelError(f"Member {mid}: `segments` must be a positive integer, got {segments!r}.")
        if a == b:
            raise ModelError(f"Member {mid} (nodes {a}→{b}) joins a node to itself.")
        pa, pb = np.array(self._xy[a]), np.array(self._xy[b])
        length = float(np.hypot(*(pb - pa)))
        if length == 0.0:
            raise ModelError(f"Member {mid} (nodes {a}→{b}) has zero length.")
        for m in self.members:
            if m.kind == kind and set(m.ends) == {a, b}:
                raise ModelError(f"Member {mid} (nodes {a}→{b}) duplicates member {m.id}.")
        if kind == "beam" and section.I <= 0.0:
            raise ModelError(f"Member {mid} (nodes {a}→{b}) is a beam but its section has I = {section.I!r}; give I > 0.")
        sid = self._section_id(section)
        chain = [a]
        for k in range(1, segments):
            t = k / segments
            chain.append(self.node(*(pa + t * (pb - pa))))
        chain.append(b)
        elems = self._elements[kind]
        first = len(elems)
        elems.extend((chain[k], chain[k + 1], sid) for k in range(segments))
        member = Member(mid, kind, tuple(chain), np.arange(first, first + segments), section)
        self.members.append(member)
        self._changed()
        return member

    def beam(self, a: int, b: int, section: Section, segments: int = 1) -> Member:
        """Add a corotational Euler–Bernoulli beam from node ``a`` to ``b``.

        The member is meshed into ``segments`` equal elements; the intermediate
        nodes are created and listed in ``member.nodes``.
        """
        return self._member("beam", a, b, section, segments)

    def bar(self, a: int, b: int, section: Section, segments: int = 1) -> Member:
        """Add an axial-only (pin-ended) corotational bar from ``a`` to ``b``."""
        return self._member("bar", a, b, section, segments)

    def fix(self, node: int, *dofs: str) -> None:
        """Restrain DOFs of a node; all three when none are named.

        ``s.fix(n)`` clamps, ``s.fix(n, "ux", "uy")`` pins, ``s.fix(n, "uy")`` is a roller.
        """
        node = self._check_node(node, "fix")
        for d in dofs or DOFS:
            self._fixed.add((node, dof_index(d)))
        self._changed()

    def load(self, node: int, fx: float = 0.0, fy: float = 0.0, mz: float = 0.0,
             constant: bool = False) -> None:
        """Add a nodal load.

        The reference load is scaled by the load factor; a ``constant`` load is held
        at full value along the whole path (e.g. a dead weight present from the start).
        Loads on the same node and DOF add up.
        """
        node = self._check_node(node, "load")
        for name, value in (("fx", fx), ("fy", fy), ("mz", mz)):
            v = _finite(f"Load {name} on node {node}", value)
            if v != 0.0:
                key = (node, _LOAD_DOFS[name], bool(constant))
                self._loads[key] = self._loads.get(key, 0.0) + v
        self._changed()

    def spring(self, node: int, dof: str, stiffness: float) -> None:
        """Attach a linear spring between a node's DOF and the ground."""
        node = self._check_node(node, "spring")
        k = _finite(f"Spring stiffness at node {node} {dof}", stiffness)
        if k <= 0.0:
            raise ModelError(f"Spring stiffness at node {node} {dof} must be positive, got {stiffness!r}.")
        key = (node, dof_index(dof))
        self._springs[key] = self._springs.get(key, 0.0) + k
        self._changed()

    # -- queries -------------------------------------------------------------
    @property
    def sections(self) -> tuple:
        return tuple(self._sections)

    def element_table(self, kind: str) -> tuple[np.ndarray, np.ndarray]:
        """Node pairs, shape (n_elements, 2), and section ids, shape (n_elements,)."""
        rows = np.array(self._elements[kind], dtype=np.int64).reshape(-1, 3)
        return rows[:, :2], rows[:, 2]

    def fixed_dofs(self) -> np.ndarray:
        """Global indices (3·node + dof) of restrained DOFs, sorted."""
        return np.array(sorted(3 * n + d for n, d in self._fixed), dtype=np.int64)

    def load_vector(self, constant: bool = False) -> np.ndarray:
        """Nodal reference (or constant) loads as a vector of shape (3·n_nodes,)."""
        f = np.zeros(3 * self.n_nodes)
        for (n, d, c), v in self._loads.items():
            if c == constant:
                f[3 * n + d] += v
        return f

    def spring_table(self) -> tuple[np.ndarray, np.ndarray]:
        """Global DOF indices and stiffnesses of grounded springs."""
        keys = sorted(self._springs)
        dofs = np.array([3 * n + d for n, d in keys], dtype=np.int64)
        return dofs, np.array([self._springs[k] for k in keys], dtype=float)

    def __repr__(self) -> str:
        nb = len(self._elements["beam"])
        nr = len(self._elements["bar"])
        return (f"Structure({self.n_nodes} nodes, {len(self.members)} members: "
                f"{nb} beam and {nr} bar elements)")
