"""Element groups: every kind of element (and load) behind one small protocol.

A group holds all elements of one kind as stacked arrays (geometry, stiffness, DOF
map) and answers, for element displacements ``ue`` of shape (n_elements, n_dof):

``evaluate(ue, state, tangent)``
    forces (n_elements, n_dof), tangents (n_elements, n_dof, n_dof), the trial
    history (for groups with one) and per-element results, as a :class:`GroupResult`;
``record(result)``
    the per-point data a path keeps (yielded fibres, contact forces, slack cables);
``forces(ue, record)``
    nodal forces at a recorded point from its displacements and its record (so a
    history-dependent element needs no history to report its forces);
``end_forces(ue, record)``
    axial force, shear and end moments, for the member-force tables;
``stress_stiffness(ue)``
    the geometric stiffness of the linear state ``ue`` (for linear buckling);
``events``
    the event functions the group contributes (first yield, contact, cable slack);
``chords``
    for beams, ``(translation DOF map (n_elements, 4), dX (n_elements, 2), EA/L0
    (n_elements,))``: the chords the path predictor keeps consistent with the
    predicted rotations (:mod:`largerot.solvers.predictor`); None for other kinds.

Groups with history (fibre beams, contacts) return it from ``initial_state()``; the
history is plain data owned by the stepper and passed in. ``augment`` and
``calibrated`` are the hooks of constraint groups (contact's Uzawa updates and
penalty); other groups inherit no-ops. Kernels are module-level functions, so every
group pickles.

:func:`build_groups` is the registry: the one place that turns a model's element
tables into groups. Nothing else asks a group what kind it is.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import NamedTuple

import numpy as np

from . import fibres, loads
from .elements import bar, beam, contact, fibre_beam, releases, timoshenko
from .elements._chord import chord
from .errors import ModelError
from .snapshot import Model

__all__ = ["Group", "GroupResult", "EventFunction", "BeamGroup", "FibreBeamGroup",
           "TimoshenkoBeamGroup", "BarGroup",
           "SpringGroup", "ContactGroup", "LoadGroup", "build_groups", "build_loads",
           "consistent_axial"]


class GroupResult(NamedTuple):
    f: np.ndarray              #: element forces, shape (n_elements, n_dof)
    K: np.ndarray | None       #: element tangents, shape (n_elements, n_dof, n_dof)
    state: object              #: trial history (None for groups without one)
    out: dict                  #: per-element results of the kernel


@dataclass(frozen=True)
class EventFunction:
    """An event a group can raise: a recorded quantity crossing zero.

    Attributes
    ----------
    kind : str
        Name of the event (``"first yield"``).
    key : str
        Entry of a point's record whose values (one per item) cross zero.
    direction : int
        +1: the event is a crossing from negative to non-negative; −1: from positive
        to non-positive.
    labels : tuple of str
        What each item is (``"node 12"``), for the event's detail.
    locate_key : str
        Entry whose zero is searched when locating the event (default ``key``), on the
        path as the group continues it from the side before the event
        (:meth:`Group.before_event`): e.g. a contact closes where the gap of the *open*
        path reaches zero.
    """

    kind: str
    key: str
    direction: int
    labels: tuple = ()
    locate_key: str = ""

    def values(self, record: dict) -> np.ndarray:
        return np.atleast_1d(np.asarray(record[self.key], dtype=float))

    def locate_values(self, record: dict) -> np.ndarray:
        return np.atleast_1d(np.asarray(record[self.locate_key or self.key], dtype=float))

    def crossings(self, before: dict, after: dict) -> np.ndarray:
        """Items whose value crosses zero in this event's direction, between two records."""
        a, b = self.values(before), self.values(after)
        hit = (a < 0.0) & (b >= 0.0) if self.direction > 0 else (a > 0.0) & (b <= 0.0)
        return np.flatnonzero(hit)

    def label(self, k: int) -> str:
        return self.labels[k] if k < len(self.labels) else ""


