"""Member end releases (hinges and semi-rigid joints): kernels, statics, large rotations,
buckling. Sources beside each check."""
import math

import numpy as np
import pytest
from scipy.optimize import brentq

import largerot as lr
from largerot.closed_form import two_bar_truss_load
from largerot.elements import beam, releases

from helpers import element_jacobian

INF = math.inf


def _condensed(k, EI, L):
    """Bending stiffness on the node rotations by direct static condensation.

    Unknowns: the node rotations (θ1, θ2) and the element's own end rotation φ_i at
    each end with a finite spring k_i (a rigid end has φ_i = θ_i). The element's
    EI/L·[[4, 2], [2, 4]] acts on (φ1, φ2), each spring k_i on θ_i − φ_i; the φ are
    condensed out (common practice, no source: static condensation).
    """
    own = [i for i in range(2) if not math.isinf(k[i])]
    n = 2 + len(own)
    P = np.zeros((2, n))                  # (φ1, φ2) from (θ1, θ2, own φ...)
    for i in range(2):
        P[i, 2 + own.index(i) if i in own else i] = 1.0
    K = P.T @ (EI / L * np.array([[4.0, 2.0], [2.0, 4.0]])) @ P
    for j, i in enumerate(own):
        K[np.ix_([i, 2 + j], [i, 2 + j])] += k[i] * np.array([[1.0, -1.0], [-1.0, 1.0]])
    Kaa, Kab, Kbb = K[:2, :2], K[:2, 2:], K[2:, 2:]
    return Kaa - Kab @ np.linalg.solve(Kbb, Kab.T) if own else Kaa


@pytest.mark.parametrize("k", [(INF, INF), (0.0, INF), (INF, 0.0), (0.0, 0.0), (3.0, INF),
                               (2.5, 0.7), (0.0, 40.0), (1e6, 1e-3)])
def test_fixity_factors_match_direct_condensation(k):
    # bending_factors (fixity factors) against a direct condensation of the end springs
    # (common practice, no source); agreement to round-off, 1e-10 of EI/L (the stiff
    # spring k = 1e6 makes the reference's condensation lose ~6 digits: measured 3e-11).
    EI, L = 2.0, 1.5
    kb = releases.bending_factors(np.array([k]), np.array([EI]), np.array([L]))[0] * EI / L
    ref = _condensed(k, EI, L)
    assert np.abs(kb - ref).max() <= 1e-10 * EI / L


def test_hinge_at_end_two_gives_the_propped_values():
    # Hinge at end 2: M1 = 3EI/L·θ1, M2 = 0 and the own end rotation φ2 = −θ1/2
    # (common practice, no source: the propped cantilever's end stiffness).
    B = releases.bending_factors(np.array([[INF, 0.0]]), np.array([1.0]), np.array([1.0]))[0]
    assert np.allclose(B, [[3.0, 0.0], [0.0, 0.0]], atol=0.0, rtol=1e-15)
    A = releases.rotation_map(B[None])[0]
    assert np.allclose(A, [[1.0, 0.0], [-0.5, 0.0]], atol=1e-15)


def _random_released(seed, n=8):
    rng = np.random.default_rng(seed)
    dX = rng.normal(size=(n, 2))
    L0 = np.hypot(dX[:, 0], dX[:, 1])
    EA = rng.uniform(1.0, 1e3, n)
    EI = rng.uniform(0.1, 10.0, n)
    u = 0.3 * rng.normal(size=(n, 6))
    common = 3.0 * rng.normal(size=n)                     # a large rigid turn plus bending
    u[:, 2] += common
    u[:, 5] += common
    choices = np.array([0.0, INF, 0.5, 5.0])
    k = choices[rng.integers(0, 4, size=(n, 2))]
    return dX, L0, u, EA, EI, releases.bending_factors(k, EI, L0)


