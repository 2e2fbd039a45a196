"""Mass matrices: the members' own mass (from ``Section.density``) and nodal masses.

The element matrices
    Beams (Euler–Bernoulli, and shear-flexible ones alike): the consistent mass of
    the straight two-node element with linear axial and cubic (Hermite) transverse
    interpolation, in the element's local (u, v, θ) at each end,

        axial:       ρA·L/6·[[2, 1], [1, 2]]                        on (u1, u2)
        transverse:  ρA·L/420·[[156, 22L, 54, −13L], [22L, 4L², 13L, −3L²],
                               [54, 13L, 156, −22L], [−13L, −3L², −22L, 4L²]]
        rotary:      ρI/(30L)·[[36, 3L, −36, 3L], [3L, 4L², −3L, −L²],
                               [−36, −3L, 36, −3L], [3L, −L², −3L, 4L²]]
                                                                    on (v1, θ1, v2, θ2)

    (Przemieniecki 1968, *Theory of Matrix Structural Analysis*, ch. 11; Cook,
    Malkus & Plesha 1989, *Concepts and Applications of Finite Element Analysis*;
    from memory). The rotary term is the section's rotary inertia ρI on the slope
    w′; frequencies then converge as h⁴ for the Euler–Bernoulli beam. Shear-flexible
    beams (sections with ``G``) take the same matrix: their element is, in the
    linear range, the interdependent-interpolation Timoshenko element whose
    displacement is this cubic, and the shear angle's own share of the rotary
    inertia (ρI·γ, small where shear is) is left out.
    Released ends (``hinge=``): the element's own end rotations φ = A·θ + (I − A)·β
    (:func:`largerot.elements.releases.rotation_map`) replace the node rotations in
    the cubic, as in the geometric stiffness (:func:`largerot.groups.consistent_axial`).

    Bars and cable segments: ρA·L0/6·[[2, 1], [1, 2]] on each of x and y (linear
    interpolation of both components; L0 the unstretched length, so a cable's mass
    is its material's whatever its sag).

    Lumped (``lumped=True``): ρA·L/2 on each translation of each end; for beams the
    rotary ρA·L³/78 + ρI·L/2 at each rigidly joined end (the first term is the
    Hinton–Rock–Zienkiewicz diagonal scaling of the Hermite mass, Hinton, Rock &
    Zienkiewicz 1976, "A note on mass lumping and related processes in the finite
    element method", Earthq. Eng. Struct. Dyn. 4; from memory), none at a released
    end (its rotation is the element's own, condensed out).

The configuration
    The consistent beam mass is not invariant under rotation (axial and transverse
    interpolations differ), so the beam matrices are turned to the chord angle of
    the configuration asked for: the undeformed one by default, or the current
    chord of each element at ``u`` (the rotated element mass of the corotational
    frame; the length stays L0, mass is conserved). Bar and lumped matrices are
    rotation-invariant.

The assembled matrix is over the assembly's free DOFs, with the tangent's sparsity
pattern (same ``indptr`` and ``indices``), so ``K − ω²·M`` is one array operation on
``.data`` and factorises with the tangent's symbolic analysis. Restrained and
imposed DOFs are not free and carry no mass; at an inclined roller the node's
``ux`` row is the motion along the roller, as in the tangent.
"""
from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from .elements._chord import chord
from .errors import ModelError
from .groups import consistent_axial
from .snapshot import Model

__all__ = ["mass_matrix", "beam_mass", "bar_mass", "total_mass"]

#: Local translational Hermite mass per ρA·L/420 on (v1, θ1, v2, θ2); entries scale
#: with L to the powers in _HERMITE_POWERS.
_HERMITE = np.array([[156, 22, 54, -13], [22, 4, 13, -3], [54, 13, 156, -22], [-13, -3, -22, 4]],
                    float)
_HERMITE_POWERS = np.array([[0, 1, 0, 1], [1, 2, 1, 2], [0, 1, 0, 1], [1, 2, 1, 2]])

#: Rotary inertia of a lumped beam end per ρA·L³: the Hinton–Rock–Zienkiewicz scaling
#: 4/420 · 420/312 of the Hermite diagonal (module docstring).
HRZ_ROTARY = 1.0 / 78.0


def _release_map(L: np.ndarray, A: np.ndarray) -> np.ndarray:
    """(v1, φ1, v2, φ2) from (v1, θ1, v2, θ2) at released ends, shape (n, 4, 4)."""
    R = np.zeros((len(L), 4, 4))
    R[:, 0, 0] = R[:, 2, 2] = 1.0
    R[:, 1::2, 1::2] = A
    beta = (1.0 - A.sum(axis=2)) / L[:, None]
    R[:, 1::2, 0] = -beta
    R[:, 1::2, 2] = beta
    return R