@dataclass(eq=False)
class Group:
    """Base of the element groups; see the module docstring for the protocol."""

    dofmap: np.ndarray                       #: shape (n_elements, n_dof), global DOFs
    table: str | None = field(default=None, init=False)   #: member-force table it fills
    rows: np.ndarray | None = field(default=None, init=False)  #: its rows in that table
    name: str = field(default="", init=False)  #: key of its history
    #: Newton's corrections may move the beams' nodes by the chord fit
    #: (:mod:`largerot.solvers.predictor`) while this group is in the model
    chord_fit: bool = field(default=True, init=False)

    def initial_state(self):
        return None

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state.pop("_kernel", None)            # a cache of constant data, rebuilt on use
        return state

    def evaluate(self, ue: np.ndarray, state, tangent: bool = True) -> GroupResult:
        raise NotImplementedError

    def record(self, res: GroupResult) -> dict:
        return {}

    def forces(self, ue: np.ndarray, record: dict) -> np.ndarray:
        return self.evaluate(ue, self.initial_state(), False).f

    def end_forces(self, ue: np.ndarray, record: dict) -> dict | None:
        return None

    def held(self) -> np.ndarray:
        """Global DOFs this group gives stiffness to: all of its DOF map unless a
        group says otherwise (a beam's hinged end holds no rotation)."""
        return self.dofmap.ravel()

    def stress_stiffness(self, ue: np.ndarray) -> np.ndarray:
        raise NotImplementedError(f"{type(self).__name__} has no geometric stiffness for linear buckling.")

    @property
    def events(self) -> tuple:
        return ()

    def before_event(self, state, event: EventFunction):
        """History that continues the side before ``event`` (to locate it), default as is."""
        return state

    @property
    def chords(self):
        """Beams' chords for the path predictor (module docstring), else None."""
        return None

    def augment(self, res: GroupResult, state, length_scale: float):
        """New history if the converged point must be solved again (contacts), else None."""
        return None

    def calibrated(self, state, res: GroupResult, fact, free_index: np.ndarray):
        """History adjusted to the structure's stiffness at a converged point (contacts)."""
        return state


def _geometry(xy: np.ndarray, nodes: np.ndarray):
    dX = xy[nodes[:, 1]] - xy[nodes[:, 0]]
    return dX, np.hypot(dX[:, 0], dX[:, 1])


def _dofmap(nodes: np.ndarray, node_dofs: tuple) -> np.ndarray:
    d = np.asarray(node_dofs)
    return np.concatenate([3 * nodes[:, [0]] + d, 3 * nodes[:, [1]] + d], axis=1)


def _central(fun, ue: np.ndarray, length_scale: float) -> np.ndarray:
    """d fun(t·ue)/dt at t = 0 by a central difference (exact to O(h²): the quadratic part cancels)."""
    h = BUCKLING_PROBE * length_scale / max(float(np.abs(ue).max(initial=0.0)), 1e-300)
    return (fun(h * ue) - fun(-h * ue)) / (2.0 * h)


#: Probe size for the element forces of a linear state, share of the structure's
#: size: linear to ~1e-8 after the central difference, far above round-off.
BUCKLING_PROBE = 1e-4


def consistent_axial(N: np.ndarray, L: np.ndarray, c: np.ndarray, s: np.ndarray,
                     rotation_map: np.ndarray | None = None) -> np.ndarray:
    """Consistent geometric stiffness of cubic (Hermite) bending under axial force N.

    In local (v1, θ1, v2, θ2): N/(30L)·[[36, 3L, −36, 3L], [3L, 4L², −3L, −L²],
    [−36, −3L, 36, −3L], [3L, −L², −3L, 4L²]] (Przemieniecki 1968, *Theory of Matrix
    Structural Analysis*, from memory), rotated to global DOFs; shape (n_elements, 6, 6).
    Buckling loads then converge as h⁴ (10 elements: ~1e-5 for Euler columns), where
    the corotational tangent's chord-only term (the 36/30 → 1 lumping) converges as h².

    With released ends, ``rotation_map`` A, shape (n_elements, 2, 2)
    (:func:`largerot.elements.releases.rotation_map`), gives the element's own end
    rotations φ = A·θ + (I − A)·1·β from the node rotations θ and the chord rotation
    β = (v2 − v1)/L; the matrix above is taken on (v1, φ1, v2, φ2): the geometric
    stiffness of the condensed element's own cubic.
    """
    kl = np.array([[36, 3, -36, 3], [3, 4, -3, -1], [-36, -3, 36, -3], [3, -1, -3, 4]], float)
    powers = np.array([[0, 1, 0, 1], [1, 2, 1, 2], [0, 1, 0, 1], [1, 2, 1, 2]])
    Kl = (N / (30 * L))[:, None, None] * kl * L[:, None, None] ** powers
    if rotation_map is not None:
        A = rotation_map
        R = np.zeros((len(L), 4, 4))              # (v1, φ1, v2, φ2) from (v1, θ1, v2, θ2)
        R[:, 0, 0] = R[:, 2, 2] = 1.0
        R[:, 1::2, 1::2] = A
        beta = (1.0 - A.sum(axis=2)) / L[:, None]   # (1 − Σ_j A_ij)/L, per row i
        R[:, 1::2, 0] = -beta
        R[:, 1::2, 2] = beta
        Kl = np.einsum("eki,ekl,elj->eij", R, Kl, R)
    T = np.zeros((len(L), 4, 6))
    T[:, 0, 0], T[:, 0, 1] = -s, c
    T[:, 1, 2] = 1.0
    T[:, 2, 3], T[:, 2, 4] = -s, c
    T[:, 3, 5] = 1.0
    return np.einsum("eki,ekl,elj->eij", T, Kl, T)


