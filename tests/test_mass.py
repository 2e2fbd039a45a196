"""Mass matrices (largerot/mass.py) and nodal masses (Structure.mass).

References: the mass of a body is Σ ρ·A·L plus its point masses, and the kinetic
energy of a rigid motion is ½·m·|v|² in translation and ½·J·ω² in rotation, with J
by the parallel-axis theorem (common practice, no source). A consistent mass matrix
reproduces both exactly, because rigid motions (linear velocity fields) lie in its
interpolation (Cook, Malkus & Plesha 1989, *Concepts and Applications of Finite
Element Analysis*, from memory). The element matrices are checked against the
kinetic energy integrated numerically from the Hermite shape functions.
"""
import pickle

import numpy as np
import pytest

import largerot as lr
from largerot.mass import bar_mass, beam_mass, mass_matrix, total_mass

RHO = 7850.0


def frame():
    """A beam (one end hinged), a shear-flexible beam, a bar, a sagging cable and nodal
    masses; a roller and an imposed DOF."""
    s = lr.Structure()
    a, b, c, d = s.node(0.0, 0.0), s.node(0.0, 3.0), s.node(4.0, 3.5), s.node(4.0, 0.0, name="foot")
    sec = lr.Section(E=210e9, A=2e-3, I=4e-6, density=RHO)
    thick = lr.Section.rectangle(E=10e9, width=0.2, depth=0.3, G=4e9, density=500.0)
    rod = lr.Section(E=200e9, A=3e-4, density=RHO)
    s.beam(a, b, sec, segments=3)
    s.beam(b, c, thick, segments=4)
    s.beam(c, d, sec, segments=2, hinge="start")
    s.bar(a, c, rod, segments=2)
    s.cable(b, d, rod, unstretched_length=5.3, segments=6)
    s.mass(c, 120.0, inertia=8.0)
    s.mass("foot", 30.0)
    s.mass(c, 5.0)
    return s


def rigid(xy, v=(0.0, 0.0), omega=0.0, centre=(0.0, 0.0)):
    """Velocities of a rigid motion at every node, full vector (3·n_nodes,)."""
    r = xy - np.asarray(centre)
    out = np.zeros((len(xy), 3))
    out[:, 0] = v[0] - omega * r[:, 1]
    out[:, 1] = v[1] + omega * r[:, 0]
    out[:, 2] = omega
    return out.ravel()


def test_nodal_masses_add_up_and_take_names():
    s = frame()
    assert s.masses()[2] == (125.0, 8.0)
    assert s.masses()[3] == (30.0, 0.0)
    m = s.snapshot()
    assert m.mass_nodes.tolist() == [2, 3]
    assert m.mass_values.tolist() == [[125.0, 8.0], [30.0, 0.0]]


@pytest.mark.parametrize("lumped", [False, True])
def test_translation_kinetic_energy_is_the_total_mass(lumped):
    # ½·vᵀMv = ½·m·|v|² for a rigid translation (common practice, no source); the
    # structure is left unsupported so every DOF is free; round-off only (1e-12)
    s = frame()
    s.fix(0, "rz")            # something must stay: the mass of the rest is all free
    model = s.snapshot()
    asm = model.assembly
    M = mass_matrix(model, lumped=lumped)
    m = sum(RHO * 2e-3 * L for L in (3.0, 3.5)) + 500.0 * 0.06 * np.hypot(4.0, 0.5) \
        + RHO * 3e-4 * (np.hypot(4.0, 3.5) + 5.3) + 125.0 + 30.0
    assert total_mass(model) == pytest.approx(m, rel=1e-12)
    for v in ((1.0, 0.0), (0.0, 1.0), (0.6, -0.8)):
        w = rigid(model.xy, v)[asm.free]
        assert w @ (M @ w) == pytest.approx(m, rel=1e-12)


def test_rotation_kinetic_energy_is_the_polar_inertia():
    # J = Σ ρA(L³/12 + L·d²) + ρI·L + Σ (m·r² + inertia) about a point (parallel-axis
    # theorem, common practice, no source); exact for the consistent mass, whose
    # interpolation holds a rigid rotation (hinged ends too: the element's own end
    # rotation equals the rigid one); round-off only
    s = frame()
    model = s.snapshot()
    asm = model.assembly
    centre = np.array([1.0, 2.0])
    J = 0.0
    for kind in ("beam", "bar"):
        nodes, sec = model.element_table(kind)
        L = model.element_lengths(kind)
        mid = 0.5 * (model.xy[nodes[:, 0]] + model.xy[nodes[:, 1]]) - centre
        chord = np.hypot(*(model.xy[nodes[:, 1]] - model.xy[nodes[:, 0]]).T)
        for e in range(len(L)):
            x = model.sections[sec[e]]
            # a sagging cable segment's material length L0 exceeds its chord: the
            # consistent bar mass spreads ρA·L0 along the chord
            J += x.density * x.A * L[e] * (chord[e] ** 2 / 12.0 + mid[e] @ mid[e])
            if kind == "beam":
                J += x.density * x.I * L[e]
    for n, (m, inertia) in s.masses().items():
        r = model.xy[n] - centre
        J += m * (r @ r) + inertia
    w = rigid(model.xy, omega=1.0, centre=centre)[asm.free]
    assert w @ (mass_matrix(model) @ w) == pytest.approx(J, rel=1e-12)


