"""Shear-flexible (Timoshenko) beams: sections, kernel, paths and buckling.

References beside each check: the linear Timoshenko cantilever (common practice),
the interdependent-interpolation stiffness (Reddy 1997, CMAME 149, from memory),
Cowper's shear factors (Cowper 1966, J. Appl. Mech. 33, from memory), the
Euler–Bernoulli elastica (Bisshopp & Drucker 1945, ``closed_form.elastica_tip_load``),
Reissner's finite-strain beam (Reissner 1972, ZAMP 23) solved here by scipy's
``solve_bvp``, and Haringx's and Engesser's buckling loads (Timoshenko & Gere 1961,
*Theory of Elastic Stability*, §2.17, from memory).
"""
import pickle

import numpy as np
import pytest
from scipy.integrate import solve_bvp

import largerot as lr
from largerot.assembly import Assembly
from largerot.closed_form import elastica_tip_load
from largerot.elements import timoshenko
from largerot.groups import BeamGroup, TimoshenkoBeamGroup

from helpers import element_jacobian, rigidly_turned


def _random_beams(seed, n=6):
    rng = np.random.default_rng(seed)
    dX = rng.normal(size=(n, 2))
    L0 = np.hypot(dX[:, 0], dX[:, 1])
    EA = rng.uniform(1.0, 1e3, n)
    EI = rng.uniform(0.1, 10.0, n)
    GAs = EI / L0**2 * 10.0 ** rng.uniform(-1.0, 3.0, n)     # Φ from ~1e-2 to ~100
    u = 0.3 * rng.normal(size=(n, 6))
    common = 3.0 * rng.normal(size=n)                     # large rigid turn plus bending
    u[:, 2] += common
    u[:, 5] += common
    return dX, L0, u, EA, EI, GAs


@pytest.mark.parametrize("seed", range(5))
def test_tangent_is_derivative_of_force(seed):
    # The consistent tangent equals dF/du (common practice, no source); central
    # differences with h = 1e-6 leave ~1e-9 relative error (measured 2e-10), as in
    # tests/test_elements.py for the Euler–Bernoulli beam.
    dX, L0, u, EA, EI, GAs = _random_beams(seed)
    K = timoshenko.response(dX, L0, u, EA, EI, GAs).K
    Kfd = element_jacobian(lambda v: timoshenko.response(dX, L0, v, EA, EI, GAs, tangent=False).f, u)
    assert np.abs(K - Kfd).max() / np.abs(K).max() < 1e-6
    assert np.allclose(K, K.transpose(0, 2, 1), rtol=0, atol=1e-12 * np.abs(K).max())


@pytest.mark.parametrize("angle", [0.5, 3.0, 10.0])
def test_rigid_motion_gives_no_force(angle):
    # Objectivity (common practice, no source): a rigid turn by any angle leaves
    # the element unstrained; forces at round-off of EA·1e-16.
    dX, L0, u = rigidly_turned(angle)
    res = timoshenko.response(dX, L0, u, np.array([1e6]), np.array([1.0]), np.array([3.0]))
    assert np.abs(res.f).max() < 1e-8


@pytest.mark.parametrize("Phi", [0.0, 0.3, 5.0, 200.0])
def test_linear_stiffness_is_the_interdependent_interpolation_element(Phi):
    # Exact linear Timoshenko element (Reddy 1997, "On locking-free shear deformable
    # beam finite elements", CMAME 149, from memory): in (v1, θ1, v2, θ2),
    # EI/(L³(1+Φ))·[[12, 6L, −12, 6L], [6L, (4+Φ)L², −6L, (2−Φ)L²], ...],
    # Φ = 12EI/(κGA·L²); Φ = 0 is the Euler–Bernoulli beam. Round-off only.
    L, EI, EA = 2.0, 3.0, 100.0
    GAs = np.inf if Phi == 0.0 else 12.0 * EI / (Phi * L**2)
    K = timoshenko.response(np.array([[L, 0.0]]), np.array([L]), np.zeros((1, 6)), np.array([EA]),
                            np.array([EI]), np.array([GAs])).K[0]
    a, b = (4.0 + Phi) * L**2, (2.0 - Phi) * L**2
    ref = EI / (L**3 * (1.0 + Phi)) * np.array([[12, 6 * L, -12, 6 * L], [6 * L, a, -6 * L, b],
                                                 [-12, -6 * L, 12, -6 * L], [6 * L, b, -6 * L, a]])
    bend = [1, 2, 4, 5]
    np.testing.assert_allclose(K[np.ix_(bend, bend)], ref, rtol=1e-12, atol=1e-12 * np.abs(ref).max())
    assert K[0, 0] == pytest.approx(EA / L, rel=1e-14) and K[0, 3] == pytest.approx(-EA / L, rel=1e-14)