def beam_stress_stiffness(dX: np.ndarray, L0: np.ndarray, q: np.ndarray,
                          rotation_map: np.ndarray | None = None) -> np.ndarray:
    """Geometric stiffness of beams with local forces q = (N, M1, M2) at the undeformed geometry.

    Consistent axial part (:func:`consistent_axial`) plus the end-moment terms of the
    corotational tangent; shape (n_elements, 6, 6). ``rotation_map``: released
    ends (:func:`consistent_axial`).
    """
    c, s = dX[:, 0] / L0, dX[:, 1] / L0
    zero = np.zeros_like(c)
    r = np.stack([-c, -s, zero, c, s, zero], axis=1)
    z = np.stack([s, -c, zero, -s, c, zero], axis=1) / L0[:, None]
    return (consistent_axial(q[:, 0], L0, c, s, rotation_map)
            + ((q[:, 1] + q[:, 2]) / L0)[:, None, None]
            * (np.einsum("ei,ej->eij", r, z) + np.einsum("ei,ej->eij", z, r)))


def bar_stress_stiffness(dX: np.ndarray, N: np.ndarray) -> np.ndarray:
    """Geometric stiffness N/L·z⊗z of bars at the undeformed chord dX, shape (n_elements, 4, 4)."""
    L0 = np.hypot(dX[:, 0], dX[:, 1])
    c, s = dX[:, 0] / L0, dX[:, 1] / L0
    z = np.stack([s, -c, -s, c], axis=1)
    return (N / L0)[:, None, None] * np.einsum("ei,ej->eij", z, z)


def _beam_end_forces(q: np.ndarray, l: np.ndarray) -> dict:
    N, M1, M2 = q.T
    return {"N": N, "V": (M1 + M2) / l, "M": np.stack([-M1, M2], axis=1)}


def _beam_chords(g) -> tuple:
    """(translation DOF map (n, 4), dX (n, 2), EA/L0 (n,)) of a beam group."""
    return g.dofmap[:, [0, 1, 3, 4]], g.dX, g.EA / g.L0


# -- groups ---------------------------------------------------------------------------
@dataclass(eq=False)
class BeamGroup(Group):
    """Elastic corotational Euler–Bernoulli beams (:mod:`largerot.elements.beam`).

    Elements with released ends form a group of their own whose ``bending``, shape
    (n_elements, 2, 2), holds their bending stiffness per EI/L0
    (:mod:`largerot.elements.releases`); None for rigidly connected elements.
    """

    dX: np.ndarray = None
    L0: np.ndarray = None
    EA: np.ndarray = None
    EI: np.ndarray = None
    length_scale: float = 1.0
    bending: np.ndarray | None = None

    def __post_init__(self) -> None:
        self.table, self.name = "beam", "beam"

    @property
    def kernel(self) -> beam.Beams:
        """The group's beams with their constant data prepared (built on first use)."""
        k = self.__dict__.get("_kernel")
        if k is None:
            k = self._kernel = beam.Beams(self.dX, self.L0, self.EA, self.EI, self.bending)
        return k

    def evaluate(self, ue, state=None, tangent=True) -> GroupResult:
        res = self.kernel.response(ue, tangent)
        return GroupResult(res.f, res.K, None, {"q": res.q, "l": res.l})

    def end_forces(self, ue, record):
        res = self.kernel.response(ue, False)
        return _beam_end_forces(res.q, res.l)

    def held(self):
        if self.bending is None:
            return self.dofmap.ravel()
        keep = np.ones(self.dofmap.shape, bool)
        keep[:, 2] = self.bending[:, 0, 0] > 0.0         # a free hinge holds no rotation
        keep[:, 5] = self.bending[:, 1, 1] > 0.0
        return self.dofmap[keep]

    def stress_stiffness(self, ue):
        bending = getattr(self, "bending", None)       # fibre beams have no releases
        q = _central(lambda x: beam.response(self.dX, self.L0, x, self.EA, self.EI, False, bending).q,
                     ue, self.length_scale)
        A = None if bending is None else releases.rotation_map(bending)
        return beam_stress_stiffness(self.dX, self.L0, q, A)

    @property
    def chords(self):
        return _beam_chords(self)


