"""The structure: nodes, members, sections, supports, springs and reference loads.

The model only records what the user says and checks it; the numerical arrays the
solvers need are built from it by :mod:`largerot.assembly`.
"""
from __future__ import annotations

import copy
import math
from dataclasses import dataclass, field
from functools import cached_property
from typing import NamedTuple

import numpy as np

from .errors import ModelError, checked_integer, checked_node, checked_number, is_real, warn_input
from .geometry import arc_points, hanging_chain
from .sections import Section
from .snapshot import Labels, Model
from .units import Units, checked_units

__all__ = ["Structure", "Member", "Polyline", "DOFS", "dof_index"]

#: Names of the three degrees of freedom of every node, in storage order.
DOFS = ("ux", "uy", "rz")
_LOAD_DOFS = {"fx": 0, "fy": 1, "mz": 2}


def dof_index(dof: str) -> int:
    """Position (0, 1, 2) of a DOF name within a node."""
    if not isinstance(dof, str):
        raise TypeError(f"A DOF is named by a string, one of {', '.join(DOFS)}; got {dof!r}.")
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
        ``"beam"``, ``"bar"`` or ``"cable"``.
    nodes : tuple of int
        Node ids from end to end, including the intermediate nodes of the mesh
        (built from ``node_array`` when first asked).
    node_array : numpy.ndarray of int, shape (n_elements + 1,)
        The same ids as a read-only array.
    elements : numpy.ndarray
        Indices of its elements among the elements of its kind (a cable's segments
        are tension-only bar elements, counted among the bars).
    section : Section
    name : str or None
        The name given when it was added (``s.beam(..., name="mast")``).
    """

    id: int
    kind: str
    node_array: np.ndarray = field(repr=False)
    elements: np.ndarray = field(repr=False)
    section: Section = field(repr=False)
    name: str | None = None         # default: a Member saved before names loads unnamed

    def __post_init__(self) -> None:
        self.node_array.setflags(write=False)

    @cached_property
    def nodes(self) -> tuple:
        # a tuple of Python ints for the user, built once when first asked: a finely
        # meshed model keeps no Python object per node unless someone asks for this
        return tuple(self.node_array.tolist())

    @property
    def ends(self) -> tuple:
        return int(self.node_array[0]), int(self.node_array[-1])

    def __repr__(self) -> str:
        name = f", name={self.name!r}" if self.name is not None else ""
        return f"Member(id={self.id!r}, kind={self.kind!r}{name}, nodes={self.nodes!r})"


class _Rows:
    """Rows appended to an array that grows by doubling (amortised O(1) per row).

    Holds what a Structure records per node and per element as numbers, not as one
    Python object per row.
    """

    def __init__(self, width: int, dtype) -> None:
        self._data = np.empty((INITIAL_ROWS, width) if width else (INITIAL_ROWS,), dtype)
        self._n = 0

    @classmethod
    def of(cls, rows: np.ndarray) -> "_Rows":
        rows = np.asarray(rows)
        new = cls(rows.shape[1] if rows.ndim == 2 else 0, rows.dtype)
        new.extend(rows)
        return new

    def __len__(self) -> int:
        return self._n

    def __getitem__(self, i):
        return self._data[:self._n][i]

    def extend(self, rows) -> None:
        rows = np.asarray(rows, dtype=self._data.dtype).reshape((-1,) + self._data.shape[1:])
        end = self._n + len(rows)
        if end > len(self._data):
            grown = np.empty((max(end, 2 * len(self._data)),) + self._data.shape[1:], self._data.dtype)
            grown[:self._n] = self._data[:self._n]
            self._data = grown
        self._data[self._n:end] = rows
        self._n = end

    def array(self) -> np.ndarray:
        """A copy of the rows, shape (n, width) or (n,)."""
        return self._data[:self._n].copy()


class Polyline(NamedTuple):
    """What :meth:`Structure.polyline` built: one member per straight piece and the
    corner nodes, first to last."""

    members: list
    nodes: list


#: Which ends of a member ``hinge=`` releases: (start, end).
HINGE_ENDS = {"start": (True, False), "end": (False, True), "both": (True, True)}


#: Rows reserved when a Structure's tables are created (they double when full).
INITIAL_ROWS = 16


def _spread(f: np.ndarray, m: Member, q: np.ndarray, lengths: dict) -> None:
    """Add half of each element's load q·L0 (L0 unstretched) to each of its ends."""
    nodes = m.node_array
    L0 = lengths["bar" if m.kind == "cable" else m.kind][m.elements]
    for end in (nodes[:-1], nodes[1:]):
        for k in range(2):
            np.add.at(f, 3 * end + k, 0.5 * q[k] * L0)


#: Largest coordinate magnitude accepted: the kernels form L² and L³ of element
#: lengths and the round-off level |K|·|x|; (1e100)³ = 1e300 still fits a double, a
#: node at 1e300 would give inf and a singular-looking tangent.
MAX_COORDINATE = 1e100


def _finite(name: str, value) -> float:
    if not is_real(value):          # no string-to-number conversion
        raise TypeError(f"{name} must be a number, got {value!r}.")
    v = float(value)
    if not math.isfinite(v):
        raise ModelError(f"{name} must be finite, got {value!r}.")
    return v


def _flag(name: str, value) -> bool:
    if not isinstance(value, (bool, np.bool_)):
        raise TypeError(f"`{name}` must be True or False, got {value!r}.")
    return bool(value)


def _coordinate(name: str, value) -> float:
    v = _finite(name, value)
    if abs(v) > MAX_COORDINATE:
        raise ModelError(f"{name} = {value!r} is beyond ±{MAX_COORDINATE:g}: lengths, their "
                         "squares and cubes would overflow; use units of a sensible size.")
    return v


def _check_section(section, mid: int) -> None:
    from .fibres import FibreSection     # a beam may yield: its section has fibres
    if not isinstance(section, (Section, FibreSection)):
        raise TypeError(f"Member {mid}: `section` must be a largerot.Section or "
                        f"largerot.FibreSection, got {section!r}.")


def _checked_name(name, owner: str):
    """A node's or member's name: None or a non-empty string."""
    if name is None:
        return None
    if not isinstance(name, str):
        raise TypeError(f"{owner}: `name` must be a string, got {name!r}.")
    if not name.strip():
        raise ModelError(f"{owner}: `name` must be a non-empty string, got {name!r}.")
    return name


