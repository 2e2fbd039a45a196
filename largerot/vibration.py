"""Small-vibration natural frequencies about traced equilibrium points.

About an equilibrium (u, λ) small motions obey M·ü + K·u = 0 with K the tangent
there (elastic, geometric and load stiffness: :meth:`largerot.assembly.Assembly.evaluate`)
and M the mass matrix in that configuration (:func:`largerot.mass.mass_matrix`).
The natural circular frequencies are the roots of the generalised eigenproblem

    K·φ = ω²·M·φ,

f = ω/2π in Hz when the structure's numbers are in a consistent system with
seconds (N, m, kg in SI). Under load the geometric stiffness lowers them, and the
lowest ω² reaches zero where the tangent becomes singular: at a limit or
bifurcation point the lowest frequency vanishes (common practice, no source).

Conventions
    ω² < 0 (a point past a loss of stability: the tangent has a negative
    eigenvalue) is reported as a *negative* frequency f = −√|ω²|/2π, so that a
    curve of f against λ crosses zero at the critical point; ``abs(f)`` is then the
    rate of exponential divergence divided by 2π.

    A non-symmetric tangent (follower loads) gives a non-symmetric eigenproblem:
    the frequencies are the real parts of √ of its eigenvalues taken as above, an
    :class:`~largerot.errors.InputWarning` says so, and a complex pair (flutter, a
    dynamic loss of stability) is reported in the warning; the path's own
    stability check (``path.stable``) is static only.

History-dependent elements
    Fibre beams: the path keeps each point's forces, not its plastic strains, so the
    tangent is rebuilt from the virgin history at the point's displacements: exact
    for fibres loaded monotonically up to the point (bilinear hardening is then
    path-independent), an approximation after unloading (a warning says when
    fibres have yielded). Contacts: supported where they are open; a point with a
    closed contact raises a ModelError (a unilateral support has no linear vibration).
"""
from __future__ import annotations

import math

import numpy as np
import scipy.linalg as sla
import scipy.sparse.linalg as spla

from .errors import ModelError, checked_integer, warn_input
from .mass import mass_matrix

__all__ = ["frequencies"]

#: Up to this many free DOFs the eigenproblem is solved densely (LAPACK): a few
#: milliseconds per point at a few hundred unknowns, and no convergence failures.
DENSE_MAX = 800
#: Restarts of ARPACK at most (its default, 10·n, is unbounded in practice).
ARPACK_MAXITER = 500
#: Shift of the sparse shift-invert, per max(diag K)/max(diag M), used only when
#: K itself is exactly singular (a point exactly at a critical point or a
#: mechanism): far below any eigenvalue of interest, far above round-off.
SINGULAR_SHIFT = 1e-10
#: Relative size of an imaginary part of ω² (to |ω²|) above which a non-symmetric
#: eigenvalue counts as a complex pair (flutter) rather than round-off.
COMPLEX_TOL = 1e-6


def _signed_hz(w2: np.ndarray) -> np.ndarray:
    return np.sign(w2) * np.sqrt(np.abs(w2)) / (2.0 * math.pi)


def _states_at(asm, path, i: int) -> list:
    """The groups' history to rebuild the tangent at point ``i`` (module notes)."""
    states = asm.initial_states()
    record = {k: v[i] for k, v in path.extra.items()} if path is not None else {}
    for g in asm.groups:
        if g.name == "contact" and "contact_force" in record:
            closed = np.flatnonzero(np.asarray(record["contact_force"]) > 0.0)
            if len(closed):
                raise ModelError(f"Point {i}: node {int(g.nodes[closed[0]])} is in contact; "
                                 "natural frequencies about a state with a closed contact are "
                                 "not supported (a unilateral support has no linear vibration).")
    return states


def _dense_pairs(K: np.ndarray, M: np.ndarray, modes: int, symmetric: bool):
    """Lowest ``modes`` eigenpairs of K·φ = ω²·M·φ (dense); ω² ascending (real parts)."""
    if symmetric:
        try:
            return sla.eigh(K, M, subset_by_index=[0, modes - 1])
        except (np.linalg.LinAlgError, ValueError):
            pass            # M singular (massless DOFs): the general QZ below
    w, v = sla.eig(K, M)
    finite = np.isfinite(w)
    w, v = w[finite], v[:, finite]
    order = np.argsort(w.real)[:modes]
    return w[order], v[:, order]