@dataclass(eq=False)
class TimoshenkoBeamGroup(Group):
    """Elastic corotational shear-flexible beams (:mod:`largerot.elements.timoshenko`),
    for sections with a shear stiffness (``Section(..., G=, shear_factor=)``)."""

    dX: np.ndarray = None
    L0: np.ndarray = None
    EA: np.ndarray = None
    EI: np.ndarray = None
    GAs: np.ndarray = None
    length_scale: float = 1.0

    def __post_init__(self) -> None:
        self.table, self.name = "beam", "timoshenko beam"

    def _response(self, ue, tangent):
        return timoshenko.response(self.dX, self.L0, ue, self.EA, self.EI, self.GAs, tangent)

    def evaluate(self, ue, state=None, tangent=True) -> GroupResult:
        res = self._response(ue, tangent)
        return GroupResult(res.f, res.K, None, {"q": res.q, "l": res.l})

    def end_forces(self, ue, record):
        res = self._response(ue, False)
        return _beam_end_forces(res.q, res.l)

    def stress_stiffness(self, ue):
        q = _central(lambda x: self._response(x, False).q, ue, self.length_scale)
        return timoshenko.stress_tangent(self.dX, self.L0, q, 12.0 * self.EI / (self.GAs * self.L0**2))

    @property
    def chords(self):
        return _beam_chords(self)


@dataclass(eq=False)
class FibreBeamGroup(Group):
    """Corotational beams with elastic–plastic fibre sections (:mod:`largerot.elements.fibre_beam`).

    History: the fibres' :class:`~largerot.materials.MaterialState`. Its record keeps
    the local forces ``fibre_q`` of each point, from which its forces are rebuilt.
    """

    dX: np.ndarray = None
    L0: np.ndarray = None
    fibres: fibres.FibreTable = None
    depth: np.ndarray = None            #: section depth, E and fy per element, for first yield
    E: np.ndarray = None
    fy: np.ndarray = None
    EA: np.ndarray = None               #: elastic stiffness, for linear buckling
    EI: np.ndarray = None
    length_scale: float = 1.0

    def __post_init__(self) -> None:
        self.table, self.name = "beam", "fibre beam"

    def initial_state(self):
        return fibre_beam.initial_state(len(self.L0), self.fibres.y.shape[-1])

    def evaluate(self, ue, state, tangent=True) -> GroupResult:
        res = fibre_beam.response(self.dX, self.L0, ue, self.fibres, state, tangent=tangent)
        return GroupResult(res.f, res.K, res.state,
                           {"q": res.q, "l": res.l, "eps0": res.eps0, "kappa": res.kappa})

    def record(self, res: GroupResult) -> dict:
        virgin = res.state.acc.max(initial=0.0) == 0.0
        margin = fibres.first_yield_margin(res.out["eps0"], res.out["kappa"], self.depth[:, None],
                                           self.E[:, None], self.fy[:, None]).max(initial=-1.0)
        return {"fibre_q": res.out["q"],
                "yielded": fibres.yielded_fraction(res.state, self.fibres.dA[:, None, :]),
                # zero at first yield; held at ≥ 0 afterwards so it crosses zero once
                "yield_margin": np.array(margin if virgin else max(margin, 0.0))}

    def _chord(self, ue):
        return chord(self.dX, ue[:, 3:5] - ue[:, 0:2], self.L0)

    def forces(self, ue, record):
        l, _, c, s = self._chord(ue)
        return beam.corotate(c, s, l, record["fibre_q"])[0]

    def end_forces(self, ue, record):
        return _beam_end_forces(record["fibre_q"], self._chord(ue)[0])

    # linear buckling is an elastic analysis: the elastic beam's, with the sections'
    # elastic EA and EI
    stress_stiffness = BeamGroup.stress_stiffness

    @property
    def events(self):
        return (EventFunction("first yield", "yield_margin", +1, ("fibre beams",)),)

    @property
    def chords(self):
        return _beam_chords(self)