# -- sections -----------------------------------------------------------------------
def test_section_shear_stiffness_and_cowper_factors():
    # Cowper 1966 (J. Appl. Mech. 33, from memory), ν = E/(2G) − 1: rectangle
    # 10(1+ν)/(12+11ν) (5/6 at ν = 0, common practice), solid circle 6(1+ν)/(7+6ν),
    # thin tube 2(1+ν)/(4+3ν) (1/2 at ν = 0, common practice). Round-off, except the
    # tube of wall/diameter 1e-4, within 2e-4 of the thin-wall limit.
    E = 2.6
    nu = 0.3
    rect = lr.Section.rectangle(E=E, width=0.1, depth=0.3, G=1.0)
    assert rect.shear_factor == pytest.approx(10 * (1 + nu) / (12 + 11 * nu), rel=1e-12)
    assert rect.GAs == pytest.approx(1.0 * rect.A * rect.shear_factor, rel=1e-14)
    assert lr.Section.rectangle(E=2.0, width=0.1, depth=0.3, G=1.0).shear_factor == pytest.approx(5 / 6)
    assert lr.Section.rod(E=E, diameter=0.1, G=1.0).shear_factor == pytest.approx(
        6 * (1 + nu) / (7 + 6 * nu), rel=1e-12)
    thin = lr.Section.tube(E=2.0, diameter=1.0, wall=1e-4, G=1.0)
    assert thin.shear_factor == pytest.approx(0.5, rel=2e-4)
    # a factor given explicitly wins; shear_area and shear_factor fill each other in
    sec = lr.Section.rectangle(E=E, width=0.1, depth=0.3, G=1.0, shear_factor=0.7)
    assert sec.shear_area == pytest.approx(0.7 * sec.A, rel=1e-14)
    assert lr.Section(E=1.0, A=2.0, I=1.0, G=1.0, shear_area=1.0).shear_factor == 0.5
    # no G: Euler–Bernoulli, as before
    assert lr.Section(E=1.0, A=1.0, I=1.0).GAs is None


def _cantilever(section, L, segments, direction=(1.0, 0.0)):
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L * direction[0], L * direction[1])
    s.beam(a, b, section, segments=segments)
    s.fix(a)
    return s, a, b


def test_shear_section_selects_the_timoshenko_group():
    # The registry: shear-flexible sections give Timoshenko beams, others stay Euler–Bernoulli.
    s = lr.Structure()
    a, b, c = s.node(0, 0), s.node(1, 0), s.node(2, 0)
    s.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0), segments=2)
    s.beam(b, c, lr.Section(E=1.0, A=1.0, I=1.0, G=0.4, shear_factor=5 / 6), segments=3)
    groups = Assembly.of(s).groups
    kinds = {type(g): g.rows.tolist() for g in groups}
    assert kinds == {BeamGroup: [0, 1], TimoshenkoBeamGroup: [2, 3, 4]}