def _sparse_pairs(K, M, modes: int, symmetric: bool, n_negative: int):
    """The eigenpairs nearest zero by shift-invert: ``modes`` + the point's negative
    eigenvalues of K, so that the lowest (negative ones included) are among them."""
    n = K.shape[0]
    k = min(modes + max(n_negative, 0), n - 2)
    scale = float(np.abs(K.diagonal()).max()) / max(float(np.abs(M.diagonal()).max()), 1e-300)
    last = None
    for sigma in (0.0, -SINGULAR_SHIFT * scale, SINGULAR_SHIFT * scale):   # bounded: 3 shifts
        try:
            if symmetric:
                w, v = spla.eigsh(K.tocsc(), k=k, M=M.tocsc(), sigma=sigma, which="LM",
                                  maxiter=ARPACK_MAXITER)
            else:
                w, v = spla.eigs(K.tocsc(), k=k, M=M.tocsc(), sigma=sigma, which="LM",
                                 maxiter=ARPACK_MAXITER)
            break
        except RuntimeError as exc:          # K − σM exactly singular: the next shift
            last = exc
    else:
        raise ModelError(f"The eigenproblem K − σM could not be factorised: {last}")
    order = np.argsort(np.real(w))[:modes]
    return w[order], v[:, order]


def _normalised(v: np.ndarray, M) -> np.ndarray:
    """Mode shapes scaled to φᵀ·M·φ = 1 (unit length where massless), largest entry positive."""
    v = np.real(v)
    Mv = M @ v
    norm = np.sqrt(np.abs(np.einsum("ij,ij->j", v, Mv)))
    norm = np.where(norm > 0.0, norm, np.linalg.norm(v, axis=0))
    v = v / np.where(norm > 0.0, norm, 1.0)
    big = np.argmax(np.abs(v), axis=0)
    return v * np.sign(v[big, np.arange(v.shape[1])] + (v[big, np.arange(v.shape[1])] == 0))


def _point(asm, model, u: np.ndarray, lam: float, states: list, modes: int, lumped: bool,
           n_negative: int):
    ev = asm.evaluate(u, states, True, lam, 1.0)
    K = ev.K
    M = mass_matrix(model, u=u, lumped=lumped)
    symmetric = not asm.has_followers
    if asm.n_free <= DENSE_MAX:
        w2, v = _dense_pairs(K.toarray(), M.toarray(), modes, symmetric)
    else:
        w2, v = _sparse_pairs(K, M, modes, symmetric, n_negative)
    return np.asarray(w2), v, M