@dataclass(eq=False)
class BarGroup(Group):
    """Corotational bars, cable segments among them (tension only)."""

    dX: np.ndarray = None
    L0: np.ndarray = None               #: unstretched lengths
    EA: np.ndarray = None
    cable: np.ndarray = None            #: tension-only segments, bool
    length_scale: float = 1.0

    def __post_init__(self) -> None:
        self.table, self.name = "bar", "bar"
        self._cables = np.flatnonzero(self.cable)

    def evaluate(self, ue, state=None, tangent=True) -> GroupResult:
        res = bar.response(self.dX, self.L0, ue, self.EA, self.cable if len(self._cables) else None,
                           tangent)
        return GroupResult(res.f, res.K, None, {"N": res.N, "l": res.l})

    def record(self, res: GroupResult) -> dict:
        if not len(self._cables):
            return {}
        l, N = res.out["l"][self._cables], res.out["N"][self._cables]
        return {"slack": N == 0.0, "cable_stretch": (l - self.L0[self._cables]) / self.L0[self._cables]}

    def end_forces(self, ue, record):
        N = self.evaluate(ue, None, False).out["N"]
        return {"N": N, "slack": self.cable & (N == 0.0)}

    def stress_stiffness(self, ue):
        N = _central(lambda x: self.evaluate(x, None, False).out["N"], ue, self.length_scale)
        return bar_stress_stiffness(self.dX, N)

    @property
    def events(self):
        if not len(self._cables):
            return ()
        labels = tuple(f"bar element {k}" for k in self._cables)
        return (EventFunction("cable slack", "cable_stretch", -1, labels),
                EventFunction("cable taut", "cable_stretch", +1, labels))


@dataclass(eq=False)
class SpringGroup(Group):
    """Linear springs between single DOFs and the ground; ``dofmap`` shape (n_springs, 1)."""

    k: np.ndarray = None

    def __post_init__(self) -> None:
        self.name = "spring"

    def evaluate(self, ue, state=None, tangent=True) -> GroupResult:
        K = self.k[:, None, None].copy() if tangent else None
        return GroupResult(self.k[:, None] * ue, K, None, {})

    def stress_stiffness(self, ue):
        return np.zeros((len(self.k), 1, 1))     # a grounded spring carries no pre-stress


