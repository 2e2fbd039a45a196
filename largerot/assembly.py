"""From a frozen :class:`~largerot.snapshot.Model` to global residual and sparse tangent.

The assembly is stateless: the history of yielding fibres and contacts belongs to
the caller (the stepper) and is passed in; :meth:`Assembly.evaluate` returns the
trial history with the forces. The sparse pattern of the tangent over the free DOFs
is built once per model: every element-matrix entry gets its position in the CSC
data array (constrained entries go to a dump slot past the end), so each iteration
only scatters numbers with one ``bincount``.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from .errors import ModelError
from .groups import Group, build_groups, build_loads
from .linalg import pattern_matrix, with_data
from .mesh_check import check_resolution
from .model import DOFS
from .snapshot import Model

__all__ = ["Assembly", "Evaluation", "dof_label"]


#: Bit b of a 9-bit mask as a [dof_col, dof_row] table: _BITS[mask] has shape (3, 3).
_BITS = ((np.arange(512)[:, None] >> np.arange(9)) & 1).astype(bool).reshape(512, 3, 3)


def _node_slots(dofmap: np.ndarray, n_nodes: int):
    """The node pairs of a group's elements and the DOF pairs each couples.

    Local DOFs that sit on the same node in every element share a node slot (a
    beam's six DOFs are two slots of three).

    Returns
    -------
    pairs_of : ndarray of int, shape (n_dof, n_dof)
        For local DOFs (i, j), the column of ``keys`` holding their node pair.
    keys : ndarray of int64, shape (n_elements, n_slots²)
        Node pair (column node · n_nodes + row node) of every pair of slots.
    masks : ndarray of int16, shape (n_elements, n_slots²)
        Bit 3·dof_col + dof_row set for every DOF pair the element couples there.
    dof : ndarray of int, shape (n_dof,) or (n_elements, n_dof)
        DOF (0, 1, 2) of each local DOF within its node: one row when every element
        has the same, else per element.
    """
    n_el, n_dof = dofmap.shape
    node, dof = dofmap // 3, dofmap % 3
    slot_of = np.arange(n_dof)
    for i in range(n_dof):
        for j in range(i):
            if slot_of[j] == j and np.array_equal(node[:, i], node[:, j]):
                slot_of[i] = j
                break
    reps = np.unique(slot_of)
    n_slots = len(reps)
    where = np.searchsorted(reps, slot_of)                 # slot number of each local DOF
    pairs_of = where[None, :] * n_slots + where[:, None]   # [i, j] -> column slot·n + row slot
    keys = (node[:, reps][:, :, None] * n_nodes + node[:, reps][:, None, :]).reshape(n_el, n_slots * n_slots)
    if n_el and (dof == dof[0]).all():
        dof = dof[0]
        one = np.zeros(n_slots * n_slots, np.int16)
        np.bitwise_or.at(one, pairs_of, (1 << (3 * dof[None, :] + dof[:, None])).astype(np.int16))
        masks = np.broadcast_to(one, keys.shape)
    else:
        masks = np.zeros(keys.shape, np.int16)
        bit = (1 << (3 * dof[:, None, :] + dof[:, :, None])).astype(np.int16)   # [e, i, j]
        for i in range(n_dof):
            for j in range(n_dof):
                masks[:, pairs_of[i, j]] |= bit[:, i, j]
    return pairs_of, keys, masks, dof


#: Elements per chunk when the positions are gathered: bounds the temporaries to a
#: few MB whatever the model's size (at 100k beams unchunked they were 60 MB).
PATTERN_CHUNK = 8192


def sparse_pattern(dofmaps: list, free_index: np.ndarray):
    """CSC pattern over the free DOFs of element matrices, and each entry's slot in it.

    Built from node pairs rather than from the n_elements·n_dof² DOF pairs: each
    element gives one key per pair of its nodes, with a 9-bit mask of the DOF pairs
    it couples there; the keys (a few per element) are sorted and merged, and each
    distinct node pair expands to its 3×3 block by cumulative sums. Columns and
    rows come out in global DOF order: the canonical CSC (sorted, no duplicates).

    Parameters
    ----------
    dofmaps : list of ndarray, shapes (n_elements, n_dof)
        Global DOFs (3·node + dof) of each group's elements.
    free_index : ndarray of int, shape (n_dof_global,)
        Position of each global DOF among the free ones, −1 if constrained.

    Returns
    -------
    indptr, indices : ndarray of int32, shapes (n_free + 1,), (nnz,)
    positions : list of ndarray of int32, shapes (n_elements·n_dof²,)
        For every entry of every element matrix (row-major, [e, i, j]: row DOF i,
        column DOF j), its slot in the CSC data array; ``nnz`` (a dump slot past
        the end) when its row or column is constrained.
    """
    n_nodes = max(len(free_index) // 3, 1)
    layouts = [_node_slots(dm, n_nodes) for dm in dofmaps]
    allk = np.concatenate([lay[1].ravel() for lay in layouts] + [np.zeros(0, np.int64)])
    allm = np.concatenate([lay[2].ravel() for lay in layouts] + [np.zeros(0, np.int16)])
    # sorting the keys: stable (timsort) runs fast on elements listed along members
    order = np.argsort(allk, kind="stable")
    key = allk[order]
    new = np.empty(len(key), bool)
    new[:1] = True
    np.not_equal(key[1:], key[:-1], out=new[1:])
    starts = np.flatnonzero(new)
    pair_of_key = np.empty(len(key), np.int64)
    pair_of_key[order] = np.cumsum(new) - 1
    pair_mask = np.bitwise_or.reduceat(allm[order], starts) if len(starts) else allm[:0]
    key = key[starts]
    del order, new, allk, allm
    cn, rn = key // n_nodes, key % n_nodes                  # column node, row node of each pair
    node_free = (free_index >= 0).reshape(-1, 3)
    valid = _BITS[pair_mask]                               # [pair, dof_col, dof_row]
    valid &= node_free[cn][:, :, None]
    valid &= node_free[rn][:, None, :]
    count = np.add(valid[:, :, 0], valid[:, :, 1], dtype=np.int64)   # rows per (pair, dof_col)
    count += valid[:, :, 2]
    first = np.flatnonzero(np.r_[True, cn[1:] != cn[:-1]]) if len(cn) else np.zeros(0, np.int64)
    col_len = np.zeros((len(node_free), 3), np.int64)
    if len(first):
        col_len[cn[first]] = np.add.reduceat(count, first, axis=0)
    col_start = np.zeros(col_len.size + 1, np.int64)
    np.cumsum(col_len.ravel(), out=col_start[1:])
    nnz = int(col_start[-1])
    before = np.cumsum(count, axis=0) - count               # rows of earlier pairs, per dof_col
    before -= np.repeat(before[first], np.diff(np.r_[first, len(cn)]), axis=0)
    before += col_start[3 * cn[:, None] + np.arange(3)]
    del count
    # int32 (the CSC's own index type; nnz < 2³¹): half the bytes the per-iteration
    # scatter reads, and the positions' build writes, of int64
    slot = np.empty(valid.shape, np.int32)                  # [pair, dof_col, dof_row]
    slot[:, :, 0] = before
    np.add(before, valid[:, :, 0], out=slot[:, :, 1])
    np.add(slot[:, :, 1], valid[:, :, 1], out=slot[:, :, 2])
    del before
    slot[~valid] = nnz                                      # dump slot for constrained entries
    rows = free_index[3 * rn[:, None] + np.arange(3)].astype(np.int32)   # [pair, dof_row]
    indices = np.empty(nnz + 1, np.int32)
    for d in range(3):                                      # constrained ones land in the dump slot
        indices[slot[:, d, :]] = rows
    indices = indices[:nnz].copy()
    free = np.flatnonzero(free_index >= 0)
    indptr = np.r_[col_start[free], nnz].astype(np.int32)
    blocks = slot.reshape(-1, 9)
    positions, start = [], 0
    for dm, (pairs_of, keys, _, dof) in zip(dofmaps, layouts):
        n_el, n_dof = dm.shape
        pairs = pair_of_key[start:start + keys.size].reshape(keys.shape)
        start += keys.size
        pos = np.empty((n_el, n_dof * n_dof), np.int32)
        if dof.ndim == 1:        # the same DOFs in every element: gather 3×3 blocks
            within = (pairs_of * 9 + 3 * dof[None, :] + dof[:, None]).ravel()
            for c in range(0, n_el, PATTERN_CHUNK):
                b = blocks[pairs[c:c + PATTERN_CHUNK]].reshape(-1, keys.shape[1] * 9)
                np.take(b, within, axis=1, out=pos[c:c + PATTERN_CHUNK])
        else:
            for c in range(0, n_el, PATTERN_CHUNK):
                e = slice(c, c + PATTERN_CHUNK)
                idx = pairs[e][:, pairs_of] * 9 + 3 * dof[e][:, None, :] + dof[e][:, :, None]
                pos[e] = blocks.ravel()[idx.reshape(len(idx), -1)]
        positions.append(pos.reshape(-1))
    return indptr, indices, positions


def dof_label(g: int) -> str:
    """Readable name of a global DOF index, e.g. ``'node 4 uy'``."""
    return f"node {g // 3} {DOFS[g % 3]}"


@dataclass
class Evaluation:
    """Everything one evaluation at a full displacement vector produced.

    Attributes
    ----------
    f : ndarray, shape (n_dof,)
        Assembled internal force (all DOFs, reactions included).
    K : scipy.sparse.csc_matrix or None
        Tangent over the free DOFs, shape (n_free, n_free).
    scale : float
        Internal force level sqrt(Σ|f_e|²), the yardstick of the residual test.
    results : list of GroupResult
        Per group, in the assembly's group order.
    Ku_ref : ndarray, shape (n_dof,), or None
        The tangent times the imposed displacements per unit λ, K·ū_ref (all rows;
        its free rows are K_fp·ū_ref), when the model has scaled imposed
        displacements and the tangent was computed; ∂r/∂λ = F_ref − K_fp·ū_ref.

    At an inclined roller the node's ``ux``/``uy`` rows of ``f``, ``K`` and
    ``Ku_ref`` hold the components along and normal to the rolling direction.
    """

    f: np.ndarray
    K: sp.csc_matrix | None
    scale: float
    results: list
    Ku_ref: np.ndarray | None = None

    def states(self) -> list:
        """The trial history of every group (None for groups without one)."""
        return [r.state for r in self.results]


class Assembly:
    """Global residual and tangent of a model over its free DOFs.

    Parameters
    ----------
    model : Model
        The frozen model (``structure.snapshot()``).
    """

    def __init__(self, model: Model) -> None:
        self.model = model
        check_resolution(model)
        self.xy = model.xy
        self.n_dof = model.n_dof
        self.groups: list[Group] = build_groups(model)
        self.load_groups = build_loads(model)
        self.length_scale = model.length_scale
        self._classify_dofs()
        self._build_pattern()

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state.pop("_chord_fit", None)         # a native factorisation, rebuilt on use
        state.pop("_template", None)          # a cache of the pattern's matrix
        state.pop("_has_prescribed", None)
        return state

    # -- set-up -----------------------------------------------------------------
    def _classify_dofs(self) -> None:
        n = self.model.n_nodes
        touched = np.zeros(self.n_dof, bool)
        for g in self.groups:
            touched[g.held()] = True
        # A rotation no beam carries (bar-only or unconnected node, or one where every
        # beam end is hinged) has no stiffness by nature: drop it rather than call it
        # a mechanism.
        self.dropped = np.flatnonzero(~touched)
        constrained = ~touched
        self.fixed = self.model.fixed
        constrained[self.fixed] = True
        self._classify_imposed(constrained)
        self.free = np.flatnonzero(~constrained)
        self.n_free = len(self.free)
        self.free_index = np.full(self.n_dof, -1, dtype=np.int64)
        self.free_index[self.free] = np.arange(self.n_free)
        self.F_ref = self.model.F_ref
        self.F_const = self.model.F_const
        for lg in self.load_groups:
            if lg.dofmap.shape[1] == 3:           # a nodal follower turns with rz
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
                                 f"gives that DOF stiffness (no beam or bar ends there, "
                                 "or every beam end there is hinged).")
        if n and self.n_free == 0:
            raise ModelError("Every DOF of the structure is restrained; there is nothing to solve.")

    def _classify_imposed(self, constrained: np.ndarray) -> None:
        """Imposed DOFs and inclined rollers' normal DOFs are not free."""
        m = self.model
        self.prescribed = m.imposed
        bad = np.intersect1d(self.prescribed, self.dropped)
        if len(bad):
            g = int(bad[0])
            raise ModelError(f"Node {g // 3} has an imposed {DOFS[g % 3]}, but no member gives "
                             "that DOF stiffness (no beam or bar ends there).")
        constrained[self.prescribed] = True
        self.U_ref = np.zeros(self.n_dof)
        self.U_ref[self.prescribed] = m.imposed_ref
        self.inclined_nodes = m.inclined_nodes
        self.inclined_direction = m.inclined_direction
        constrained[3 * self.inclined_nodes + 1] = True      # the normal translation
        # direction (c, s) of each node's roller, (1, 0) elsewhere, for the rotations
        self._roller = np.zeros(m.n_nodes, bool)
        self._roller[self.inclined_nodes] = True
        dirs = np.tile([1.0, 0.0], (m.n_nodes, 1))
        dirs[self.inclined_nodes] = self.inclined_direction
        self._roller_dir = dirs

    @property
    def has_prescribed(self) -> bool:
        """True when imposed displacements are scaled by λ (∂r/∂λ depends on the state)."""
        flag = self.__dict__.get("_has_prescribed")      # asked at every evaluation
        if flag is None:
            flag = self._has_prescribed = bool(self.model.imposed_ref.any())
        return flag

    def _build_pattern(self) -> None:
        owners = [*self.groups, *self.load_groups]
        self.indptr, self.indices, self.positions = sparse_pattern(
            [g.dofmap for g in owners], self.free_index)
        self.nnz = len(self.indices)
        self._load_positions = self.positions[len(self.groups):]
        # per group: elements that an imposed motion or an inclined roller touches
        # (empty, and no cost, for models without them)
        self._imposed_sel = [self._imposed_elements(g) for g in owners]
        self._rotations = [self._roller_rotations(g, pos) for g, pos in zip(owners, self.positions)]

    def _imposed_elements(self, g):
        """(elements, ū_ref of their DOFs) for the elements of ``g`` an imposed motion moves."""
        if not self.has_prescribed:
            return None
        ue = self.U_ref[g.dofmap]
        sel = np.flatnonzero(ue.any(axis=1))
        return (sel, ue[sel]) if len(sel) else None

    def _roller_rotations(self, g, pos):
        """(elements, R, positions) turning element arrays of ``g`` into the rollers' frames.

        R, shape (n_sel, n_dof, n_dof), is the identity but for the 2×2 blocks
        [[c, −s], [s, c]] on the (ux, uy) pairs of roller nodes: u_global = R·u_frame,
        so K_frame = Rᵀ·K·R and f_frame = Rᵀ·f.
        """
        if not len(self.inclined_nodes):
            return None
        dm = g.dofmap
        node, dof = dm // 3, dm % 3
        on = self._roller[node] & (dof < 2)
        sel = np.flatnonzero(on.any(axis=1))
        if not len(sel):
            return None
        n_el, n_dof = dm.shape
        R = np.tile(np.eye(n_dof), (len(sel), 1, 1))
        paired = np.zeros((len(sel), n_dof), bool)
        for i in range(n_dof):
            for j in range(n_dof):
                pair = on[sel, i] & (dm[sel, j] == dm[sel, i] + 1) & (dof[sel, i] == 0)
                if pair.any():
                    e = np.flatnonzero(pair)
                    c, s_ = self._roller_dir[node[sel[e], i]].T
                    R[e, i, i], R[e, i, j], R[e, j, i], R[e, j, j] = c, -s_, s_, c
                    paired[e, i] = paired[e, j] = True
        lone = on[sel] & ~paired
        if lone.any():
            e, i = np.argwhere(lone)[0]
            raise ModelError(f"Node {int(node[sel[e], i])} is on an inclined roller, but a "
                             f"{getattr(g, 'name', 'group') or type(g).__name__} element there acts "
                             f"on its {DOFS[dof[sel[e], i]]} alone; that is not supported.")
        pos_sel = pos.reshape(n_el, n_dof * n_dof)[sel].ravel()
        return sel, R, pos_sel

    def _rotate_into(self, data: np.ndarray, k: int, Ke: np.ndarray, weight: float = 1.0) -> None:
        """Turn the scattered element tangents of owner ``k`` at roller nodes into the
        rollers' frames: add (Rᵀ·K·R − K) of those elements to ``data``."""
        rot = self._rotations[k]
        if rot is None:
            return
        sel, R, pos = rot
        Ks = Ke[sel]
        diff = np.einsum("eki,ekl,elj->eij", R, Ks, R) - Ks
        data += np.bincount(pos, weights=weight * diff.ravel(), minlength=self.nnz + 1)

    def framed(self, v: np.ndarray) -> np.ndarray:
        """A full force vector (x, y) with each roller node's ux, uy rows turned into
        (along, normal) components, shape (n_dof,); ``v`` itself without rollers."""
        if not len(self.inclined_nodes):
            return v
        v = np.array(v, dtype=float)
        gx = 3 * self.inclined_nodes
        c, s_ = self.inclined_direction.T
        fx, fy = v[gx].copy(), v[gx + 1].copy()
        v[gx], v[gx + 1] = c * fx + s_ * fy, -s_ * fx + c * fy
        return v

    # -- history ------------------------------------------------------------------
    def initial_states(self) -> list:
        """The virgin history of every group (None for groups without one)."""
        return [g.initial_state() for g in self.groups]

    # -- evaluation -------------------------------------------------------------
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
            fe, _ = lg.load(u[lg.dofmap])
            target = F_const if lg.constant else F_ref
            target += np.bincount(lg.dofmap.ravel(), weights=fe.ravel(), minlength=self.n_dof)
        return F_ref, F_const

    def _matrix(self, data: np.ndarray) -> sp.csc_matrix:
        # a shallow copy of one validated matrix of the pattern, given new numbers: every
        # tangent shares the pattern's index arrays (never modified in place), and scipy's
        # validation (5× the cost of the copy on small models) is paid once
        template = self.__dict__.get("_template")
        if template is None:
            template = self._template = pattern_matrix(self.indices, self.indptr, self.n_free)
        return with_data(template, data[:-1])

    def evaluate(self, u: np.ndarray, states: list, tangent: bool = True, lam: float | None = None,
                 const_factor: float = 1.0) -> Evaluation:
        """Internal forces and tangent at the full displacement vector ``u``.

        Parameters
        ----------
        u : ndarray, shape (n_dof,)
        states : list
            Each group's history (:meth:`initial_states` at the start of a path).
        tangent : bool
        lam, const_factor : float
            With follower loads and a load factor ``lam``, the tangent includes their
            load stiffness: K = ∂f_int/∂u − λ·∂F_ref/∂u − const_factor·∂F_const/∂u.
        """
        # the first group's scattered arrays are kept as they come (no zeroed array and
        # no sum for one-kind models): fewer large temporaries per iteration
        f = data = None
        scale2 = 0.0
        results = []
        Ku = np.zeros(self.n_dof) if tangent and self.has_prescribed else None
        for k, (g, pos, st) in enumerate(zip(self.groups, self.positions, states)):
            res = g.evaluate(u[g.dofmap], st, tangent)
            fg = np.bincount(g.dofmap.ravel(), weights=res.f.ravel(), minlength=self.n_dof)
            f = fg if f is None else np.add(f, fg, out=f)
            fr = res.f.ravel()
            scale2 += float(fr @ fr)
            if tangent:
                dg = np.bincount(pos, weights=res.K.ravel(), minlength=self.nnz + 1)
                data = dg if data is None else np.add(data, dg, out=data)
                self._rotate_into(data, k, res.K)
                if Ku is not None:
                    self._add_imposed(Ku, k, g, res.K)
            results.append(res)
        if f is None:
            f = np.zeros(self.n_dof)
        if tangent and data is None:
            data = np.zeros(self.nnz + 1)
        if tangent and lam is not None and self.load_groups:
            self._subtract_load_stiffness(data, u, lam, const_factor, Ku)
        K = self._matrix(data) if tangent else None
        return Evaluation(self.framed(f), K, float(np.sqrt(scale2)), results,
                          None if Ku is None else self.framed(Ku))

    def _add_imposed(self, Ku: np.ndarray, k: int, g, Ke: np.ndarray, weight: float = 1.0) -> None:
        """Add weight·K_e·ū_e of the elements of owner ``k`` that the imposed motion moves."""
        sel = self._imposed_sel[k]
        if sel is not None:
            e, ue = sel
            ke = np.einsum("eij,ej->ei", Ke[e], ue)
            Ku += np.bincount(g.dofmap[e].ravel(), weights=weight * ke.ravel(), minlength=self.n_dof)

    def record(self, ev: Evaluation) -> dict:
        """Per-point data kept along a path, from an evaluation at a converged point.

        The groups' records merged: e.g. ``"slack"`` and ``"cable_stretch"`` (cables),
        ``"fibre_q"``, ``"yielded"``, ``"yield_margin"`` (fibre beams),
        ``"contact_force"``, ``"gap"``, ``"contact_event"`` (contacts).
        """
        out = {}
        for g, res in zip(self.groups, ev.results):
            out.update(g.record(res))
        return out

    @property
    def events(self) -> list:
        """Event functions of every group."""
        return [e for g in self.groups for e in g.events]

    def before_event(self, states: list, event) -> list:
        """History continuing the side before ``event`` for its owner group (to locate it).

        Returns ``states`` itself when no group changes it.
        """
        new = [g.before_event(st, event) if event in g.events else st
               for g, st in zip(self.groups, states)]
        return states if all(n is o for n, o in zip(new, states)) else new

    @property
    def augments(self) -> bool:
        """True when a group updates multipliers at converged points (contacts)."""
        return any(type(g).augment is not Group.augment for g in self.groups)

    def augmented(self, ev: Evaluation, states: list):
        """New history if a converged point must be solved again (contact updates), else None."""
        new, again = list(states), False
        for k, (g, res) in enumerate(zip(self.groups, ev.results)):
            st = g.augment(res, states[k], self.length_scale)
            if st is not None:
                new[k], again = st, True
        return new if again else None

    def calibrated(self, states: list, ev: Evaluation, fact) -> list:
        """History adjusted to the stiffness at a converged point (contact penalties)."""
        return [g.calibrated(st, res, fact, self.free_index)
                for g, st, res in zip(self.groups, states, ev.results)]

    # -- results at recorded points -------------------------------------------------
    def internal_force(self, u: np.ndarray, record: dict) -> np.ndarray:
        """Assembled internal force at a recorded point, shape (n_dof,), reactions included."""
        f = np.zeros(self.n_dof)
        for g in self.groups:
            fe = g.forces(u[g.dofmap], record)
            f += np.bincount(g.dofmap.ravel(), weights=fe.ravel(), minlength=self.n_dof)
        return f

    def element_forces(self, u: np.ndarray, record: dict) -> dict:
        """End forces of every element at a recorded point.

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
        nb, nr = len(self.model.beam_nodes), len(self.model.bar_nodes)
        out = {"beam": {"N": np.zeros(nb), "V": np.zeros(nb), "M": np.zeros((nb, 2))},
               "bar": {"N": np.zeros(nr), "slack": np.zeros(nr, bool)}}
        for g in self.groups:
            ef = g.end_forces(u[g.dofmap], record) if g.table else None
            if ef is not None:
                for name, v in ef.items():
                    out[g.table][name][g.rows] = v
        return out

    def stress_stiffness(self, u: np.ndarray) -> sp.csc_matrix:
        """Geometric stiffness Kσ of the linear state ``u`` (full vector), shape (n_free, n_free).

        Raises ModelError naming the group that has none.
        """
        data = np.zeros(self.nnz + 1)
        for k, (g, pos) in enumerate(zip(self.groups, self.positions)):
            try:
                Kg = g.stress_stiffness(u[g.dofmap])
            except NotImplementedError as exc:
                raise ModelError(f"Linear buckling cannot handle these elements: {exc}") from None
            data += np.bincount(pos, weights=Kg.ravel(), minlength=self.nnz + 1)
            self._rotate_into(data, k, Kg)
        return self._matrix(data)

    def load_stiffness(self, u: np.ndarray, lam: float, const_factor: float) -> sp.csc_matrix:
        """−(λ·∂F_ref/∂u + const_factor·∂F_const/∂u) of the follower loads, shape (n_free, n_free)."""
        data = np.zeros(self.nnz + 1)
        self._subtract_load_stiffness(data, u, lam, const_factor)
        return self._matrix(data)

    def _subtract_load_stiffness(self, data, u, lam, const_factor, Ku=None) -> None:
        n = len(self.groups)
        for k, (lg, pos) in enumerate(zip(self.load_groups, self._load_positions)):
            w = const_factor if lg.constant else lam
            if w:
                _, dfe = lg.load(u[lg.dofmap])
                data -= np.bincount(pos, weights=w * dfe.ravel(), minlength=self.nnz + 1)
                self._rotate_into(data, n + k, dfe, -w)
                if Ku is not None:
                    self._add_imposed(Ku, n + k, lg, dfe, -w)

    def expand(self, u_free: np.ndarray) -> np.ndarray:
        """Full displacement vector (x, y) from its free part; restrained and imposed
        DOFs zero (for modes and increments; :meth:`full` for a state)."""
        return self.model.expanded(self.free, u_free)

    def full(self, u_free: np.ndarray, lam: float, const_factor: float = 1.0) -> np.ndarray:
        """Full displacement vector (x, y) of the state (u_free, λ), shape (n_dof,):
        imposed DOFs at λ·ū_ref + const_factor·ū_const."""
        return self.model.expanded(self.free, u_free, lam, const_factor)

    @classmethod
    def of(cls, structure) -> "Assembly":
        """The assembly of a structure's (or model's) current snapshot, cached on the snapshot."""
        return structure.snapshot().assembly