def frequencies(path, i=None, modes: int = 3, shapes: bool = False, lumped: bool = False):
    """Natural frequencies (Hz) of small vibrations about traced equilibrium points.

    Parameters
    ----------
    path : EquilibriumPath, Structure or Model
        A traced path; a structure (or model) gives its undeformed, unloaded state.
    i : int, sequence of int, or None
        Points of the path (negative counts from the end); None: every point.
    modes : int
        How many of the lowest frequencies per point.
    shapes : bool
        Also return the mode shapes.
    lumped : bool
        Lumped instead of consistent masses (:mod:`largerot.mass`).

    Returns
    -------
    f : ndarray, shape (n_points, modes), or (modes,) for an integer ``i``
        Frequencies in Hz (cycles per time unit of the structure's system),
        ascending; a point past a loss of stability has negative entries
        f = −√|ω²|/2π (module notes). The load factor of row k is
        ``path.load_factor[i[k]]`` (:func:`largerot.plotting.plot_frequencies`
        draws f against λ).
    phi : ndarray, shape (n_points, modes, 3·n_nodes), or (modes, 3·n_nodes)
        With ``shapes=True``: the mode shapes in global x, y, rz DOFs (restrained
        and imposed DOFs zero), each scaled to φᵀ·M·φ = 1 over the free DOFs.

    Raises
    ------
    ModelError
        No mass (no section density and no :meth:`~largerot.Structure.mass`);
        ``modes`` more than the free DOFs; a point with a closed contact.

    Warns
    -----
    InputWarning
        A non-symmetric tangent (follower loads), with any complex pair found;
        fibre beams that have yielded (tangent rebuilt from the virgin history).

    Examples
    --------
    >>> import math, largerot as lr
    >>> s = lr.Structure()
    >>> a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    >>> _ = s.bar(a, b, lr.Section(E=100.0, A=1.0))
    >>> s.fix(a); s.fix(b, "uy"); s.mass(b, 4.0)
    >>> f = lr.frequencies(s, modes=1)
    >>> print(round(float(f[0]) * 2 * math.pi, 6))         # √(k/m) = √(100/4)
    5.0
    """
    from .results import EquilibriumPath
    modes = checked_integer("", "modes", modes)
    if modes < 1:
        raise ModelError(f"`modes` must be a positive integer, got {modes!r}.")
    for name, flag in (("shapes", shapes), ("lumped", lumped)):
        if not isinstance(flag, (bool, np.bool_)):
            raise TypeError(f"`{name}` must be True or False, got {flag!r}.")
    if isinstance(path, EquilibriumPath):
        model = path.model
        single = i is not None and np.ndim(i) == 0
        idx = (range(len(path)) if i is None
               else [path._index(i)] if single else [path._index(j) for j in i])
        idx = list(idx)
    elif hasattr(path, "snapshot"):
        model, single, idx = path.snapshot(), True, [0]
        if i not in (None, 0):
            raise ModelError(f"`i` = {i!r} needs a traced path; a structure has one state, its "
                             "undeformed one.")
    else:
        raise TypeError(f"`path` must be an EquilibriumPath or a largerot Structure, got {path!r}.")
    asm = model.assembly
    if modes > asm.n_free:
        raise ModelError(f"`modes` = {modes} is more than the structure's {asm.n_free} free DOFs.")
    M0 = mass_matrix(model, lumped=bool(lumped))
    if not M0.count_nonzero():
        raise ModelError("The structure has no mass: give its sections a density "
                         "(Section(..., density=)) or add nodal masses (s.mass(node, m)).")
    is_path = isinstance(path, EquilibriumPath)
    if asm.has_followers:
        warn_input("The tangent is non-symmetric (follower loads): the frequencies are the "
                   "real parts of the non-symmetric eigenproblem's roots (a static check; "
                   "see lr.vibration).")
    if is_path and "yielded" in path.extra and np.asarray(path.extra["yielded"])[idx].any():
        warn_input("Fibres have yielded at some of these points: their tangent is rebuilt from "
                   "the virgin history (exact for loading without unloading; see lr.vibration).")
    f = np.full((len(idx), modes), np.nan)
    phi = np.zeros((len(idx), modes, model.n_dof)) if shapes else None
    lam = np.zeros(len(idx))
    flutter = []
    for row, j in enumerate(idx):            # bounded: one eigenproblem per point asked
        if is_path:
            u, lam[row] = path.u[j], path.load_factor[j]
            n_neg = int(path.n_negative[j]) if len(path.n_negative) > j else 0
        else:
            u, n_neg = np.zeros(model.n_dof), 0
        states = _states_at(asm, path if is_path else None, j)
        w2, v, M = _point(asm, model, u, float(lam[row]), states, modes, bool(lumped), n_neg)
        if np.iscomplexobj(w2):
            if (np.abs(w2.imag) > COMPLEX_TOL * np.maximum(np.abs(w2), 1e-300)).any():
                flutter.append(j)
            w2 = w2.real
        f[row, :len(w2)] = _signed_hz(w2)
        if shapes:
            phi[row, :v.shape[1]] = model.expanded(asm.free, _normalised(v, M).T)
    if flutter:
        warn_input(f"Complex eigenvalues (flutter, a dynamic instability) at point(s) "
                   f"{', '.join(map(str, flutter[:8]))}: only their real parts are reported.")
    out = f[0] if single else f
    if shapes:
        return out, (phi[0] if single else phi)
    return out