@dataclass(eq=False)
class ContactGroup(Group):
    """Node-to-obstacle contacts by the augmented Lagrangian (:mod:`largerot.elements.contact`).

    History: the multipliers ``lam`` (Uzawa updates) and the penalties ``penalty``.
    """

    nodes: np.ndarray = None
    X: np.ndarray = None                 #: undeformed position of each contact's node
    obstacles: contact.ObstacleTable = None

    def __post_init__(self) -> None:
        self.name = "contact"
        # a stop holds its node (penalty ~1000× the structure's stiffness) where the
        # straight correction puts it; refitted by the chords it is pushed off again,
        # and Newton cycles (measured: 8 cuts in 13 points on the floor case)
        self.chord_fit = False

    def initial_state(self):
        n = len(self.nodes)
        return {"lam": np.zeros(n), "penalty": np.ones(n)}

    def evaluate(self, ue, state, tangent=True) -> GroupResult:
        res = contact.response(self.X, ue, self.obstacles, state["lam"], state["penalty"], tangent,
                               bilateral=state.get("bilateral"))
        return GroupResult(res.f, res.K, state, {"response": res})

    def record(self, res: GroupResult) -> dict:
        cr = res.out["response"]
        return {"contact_force": cr.p, "gap": cr.g,
                "contact_event": contact.event_value(cr, res.state["penalty"]),
                "contact_force_bilateral": cr.trial}

    def before_event(self, state, event):
        """Open contacts stay open (no penalty); closed ones stay closed, held by the
        penalty alone (bilateral, no multiplier): its force −ε·g is zero exactly where
        the exact contact force is, at g = 0, so the zero is located without Uzawa
        updates."""
        if event.kind == "contact closes":
            return {"lam": np.zeros_like(state["lam"]), "penalty": np.zeros_like(state["penalty"])}
        return {"lam": np.zeros_like(state["lam"]), "penalty": state["penalty"],
                "bilateral": np.ones(len(self.nodes), bool)}

    def forces(self, ue, record):
        n = contact.gap(self.obstacles, self.X + ue).n
        return -np.asarray(record["contact_force"])[:, None] * n

    def stress_stiffness(self, ue):
        # the linear buckling state is measured from rest, where contacts are open
        return np.zeros((len(self.nodes), 2, 2))

    @property
    def events(self):
        labels = tuple(f"node {n}" for n in self.nodes)
        # located on the path continued from before: the open gap reaching zero, or
        # the force of the contact held closed reaching zero
        return (EventFunction("contact closes", "contact_event", -1, labels, "gap"),
                EventFunction("contact opens", "contact_event", +1, labels, "contact_force_bilateral"))

    def augment(self, res, state, length_scale):
        cr = res.out["response"]
        if contact.converged(cr, contact.GAP_TOL * length_scale):
            return None
        return {"lam": contact.updated_multipliers(cr), "penalty": state["penalty"]}

    def calibrated(self, state, res, fact, free_index):
        """Penalties from the structure's own stiffness along each contact's normal.

        k = 1/(nᵀ·F·n) with F the node's 2×2 block of K⁻¹ (from the factorised tangent
        ``fact``), less the penalty spring of a closed contact; ε = ``PENALTY_FACTOR``·k
        (:mod:`largerot.elements.contact`). Called at converged points, so ε follows the
        structure as it rotates.
        """
        fi = free_index[self.dofmap]                          # (n_contacts, 2)
        if np.any(fi < 0):
            bad = int(self.nodes[np.flatnonzero((fi < 0).any(axis=1))[0]])
            raise ModelError(f"Node {bad} is in contact but its translations are restrained; "
                             "a supported node cannot touch an obstacle.")
        cr = res.out["response"]
        n = len(fi)
        rhs = np.zeros((fact.n, 2 * n))
        cols = np.arange(2 * n)
        rhs[fi.ravel(), cols] = 1.0
        x = fact.solve(rhs)                                   # (n_free, 2·n_contacts)
        F = x[fi.ravel()][:, cols].reshape(n, 2, n, 2)[np.arange(n), :, np.arange(n), :]
        flex = np.einsum("ci,cij,cj->c", cr.n, F, cr.n)
        k = np.where(flex > 0, 1.0 / np.where(flex > 0, flex, 1.0), 0.0)
        k = np.where(cr.active, k - state["penalty"], k)
        if not np.all(k > 0):
            k = np.where(k > 0, k, np.abs(fact.K.diagonal())[fi].max(axis=1))
        return {"lam": state["lam"], "penalty": contact.penalty_from_stiffness(k)}


@dataclass(eq=False)
class LoadGroup:
    """Follower loads of one kind on a DOF map: ``load(ue) -> (f, dfdu)``.

    ``constant`` loads are held at full value; the others scale with λ.
    """

    dofmap: np.ndarray
    constant: bool
    positions: np.ndarray | None = field(default=None, init=False)

    def load(self, ue: np.ndarray):
        raise NotImplementedError


@dataclass(eq=False)
class NodeFollowerGroup(LoadGroup):
    F0: np.ndarray = None

    def load(self, ue):
        return loads.node_follower(self.F0, ue)


@dataclass(eq=False)
class LineFollowerGroup(LoadGroup):
    dX: np.ndarray = None
    pt: np.ndarray = None

    def load(self, ue):
        return loads.line_follower(self.dX, self.pt, ue)