@pytest.mark.parametrize("lumped", [False, True])
def test_symmetric_positive_semidefinite_with_the_tangent_pattern(lumped):
    s = frame()
    s.fix(0)
    s.roller(3, (1.0, 1.0))
    s.impose(1, "rz", 0.01)
    s.load(2, fx=1.0)
    model = s.snapshot()
    asm = model.assembly
    rng = np.random.default_rng(3)
    u = 0.3 * rng.standard_normal(model.n_dof)
    for uu in (None, u):
        M = mass_matrix(model, u=uu, lumped=lumped)
        assert M.shape == (asm.n_free, asm.n_free)
        Md = M.toarray()
        assert np.abs(Md - Md.T).max() <= 1e-12 * np.abs(Md).max()
        assert np.linalg.eigvalsh(Md).min() >= -1e-12 * np.abs(Md).max()
        K = asm.evaluate(np.zeros(model.n_dof), asm.initial_states()).K
        assert np.array_equal(M.indptr, K.indptr) and np.array_equal(M.indices, K.indices)
    # with every rotation carried (no lumped rotary at the hinge) the consistent mass
    # is positive definite
    if not lumped:
        assert np.linalg.eigvalsh(mass_matrix(model).toarray()).min() > 0.0


def test_inclined_roller_mass_along_the_rolling_line():
    # a bar with a point mass on a 45° roller: the free DOF is the motion along the
    # roller, of mass ρAL/3 + m (consistent bar mass, rotation-invariant)
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(2.0, 0.0)
    s.bar(a, b, lr.Section(E=1.0, A=0.5, density=3.0))
    s.fix(a)
    s.roller(b, (1.0, 1.0))
    s.mass(b, 4.0)
    M = mass_matrix(s).toarray()
    assert M.shape == (1, 1)
    assert M[0, 0] == pytest.approx(3.0 * 0.5 * 2.0 / 3.0 + 4.0, rel=1e-14)


def _hermite(x, L):
    xi = x / L
    return np.array([1 - 3 * xi**2 + 2 * xi**3, L * (xi - 2 * xi**2 + xi**3),
                     3 * xi**2 - 2 * xi**3, L * (-xi**2 + xi**3)])


def _hermite_slope(x, L):
    xi = x / L
    return np.array([(-6 * xi + 6 * xi**2) / L, 1 - 4 * xi + 3 * xi**2,
                     (6 * xi - 6 * xi**2) / L, -2 * xi + 3 * xi**2])


def test_beam_element_mass_is_the_integrated_kinetic_energy():
    # M_ij = ∫ ρA (N_i·N_j) + ρI (N_i′·N_j′) dx with linear axial and Hermite cubic
    # transverse shape functions (Przemieniecki 1968, Theory of Matrix Structural
    # Analysis, from memory), integrated here by 6-point Gauss (exact for degree 11),
    # then turned to an element at 30°; round-off only
    L, rhoA, rhoI = 1.7, 3.2, 0.4
    xg, wg = np.polynomial.legendre.leggauss(6)
    x, w = 0.5 * L * (xg + 1.0), 0.5 * L * wg
    Ml = np.zeros((6, 6))
    lin = np.array([1 - x / L, x / L])
    Ml[np.ix_([0, 3], [0, 3])] = rhoA * np.einsum("ik,jk,k->ij", lin, lin, w)
    H, Hs = _hermite(x, L), _hermite_slope(x, L)
    b = [1, 2, 4, 5]
    Ml[np.ix_(b, b)] = (rhoA * np.einsum("ik,jk,k->ij", H, H, w)
                        + rhoI * np.einsum("ik,jk,k->ij", Hs, Hs, w))
    a = np.radians(30.0)
    c, s = np.cos(a), np.sin(a)
    T = np.zeros((6, 6))
    T[0, 0], T[0, 1], T[1, 0], T[1, 1] = c, s, -s, c
    T[3:, 3:] = T[:3, :3]
    T[2, 2] = T[5, 5] = 1.0
    M = beam_mass(np.array([L]), np.array([rhoA]), np.array([rhoI]), np.array([c]), np.array([s]))[0]
    assert np.allclose(M, T.T @ Ml @ T, rtol=0.0, atol=1e-13)