@pytest.mark.parametrize("seed", range(5))
def test_released_beam_tangent_is_derivative_of_force(seed):
    # Consistent tangent = dF/du (common practice, no source), as for the rigid beam in
    # test_elements.py: central differences h = 1e-6 leave ~1e-9 relative error.
    dX, L0, u, EA, EI, B = _random_released(seed)
    K = beam.response(dX, L0, u, EA, EI, bending=B).K
    Kfd = element_jacobian(lambda v: beam.response(dX, L0, v, EA, EI, tangent=False, bending=B).f, u)
    assert np.abs(K - Kfd).max() / np.abs(K).max() < 1e-6


def test_released_beam_rigid_motion_gives_no_force():
    # Objectivity (common practice, no source): a rigid turn of 2.3 rad and a shift.
    dX, L0, _, EA, EI, B = _random_released(7, n=4)
    th = 2.3
    R = np.array([[math.cos(th), -math.sin(th)], [math.sin(th), math.cos(th)]])
    u2 = dX @ R.T - dX + [0.4, -1.1]
    u = np.column_stack([np.tile([0.4, -1.1], (4, 1)), np.full(4, th), u2, np.full(4, th)])
    f = beam.response(dX, L0, u, EA, EI, bending=B).f
    assert np.abs(f).max() < 1e-9 * EA.max()


# -- statics of structures with hinges ---------------------------------------------------
SEC = lr.Section(E=2.0e11, A=1.0e-2, I=1.0e-4)


def three_hinged_arch(span=10.0, rise=2.0, segments=8, both=True):
    """Circular arch pinned at both feet, hinged at the crown; two s.arc members."""
    s = lr.Structure()
    a, c, b = s.node(0.0, 0.0), s.node(0.5 * span, rise), s.node(span, 0.0)
    R = (0.25 * span**2 + rise**2) / (2.0 * rise)
    # a→c and c→b run left to right: the arch bulges up, to the left of each chord;
    # the crown sits on the circle through a and b of radius R
    left = s.arc(a, c, SEC, radius=R, segments=segments, hinge="end")
    right = s.arc(c, b, SEC, radius=R, segments=segments, hinge="start" if both else None)
    s.fix(a, "ux", "uy")
    s.fix(b, "ux", "uy")
    return s, a, b, c, left, right, R


@pytest.mark.parametrize("both", [True, False])
def test_three_hinged_arch_reactions_match_statics(both):
    # Three-hinged symmetric arch, central point load P at the crown hinge:
    # V = P/2 at each foot, thrust H = P·L/(4f) (common practice, no source: moments
    # about the crown hinge of one half). P is small (1 N on a stiff rib), so the
    # geometric change moves H by ~1e-7 (measured 7e-8): tolerance 1e-6.
    span, rise, P = 10.0, 2.0, 1.0
    s, a, b, c, left, right, R = three_hinged_arch(span, rise, both=both)
    s.load(c, fy=-P)
    path = lr.trace(s, lr.by_load(1.0), target_load_factor=1.0)
    assert path.status == "target"
    r = path.reaction_vector(-1)
    H = P * span / (4.0 * rise)
    assert r[3 * a + 1] == pytest.approx(P / 2, rel=1e-6)
    assert r[3 * b + 1] == pytest.approx(P / 2, rel=1e-6)
    assert r[3 * a] == pytest.approx(H, rel=1e-6)
    assert r[3 * b] == pytest.approx(-H, rel=1e-6)
    # no moment at a hinge (exactly: the released end carries none)
    M = path.member_forces(-1)["beam"]["M"]
    assert M[left.elements[-1], 1] == 0.0
    if both:
        assert M[right.elements[0], 0] == 0.0
        # both ends hinged at the crown: its rotation has no stiffness and is dropped
        assert 3 * c + 2 in path.model.assembly.dropped
    else:
        assert 3 * c + 2 not in path.model.assembly.dropped
        assert abs(M[right.elements[0], 0]) < 1e-9 * P * span