# -- registry -------------------------------------------------------------------------
def build_groups(model: Model) -> list:
    """The element groups of a model (the registry: the only switch on element kind)."""
    xy, scale = model.xy, model.length_scale
    secs = model.sections
    out: list[Group] = []
    nodes, sec = model.beam_nodes, model.beam_sections
    is_fibre = np.array([isinstance(x, fibres.FibreSection) for x in secs], bool)
    fibre_rows = is_fibre[sec] if len(sec) else np.zeros(0, bool)
    EA = np.array([s.EA for s in secs])
    EI = np.array([s.EI for s in secs])
    # shear-flexible elastic sections (a FibreSection has no G: its beams stay Euler–Bernoulli)
    GAs = np.array([getattr(s, "GAs", None) or 0.0 for s in secs])
    shear_rows = GAs[sec] > 0.0 if len(sec) else np.zeros(0, bool)
    hinge = getattr(model, "beam_hinge", None)     # None: no released ends (older snapshots too)
    released = (np.isfinite(hinge).any(axis=1) if hinge is not None
                else np.zeros(len(sec), bool))
    if (released & fibre_rows).any():
        e = int(np.flatnonzero(released & fibre_rows)[0])
        raise ModelError(f"Beam element {e} has a released end but a fibre section: end "
                         "releases are supported on elastic sections only.")
    if (released & shear_rows).any():
        e = int(np.flatnonzero(released & shear_rows)[0])
        raise ModelError(f"Beam element {e} has a released end but a shear-flexible section "
                         "(G given): end releases are supported on Euler–Bernoulli beams only.")
    for rows in (np.flatnonzero(~fibre_rows & ~shear_rows & ~released), np.flatnonzero(fibre_rows),
                 np.flatnonzero(shear_rows), np.flatnonzero(released)):
        if not len(rows):
            continue
        n, sc = nodes[rows], sec[rows]
        dX, L0 = _geometry(xy, n)
        dm = _dofmap(n, beam.NODE_DOFS)
        if fibre_rows[rows[0]]:
            used = sorted(set(sc.tolist()))
            g = FibreBeamGroup(dm, dX=dX, L0=L0, fibres=fibres.stack([secs[i] for i in used],
                                                                    np.searchsorted(used, sc)),
                               depth=np.array([secs[i].depth for i in sc]),
                               E=np.array([secs[i].E for i in sc]),
                               fy=np.array([secs[i].fy for i in sc]),
                               EA=EA[sc], EI=EI[sc], length_scale=scale)
        elif shear_rows[rows[0]]:
            g = TimoshenkoBeamGroup(dm, dX=dX, L0=L0, EA=EA[sc], EI=EI[sc], GAs=GAs[sc],
                                    length_scale=scale)
        elif released[rows[0]]:
            g = BeamGroup(dm, dX=dX, L0=L0, EA=EA[sc], EI=EI[sc], length_scale=scale,
                          bending=releases.bending_factors(hinge[rows], EI[sc], L0))
        else:
            g = BeamGroup(dm, dX=dX, L0=L0, EA=EA[sc], EI=EI[sc], length_scale=scale)
        g.rows = rows
        out.append(g)
    nodes, sec = model.bar_nodes, model.bar_sections
    if len(nodes):
        dX, _ = _geometry(xy, nodes)
        g = BarGroup(_dofmap(nodes, bar.NODE_DOFS), dX=dX, L0=model.bar_length, EA=EA[sec],
                     cable=model.bar_cable, length_scale=scale)
        g.rows = np.arange(len(nodes))
        out.append(g)
    if len(model.spring_dofs):
        out.append(SpringGroup(model.spring_dofs[:, None], k=model.spring_k))
    if len(model.contact_nodes):
        cn = model.contact_nodes
        table = contact.table(list(model.obstacles), model.contact_obstacle)
        g0 = contact.gap(table, xy[cn]).g
        inside = np.flatnonzero(g0 < 0.0)
        if len(inside):
            raise ModelError(f"Node {int(cn[inside[0]])} starts inside its obstacle "
                             f"(gap {g0[inside[0]]:.4g}); move the node or the obstacle.")
        out.append(ContactGroup(3 * cn[:, None] + np.arange(2), nodes=cn, X=xy[cn], obstacles=table))
    return out


def build_loads(model: Model) -> list:
    """Follower load groups (nodal forces that turn, pressures on deformed chords)."""
    out: list[LoadGroup] = []
    tables = {"beam": model.beam_nodes, "bar": model.bar_nodes}
    for constant in (False, True):
        nodes, F0 = model.follower_table(constant)
        if len(nodes):
            out.append(NodeFollowerGroup(3 * nodes[:, None] + np.arange(3), constant, F0=F0))
        kinds, elems, pt = model.pressure_table(constant)
        if len(elems):
            pairs = np.array([tables[k][e] for k, e in zip(kinds, elems)]).reshape(-1, 2)
            dX = model.xy[pairs[:, 1]] - model.xy[pairs[:, 0]]
            out.append(LineFollowerGroup(_dofmap(pairs, (0, 1)), constant, dX=dX, pt=pt))
    return out