def test_bar_element_mass():
    # ρAL/6·[[2, 1], [1, 2]] per direction (linear interpolation; common practice,
    # no source) and ρAL/2 lumped
    M = bar_mass(np.array([2.0]), np.array([3.0]))[0]
    assert np.allclose(M[::2, ::2], [[2.0, 1.0], [1.0, 2.0]])
    assert np.allclose(M[1::2, 1::2], [[2.0, 1.0], [1.0, 2.0]])
    assert not M[::2, 1::2].any()
    assert np.allclose(bar_mass(np.array([2.0]), np.array([3.0]), lumped=True)[0], 3.0 * np.eye(4))


def test_mass_follows_the_chord_angle_at_u():
    # the consistent beam mass at a configuration turned rigidly by α is the
    # undeformed one seen in the turned frame, Rᵀ·M0·R (frame invariance of kinetic
    # energy, common practice, no source)
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.beam(a, b, lr.Section(E=1.0, A=1.0, I=0.1, density=2.0), segments=3)
    model = s.snapshot()
    al = 0.7
    c, sn = np.cos(al), np.sin(al)
    xy = model.xy
    u = np.zeros((model.n_nodes, 3))
    u[:, 0] = c * xy[:, 0] - sn * xy[:, 1] - xy[:, 0]
    u[:, 1] = sn * xy[:, 0] + c * xy[:, 1] - xy[:, 1]
    u[:, 2] = al
    R = np.zeros((model.n_dof, model.n_dof))
    for n in range(model.n_nodes):
        R[3 * n:3 * n + 2, 3 * n:3 * n + 2] = [[c, sn], [-sn, c]]
        R[3 * n + 2, 3 * n + 2] = 1.0
    M0 = mass_matrix(model).toarray()
    M1 = mass_matrix(model, u=u.ravel()).toarray()
    assert np.allclose(M1, R.T @ M0 @ R, atol=1e-13)
    assert not np.allclose(M1, M0)


def test_no_mass_without_density():
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0))
    s.fix(a)
    assert mass_matrix(s).nnz == 0 or not mass_matrix(s).toarray().any()


def test_masses_pickle_and_old_states_load(tmp_path):
    s = frame()
    t = pickle.loads(pickle.dumps(s))
    assert t.masses() == s.masses()
    lr.save(s, tmp_path / "s.zip")
    assert lr.load(tmp_path / "s.zip").masses() == s.masses()
    # a Structure pickled before nodal masses existed: no masses
    state = s.__getstate__()
    state.pop("_masses")
    old = lr.Structure.__new__(lr.Structure)
    old.__setstate__(state)
    assert old.masses() == {}
    assert old.snapshot().mass_nodes.shape == (0,)
    # a Model saved before: the fields take their defaults
    mstate = s.snapshot().__getstate__()
    mstate.pop("mass_nodes"), mstate.pop("mass_values")
    m = lr.Model.__new__(lr.Model)
    m.__setstate__(mstate)
    assert m.mass_nodes.shape == (0,) and m.mass_values.shape == (0, 2)


def _s():
    s = lr.Structure()
    s.node(0.0, 0.0)
    return s


BAD = [
    # (id, f, exception, fragment) — the library's own contract (common practice, no source)
    ("negative mass", lambda: _s().mass(0, -1.0), lr.ModelError, "Mass at node 0 `m`"),
    ("mass as text", lambda: _s().mass(0, "1"), TypeError, "`m` must be a number"),
    ("infinite inertia", lambda: _s().mass(0, 1.0, inertia=np.inf), lr.ModelError, "`inertia`"),
    ("negative inertia", lambda: _s().mass(0, 1.0, inertia=-2.0), lr.ModelError, "`inertia`"),
    ("unknown node", lambda: _s().mass(3, 1.0), lr.ModelError, "unknown node 3"),
    ("unknown node name", lambda: _s().mass("tip", 1.0), lr.ModelError, "'tip'"),
    ("u of the wrong shape", lambda: mass_matrix(frame(), u=np.zeros(5)), lr.ModelError,
     "`u` must be a full displacement vector"),
    ("lumped as text", lambda: mass_matrix(frame(), lumped="yes"), TypeError, "`lumped`"),
    ("not a model", lambda: mass_matrix(42), TypeError, "`model`"),
]


@pytest.mark.parametrize("name, f, exc, fragment", BAD, ids=[r[0] for r in BAD])
def test_bad_input(name, f, exc, fragment):
    with pytest.raises(exc, match=fragment):
        f()