def gerber_beam(a_len=2.0, b_len=3.0, segments=4, released="end"):
    """Cantilever A–B fixed at A, hinge at B, then B–C on a roller at C."""
    s = lr.Structure()
    A, B, C = s.node(0.0, 0.0), s.node(a_len, 0.0), s.node(a_len + b_len, 0.0)
    ab = s.beam(A, B, SEC, segments, hinge="end" if released in ("end", "both") else None)
    bc = s.beam(B, C, SEC, segments, hinge="start" if released in ("start", "both") else None)
    s.fix(A)
    s.fix(C, "uy")
    return s, A, B, C, ab, bc


@pytest.mark.parametrize("released", ["end", "start", "both"])
def test_propped_cantilever_with_internal_hinge_point_load(released):
    # Fixed at A, hinge at B (a from A), roller at C (b past B), load P at the middle
    # of BC. Statics: R_C = P/2, the hinge passes P/2 to the cantilever, R_A = P/2,
    # M_A = P·a/2. Superposition (small displacement): δ_B = (P/2)·a³/(3EI) at the
    # cantilever's tip, δ_mid = δ_B/2 + P·b³/(48EI) (common practice, no source:
    # cantilever and simple-beam deflections). Cubic elements are exact for point
    # loads at nodes; the load is small (geometric change ~1e-9): tolerance 1e-6.
    a_len, b_len, P = 2.0, 3.0, 10.0
    s, A, B, C, ab, bc = gerber_beam(a_len, b_len, 4, released)
    mid = bc.nodes[2]
    s.load(mid, fy=-P)
    path = lr.trace(s, lr.by_load(1.0), target_load_factor=1.0)
    r = path.reaction_vector(-1)
    EI = SEC.EI
    assert r[3 * C + 1] == pytest.approx(P / 2, rel=1e-6)
    assert r[3 * A + 1] == pytest.approx(P / 2, rel=1e-6)
    assert r[3 * A + 2] == pytest.approx(P * a_len / 2, rel=1e-6)
    dB = P / 2 * a_len**3 / (3 * EI)
    assert -path.displacement(B, "uy")[-1] == pytest.approx(dB, rel=1e-6)
    assert -path.displacement(mid, "uy")[-1] == pytest.approx(dB / 2 + P * b_len**3 / (48 * EI), rel=1e-6)


def test_line_load_on_hinged_member_gives_statics_reactions():
    # Same beam, uniform load w on the hinged span BC (line_load puts half of each
    # element's load on each of its nodes, no end moments, so a released end needs no
    # special values). Statics: R_C = w·b/2, R_A = w·b/2, M_A = w·b·a/2, and no moment at
    # the hinge (common practice, no source). Small load: tolerance 1e-6.
    a_len, b_len, w = 2.0, 3.0, 4.0
    s, A, B, C, ab, bc = gerber_beam(a_len, b_len, 6, "start")
    s.line_load(bc, qy=-w)
    path = lr.trace(s, lr.by_load(1.0), target_load_factor=1.0)
    r = path.reaction_vector(-1)
    assert r[3 * C + 1] == pytest.approx(w * b_len / 2, rel=1e-6)
    assert r[3 * A + 1] == pytest.approx(w * b_len / 2, rel=1e-6)
    assert r[3 * A + 2] == pytest.approx(w * b_len * a_len / 2, rel=1e-6)
    assert path.member_forces(-1)["beam"]["M"][bc.elements[0], 0] == 0.0


def test_semi_rigid_root_adds_the_spring_rotation():
    # Cantilever joined to its clamped support through a rotational spring k: tip
    # deflection P·L³/(3EI) + P·L²/k and root moment P·L, carried by the spring
    # (common practice, no source). Small load: tolerance 1e-6.
    L, P, k = 2.0, 5.0, 3.0e5
    s = lr.Structure()
    A, B = s.node(0.0, 0.0), s.node(L, 0.0)
    m = s.beam(A, B, SEC, 4, hinge="start", hinge_stiffness=k)
    s.fix(A)
    s.load(B, fy=-P)
    path = lr.trace(s, lr.by_load(1.0), target_load_factor=1.0)
    d = -path.displacement(B, "uy")[-1]
    assert d == pytest.approx(P * L**3 / (3 * SEC.EI) + P * L**2 / k, rel=1e-6)
    M_root = path.member_forces(-1)["beam"]["M"][m.elements[0], 0]
    assert abs(M_root) == pytest.approx(P * L, rel=1e-6)


