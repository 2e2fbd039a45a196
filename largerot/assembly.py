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

from . import loads
from .elements import bar, beam
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
        self._build_load_groups()

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

    def element_forces(self, u: np.ndarray) -> dict:
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
        out = {"beam": {"N": np.zeros(0), "V": np.zeros(0), "M": np.zeros((0, 2))},
               "bar": {"N": np.zeros(0), "slack": np.zeros(0, bool)}}
        for g in self.groups:
            _, _, ex = g.kernel(u[g.dofmap], False)
            if g.kind == "beam":
                N, M1, M2 = ex["q"].T
                out["beam"] = {"N": N, "V": (M1 + M2) / ex["l"], "M": np.stack([-M1, M2], axis=1)}
            elif g.kind == "bar":
                out["bar"] = {"N": ex["N"], "slack": self.cable & (ex["N"] == 0.0)}
        return out

    def point_data(self, u: np.ndarray) -> dict:
        """Per-point data kept along a path: which cable segments are slack."""
        if not self.cable.any():
            return {}
        g = next(g for g in self.groups if g.kind == "bar")
        _, _, ex = g.kernel(u[g.dofmap], False)
        return {"slack": ex["N"][self.cable] == 0.0}

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
