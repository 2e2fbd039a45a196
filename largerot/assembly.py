"""From a :class:`~largerot.model.Structure` to global residual and sparse tangent.

The sparse pattern of the tangent over the free DOFs is built once per structure:
every element-matrix entry gets its position in the CSC data array (constrained
entries go to a dump slot past the end), so each iteration only scatters numbers
with one ``bincount``.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np
import scipy.sparse as sp

from . import fibres, loads
from .elements import bar, beam, contact, fibre_beam
from .elements._chord import chord
from .errors import ModelError
from .model import DOFS, Structure

__all__ = ["Assembly", "ElementGroup", "LoadGroup", "dof_label"]


def dof_label(g: int) -> str:
    """Readable name of a global DOF index, e.g. ``'node 4 uy'``."""
    return f"node {g // 3} {DOFS[g % 3]}"


@dataclass
class ElementGroup:
    """All elements of one kind, with their DOF map and kernel.

    ``kernel(u_e, tangent)`` takes element displacements, shape (n_elements, n_dof),
    and returns ``(f, K, extra)``: forces (n_elements, n_dof), tangents
    (n_elements, n_dof, n_dof) or None, and a dict of per-element results.
    """

    kind: str
    dofmap: np.ndarray                  # shape (n_elements, n_dof), global DOF indices
    kernel: Callable
    positions: np.ndarray | None = None  # shape (n_elements·n_dof²,), into CSC data
    #: history the kernel reads (fibre states, contact multipliers): plain arrays,
    #: ``committed`` at converged points, ``state`` the working copy
    state: object = None
    committed: object = None
    initial: object = None


@dataclass
class LoadGroup:
    """Follower loads of one kind: ``kernel(u_e) -> (f, dfdu)`` on a DOF map.

    ``constant`` loads are held at full value; the others scale with λ.
    """

    kind: str
    dofmap: np.ndarray
    kernel: Callable
    constant: bool
    positions: np.ndarray | None = None


class Assembly:
    """Global residual and tangent of a structure over its free DOFs.

    Parameters
    ----------
    structure : Structure
        The model; it is copied into arrays here, so later edits need a new Assembly.
    """

    def __init__(self, structure: Structure) -> None:
        self.structure = structure
        self.version = structure._version
        self.xy = structure.xy
        self.n_dof = 3 * structure.n_nodes
        self.groups: list[ElementGroup] = []
        self._build_groups()
        self._classify_dofs()
        self._build_pattern()
        self.reset_state()

    # -- set-up ---------------------------------------------------------------
    def _geometry(self, nodes: np.ndarray):
        X1 = self.xy[nodes[:, 0]]
        dX = self.xy[nodes[:, 1]] - X1
        return X1, dX, np.hypot(dX[:, 0], dX[:, 1])

    @staticmethod
    def _dofmap(nodes: np.ndarray, node_dofs: tuple) -> np.ndarray:
        d = np.asarray(node_dofs)
        return np.concatenate([3 * nodes[:, [0]] + d, 3 * nodes[:, [1]] + d], axis=1)

    def _section_arrays(self, sec_ids: np.ndarray):
        secs = self.structure.sections
        EA = np.array([s.EA for s in secs])[sec_ids] if len(sec_ids) else np.zeros(0)
        EI = np.array([s.EI for s in secs])[sec_ids] if len(sec_ids) else np.zeros(0)
        return EA, EI

    def _build_groups(self) -> None:
        s = self.structure
        nodes, sec = s.element_table("beam")
        self.beam_nodes = nodes
        is_fibre = np.array([isinstance(x, fibres.FibreSection) for x in s.sections], bool)
        fibre_rows = is_fibre[sec] if len(sec) else np.zeros(0, bool)
        self.beam_rows = np.flatnonzero(~fibre_rows)      # elastic beams among the beams
        self.fibre_rows = np.flatnonzero(fibre_rows)
        if fibre_rows.any():
            self._add_fibre_group(nodes[fibre_rows], sec[fibre_rows])
        nodes, sec = nodes[~fibre_rows], sec[~fibre_rows]
        if len(nodes):
            X1, dX, L0 = self._geometry(nodes)
            EA, EI = self._section_arrays(sec)
            self.beam_geometry = (X1, dX, L0)
            self.beam_stiffness = (EA, EI)

            def beam_kernel(ue, tangent, dX=dX, L0=L0, EA=EA, EI=EI):
                res = beam.response(dX, L0, ue, EA, EI, tangent)
                return res.f, res.K, {"q": res.q, "l": res.l}

            self.groups.append(ElementGroup("beam", self._dofmap(nodes, beam.NODE_DOFS), beam_kernel))
        nodes, sec = s.element_table("bar")
        self.bar_nodes = nodes
        self.cable = s.tension_only()
        if len(nodes):
            X1, dX, L = self._geometry(nodes)
            EA, _ = self._section_arrays(sec)
            self.bar_geometry = (X1, dX, L)
            L0 = s.element_lengths("bar")        # unstretched: differs for cables
            slack_ok = self.cable if self.cable.any() else None

            def bar_kernel(ue, tangent, dX=dX, L0=L0, EA=EA, slack_ok=slack_ok):
                res = bar.response(dX, L0, ue, EA, slack_ok, tangent)
                return res.f, res.K, {"N": res.N, "l": res.l}

            self.groups.append(ElementGroup("bar", self._dofmap(nodes, bar.NODE_DOFS), bar_kernel))
        self.spring_dofs, self.spring_k = s.spring_table()
        self._add_contact_group()
        self._build_load_groups()

    def _add_fibre_group(self, nodes: np.ndarray, sec: np.ndarray) -> None:
        secs = self.structure.sections
        used = sorted(set(sec.tolist()))
        table = fibres.stack([secs[i] for i in used], np.searchsorted(used, sec))
        X1, dX, L0 = self._geometry(nodes)
        self.fibre_geometry = (X1, dX, L0)
        self.fibre_table = table
        self.fibre_limits = (np.array([secs[i].depth for i in sec]), np.array([secs[i].E for i in sec]),
                             np.array([secs[i].fy for i in sec]))
        grp = ElementGroup("fibre", self._dofmap(nodes, fibre_beam.NODE_DOFS), None)
        grp.initial = fibre_beam.initial_state(len(nodes), table.y.shape[-1])

        def fibre_kernel(ue, tangent, grp=grp):
            res = fibre_beam.response(dX, L0, ue, table, grp.state, tangent=tangent)
            return res.f, res.K, {"q": res.q, "l": res.l, "state": res.state,
                                  "eps0": res.eps0, "kappa": res.kappa}

        grp.kernel = fibre_kernel
        self.groups.append(grp)

    def _add_contact_group(self) -> None:
        pairs = self.structure.contact_table()
        if not pairs:
            return
        nodes = np.array([n for n, _ in pairs], dtype=np.int64)
        obstacles = list(dict.fromkeys(o for _, o in pairs))
        table = contact.table(obstacles, [obstacles.index(o) for _, o in pairs])
        X = self.xy[nodes]
        self.contact_nodes = nodes
        grp = ElementGroup("contact", 3 * nodes[:, None] + np.arange(2), None)
        grp.initial = {"lam": np.zeros(len(nodes)), "penalty": np.ones(len(nodes))}

        def contact_kernel(ue, tangent, grp=grp):
            res = contact.response(X, ue, table, grp.state["lam"], grp.state["penalty"], tangent)
            return res.f, res.K, {"response": res}

        grp.kernel = contact_kernel
        g0 = contact.gap(table, X).g
        inside = np.flatnonzero(g0 < 0.0)
        if len(inside):
            raise ModelError(f"Node {int(nodes[inside[0]])} starts inside its obstacle "
                             f"(gap {g0[inside[0]]:.4g}); move the node or the obstacle.")
        self.groups.append(grp)

    # -- history (fibre states, contact multipliers) --------------------------------
    @property
    def has_contacts(self) -> bool:
        return any(g.kind == "contact" for g in self.groups)

    @property
    def stateful(self) -> list:
        return [g for g in self.groups if g.initial is not None]

    def reset_state(self) -> None:
        """Back to the virgin state: no plastic strain, no contact forces."""
        for g in self.stateful:
            g.state, g.committed = _copy(g.initial), _copy(g.initial)

    def restore_state(self) -> None:
        """Drop working changes since the last commit (a cut step)."""
        for g in self.stateful:
            g.state = _copy(g.committed)

    def commit_state(self, u: np.ndarray) -> None:
        """Make the state at the converged full displacement vector ``u`` the committed one."""
        for g in self.stateful:
            if g.kind == "fibre":
                _, _, ex = g.kernel(u[g.dofmap], False)
                g.state = ex["state"]
            g.committed = _copy(g.state)

    def state_data(self) -> dict:
        """The committed history as plain arrays, by group kind."""
        out = {}
        for g in self.stateful:
            c = g.committed
            out[g.kind] = dict(c._asdict()) if hasattr(c, "_asdict") else dict(c)
        return out

    def contact_response(self, u: np.ndarray):
        """The contact kernel's full response at ``u`` (None without contacts)."""
        g = next((g for g in self.groups if g.kind == "contact"), None)
        return None if g is None else g.kernel(u[g.dofmap], False)[2]["response"]

    def set_contact_penalty(self, fact, u: np.ndarray) -> None:
        """Penalties from the structure's own stiffness along each contact's normal.

        k = 1/(nᵀ·F·n) with F the node's 2×2 block of K⁻¹ (from the factorised tangent
        ``fact`` at the full displacement vector ``u``), less the penalty spring of a
        closed contact; ε = ``PENALTY_FACTOR``·k (:mod:`largerot.elements.contact`).
        Called at converged points, so ε follows the structure as it rotates.
        """
        g = next((g for g in self.groups if g.kind == "contact"), None)
        if g is None:
            return
        fi = self.free_index[g.dofmap]                       # (n_contacts, 2)
        if np.any(fi < 0):
            bad = int(self.contact_nodes[np.flatnonzero((fi < 0).any(axis=1))[0]])
            raise ModelError(f"Node {bad} is in contact but its translations are restrained; "
                             "a supported node cannot touch an obstacle.")
        res = g.kernel(u[g.dofmap], False)[2]["response"]
        rhs = np.zeros((fact.n, 2 * len(fi)))
        cols = np.arange(2 * len(fi))
        rhs[fi.ravel(), cols] = 1.0
        x = fact.solve(rhs)                                  # (n, 2·n_contacts)
        F = x[fi.ravel()][:, cols].reshape(len(fi), 2, len(fi), 2)
        F = F[np.arange(len(fi)), :, np.arange(len(fi)), :]  # (n_contacts, 2, 2)
        flex = np.einsum("ci,cij,cj->c", res.n, F, res.n)
        k = np.where(flex > 0, 1.0 / np.where(flex > 0, flex, 1.0), 0.0)
        k = np.where(res.active, k - g.state["penalty"], k)
        if not np.all(k > 0):
            k = np.where(k > 0, k, np.abs(fact.K.diagonal())[fi].max(axis=1))
        pen = contact.penalty_from_stiffness(k)
        for st in (g.state, g.committed):
            st["penalty"] = pen.copy()

    def _build_load_groups(self) -> None:
        s = self.structure
        self.load_groups: list[LoadGroup] = []
        for constant in (False, True):
            nodes, F0 = s.follower_table(constant)
            if len(nodes):
                dm = 3 * nodes[:, None] + np.arange(3)
                self.load_groups.append(LoadGroup(
                    "node", dm, lambda ue, F0=F0: loads.node_follower(F0, ue), constant))
            kinds, elems, pt = s.pressure_table(constant)
            if len(elems):
                tables = {"beam": self.beam_nodes, "bar": self.bar_nodes}
                pairs = np.array([tables[k][e] for k, e in zip(kinds, elems)]).reshape(-1, 2)
                dX = self.xy[pairs[:, 1]] - self.xy[pairs[:, 0]]
                dm = self._dofmap(pairs, (0, 1))
                self.load_groups.append(LoadGroup(
                    "line", dm, lambda ue, dX=dX, pt=pt: loads.line_follower(dX, pt, ue), constant))

    def _classify_dofs(self) -> None:
        n = self.structure.n_nodes
        touched = np.zeros(self.n_dof, bool)
        for g in self.groups:
            touched[g.dofmap.ravel()] = True
        touched[self.spring_dofs] = True
        # A rotation no beam carries (bar-only or unconnected node) has no stiffness
        # by nature: drop it rather than call it a mechanism.
        self.dropped = np.flatnonzero(~touched)
        constrained = ~touched
        fixed = self.structure.fixed_dofs()
        constrained[fixed] = True
        self.fixed = fixed
        self.free = np.flatnonzero(~constrained)
        self.n_free = len(self.free)
        self.free_index = np.full(self.n_dof, -1, dtype=np.int64)
        self.free_index[self.free] = np.arange(self.n_free)
        self.F_ref = self.structure.load_vector(constant=False)
        self.F_const = self.structure.load_vector(constant=True)
        for lg in self.load_groups:
            if lg.kind == "node":
                bad = np.intersect1d(lg.dofmap[:, 2], self.dropped)
                if len(bad):
                    raise ModelError(f"Node {int(bad[0]) // 3} carries a follower force, which turns "
                                     "with the node's rotation, but no beam ends there to give it one.")
        for F in (self.F_ref, self.F_const):
            bad = self.dropped[F[self.dropped] != 0.0]
            if len(bad):
                g = int(bad[0])
                what = "moment" if g % 3 == 2 else "force"
                raise ModelError(f"Node {g // 3} carries a {what} on {DOFS[g % 3]}, but no member "
                                 f"gives that DOF stiffness (no beam or bar ends there).")
        if n and self.n_free == 0:
            raise ModelError("Every DOF of the structure is restrained; there is nothing to solve.")

    def _build_pattern(self) -> None:
        nf = self.n_free
        keys = []
        for g in [*self.groups, *self.load_groups]:
            fi = self.free_index[g.dofmap]
            rows = np.repeat(fi, fi.shape[1], axis=1).ravel()
            cols = np.tile(fi, (1, fi.shape[1])).ravel()
            ok = (rows >= 0) & (cols >= 0)
            keys.append(np.where(ok, cols * nf + rows, -1))
        sfi = self.free_index[self.spring_dofs]
        keys.append(np.where(sfi >= 0, sfi * nf + sfi, -1))
        allk = np.concatenate(keys) if keys else np.zeros(0, np.int64)
        valid = allk >= 0
        uniq, inv = np.unique(allk[valid], return_inverse=True)
        self.nnz = len(uniq)
        pos = np.full(len(allk), self.nnz, dtype=np.int64)   # dump slot for constrained entries
        pos[valid] = inv
        self.indices = (uniq % nf).astype(np.int32)
        cols = uniq // nf
        self.indptr = np.searchsorted(cols, np.arange(nf + 1)).astype(np.int32)
        start = 0
        for g in [*self.groups, *self.load_groups]:
            size = g.dofmap.shape[0] * g.dofmap.shape[1] ** 2
            g.positions = pos[start:start + size]
            start += size
        self.spring_positions = pos[start:]

    # -- evaluation -------------------------------------------------------------
    def element_displacements(self, u: np.ndarray, group: ElementGroup) -> np.ndarray:
        return u[group.dofmap]

    @property
    def has_followers(self) -> bool:
        """True when loads depend on the deformation (non-symmetric tangent)."""
        return bool(self.load_groups)

    def external(self, u: np.ndarray):
        """Reference and constant loads at the full displacement vector ``u``.

        Returns
        -------
        F_ref, F_const : ndarray, shape (n_dof,)
            Dead parts plus the follower loads at ``u``.
        """
        F_ref, F_const = self.F_ref.copy(), self.F_const.copy()
        for lg in self.load_groups:
            fe, _ = lg.kernel(u[lg.dofmap])
            target = F_const if lg.constant else F_ref
            target += np.bincount(lg.dofmap.ravel(), weights=fe.ravel(), minlength=self.n_dof)
        return F_ref, F_const

    def evaluate(self, u: np.ndarray, tangent: bool = True, lam: float | None = None,
                 const_factor: float = 1.0):
        """Internal forces and tangent at the full displacement vector ``u``.

        With follower loads and a load factor ``lam``, the tangent includes their
        load stiffness: K = ∂f_int/∂u − λ·∂F_ref/∂u − const_factor·∂F_const/∂u.

        Returns
        -------
        f : ndarray, shape (n_dof,)
            Assembled internal force (all DOFs, reactions included).
        K : scipy.sparse.csc_matrix or None
            Tangent over the free DOFs, shape (n_free, n_free).
        scale : float
            Internal force level sqrt(Σ|f_e|²), the yardstick of the residual test.
        extra : dict
            Per-group element results, e.g. ``extra["beam"]["q"]``.
        """
        f = np.zeros(self.n_dof)
        data = np.zeros(self.nnz + 1) if tangent else None
        scale2 = 0.0
        extra = {}
        for g in self.groups:
            fe, Ke, ex = g.kernel(u[g.dofmap], tangent)
            f += np.bincount(g.dofmap.ravel(), weights=fe.ravel(), minlength=self.n_dof)
            scale2 += float(np.einsum("ij,ij->", fe, fe))
            if tangent:
                data += np.bincount(g.positions, weights=Ke.ravel(), minlength=self.nnz + 1)
            extra[g.kind] = ex
        if tangent and lam is not None:
            for lg in self.load_groups:
                _, dfe = lg.kernel(u[lg.dofmap])
                w = const_factor if lg.constant else lam
                if w:
                    data -= np.bincount(lg.positions, weights=w * dfe.ravel(), minlength=self.nnz + 1)
        if len(self.spring_dofs):
            fs = self.spring_k * u[self.spring_dofs]
            f += np.bincount(self.spring_dofs, weights=fs, minlength=self.n_dof)
            scale2 += float(fs @ fs)
            if tangent:
                data += np.bincount(self.spring_positions, weights=self.spring_k, minlength=self.nnz + 1)
        K = None
        if tangent:
            K = sp.csc_matrix((data[:-1], self.indices, self.indptr), shape=(self.n_free, self.n_free))
        return f, K, np.sqrt(scale2), extra

    def internal_force(self, u: np.ndarray, fibre_q: np.ndarray | None = None) -> np.ndarray:
        """Assembled internal force at ``u``, shape (n_dof,), reactions included.

        ``fibre_q``: the fibre beams' local forces at that point (they depend on
        the history, which the assembly holds only for the last committed point).
        """
        f = np.zeros(self.n_dof)
        for g in self.groups:
            ue = u[g.dofmap]
            if g.kind == "fibre" and fibre_q is not None:
                _, dX, L0 = self.fibre_geometry
                l, _, c, s = chord(dX, ue[:, 3:5] - ue[:, 0:2], L0)
                fe, _ = beam.corotate(c, s, l, fibre_q)
            else:
                fe, _, _ = g.kernel(ue, False)
            f += np.bincount(g.dofmap.ravel(), weights=fe.ravel(), minlength=self.n_dof)
        if len(self.spring_dofs):
            f += np.bincount(self.spring_dofs, weights=self.spring_k * u[self.spring_dofs],
                             minlength=self.n_dof)
        return f

    def element_forces(self, u: np.ndarray, fibre_q: np.ndarray | None = None) -> dict:
        """End forces of every element at the full displacement vector ``u``.

        Returns
        -------
        dict
            ``"beam"``: ``"N"`` axial force (tension positive), ``"V"`` shear
            (dM/ds), shapes (n_beam,), and ``"M"`` bending moment at both ends,
            shape (n_beam, 2), positive when it stretches the right-hand side of
            the element (seen from end 1 toward end 2);
            ``"bar"``: ``"N"``, shape (n_bar,) (cable segments included, zero when
            slack) and ``"slack"``, bool.
        """
        nb = len(self.beam_nodes)
        out = {"beam": {"N": np.zeros(nb), "V": np.zeros(nb), "M": np.zeros((nb, 2))},
               "bar": {"N": np.zeros(0), "slack": np.zeros(0, bool)}}
        for g in self.groups:
            if g.kind == "contact":
                continue
            _, _, ex = g.kernel(u[g.dofmap], False)
            if g.kind in ("beam", "fibre"):
                # fibre beams' forces depend on their history: the path passes them in
                q = fibre_q if g.kind == "fibre" and fibre_q is not None else ex["q"]
                rows = self.beam_rows if g.kind == "beam" else self.fibre_rows
                N, M1, M2 = q.T
                out["beam"]["N"][rows] = N
                out["beam"]["V"][rows] = (M1 + M2) / ex["l"]
                out["beam"]["M"][rows] = np.stack([-M1, M2], axis=1)
            elif g.kind == "bar":
                out["bar"] = {"N": ex["N"], "slack": self.cable & (ex["N"] == 0.0)}
        return out

    def point_data(self, u: np.ndarray) -> dict:
        """Per-point data kept along a path.

        ``"slack"``: which cable segments are slack; for fibre beams ``"fibre_q"``
        (local forces, history-dependent), ``"yielded"`` (area fraction ever yielded
        per element and section point) and ``"yield_margin"`` (largest first-yield
        margin, zero at first yield); for contacts ``"contact_force"``, ``"gap"`` and
        ``"contact_event"`` (> 0 open, < 0 closed).
        """
        out = {}
        for g in self.groups:
            if g.kind == "bar" and self.cable.any():
                _, _, ex = g.kernel(u[g.dofmap], False)
                out["slack"] = ex["N"][self.cable] == 0.0
            elif g.kind == "fibre":
                _, _, ex = g.kernel(u[g.dofmap], False)
                depth, E, fy = self.fibre_limits
                out["fibre_q"] = ex["q"]
                out["yielded"] = fibres.yielded_fraction(ex["state"], self.fibre_table.dA[:, None, :])
                virgin = ex["state"].acc.max() == 0.0
                margin = fibres.first_yield_margin(ex["eps0"], ex["kappa"], depth[:, None],
                                                   E[:, None], fy[:, None]).max()
                out["yield_margin"] = np.array(margin if virgin else max(margin, 0.0))
            elif g.kind == "contact":
                res = g.kernel(u[g.dofmap], False)[2]["response"]
                out["contact_force"] = res.p
                out["gap"] = res.g
                out["contact_event"] = contact.event_value(res, g.state["penalty"])
        return out

    def element_arrays(self, u: np.ndarray) -> dict:
        """Unassembled element forces and tangents per group (for tests)."""
        out = {}
        for g in self.groups:
            fe, Ke, ex = g.kernel(u[g.dofmap], True)
            out[g.kind] = (g.dofmap, fe, Ke, ex)
        return out

    def expand(self, u_free: np.ndarray) -> np.ndarray:
        """Full displacement vector from its free part (constrained DOFs zero)."""
        u = np.zeros(self.n_dof)
        u[self.free] = u_free
        return u

    @property
    def length_scale(self) -> float:
        """Size of the structure (bounding-box diagonal), to weigh rotations against lengths."""
        if len(self.xy) == 0:
            return 1.0
        span = np.ptp(self.xy, axis=0)
        return float(np.hypot(*span)) or 1.0

    @classmethod
    def of(cls, structure: Structure) -> "Assembly":
        """The cached assembly of a structure, rebuilt when the structure changed."""
        cached = getattr(structure, "_assembly", None)
        if cached is None or cached.version != structure._version:
            cached = cls(structure)
            structure._assembly = cached
        return cached


def _copy(state):
    """A copy of a group's history (NamedTuple or dict of arrays)."""
    if hasattr(state, "_asdict"):
        return type(state)(*(np.array(a, copy=True) for a in state))
    return {k: np.array(v, copy=True) for k, v in state.items()}