# -- large rotations ---------------------------------------------------------------------
def test_hinged_beams_behave_as_the_two_bar_truss():
    # Beams hinged at both ends carry no moment: a shallow two-bar truss of such beams
    # snaps through exactly as the bars' closed form (statics of two-force members,
    # largerot.closed_form.two_bar_truss_load; common practice, no source). Apex
    # pushed 1.2 (through the flat position at 0.5): agreement to the solver's
    # tolerance, 1e-9 of the peak load, as for the bar truss in test_verification_core.
    a, h, EA = 2.0, 0.5, 1e4
    sec = lr.Section(E=EA, A=1.0, I=1.0)
    s = lr.Structure()
    left, apex, right = s.node(-a, 0.0), s.node(0.0, h), s.node(a, 0.0)
    s.beam(left, apex, sec, hinge="both")
    s.beam(apex, right, sec, hinge="both")
    s.fix(left, "ux", "uy")
    s.fix(right, "ux", "uy")
    s.fix(apex, "ux")
    s.load(apex, fy=-1.0)
    path = lr.trace(s, lr.by_displacement(apex, "uy", -0.025), max_steps=48, tol=1e-12)
    v = -path.displacement(apex, "uy")
    assert v[-1] == pytest.approx(1.2)
    P = two_bar_truss_load(v, a, h, EA)
    assert np.abs(path.load_factor - P).max() < 1e-9 * np.abs(P).max()
    assert path.load_factor.min() < 0 < path.load_factor.max()


def test_spring_hinged_linkage_follows_its_kinematics():
    # Two stiff links of length L: A pinned, C on a roller along x, joined at B by a
    # hinge with a rotational spring k. Pulling C outward by P flattens the linkage:
    # with θ the links' angle to the x axis (θ0 at rest), the energy
    # ½·k·(2(θ − θ0))² − P·2L·cos θ is stationary at P = 2k·(θ0 − θ)/(L·sin θ), and
    # B sits at L·(cos θ, sin θ) (exact kinematics of rigid links; common practice,
    # no source). Links 10⁶ times stiffer than the spring in bending and axially:
    # their own deformation moves P by ~1e-6 (measured 6.7e-7): tolerance 5e-6.
    L, th0, k = 1.0, math.radians(60.0), 1.0
    sec = lr.Section(E=1e6, A=1e3, I=1.0)
    s = lr.Structure()
    A = s.node(0.0, 0.0)
    B = s.node(L * math.cos(th0), L * math.sin(th0))
    C = s.node(2 * L * math.cos(th0), 0.0)
    s.beam(A, B, sec, 2, hinge="end", hinge_stiffness=k)
    s.beam(B, C, sec, 2)
    s.fix(A, "ux", "uy")
    s.fix(C, "uy")
    s.load(C, fx=1.0)
    path = lr.trace(s, lr.by_displacement(C, "ux", 0.05), max_steps=19)
    assert path.status == "max_steps"
    xy = np.array([path.coordinates(i)[B] for i in range(len(path))])
    th = np.arctan2(xy[:, 1], xy[:, 0])
    assert th[-1] < math.radians(15.0)                      # a large rotation: 60° → below 15°
    assert np.allclose(np.hypot(*xy.T), L, rtol=1e-6)      # the link keeps its length
    P = 2 * k * (th0 - th[1:]) / (L * np.sin(th[1:]))
    assert np.abs(path.load_factor[1:] - P).max() < 5e-6 * P.max()