def _segments(segments, mid: int) -> int:
    n = checked_integer(f"Member {mid}:", "segments", segments)
    if n < 1:
        raise ModelError(f"Member {mid}: `segments` must be a positive integer, got {segments!r}.")
    return n


class Structure(Labels):
    """A planar structure of beams and bars with large rotations.

    Every node has three DOFs, ``"ux"``, ``"uy"`` and ``"rz"`` (x right, y up,
    rotation counter-clockwise). A node that no beam touches has no rotational
    stiffness: its rotation is dropped automatically.

    Parameters
    ----------
    units : {"N-m", "kN-m", "N-mm", "kip-in"} or Units
        The consistent system every number of the structure is given in (SI by
        default). Numbers are never converted: the units label axes, readouts and
        table columns, and set the default g of :meth:`gravity`. See
        :mod:`largerot.units` for what each system means for force, length,
        moment, stress, mass density, spring stiffness and line load.
    name : str, optional
        What the structure is ("Guyed mast, 30 m"): the heading of its figures and
        exported paths (``path.model.label``).

    Nodes and members may be named (``s.node(0, 10, name="tip")``,
    ``s.beam(a, b, sec, name="mast")``); every method that takes a node id also
    takes its name, and labels use names where given (``s.dof_label("tip", "uy")``
    is ``"uy of tip [m]"``).

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

    #: what :func:`largerot.save` writes it as
    saved_kind = "structure"

    def __init__(self, units: str | Units = "N-m", name: str | None = None) -> None:
        self.units = checked_units(units)
        if name is not None and not isinstance(name, str):
            raise ModelError(f"Structure name must be a string, got {name!r}.")
        self.name = name or ""
        self._named: dict[str, int] = {}                         # node name -> id
        self._name_of: dict[int, str] = {}                       # node id -> name
        self._xy = _Rows(2, float)                               # node coordinates
        # per element of each table: end nodes and section id
        self._elements = {"beam": _Rows(3, np.int64), "bar": _Rows(3, np.int64)}
        self._sections: list[Section] = []
        self.members: list[Member] = []
        self._fixed: set[tuple[int, int]] = set()
        self._loads: dict[tuple[int, int, bool], float] = {}
        self._springs: dict[tuple[int, int], float] = {}
        # per bar element: unstretched length (NaN: the undeformed chord) and
        # whether it is a tension-only cable segment
        self._bar_L0 = _Rows(0, float)
        self._bar_cable = _Rows(0, bool)
        self._line_loads: list[tuple[int, float, float, float, float, bool]] = []
        self._followers: dict[tuple[int, bool], tuple[float, float]] = {}
        self._gravity: tuple[float, float, float, bool] | None = None
        self._contacts: list[tuple[int, object]] = []
        self._member_ends: dict[tuple[str, int, int], int] = {}   # (table, a, b) -> member
        self._hinges: dict[int, tuple[float, float]] = {}   # member -> end stiffness (∞: rigid)
        # imposed displacements: (node, dof, constant) -> value; inclined rollers:
        # node -> unit rolling direction (dx, dy)
        self._imposed: dict[tuple[int, int, bool], float] = {}
        self._inclined: dict[int, tuple[float, float]] = {}
        self._masses: dict[int, tuple[float, float]] = {}      # node -> (m, inertia)
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
        return self._xy.array()

    def node(self, x: float, y: float, name: str | None = None) -> int:
        """Add a node at (x, y) and return its id.

        ``name`` (unique among the nodes) may then stand for the id in every call
        that takes a node, and labels the node in figures and tables.
        """
        n = len(self._xy)
        name = _checked_name(name, f"Node {n}")
        if name in self._named:
            raise ModelError(f"Node {n}: the name {name!r} is taken by node {self._named[name]}; "
                             "node names must be unique.")
        self._xy.extend((_coordinate(f"Node {n} x", x), _coordinate(f"Node {n} y", y)))
        if name is not None:
            self._named[name] = n
            self._name_of[n] = name
        self._changed()
        return n

    def _check_node(self, n, what: str) -> int:
        return checked_node(n, len(self._xy), what, self._named)

    def _node_names(self) -> dict:
        return self._named

    def _names_of_nodes(self) -> dict:
        return self._name_of

    def _section_id(self, section: Section) -> int:
        from .fibres import FibreSection     # a beam may yield: its section has fibres
        if not isinstance(section, (Section, FibreSection)):
            raise TypeError(f"Expected a largerot.Section or largerot.FibreSection, got {section!r}.")
        for i, s in enumerate(self._sections):
            if s is section:
                return i
        self._sections.append(section)
        return len(self._sections) - 1

    def _member(self, kind: str, a, b, section: Section, segments, *,
                points=None, L0=None, name=None, curved: bool = False) -> Member:
        mid = len(self.members)
        name = self._member_name(name, mid)
        a = self._check_node(a, f"Member {mid}")
        b = self._check_node(b, f"Member {mid}")
        _check_section(section, mid)
        segments = _segments(segments, mid)
        if a == b:
            raise ModelError(f"Member {mid} (nodes {a}→{b}) joins a node to itself.")
        pa, pb = np.array(self._xy[a]), np.array(self._xy[b])
        length = float(np.hypot(*(pb - pa)))
        if length == 0.0:
            raise ModelError(f"Member {mid} (nodes {a}→{b}) has zero length.")
        table = "bar" if kind == "cable" else kind
        # a curved member is not a duplicate of another between the same nodes
        key = (table, min(a, b), max(a, b)) if not curved else None
        if key in self._member_ends:
            raise ModelError(f"Member {mid} (nodes {a}→{b}) duplicates member {self._member_ends[key]}.")
        if kind == "beam" and section.I <= 0.0:
            raise ModelError(f"Member {mid} (nodes {a}→{b}) is a beam but its section has I = {section.I!r}; give I > 0.")
        sid = self._section_id(section)
        if points is None:
            t = np.arange(1, segments)[:, None] / segments
            points = pa + t * (pb - pa)
        first_new = len(self._xy)
        self._xy.extend(points)
        chain = np.empty(segments + 1, np.int64)
        chain[0], chain[1:-1], chain[-1] = a, np.arange(first_new, len(self._xy)), b
        elems = self._elements[table]
        first = len(elems)
        elems.extend(np.column_stack([chain[:-1], chain[1:], np.full(segments, sid)]))
        if table == "bar":
            self._bar_L0.extend(np.full(segments, np.nan if L0 is None else float(L0)))
            self._bar_cable.extend(np.full(segments, kind == "cable"))
        if key is not None:
            self._member_ends[key] = mid
        member = Member(mid, kind, chain, np.arange(first, first + segments), section, name)
        self.members.append(member)
        self._changed()
        return member

    def _member_name(self, name, mid: int):
        name = _checked_name(name, f"Member {mid}")
        if name is not None and any(m.name == name for m in self.members):
            taken = next(m.id for m in self.members if m.name == name)
            raise ModelError(f"Member {mid}: the name {name!r} is taken by member {taken}; "
                             "member names must be unique.")
        return name

    def beam(self, a: int | str, b: int | str, section: Section, segments: int = 1, *,
             name: str | None = None, hinge: str | None = None,
             hinge_stiffness: float | None = None) -> Member:
        """Add a corotational beam from node ``a`` to ``b`` (ids or names).

        The member is meshed into ``segments`` equal elements; the intermediate
        nodes are created (unnamed) and listed in ``member.nodes``. The beam is
        Euler–Bernoulli, or shear-flexible (Timoshenko) when its section has a
        shear stiffness (``Section(..., G=...)``).

        Parameters
        ----------
        name : str, optional
            Unique among the members: labels the member and stands for it in
            :meth:`line_load`.
        hinge : {"start", "end", "both"}, optional
            Release the bending moment at that end of the member (at node ``a``,
            ``b`` or both): the member is pinned to the node, which keeps its
            rotation for the other members joined there. Only the member's element
            at that end changes; its own end rotation is condensed out exactly
            (:mod:`largerot.elements.releases`). A node where every beam end is
            hinged and nothing else holds the rotation has its rotation dropped.
        hinge_stiffness : float, optional
            Moment per radian of a rotational spring at the released end(s) (a
            semi-rigid joint); default 0, a free hinge.
        """
        spec = self._hinge_spec(len(self.members), "beam", section, hinge, hinge_stiffness)
        return self._hinged(self._member("beam", a, b, section, segments, name=name), spec)

    def arc(self, a: int | str, b: int | str, section: Section, *, rise: float | None = None,
            radius: float | None = None, segments: int = 16, shape: str = "circle",
            kind: str = "beam", hinge: str | None = None,
            hinge_stiffness: float | None = None, name: str | None = None) -> Member:
        """Add a curved member from node ``a`` to ``b``, meshed into ``segments`` straight elements.

        The intermediate nodes lie on the curve (:func:`largerot.geometry.arc_points`).

        Parameters
        ----------
        rise : float
            Height of the curve above the chord at mid-span, positive to the left of
            a→b (the chord turned by +90°: an arch from left to right bulges up).
            Above half the chord a circle is more than a semicircle.
        radius : float
            Instead of ``rise``, for a circle: the arc of that radius through a and
            b, the shorter of the two, to the left of a→b for a positive radius.
        segments : int
            Elements along the member (default 16).
        shape : {"circle", "parabola", "sine"}
            A circular arc (nodes at equal angles), a parabola or a half sine wave
            (nodes at equal steps along the chord).
        kind : {"beam", "bar"}
        hinge, hinge_stiffness
            End releases, as in :meth:`beam`.
        name : str, optional
            The member's name, as in :meth:`beam`.
        """
        mid = len(self.members)
        if kind not in ("beam", "bar"):
            raise ModelError(f"Member {mid}: `kind` must be \"beam\" or \"bar\", got {kind!r}.")
        spec = self._hinge_spec(mid, kind, section, hinge, hinge_stiffness)
        a = self._check_node(a, f"Member {mid}")
        b = self._check_node(b, f"Member {mid}")
        segments = _segments(segments, mid)
        if a == b:
            raise ModelError(f"Member {mid} (nodes {a}→{b}) joins a node to itself.")
        try:
            pts = arc_points(self._xy[a], self._xy[b], segments, rise=rise, radius=radius, shape=shape)
        except ModelError as exc:
            raise ModelError(f"Member {mid} (nodes {a}→{b}): {exc}") from None
        member = self._member(kind, a, b, section, segments, points=pts[1:-1], curved=True,
                              name=name)
        return self._hinged(member, spec)

    def polyline(self, points, section: Section, segments: int = 1, *, kind: str = "beam",
                 hinge: str | None = None, hinge_stiffness: float | None = None) -> Polyline:
        """Add a chain of straight members through ``points``, one member per piece.

        Parameters
        ----------
        points : sequence
            At least two entries, each a node id or name (an existing node) or an (x, y)
            pair (a new node there).
        segments : int
            Elements per piece.
        kind : {"beam", "bar"}
        hinge, hinge_stiffness
            Releases at the chain's first node (``"start"``), last node (``"end"``)
            or both, as in :meth:`beam`; the corners stay rigid.

        Returns
        -------
        Polyline
            ``members`` (one per piece) and the corner ``nodes``, first to last.
        """
        mid = len(self.members)
        if kind not in ("beam", "bar"):
            raise ModelError(f"Polyline from member {mid}: `kind` must be \"beam\" or \"bar\", got {kind!r}.")
        spec = self._hinge_spec(mid, kind, section, hinge, hinge_stiffness)
        _segments(segments, mid)
        if isinstance(points, (str, bytes)) or not hasattr(points, "__len__") or len(points) < 2:
            raise ModelError(f"Polyline from member {mid}: `points` must be a sequence of at least "
                             f"two node ids or (x, y) pairs, got {points!r}.")
        xy = []
        for k, p in enumerate(points):        # check every entry before adding anything
            if isinstance(p, (int, np.integer, str)) and not isinstance(p, (bool, np.bool_)):
                xy.append(np.array(self._xy[self._check_node(p, f"Polyline point {k}")]))
            elif not isinstance(p, str) and hasattr(p, "__len__") and len(p) == 2:
                xy.append(np.array([_coordinate(f"Polyline point {k} x", p[0]),
                                    _coordinate(f"Polyline point {k} y", p[1])]))
            else:
                raise TypeError(f"Polyline point {k} must be a node id or name, or an (x, y) pair, got {p!r}.")
        for k in range(len(xy) - 1):
            if np.array_equal(xy[k], xy[k + 1]):
                raise ModelError(f"Polyline points {k} and {k + 1} coincide at {xy[k].tolist()}: "
                                 "a piece of zero length.")
        nodes = [self._check_node(p, f"Polyline point {k}") if isinstance(p, (int, np.integer, str))
                 else self.node(*xy[k]) for k, p in enumerate(points)]
        members = [self._member(kind, nodes[k], nodes[k + 1], section, segments)
                   for k in range(len(nodes) - 1)]
        if spec is not None and len(members) == 1:
            self._hinged(members[0], spec)
        elif spec is not None:
            if math.isfinite(spec[0]):
                self._hinged(members[0], (spec[0], math.inf))
            if math.isfinite(spec[1]):
                self._hinged(members[-1], (math.inf, spec[1]))
        return Polyline(members, nodes)

    def _hinge_spec(self, mid: int, kind: str, section, hinge, hinge_stiffness):
        """(stiffness at the start, at the end) of a release, ∞ where none; None without one."""
        if hinge is None:
            if hinge_stiffness is not None:
                raise ModelError(f"Member {mid}: `hinge_stiffness` needs `hinge` "
                                 "(\"start\", \"end\" or \"both\").")
            return None
        if not isinstance(hinge, str):
            raise TypeError(f"Member {mid}: `hinge` must be \"start\", \"end\" or \"both\", got {hinge!r}.")
        if hinge not in HINGE_ENDS:
            raise ModelError(f"Member {mid}: `hinge` must be \"start\", \"end\" or \"both\", got {hinge!r}.")
        if kind != "beam":
            raise ModelError(f"Member {mid}: `hinge` releases a beam's end moment; a {kind} "
                             "carries no moment (its ends are pinned already).")
        from .fibres import FibreSection     # a beam may yield: its section has fibres
        if isinstance(section, FibreSection):
            raise ModelError(f"Member {mid}: end releases (`hinge`) are supported on elastic "
                             "sections (largerot.Section) only, not on a FibreSection.")
        k = 0.0
        if hinge_stiffness is not None:
            k = _finite(f"Member {mid} hinge_stiffness", hinge_stiffness)
            if k < 0.0:
                raise ModelError(f"Member {mid}: `hinge_stiffness` must be non-negative, got {hinge_stiffness!r}.")
        start, end = HINGE_ENDS[hinge]
        return (k if start else math.inf, k if end else math.inf)

    def _hinged(self, member: Member, spec) -> Member:
        if spec is not None:
            self.__dict__.setdefault("_hinges", {})[member.id] = tuple(spec)
            self._changed()
        return member

    def hinges(self) -> dict:
        """Released member ends: {member id: (stiffness at start, at end)}; ∞ where the
        end is rigid, 0 at a free hinge."""
        return dict(self.__dict__.get("_hinges", {}))

    def _beam_hinge(self, n_beam: int):
        """Per beam element, the stiffness joining each end to its node; None without releases."""
        hinges = self.__dict__.get("_hinges", {})
        if not hinges:
            return None
        out = np.full((n_beam, 2), math.inf)
        for mid, (k_start, k_end) in hinges.items():
            e = self.members[mid].elements
            out[e[0], 0] = k_start
            out[e[-1], 1] = k_end
        return out

    def bar(self, a: int | str, b: int | str, section: Section, segments: int = 1, *,
            name: str | None = None) -> Member:
        """Add an axial-only (pin-ended) corotational bar from ``a`` to ``b`` (ids or names)."""
        return self._member("bar", a, b, section, segments, name=name)

    def cable(self, a: int | str, b: int | str, section: Section, segments: int | None = None, *,
              unstretched_length: float | None = None, pretension: float | None = None,
              name: str | None = None) -> Member:
        """Add a tension-only cable from ``a`` to ``b``, meshed into ``segments`` elements.

        Each segment is a corotational bar that carries N = EA·(l − l0)/l0 when
        stretched and no force when slack (l ≤ l0).

        Parameters
        ----------
        segments : int, optional
            Default: 10 for a cable that sags or has weight (section density > 0),
            else 1 — a weightless straight cable is exactly one two-force member,
            and split into several it would have no shape of its own once slack.
        unstretched_length : float, optional
            Length of the cable without force. Longer than the chord, the cable
            sags: its intermediate nodes are placed on the hanging chain of that
            length (:func:`largerot.geometry.hanging_chain`, hanging along gravity,
            or −y before :meth:`gravity` is called), slack, and the first step of a
            trace finds its equilibrium under the loads. Shorter than the chord, it
            starts stretched (pretensioned). Default: the chord.
        pretension : float, optional
            Tension in the straight cable at the start instead of a length:
            l0 = chord·EA/(EA + T).
        """
        mid = len(self.members)
        self._member_name(name, mid)
        _check_section(section, mid)
        if segments is not None:
            segments = _segments(segments, mid)
        if segments is None:
            sags = unstretched_length is not None and pretension is None
            segments = 10 if sags or section.density > 0.0 else 1
        if unstretched_length is not None and pretension is not None:
            raise ModelError(f"Member {mid}: give `unstretched_length` or `pretension`, not both.")
        a = self._check_node(a, f"Member {mid}")
        b = self._check_node(b, f"Member {mid}")
        chord = float(np.hypot(*(np.subtract(self._xy[b], self._xy[a]))))
        points, L = None, chord
        if pretension is not None:
            T = _finite(f"Member {mid} pretension", pretension)
            if T < 0.0:
                raise ModelError(f"Member {mid}: a cable's pretension must be non-negative, got {pretension!r}.")
            L = chord * section.EA / (section.EA + T)
        elif unstretched_length is not None:
            L = _finite(f"Member {mid} unstretched_length", unstretched_length)
            if L <= 0.0:
                raise ModelError(f"Member {mid}: `unstretched_length` must be positive, got {unstretched_length!r}.")
            if L > chord > 0.0 and segments > 1:
                down = self._gravity[1:3] if self._gravity else (0.0, -1.0)
                try:
                    points = hanging_chain(self._xy[a], self._xy[b], L, int(segments), down)
                except ModelError as exc:
                    raise ModelError(f"Member {mid} (nodes {a}→{b}): {exc}") from None
        return self._member("cable", a, b, section, segments, points=points, L0=L / segments,
                            name=name)

    def gravity(self, g: float | None = None, direction=(0.0, -1.0), constant: bool = True) -> None:
        """Self-weight of every member whose section has a density.

        The weight ρ·A·g per unit unstretched length goes to the element ends as
        forces of half the element's weight (the end moments of the consistent load
        of a beam element, ±q⊥l²/12, cancel between neighbouring equal elements and
        are left out; the error vanishes with the mesh, O(h²)). Held at full value
        along the path unless ``constant=False``, when it is scaled by the load factor.
        Calling it again replaces the earlier gravity.

        Parameters
        ----------
        g : float, optional
            Acceleration in the structure's units (length/s²). Default: 9.81 m/s²
            in its length unit (``s.units.gravity``: 9.81 for N-m and kN-m, 9810 for
            N-mm, 386.2 for kip-in).
        direction : pair of float
        constant : bool
        """
        g = _finite("Gravity g", self.units.gravity if g is None else g)
        if isinstance(direction, str) or not hasattr(direction, "__len__") or len(direction) != 2:
            raise TypeError(f"Gravity `direction` must be a pair (dx, dy), got {direction!r}.")
        d = np.array([_finite("Gravity direction x", direction[0]),
                      _finite("Gravity direction y", direction[1])])
        n = float(np.hypot(*d))
        if g < 0.0 or n == 0.0:
            raise ModelError(f"Gravity needs g ≥ 0 and a non-zero direction, got g={g!r}, direction={tuple(direction)!r}.")
        self._gravity = (g, d[0] / n, d[1] / n, _flag("constant", constant))
        self._changed()

    def line_load(self, member, qx: float = 0.0, qy: float = 0.0, *, normal: float = 0.0,
                  tangential: float = 0.0, constant: bool = False) -> None:
        """A uniform load along a member.

        Parameters
        ----------
        member : Member, int or str
            The member, its id or its name.
        qx, qy : float
            Dead load per unit undeformed length in the global directions
            (force/length of the structure's units).
        normal, tangential : float
            Follower load per unit *deformed* length, normal to each deformed element
            (positive to the left of the member's direction a→b, i.e. the chord
            turned by +90°) and along it (toward b): a pressure. These turn with the
            structure and give a non-symmetric load stiffness.
        constant : bool
            Held at full value instead of scaled by the load factor.
        """
        m = self._get_member(member)
        vals = [_finite(f"Line load {k} on member {m.id}", v)
                for k, v in (("qx", qx), ("qy", qy), ("normal", normal), ("tangential", tangential))]
        self._line_loads.append((m.id, *vals, _flag("constant", constant)))
        self._changed()

    def _get_member(self, member) -> Member:
        return self.members[self.member_id(member, "line_load")]

    def contact(self, nodes, obstacle) -> None:
        """Keep nodes out of a rigid obstacle (frictionless, unilateral).

        Parameters
        ----------
        nodes : int, str or sequence of them
            Nodes (ids or names) that may touch it (e.g. ``member.nodes`` to sample a member).
        obstacle : largerot.Line or largerot.Circle
            A half-plane (the free side is where its normal points) or a round stop.

        Enforced exactly, to a gap tolerance of ``GAP_TOL`` × the structure's size,
        by an augmented Lagrangian with Uzawa updates at each converged point
        (:mod:`largerot.elements.contact`).
        """
        from .elements.contact import Circle, Line
        if not isinstance(obstacle, (Line, Circle)):
            raise ModelError(f"Expected an obstacle, largerot.Line or largerot.Circle, got {obstacle!r}.")
        ids = [nodes] if isinstance(nodes, (int, np.integer, str)) else list(nodes)
        for n in ids:
            n = self._check_node(n, "contact")
            if any(m == n and o is obstacle for m, o in self._contacts):
                raise ModelError(f"Node {n} is already in contact with this obstacle.")
            self._contacts.append((n, obstacle))
        self._changed()

    def contact_table(self) -> list:
        """(node, obstacle) pairs in the order given."""
        return list(self._contacts)

    def fix(self, node: int | str, *dofs: str) -> None:
        """Restrain DOFs of a node (id or name); all three when none are named.

        ``s.fix(n)`` clamps, ``s.fix(n, "ux", "uy")`` pins, ``s.fix(n, "uy")`` is a roller.
        """
        node = self._check_node(node, "fix")
        for d in dofs or DOFS:
            k = dof_index(d)
            self._check_unclaimed(node, k, "fixed")
            self._fixed.add((node, k))
        self._changed()

    def _check_unclaimed(self, node: int, k: int, what: str) -> None:
        """A DOF is free, fixed, imposed or on an inclined roller: one of them at a time."""
        imposed = getattr(self, "_imposed", {})
        inclined = getattr(self, "_inclined", {})
        if what != "imposed" and any((node, k, c) in imposed for c in (False, True)):
            raise ModelError(f"Node {node} {DOFS[k]} has an imposed displacement; it cannot also be {what}.")
        if what != "fixed" and (node, k) in self._fixed:
            raise ModelError(f"Node {node} {DOFS[k]} is fixed; it cannot also be {what}.")
        if k < 2 and node in inclined:
            raise ModelError(f"Node {node} is on an inclined roller: its translation {DOFS[k]} "
                             f"cannot also be {what} (fix its rotation only, or remove the roller).")

    def impose(self, node: int, dof: str, value: float, constant: bool = False) -> None:
        """Prescribe a displacement or rotation of one DOF (a settlement, a driven support).

        The DOF is then not free: it moves by ``λ·value`` along the path, scaled by the
        load factor like a reference load, or by ``value`` from the start when
        ``constant`` (like a constant load). A DOF may carry both parts; imposing the
        same part twice adds up. The force the structure needs there is reported by
        ``path.reactions(i)`` like a support's. An imposed ``value`` of 0 is a support.

        Parameters
        ----------
        node : int
        dof : str
            ``"ux"``, ``"uy"`` (length) or ``"rz"`` (radians, counter-clockwise).
        value : float
        constant : bool

        Examples
        --------
        >>> import largerot as lr
        >>> s = lr.Structure()
        >>> a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
        >>> _ = s.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0), segments=4)
        >>> s.fix(a); s.impose(b, "rz", 6.283185307179586)   # rolled into a circle at λ = 1
        """
        node = self._check_node(node, "impose")
        k = dof_index(dof)
        v = _finite(f"Imposed {dof} on node {node}", value)
        constant = _flag("constant", constant)
        self._check_unclaimed(node, k, "imposed")
        key = (node, k, constant)
        self._imposed[key] = self._imposed.get(key, 0.0) + v
        self._changed()

    def roller(self, node: int, direction) -> None:
        """An inclined roller: the node may translate only along ``direction``.

        Its translation normal to ``direction`` is fixed (a bearing on a slope, a boom
        resting on a ramp); its rotation stays free unless fixed too
        (``s.fix(node, "rz")``). ``direction=(1, 0)`` is the same as ``s.fix(node, "uy")``.
        Displacements are still reported in x and y; ``path.reactions(i)`` gives the
        support force in x and y and ``path.inclined_reactions(i)`` its component along
        the normal n = (−dy, dx)/|d| (the rolling direction turned by +90°), one value
        per roller in the order of ``model.inclined_nodes``.

        Parameters
        ----------
        node : int
        direction : pair of float
            (dx, dy), the line along which the node rolls; any non-zero length.
        """
        node = self._check_node(node, "roller")
        if isinstance(direction, str) or not hasattr(direction, "__len__") or len(direction) != 2:
            raise TypeError(f"Roller at node {node}: `direction` must be a pair (dx, dy), got {direction!r}.")
        d = np.array([_finite(f"Roller at node {node} direction x", direction[0]),
                      _finite(f"Roller at node {node} direction y", direction[1])])
        n = float(np.hypot(*d))
        if n == 0.0:
            raise ModelError(f"Roller at node {node}: `direction` must be non-zero, got {tuple(direction)!r}.")
        if node in self._inclined:
            raise ModelError(f"Node {node} already has an inclined roller.")
        for k in (0, 1):
            self._check_unclaimed(node, k, "on an inclined roller")
        if (node, 0) in self._springs or (node, 1) in self._springs:
            raise ModelError(f"Node {node} has a spring on a translation; it cannot also be on "
                             "an inclined roller.")
        self._inclined[node] = (float(d[0] / n), float(d[1] / n))
        self._changed()

    def load(self, node: int | str, fx: float = 0.0, fy: float = 0.0, mz: float = 0.0,
             constant: bool = False, follower: bool = False) -> None:
        """Add a nodal load at a node (id or name): forces fx, fy and moment mz.

        The reference load is scaled by the load factor; a ``constant`` load is held
        at full value along the whole path (e.g. a dead weight present from the start).
        A ``follower`` force (fx, fy) turns with the node's rotation (a force carried
        by a bracket that rotates with the member); it needs a beam at the node.
        Loads on the same node and DOF add up.
        """
        node = self._check_node(node, "load")
        constant, follower = _flag("constant", constant), _flag("follower", follower)
        if follower:
            if _finite(f"Load mz on node {node}", mz) != 0.0:
                raise ModelError(f"Load on node {node}: a follower load is a force; give its moment separately.")
            v = (_finite(f"Load fx on node {node}", fx), _finite(f"Load fy on node {node}", fy))
            old = self._followers.get((node, bool(constant)), (0.0, 0.0))
            self._followers[(node, bool(constant))] = (old[0] + v[0], old[1] + v[1])
            self._changed()
            return
        for name, value in (("fx", fx), ("fy", fy), ("mz", mz)):
            v = _finite(f"Load {name} on node {node}", value)
            if v != 0.0:
                key = (node, _LOAD_DOFS[name], bool(constant))
                self._loads[key] = self._loads.get(key, 0.0) + v
        self._changed()

    def spring(self, node: int | str, dof: str, stiffness: float) -> None:
        """Attach a linear spring between a node's DOF and the ground.

        ``stiffness`` is a force per length for ``"ux"``/``"uy"`` (N/m in SI) and a
        moment per radian for ``"rz"`` (N·m/rad), in the structure's units.
        """
        node = self._check_node(node, "spring")
        dof_index(dof)
        k = _finite(f"Spring stiffness at node {node} {dof}", stiffness)
        if k <= 0.0:
            raise ModelError(f"Spring stiffness at node {node} {dof} must be positive, got {stiffness!r}.")
        if dof_index(dof) < 2 and node in self._inclined:
            raise ModelError(f"Node {node} is on an inclined roller; a spring on its {dof} "
                             "is not supported there.")
        key = (node, dof_index(dof))
        self._springs[key] = self._springs.get(key, 0.0) + k
        self._changed()

    def mass(self, node: int | str, m: float, inertia: float = 0.0) -> None:
        """A concentrated mass at a node (id or name): a payload, a lamp head.

        ``m`` acts on both translations and ``inertia`` (mass moment of inertia about
        the node) on the rotation; masses at the same node add up. They enter the
        mass matrix (:func:`largerot.mass.mass_matrix`) beside the members' own mass
        (from ``Section.density``), not the loads: for its weight add a load or use
        :meth:`gravity` on members. A mass on a restrained DOF moves with the support
        and does nothing; ``inertia`` at a node without rotational stiffness (no
        beam, or only hinged beam ends) is dropped with that rotation.

        Parameters
        ----------
        m : float
            Mass, ≥ 0, in the structure's units (kg in SI: force/acceleration).
        inertia : float
            Rotary inertia, ≥ 0 (kg·m² in SI).
        """
        node = self._check_node(node, "mass")
        m = checked_number(f"Mass at node {node}", "m", m, nonnegative=True)
        inertia = checked_number(f"Mass at node {node}", "inertia", inertia, nonnegative=True)
        masses = self.__dict__.setdefault("_masses", {})
        old = masses.get(node, (0.0, 0.0))
        masses[node] = (old[0] + m, old[1] + inertia)
        self._changed()

    def masses(self) -> dict:
        """Concentrated masses: {node id: (m, inertia)}."""
        return dict(self.__dict__.get("_masses", {}))

    def _mass_arrays(self) -> dict:
        masses = self.__dict__.get("_masses", {})
        nodes = sorted(masses)
        return {"mass_nodes": np.array(nodes, dtype=np.int64),
                "mass_values": np.array([masses[n] for n in nodes], dtype=float).reshape(-1, 2)}

    # -- tables --------------------------------------------------------------------
    @classmethod
    def from_tables(cls, nodes, members, supports=None, loads=None, *, sections=None,
                    fibres=None, contacts=None, masses=None, structure=None, units=None,
                    name=None) -> "Structure":
        """A structure from tables: pandas DataFrames or paths of CSV files.

        ``Structure.from_tables(**s.to_tables())`` gives back ``s`` exactly (its
        snapshot equal bit for bit). The columns of each table (``nodes``: id, x, y,
        name, member; ``members``: id, kind, start, end, segments, section, name,
        hinge, hinge_stiffness, unstretched_length...; ``sections``, ``fibres``,
        ``supports``, ``loads``, ``contacts``, ``masses``, ``structure``: name and units) are
        described in :mod:`largerot.tables`. ``sections`` may also be a dict
        ``{id: Section or FibreSection}``; ``units`` and ``name`` may be given here
        instead of in a ``structure`` table. Bad cells raise a ModelError naming the
        table, the row and the column.

        Examples
        --------
        >>> import pandas as pd, largerot as lr
        >>> s = lr.Structure.from_tables(
        ...     nodes=pd.DataFrame({"x": [0.0, 2.0], "y": [0.0, 0.0], "name": ["base", "tip"]}),
        ...     members=pd.DataFrame({"start": [0], "end": [1], "segments": [8], "E": [210e9],
        ...                           "A": [1e-3], "I": [1e-6]}),
        ...     supports=pd.DataFrame({"node": ["base"], "kind": ["fix"]}),
        ...     loads=pd.DataFrame({"kind": ["nodal"], "node": ["tip"], "fy": [-1e3]}))
        >>> s.members[0].nodes
        (0, 2, 3, 4, 5, 6, 7, 8, 1)
        """
        from .tables import from_tables
        return from_tables(nodes, members, supports, loads, sections=sections, fibres=fibres,
                           contacts=contacts, masses=masses, structure=structure, units=units,
                           name=name)

    def to_tables(self):
        """The structure as tables: a :class:`largerot.tables.Tables`, a dict of DataFrames
        (``structure``, ``nodes``, ``sections``, ``fibres``, ``members``, ``supports``,
        ``loads``, ``contacts``, ``masses``; columns in :mod:`largerot.tables`) that
        :meth:`from_tables` takes back; ``.to_csv(folder)`` writes them."""
        from .tables import to_tables
        return to_tables(self)

    # -- snapshot and copies ----------------------------------------------------
    def snapshot(self) -> Model:
        """The structure as it is now, frozen: what a trace and its path work on.

        Built once per state of the structure (cached until the next edit), so
        tracing the same structure twice shares the snapshot and its sparse pattern.
        """
        snap = self.__dict__.get("_snapshot")
        if snap is None or snap[0] != self._version:
            snap = (self._version, self._build_snapshot())
            self._snapshot = snap
        return snap[1]

    def _build_snapshot(self) -> Model:
        self._warn_fixed_loads()
        xy = self._xy.array()
        tables = {k: v.array() for k, v in self._elements.items()}
        bar_nodes = tables["bar"][:, :2]
        chord = np.hypot(*(xy[bar_nodes[:, 1]] - xy[bar_nodes[:, 0]]).T) if len(bar_nodes) else np.zeros(0)
        given = self._bar_L0.array()
        bar_length = np.where(np.isnan(given), chord, given) if len(given) else chord
        lengths = {"beam": np.hypot(*(xy[tables["beam"][:, 1]] - xy[tables["beam"][:, 0]]).T)
                   if len(tables["beam"]) else np.zeros(0), "bar": bar_length}
        spring_keys = sorted(self._springs)
        contact_obstacles = list(dict.fromkeys(o for _, o in self._contacts))
        return Model(
            xy=xy, beam_nodes=tables["beam"][:, :2], beam_sections=tables["beam"][:, 2],
            bar_nodes=bar_nodes, bar_sections=tables["bar"][:, 2], bar_length=bar_length,
            bar_cable=self._bar_cable.array(),
            sections=tuple(self._sections), members=tuple(self.members),
            fixed=np.array(sorted(3 * n + d for n, d in self._fixed), dtype=np.int64),
            spring_dofs=np.array([3 * n + d for n, d in spring_keys], dtype=np.int64),
            spring_k=np.array([self._springs[k] for k in spring_keys], dtype=float),
            F_ref=self._load_vector(False, len(xy), lengths),
            F_const=self._load_vector(True, len(xy), lengths),
            followers=tuple(self._follower_table(c) for c in (False, True)),
            pressures=tuple(self._pressure_table(c) for c in (False, True)),
            contact_nodes=np.array([n for n, _ in self._contacts], dtype=np.int64),
            obstacles=tuple(contact_obstacles),
            contact_obstacle=np.array([contact_obstacles.index(o) for _, o in self._contacts],
                                      dtype=np.int64),
            label=self.name, units=self.units, named_nodes=tuple(sorted(self._name_of.items())),
            nodal_loads=np.array([(n, d, v, float(c)) for (n, d, c), v in self._loads.items()],
                                 dtype=float).reshape(-1, 4),
            line_loads=tuple(self._line_loads), gravity=self._gravity,
            beam_hinge=self._beam_hinge(len(tables["beam"])),
            **self._imposed_arrays(), **self._inclined_arrays(), **self._mass_arrays())

    def _imposed_arrays(self) -> dict:
        """The snapshot's imposed displacements: global DOFs (sorted) and their
        scaled and constant values."""
        keys = sorted({(n, d) for n, d, _ in self._imposed})
        return {"imposed": np.array([3 * n + d for n, d in keys], dtype=np.int64),
                "imposed_ref": np.array([self._imposed.get((n, d, False), 0.0) for n, d in keys]),
                "imposed_const": np.array([self._imposed.get((n, d, True), 0.0) for n, d in keys])}

    def _inclined_arrays(self) -> dict:
        nodes = sorted(self._inclined)
        return {"inclined_nodes": np.array(nodes, dtype=np.int64),
                "inclined_direction": np.array([self._inclined[n] for n in nodes],
                                               dtype=float).reshape(-1, 2)}

    def _warn_fixed_loads(self) -> None:
        """An InputWarning for nodal loads on restrained DOFs: the support takes them."""
        held = self._fixed | {(n, d) for n, d, _ in self._imposed}
        on_fixed = sorted({(n, d) for n, d, _ in self._loads if (n, d) in held}
                          | {(n, d) for (n, _), f in self._followers.items()
                             for d in (0, 1) if f[d] and (n, 0) in self._fixed and (n, 1) in self._fixed})
        if on_fixed:
            names = ", ".join(f"node {n} {DOFS[d]}" for n, d in on_fixed[:8])
            more = f" and {len(on_fixed) - 8} more" if len(on_fixed) > 8 else ""
            warn_input(f"Loads on restrained DOFs ({names}{more}) go straight into the supports "
                       "and move nothing; load a free DOF, or release the support.")

    def copy(self) -> "Structure":
        """An independent copy: later edits of either do not reach the other."""
        return copy.deepcopy(self)

    def moved(self, xy) -> "Structure":
        """A copy with the nodes at new undeformed positions ``xy``, shape (n_nodes, 2).

        Members, sections, supports and loads are kept; the new structure is
        stress-free in its new shape (e.g. an imperfect one, :func:`largerot.imperfect`).
        """
        xy = np.asarray(xy, dtype=float)
        if xy.shape != (self.n_nodes, 2):
            raise ModelError(f"`xy` must have shape ({self.n_nodes}, 2), got {xy.shape}.")
        bad = np.flatnonzero(~(np.abs(xy) <= MAX_COORDINATE).all(axis=1))
        if len(bad):
            raise ModelError(f"Node {int(bad[0])} would move to a non-finite position "
                             f"{xy[bad[0]].tolist()} (or one beyond ±{MAX_COORDINATE:g}).")
        new = self.copy()
        new._xy = _Rows.of(xy)
        new._changed()
        return new

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state.pop("_snapshot", None)          # a cache, rebuilt on demand
        return state

    def __setstate__(self, state: dict) -> None:
        # a Structure saved before units, names, imposed displacements and inclined
        # rollers existed: SI, nothing named, nothing imposed
        self.__dict__.update(units=Units(), name="", _named={}, _name_of={}, _imposed={},
                             _inclined={})
        self.__dict__.setdefault("_masses", {})      # saved before nodal masses existed
        self.__dict__.update(state)

    def __deepcopy__(self, memo) -> "Structure":
        new = Structure.__new__(Structure)
        memo[id(self)] = new
        new.__dict__.update(copy.deepcopy(self.__getstate__(), memo))
        return new

    # -- queries (answered by the snapshot) -------------------------------------
    @property
    def sections(self) -> tuple:
        return tuple(self._sections)

    def element_table(self, kind: str) -> tuple[np.ndarray, np.ndarray]:
        """Node pairs, shape (n_elements, 2), and section ids, shape (n_elements,)."""
        return self.snapshot().element_table(kind)

    def fixed_dofs(self) -> np.ndarray:
        """Global indices (3·node + dof) of restrained DOFs, sorted."""
        return self.snapshot().fixed_dofs()

    def load_vector(self, constant: bool = False) -> np.ndarray:
        """Dead reference (or constant) loads as nodal forces, shape (3·n_nodes,).

        Nodal loads, dead line loads and self-weight; follower loads depend on the
        deformation and are evaluated by the assembly.
        """
        return self.snapshot().load_vector(constant)

    def element_lengths(self, kind: str) -> np.ndarray:
        """Unstretched length of every element of a kind, shape (n_elements,)."""
        return self.snapshot().element_lengths(kind)

    def tension_only(self) -> np.ndarray:
        """Which bar elements are cable segments, shape (n_bar_elements,), bool."""
        return self.snapshot().tension_only()

    def follower_table(self, constant: bool = False) -> tuple[np.ndarray, np.ndarray]:
        """Nodes with follower forces and the forces at zero rotation, shapes (n,), (n, 2)."""
        return self.snapshot().follower_table(constant)

    def pressure_table(self, constant: bool = False) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Follower line loads per element: kind ("beam"/"bar") of each row, element
        index in its table, and (normal, tangential) per unit deformed length."""
        return self.snapshot().pressure_table(constant)

    def spring_table(self) -> tuple[np.ndarray, np.ndarray]:
        """Global DOF indices and stiffnesses of grounded springs."""
        return self.snapshot().spring_table()

    # -- snapshot ingredients ------------------------------------------------------
    def _load_vector(self, constant: bool, n_nodes: int, lengths: dict) -> np.ndarray:
        f = np.zeros(3 * n_nodes)
        for (n, d, c), v in self._loads.items():
            if c == constant:
                f[3 * n + d] += v
        for mid, qx, qy, _, _, c in self._line_loads:
            if c == constant and (qx or qy):
                _spread(f, self.members[mid], np.array([qx, qy]), lengths)
        if self._gravity is not None and self._gravity[3] == constant:
            g, dx, dy, _ = self._gravity
            for m in self.members:
                if m.section.density > 0.0:
                    _spread(f, m, m.section.density * m.section.A * g * np.array([dx, dy]), lengths)
        return f

    def _follower_table(self, constant: bool) -> tuple[np.ndarray, np.ndarray]:
        keys = sorted(k for k in self._followers if k[1] == constant)
        nodes = np.array([k[0] for k in keys], dtype=np.int64)
        return nodes, np.array([self._followers[k] for k in keys], dtype=float).reshape(-1, 2)

    def _pressure_table(self, constant: bool):
        kinds, elems, vals = [], [], []
        for mid, _, _, p, t, c in self._line_loads:
            if c == constant and (p or t):
                m = self.members[mid]
                n = len(m.elements)
                kinds.append(np.full(n, "bar" if m.kind == "cable" else m.kind, dtype=object))
                elems.append(np.asarray(m.elements, dtype=np.int64))
                vals.append(np.tile([p, t], (n, 1)))
        return (np.concatenate(kinds + [np.zeros(0, object)]),
                np.concatenate(elems + [np.zeros(0, np.int64)]),
                np.concatenate(vals + [np.zeros((0, 2))]).astype(float))

    def __repr__(self) -> str:
        nb = len(self._elements["beam"])
        nc = int(self._bar_cable.array().sum())
        nr = len(self._elements["bar"]) - nc
        cables = f", {nc} cable" if nc else ""
        return (f"Structure({self.n_nodes} nodes, {len(self.members)} members: "
                f"{nb} beam and {nr} bar{cables} elements)")