def beam_mass(L: np.ndarray, rhoA: np.ndarray, rhoI: np.ndarray, c: np.ndarray, s: np.ndarray,
              lumped: bool = False, rotation_map: np.ndarray | None = None) -> np.ndarray:
    """Mass matrices of beam elements in global (ux1, uy1, rz1, ux2, uy2, rz2).

    Parameters
    ----------
    L : ndarray, shape (n_elements,)
        Element length (undeformed).
    rhoA, rhoI : ndarray, shape (n_elements,)
        Mass per unit length and rotary inertia per unit length.
    c, s : ndarray, shape (n_elements,)
        Cosine and sine of the element's chord angle.
    lumped : bool
    rotation_map : ndarray, shape (n_elements, 2, 2), optional
        Released ends (module docstring); None when both ends are rigid.

    Returns
    -------
    ndarray, shape (n_elements, 6, 6)
    """
    n = len(L)
    if lumped:
        M = np.zeros((n, 6, 6))
        half = 0.5 * rhoA * L
        rot = HRZ_ROTARY * rhoA * L**3 + 0.5 * rhoI * L
        for k in (0, 1, 3, 4):
            M[:, k, k] = half
        rigid = np.ones((n, 2), bool)
        if rotation_map is not None:
            rigid = np.isclose(rotation_map, np.eye(2)).all(axis=2)
        M[:, 2, 2] = np.where(rigid[:, 0], rot, 0.0)
        M[:, 5, 5] = np.where(rigid[:, 1], rot, 0.0)
        return M
    Mb = (rhoA * L / 420.0)[:, None, None] * _HERMITE * L[:, None, None] ** _HERMITE_POWERS
    if rotation_map is not None:
        R = _release_map(L, rotation_map)
        Mb = np.einsum("eki,ekl,elj->eij", R, Mb, R)
    T = np.zeros((n, 4, 6))                      # local (v1, θ1, v2, θ2) from global
    T[:, 0, 0], T[:, 0, 1] = -s, c
    T[:, 1, 2] = 1.0
    T[:, 2, 3], T[:, 2, 4] = -s, c
    T[:, 3, 5] = 1.0
    M = np.einsum("eki,ekl,elj->eij", T, Mb, T)
    Ta = np.zeros((n, 2, 6))                     # local (u1, u2)
    Ta[:, 0, 0], Ta[:, 0, 1] = c, s
    Ta[:, 1, 3], Ta[:, 1, 4] = c, s
    Ma = (rhoA * L / 6.0)[:, None, None] * np.array([[2.0, 1.0], [1.0, 2.0]])
    M += np.einsum("eki,ekl,elj->eij", Ta, Ma, Ta)
    # rotary inertia: the same matrix as the consistent geometric stiffness, ρI for N
    M += consistent_axial(rhoI, L, c, s, rotation_map)
    return M


def bar_mass(L: np.ndarray, rhoA: np.ndarray, lumped: bool = False) -> np.ndarray:
    """Mass matrices of bar elements in global (ux1, uy1, ux2, uy2), shape (n_elements, 4, 4).

    ``L`` the unstretched length, shape (n_elements,); consistent or lumped
    (module docstring). Invariant under rotation: no chord angle needed.
    """
    m = rhoA * L
    one = np.eye(2)
    block = (np.array([[0.5, 0.0], [0.0, 0.5]]) if lumped
             else np.array([[1.0, 0.5], [0.5, 1.0]]) / 3.0)
    return m[:, None, None] * np.kron(block, one)[None]


def _element_masses(model: Model, g, ue: np.ndarray | None, lumped: bool) -> np.ndarray | None:
    """Element mass matrices of one group (None for groups with no mass: springs, contacts)."""
    table = getattr(g, "table", None)
    if table not in ("beam", "bar"):
        return None
    secs = model.sections
    sec = (model.beam_sections if table == "beam" else model.bar_sections)[g.rows]
    rho = np.array([float(getattr(x, "density", 0.0)) for x in secs])[sec] if len(secs) else np.zeros(0)
    A = np.array([float(x.A) for x in secs])[sec] if len(secs) else np.zeros(0)
    if table == "bar":
        return bar_mass(g.L0, rho * A, lumped)
    I = np.array([float(x.I) for x in secs])[sec]
    if ue is None:
        c, s = g.dX[:, 0] / g.L0, g.dX[:, 1] / g.L0
    else:
        _, _, c, s = chord(g.dX, ue[:, 3:5] - ue[:, 0:2], g.L0)
    bending = getattr(g, "bending", None)
    A_map = None
    if bending is not None:
        from .elements.releases import rotation_map
        A_map = rotation_map(bending)
    return beam_mass(g.L0, rho * A, rho * I, c, s, lumped, A_map)