# -- buckling ----------------------------------------------------------------------------
def test_clamped_column_with_mid_hinge_buckles_at_euler_load():
    # Column clamped at both ends with a hinge at mid-height: the lowest mode sways
    # at the hinge, each half a free-standing cantilever of length L/2, so
    # P_cr = π²EI/(4·(L/2)²) = π²EI/L² (from memory: effective length factor 1 of
    # this column). 2 × 8 elements with the consistent geometric stiffness: error
    # converging as h⁴ (measured 3.3e-5, 2.1e-6, 1.3e-7 with 4, 8, 16 per half):
    # tolerance 1e-5.
    L = 4.0
    s = lr.Structure()
    bot, mid, top = s.node(0.0, 0.0), s.node(0.0, L / 2), s.node(0.0, L)
    s.beam(bot, mid, SEC, 8, hinge="end")
    s.beam(mid, top, SEC, 8, hinge="start")
    s.fix(bot)
    s.fix(top, "ux", "rz")
    s.load(top, fy=-1.0)
    b = lr.buckling(s, modes=1)
    assert b.load_factors[0] == pytest.approx(math.pi**2 * SEC.EI / L**2, rel=1e-5)


def test_fixed_pinned_column_by_a_release_buckles_at_its_load():
    # Clamped base, top held sideways and its member end hinged (the top node's
    # rotation is dropped). Exact: P = (kL)²·EI/L² with tan(kL) = kL, kL = 4.4934
    # (from memory: Timoshenko & Gere 1961, Theory of Elastic Stability, §2.5; root
    # found here with brentq). Error converging as h⁴ (measured 9.2e-4, 5.6e-5,
    # 3.5e-6 with 5, 10, 20 elements; the same as with the rotation left free and no
    # release: 8.6e-4, 5.6e-5, 3.5e-6): 20 elements, tolerance 1e-5.
    L = 3.0
    s = lr.Structure()
    bot, top = s.node(0.0, 0.0), s.node(0.0, L)
    s.beam(bot, top, SEC, 20, hinge="end")
    s.fix(bot)
    s.fix(top, "ux")
    s.load(top, fy=-1.0)
    kL = brentq(lambda x: math.tan(x) - x, 4.0, 4.6)
    b = lr.buckling(s, modes=1)
    assert b.load_factors[0] == pytest.approx(kL**2 * SEC.EI / L**2, rel=1e-5)


def test_released_beam_group_passes_the_protocol():
    # As tests/test_state_ownership.py checks every group kind: finite-difference
    # tangent (h = 1e-7: error ~1e-8 of K), forces rebuilt from the record, pickling,
    # and end forces in balance with the nodal forces (M the nodal moments, no
    # resultant; statics of the element, common practice, no source).
    import pickle

    from largerot.assembly import Assembly

    from helpers import element_jacobian as jac
    s, *_ = three_hinged_arch(segments=3)
    s.beam(0, 2, SEC, hinge="both", hinge_stiffness=7e5)        # a semi-rigid tie
    asm = Assembly.of(s)
    g = asm.groups[-1]
    assert g.bending is not None and len(g.rows) == 3
    u = 0.01 * np.random.default_rng(5).standard_normal(asm.n_dof)
    ue = u[g.dofmap]
    res = g.evaluate(ue, None, True)
    J = jac(lambda x: g.evaluate(x, None, False).f, ue, h=1e-7)
    np.testing.assert_allclose(res.K, J, atol=1e-6 * np.abs(res.K).max())
    np.testing.assert_allclose(g.forces(ue, g.record(res)), res.f, rtol=1e-12, atol=1e-12)
    np.testing.assert_array_equal(pickle.loads(pickle.dumps(g)).evaluate(ue, None, False).f, res.f)
    ev = asm.evaluate(u, asm.initial_states(), False)
    ef = asm.element_forces(u, asm.record(ev))
    M = ef["beam"]["M"][g.rows]
    np.testing.assert_allclose(res.f[:, [2, 5]], np.stack([-M[:, 0], M[:, 1]], axis=1), atol=1e-9)
    np.testing.assert_allclose(res.f[:, 0:2] + res.f[:, 3:5], 0.0, atol=1e-6)
    assert M[0, 1] == 0.0 and M[1, 0] == 0.0             # the crown hinge of each half
    assert M[2, 0] != 0.0 and M[2, 1] != 0.0             # the tie's springs carry moments