def test_group_passes_the_protocol():
    # As tests/test_state_ownership.py checks every kind (common practice, no
    # source): finite-difference tangent (h = 1e-7: ~1e-8 of K), forces from the
    # record, pickling, end forces in balance with the nodal forces.
    s = lr.Structure()
    a, b, c = s.node(0, 0), s.node(1.0, 0.3), s.node(1.5, 1.2)
    sec = lr.Section(E=1.0, A=50.0, I=1.0, G=1.0, shear_area=8.0)
    s.beam(a, b, sec, segments=3)
    s.beam(b, c, sec, segments=2)
    s.fix(a)
    asm = Assembly.of(s)
    (g,) = asm.groups
    u = 0.2 * np.random.default_rng(1).standard_normal(asm.n_dof)
    ue = u[g.dofmap]
    res = g.evaluate(ue, None, True)
    J = element_jacobian(lambda x: g.evaluate(x, None, False).f, ue, h=1e-7)
    np.testing.assert_allclose(res.K, J, atol=1e-6 * np.abs(res.K).max())
    np.testing.assert_allclose(g.forces(ue, g.record(res)), res.f, rtol=1e-12, atol=1e-12)
    np.testing.assert_array_equal(pickle.loads(pickle.dumps(g)).evaluate(ue, None, False).f, res.f)
    ef = g.end_forces(ue, {})
    np.testing.assert_allclose(res.f[:, [2, 5]], np.stack([-ef["M"][:, 0], ef["M"][:, 1]], axis=1),
                               rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(res.f[:, 0:2] + res.f[:, 3:5], 0.0, atol=1e-12)
    shear = np.hypot(res.f[:, 3], res.f[:, 4]) ** 2 - ef["N"] ** 2
    np.testing.assert_allclose(np.sqrt(np.maximum(shear, 0.0)), np.abs(ef["V"]), rtol=1e-9)


# -- paths -------------------------------------------------------------------------
@pytest.mark.parametrize("segments", [1, 4])
def test_stocky_cantilever_small_load(segments):
    # Linear Timoshenko cantilever (common practice): δ = PL³/(3EI) + PL/(κGA).
    # A post of L/h = 3, E/G = 8, κ = 5/6: shear is 21 % of δ. The element is exact
    # for the linear beam, so any mesh gives δ to the nonlinearity of a 1e-7·L
    # deflection (~1e-14) and the solver (measured 2e-11); tolerance 1e-8.
    E, h, L = 1.0, 1.0, 3.0
    sec = lr.Section.rectangle(E=E, width=1.0, depth=h, G=E / 8.0, shear_factor=5 / 6)
    s, a, b = _cantilever(sec, L, segments)
    P = 1e-7
    s.load(b, fy=P)
    path = lr.trace(s, lr.by_load(1.0), target_load_factor=1.0, tol=1e-12)
    assert path.status == "target"
    bending, shear = P * L**3 / (3.0 * sec.EI), P * L / sec.GAs
    assert shear / (bending + shear) == pytest.approx(0.21, abs=0.01)
    assert path.displacement(b, "uy")[-1] == pytest.approx(bending + shear, rel=1e-8)
    # the Euler–Bernoulli beam of the same section misses the shear part
    eb = lr.Section.rectangle(E=E, width=1.0, depth=h)
    s2, _, b2 = _cantilever(eb, L, segments)
    s2.load(b2, fy=P)
    assert lr.trace(s2, lr.by_load(1.0), target_load_factor=1.0).displacement(b2, "uy")[-1] == \
        pytest.approx(bending, rel=1e-6)


@pytest.mark.parametrize("segments, tol", [(4, 7e-3), (8, 1.7e-3)])
def test_no_locking_slender_beam_follows_the_elastica(segments, tol):
    # Bisshopp & Drucker 1945 (closed_form.elastica_tip_load), P·L²/EI = 1, 2, 3.
    # κGA = 3EI/L²·1e8 (shear 1e-8 of the linear deflection): a locking element
    # would be stiffer by orders of magnitude. The error is the corotational
    # mesh error of the Euler–Bernoulli beam (measured: 4 elements 5.8e-3, 8
    # elements 1.4e-3 at α = 3, the same as the Euler–Bernoulli beam's to 1e-4), h².
    EI, L, I = 2.0, 3.0, 1e-4
    sec = lr.Section(E=EI / I, A=1e6 * I / L**2, I=I, G=1.0, shear_area=3.0 * EI / L**2 * 1e8)
    s, a, b = _cantilever(sec, L, segments)
    s.load(b, fy=-3.0 * EI / L**2)
    path = lr.trace(s, lr.by_load(1.0 / 3.0), target_load_factor=1.0, tol=1e-10)
    assert path.status == "target"
    for alpha in (1.0, 2.0, 3.0):
        i = int(np.argmin(np.abs(path.load_factor - alpha / 3.0)))
        assert path.load_factor[i] == pytest.approx(alpha / 3.0, abs=1e-12)
        along, shortening, slope = elastica_tip_load(alpha)
        assert -path.displacement(b, "uy")[i] / L == pytest.approx(along, rel=tol)
        assert -path.displacement(b, "rz")[i] == pytest.approx(slope, rel=tol)


def reissner_cantilever(Px, Py, L, EA, GAs, EI):
    """Tip (ux, uy, rotation) of a cantilever along +x under a dead tip force (Px, Py).

    Reissner 1972, "On one-dimensional finite-strain beam theory: the plane
    problem", ZAMP 23: x' = (1+ε)cos θ − γ sin θ, y' = (1+ε)sin θ + γ cos θ,
    θ' = M/EI, M' = −(x'·Py − y'·Px), ε = N/EA, γ = V/κGA with N, V the tip force
    in the section's frame; x = y = θ = 0 at the root, M = 0 at the tip.
    """
    def rhs(s, y):
        th, M = y[2], y[3]
        N = Px * np.cos(th) + Py * np.sin(th)
        V = -Px * np.sin(th) + Py * np.cos(th)
        e, g = N / EA, V / GAs
        xp = (1 + e) * np.cos(th) - g * np.sin(th)
        yp = (1 + e) * np.sin(th) + g * np.cos(th)
        return np.vstack([xp, yp, M / EI, -(xp * Py - yp * Px)])

    s = np.linspace(0.0, L, 401)
    y0 = np.zeros((4, s.size))
    y0[0] = s
    sol = solve_bvp(rhs, lambda a, b: np.array([a[0], a[1], a[2], b[3]]), s, y0, tol=1e-10,
                    max_nodes=100_000)
    assert sol.success
    return np.array([sol.y[0, -1] - L, sol.y[1, -1], sol.y[2, -1]])


@pytest.mark.parametrize("Px", [0.0, -0.5])
def test_large_deflection_against_reissner_beam(Px):
    # A shear-soft cantilever (shear 30 % of the linear deflection, EA = 200·EI/L²)
    # bent to a tip rotation of ~50°: the tip against Reissner's equations solved by
    # solve_bvp (tol 1e-10). Measured error of the tip (ux, uy, rz) in L:
    # 16 elements 5e-4, 32 elements 1.2e-4, halving per mesh halving twice over (h²).
    # Tolerances: 32 elements 2e-4; the observed order between 16 and 32 in [1.8, 2.2].
    EI, L, EA, GAs, Py = 1.0, 1.0, 200.0, 10.0, 3.0
    ref = reissner_cantilever(Px, Py, L, EA, GAs, EI)
    sec = lr.Section(E=1.0, A=EA, I=EI, G=1.0, shear_area=GAs)
    err = []
    for n in (16, 32):
        s, a, b = _cantilever(sec, L, n)
        s.load(b, fx=Px, fy=Py)
        path = lr.trace(s, lr.by_load(0.25), target_load_factor=1.0, tol=1e-11)
        assert path.status == "target"
        tip = np.array([path.displacement(b, d)[-1] for d in ("ux", "uy", "rz")])
        err.append(np.abs(tip - ref).max())
    assert ref[2] > 0.85                      # large rotation indeed
    assert err[1] < 2e-4 * L
    assert 1.8 < np.log2(err[0] / err[1]) < 2.2
    # and the shear matters: the Euler–Bernoulli beam's tip is far off (~9 % of L)
    s, a, b = _cantilever(lr.Section(E=1.0, A=EA, I=EI), L, 16)
    s.load(b, fx=Px, fy=Py)
    eb = lr.trace(s, lr.by_load(0.25), target_load_factor=1.0).displacement(b, "uy")[-1]
    assert abs(eb - ref[1]) > 0.05 * L


@pytest.mark.parametrize("ratio, tol", [(1.0, 4e-4), (0.2, 1.5e-4), (1e-6, 2e-7)])
def test_buckling_of_a_shear_flexible_column_is_haringx(ratio, tol):
    # Cantilever column, P_E = π²EI/(4L²), κGA = P_E/ratio, EA = 1e6·P_E.
    # Haringx: P(1 + P/κGA) = P_E; Engesser: P = P_E/(1 + P_E/κGA) (Timoshenko &
    # Gere 1961, §2.17, from memory). Reissner's section-frame strains give Haringx
    # (module docstring of largerot.elements.timoshenko). 16 elements, measured
    # above Haringx by 3.1e-4 (ratio 1), 1.2e-4 (0.2), 1.3e-7 (1e-6, Euler, h⁴);
    # at ratio 1 Engesser's load is 24 % lower, so the two are told apart.
    EI, L = 1.0, 1.0
    PE = np.pi**2 * EI / (4 * L**2)
    S = PE / ratio
    sec = lr.Section(E=1.0, A=1e6 * PE, I=EI, G=1.0, shear_area=S)
    s, a, b = _cantilever(sec, L, 16, direction=(0.0, 1.0))
    s.load(b, fy=-1.0)
    P = lr.buckling(s, modes=1).load_factors[0]
    haringx = S * (np.sqrt(1.0 + 4.0 * PE / S) - 1.0) / 2.0
    engesser = PE / (1.0 + PE / S)
    assert P == pytest.approx(haringx, rel=tol)
    if ratio == 1.0:
        assert P / engesser - 1.0 > 0.2