def mass_matrix(model, u: np.ndarray | None = None, lumped: bool = False) -> sp.csc_matrix:
    """The mass matrix over the free DOFs: members (consistent or lumped) and nodal masses.

    Parameters
    ----------
    model : Model or Structure
        ``structure.snapshot()`` or the structure itself (its current snapshot).
    u : ndarray, shape (n_dof,), optional
        Full displacement vector in x, y (``assembly.full(u_free, lam)``, or
        ``path.model.expanded``): beam matrices are turned to each element's chord
        angle there. Default: the undeformed configuration.
    lumped : bool
        Diagonal (lumped) masses instead of the consistent ones (module docstring).

    Returns
    -------
    scipy.sparse.csc_matrix, shape (n_free, n_free)
        Symmetric, positive semi-definite, on the free DOFs in the order of
        ``model.assembly.free``, with the tangent's sparsity pattern (the same
        ``indptr`` and ``indices`` as ``assembly.evaluate(...).K``).

    Examples
    --------
    >>> import largerot as lr
    >>> from largerot.mass import mass_matrix
    >>> s = lr.Structure()
    >>> a, b = s.node(0.0, 0.0), s.node(2.0, 0.0)
    >>> _ = s.bar(a, b, lr.Section(E=1.0, A=0.5, density=3.0))
    >>> s.fix(a); s.mass(b, 4.0)
    >>> mass_matrix(s).toarray()          # ρAL/3 + 4 on ux and uy of b
    array([[5., 0.],
           [0., 5.]])
    """
    model = model.snapshot() if hasattr(model, "snapshot") else model
    if not isinstance(model, Model):
        raise TypeError(f"`model` must be a largerot Structure or Model, got {model!r}.")
    if not isinstance(lumped, (bool, np.bool_)):
        raise TypeError(f"`lumped` must be True or False, got {lumped!r}.")
    asm = model.assembly
    if u is not None:
        u = np.asarray(u, dtype=float)
        if u.shape != (asm.n_dof,):
            raise ModelError(f"`u` must be a full displacement vector of shape ({asm.n_dof},) "
                             f"(3 per node, in x and y), got shape {u.shape}.")
        if not np.isfinite(u).all():
            raise ModelError("`u` must be finite.")
    data = np.zeros(asm.nnz + 1)
    for k, (g, pos) in enumerate(zip(asm.groups, asm.positions)):
        Me = _element_masses(model, g, None if u is None else u[g.dofmap], bool(lumped))
        if Me is None or not len(Me):
            continue
        data += np.bincount(pos, weights=Me.ravel(), minlength=asm.nnz + 1)
        asm._rotate_into(data, k, Me)
    _add_nodal(data, asm, model)
    return asm._matrix(data)


def _add_nodal(data: np.ndarray, asm, model: Model) -> None:
    """Nodal masses on the diagonal entries of their free DOFs (rotation-invariant:
    a mass on both translations needs no turning at an inclined roller)."""
    nodes = getattr(model, "mass_nodes", np.zeros(0, np.int64))
    if not len(nodes):
        return
    values = model.mass_values
    g = (3 * nodes[:, None] + np.arange(3)).ravel()
    w = np.column_stack([values[:, 0], values[:, 0], values[:, 1]]).ravel()
    i = asm.free_index[g]
    keep = (i >= 0) & (w != 0.0)
    for col, weight in zip(i[keep], w[keep]):        # bounded: three per massed node
        lo, hi = asm.indptr[col], asm.indptr[col + 1]
        data[lo + np.searchsorted(asm.indices[lo:hi], col)] += weight


def total_mass(model) -> float:
    """Mass of the members (Σ ρ·A·L0) plus the nodal masses, restrained ones included."""
    model = model.snapshot() if hasattr(model, "snapshot") else model
    rho = np.array([float(getattr(x, "density", 0.0)) for x in model.sections])
    A = np.array([float(x.A) for x in model.sections])
    out = 0.0
    for kind in ("beam", "bar"):
        _, sec = model.element_table(kind)
        if len(sec):
            out += float(np.sum(rho[sec] * A[sec] * model.element_lengths(kind)))
    return out + float(np.sum(getattr(model, "mass_values", np.zeros((0, 2)))[:, 0]))
