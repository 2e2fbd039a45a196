"""Elastic–plastic material, fibre sections and the corotational fibre beam.

Closed-form plastic-bending results, loading–unloading, finite-difference checks of
every tangent (material, section, element with yielded fibres at large rotation) and
the reduction of the fibre beam to the elastic corotational beam below yield.
"""
import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import brentq

from largerot.elements import beam, fibre_beam
from largerot.errors import ModelError
from largerot.fibres import FibreSection, stack, yielded_fraction
from largerot.materials import Bilinear, initial_state, yielding

from helpers import element_jacobian

E, FY = 200e9, 250e6
EPS_Y = FY / E


def _section_moments(sec, kappa, state=None):
    kappa = np.asarray(kappa, dtype=float)
    st = sec.initial_state(kappa.shape) if state is None else state
    return sec.response(np.zeros_like(kappa), kappa, st)


# -- material -------------------------------------------------------------------
def test_monotonic_hardening_branch():
    # Bilinear law: σ = fy + E·H/(E + H)·(ε − εy) beyond first yield (Simo & Hughes
    # 1998, *Computational Inelasticity*, §1.4; from memory). Exact arithmetic of one
    # return mapping, so 1e-12.
    mat = Bilinear(E, FY, H=0.02 * E)
    eps = np.linspace(-6, 6, 25) * EPS_Y
    sigma, Et, trial = mat.stress(eps, initial_state(eps.shape))
    Et_ref = E * mat.H / (E + mat.H)
    ref = np.where(np.abs(eps) <= EPS_Y, E * eps,
                   np.sign(eps) * (FY + Et_ref * (np.abs(eps) - EPS_Y)))
    assert np.allclose(sigma, ref, rtol=1e-12, atol=1e-6)
    assert np.allclose(Et, np.where(np.abs(eps) <= EPS_Y, E, Et_ref), rtol=1e-12)
    assert np.all((trial.acc > 0) == (np.abs(eps) > EPS_Y))


@pytest.mark.parametrize("H", [0.0, 0.05 * E])
def test_material_unloading_leaves_plastic_strain(H):
    # Load to 5·εy, commit, unload to zero stress. Elastic unloading with slope E
    # leaves εp = εmax − σmax/E; reverse yield starts at σmax − 2·fy for kinematic
    # hardening (Bauschinger effect; Simo & Hughes 1998, §1.4; from memory).
    mat = Bilinear(E, FY, H)
    committed = initial_state(1)
    e_max = np.array([5 * EPS_Y])
    s_max, _, committed = mat.stress(e_max, committed)
    e_zero = e_max - s_max / E                       # zero stress on the elastic line
    s0, Et0, trial = mat.stress(e_zero, committed)
    assert abs(s0[0]) < 1e-9 * FY
    assert Et0[0] == E                                # unloading is elastic, slope E
    assert trial.eps_p[0] == pytest.approx(e_zero[0], rel=1e-12)
    # plastic strain remains: (εmax − εy)·E/(E + H) on the bilinear branch
    assert trial.eps_p[0] == pytest.approx(4 * EPS_Y * E / (E + H), rel=1e-12)
    # reverse loading: elastic down to σmax − 2fy, yielding beyond
    de = 2 * FY / E
    s_a, Et_a, _ = mat.stress(e_max - de * (1 - 1e-9), committed)
    s_b, Et_b, tr_b = mat.stress(e_max - de * 1.5, committed)
    assert s_a[0] == pytest.approx(s_max[0] - 2 * FY, rel=1e-6) and Et_a[0] == E
    assert Et_b[0] == pytest.approx(E * H / (E + H)) and yielding(tr_b, committed)[0]


def test_material_tangent_is_derivative_of_stress():
    # Consistent tangent = dσ/dε away from the yield kink (common practice, no
    # source); central differences with h = 1e-9 (εy/1250) are exact for the
    # piecewise-linear law up to round-off ~1e-16·σ/h.
    rng = np.random.default_rng(1)
    mat = Bilinear(E, FY, H=0.03 * E)
    committed = initial_state(200)
    _, _, committed = mat.stress(rng.uniform(-4, 4, 200) * EPS_Y, committed)
    eps = rng.uniform(-6, 6, 200) * EPS_Y
    h = 1e-9
    sp, _, _ = mat.stress(eps + h, committed)
    sm, _, _ = mat.stress(eps - h, committed)
    _, Et, trial = mat.stress(eps, committed)
    assert np.any(yielding(trial, committed)) and np.any(~yielding(trial, committed))
    assert np.allclose((sp - sm) / (2 * h), Et, rtol=1e-5)


def test_material_rejects_bad_parameters():
    with pytest.raises(ModelError, match="`fy` must be a finite positive number, got -1.0"):
        Bilinear(E, -1.0)
    with pytest.raises(ModelError, match="`H` must be a finite non-negative"):
        Bilinear(E, FY, H=-5.0)


# -- sections ---------------------------------------------------------------------
B, H_RECT = 0.05, 0.1


def _m_rectangle_closed_form(kappa, kappa_y, Mp, My):
    # Elastic–perfectly-plastic rectangle: M = My·κ/κy up to κy, then
    # M = Mp·(1 − (κy/κ)²/3) (Neal 1977, *The Plastic Methods of Structural
    # Analysis*, ch. 1; from memory).
    k = np.asarray(kappa) / kappa_y
    return np.where(k <= 1.0, My * k, Mp * (1.0 - 1.0 / (3.0 * np.maximum(k, 1.0) ** 2)))


def test_rectangle_moment_curvature_within_half_percent():
    # Default layout (20 layers) against the closed form over κ/κy from 0.05 to 30;
    # demanded 0.5 %; the midpoint rule's error is 1/n² = 0.25 % (EI short by the
    # layers' own second moment), the largest anywhere on the curve.
    sec = FibreSection.rectangle(E, FY, width=B, depth=H_RECT)
    My, Mp = FY * B * H_RECT**2 / 6, FY * B * H_RECT**2 / 4      # closed forms (Neal 1977)
    assert sec.My == pytest.approx(My, rel=1e-14) and sec.Mp == pytest.approx(Mp, rel=1e-14)
    kappa = np.linspace(0.05, 30.0, 600) * sec.kappa_y
    M = _section_moments(sec, kappa).M
    ref = _m_rectangle_closed_form(kappa, sec.kappa_y, Mp, My)
    err = np.abs(M / ref - 1.0).max()
    assert err < 5e-3
    # first yield: the moment at κy is My (to the same 1/n²)
    assert _section_moments(sec, sec.kappa_y).M == pytest.approx(My, rel=5e-3)
    # fully plastic: at κ = 1000·κy the closed form is Mp·(1 − 3.3e-7)
    assert _section_moments(sec, 1000 * sec.kappa_y).M == pytest.approx(Mp, rel=1e-6)


def test_rectangle_moment_curvature_converges_at_second_order():
    # Layered (midpoint) integration of a piecewise-smooth stress profile converges
    # like 1/n² (common practice, no source): the observed order from 10, 20, 40
    # layers must be 2 within 0.1.
    errs = []
    for n in (10, 20, 40):
        sec = FibreSection.rectangle(E, FY, width=B, depth=H_RECT, n_fibres=n)
        kappa = np.linspace(0.05, 30.0, 400) * sec.kappa_y
        ref = _m_rectangle_closed_form(kappa, sec.kappa_y, sec.Mp, sec.My)
        errs.append(np.abs(_section_moments(sec, kappa).M / ref - 1.0).max())
    orders = np.log2(np.array(errs[:-1]) / np.array(errs[1:]))
    assert np.all(np.abs(orders - 2.0) < 0.1), orders


TUBE = dict(diameter=0.2, wall=0.01)
ISHAPE = dict(h=0.3, b=0.15, tw=0.007, tf=0.011)


def _z_tube(diameter, wall):
    D, t = diameter, wall
    # Plastic modulus of a round tube (D³ − d³)/6 (Steel Designers' Manual, section
    # property formulae; from memory).
    return (D**3 - (D - 2 * t) ** 3) / 6


def _z_ishape(h, b, tw, tf):
    # Plastic modulus of a doubly symmetric I about its strong axis, fillets ignored:
    # b·tf·(h − tf) + tw·(h − 2tf)²/4 (Steel Designers' Manual; from memory).
    return b * tf * (h - tf) + tw * (h - 2 * tf) ** 2 / 4


@pytest.mark.parametrize("kind, layout", [
    ("tube", {}), ("tube", {"n_fibres": 6}),
    ("i_shape", {}), ("i_shape", {"n_flange": 1, "n_web": 4}),
])
def test_plastic_moment_matches_handbook(kind, layout):
    # M at κ = 1000·κy against Z·fy from the handbook formula. The layers' exact
    # areas and centroids make Σ fy·|y|·dA exact for any even layer count, coarse
    # layouts included, and the elastic core (|y| < depth/2000) holds no fibre
    # centroid here, so only round-off remains: 1e-9.
    if kind == "tube":
        sec, zref = FibreSection.tube(E, FY, **TUBE, **layout), _z_tube(**TUBE)
    else:
        sec, zref = FibreSection.i_shape(E, FY, **ISHAPE, **layout), _z_ishape(**ISHAPE)
    M = _section_moments(sec, 1000 * sec.kappa_y).M
    assert M == pytest.approx(zref * FY, rel=1e-9)
    assert sec.Mp == pytest.approx(zref * FY, rel=1e-14)


@pytest.mark.parametrize("sec", [FibreSection.rectangle(E, FY, width=B, depth=H_RECT),
                                 FibreSection.tube(E, FY, **TUBE),
                                 FibreSection.i_shape(E, FY, **ISHAPE)])
def test_first_yield_event_at_yield_moment(sec):
    # The first-yield margin is zero at κy in pure bending, where the elastic moment
    # is fy·W (W closed form; Neal 1977 for the rectangle, handbook W = 2I/depth
    # otherwise); the fibre moment there is EI_fibres·κy, within 0.5 % of fy·W.
    # Located by brentq to 1e-12 relative; with axial strain ε0 it moves to
    # κ = (εy − |ε0|)·2/depth.
    root = brentq(lambda k: sec.first_yield_margin(0.0, k), 0.5 * sec.kappa_y, 2 * sec.kappa_y,
                  xtol=1e-14 * sec.kappa_y)
    assert root == pytest.approx(2 * FY / (E * sec.depth), rel=1e-12)
    assert _section_moments(sec, root).M == pytest.approx(sec.My, rel=5e-3)
    root = brentq(lambda k: sec.first_yield_margin(0.3 * EPS_Y, k), 0.1 * sec.kappa_y,
                  2 * sec.kappa_y, xtol=1e-14 * sec.kappa_y)
    assert root == pytest.approx(0.7 * sec.kappa_y, rel=1e-12)


def _width_tube(y, diameter, wall):
    R, r = diameter / 2, diameter / 2 - wall
    return 2 * np.sqrt(max(R * R - y * y, 0.0)) - 2 * np.sqrt(max(r * r - y * y, 0.0))


def _width_ishape(y, h, b, tw, tf):
    return b if abs(y) > h / 2 - tf else tw


@pytest.mark.parametrize("sec, width, half", [
    (FibreSection.tube(E, FY, **TUBE), lambda y: _width_tube(y, **TUBE), TUBE["diameter"] / 2),
    (FibreSection.i_shape(E, FY, **ISHAPE), lambda y: _width_ishape(y, **ISHAPE), ISHAPE["h"] / 2),
])
def test_moment_curvature_of_tube_and_ishape(sec, width, half):
    # Reference: M(κ) = ∫ σ(κ·y)·y·b(y) dy of the exact width b(y) with the
    # elastic–perfectly-plastic law, by scipy.integrate.quad (plane sections,
    # common practice, no source). Default layout within 0.5 % on the whole curve;
    # first yield at κy gives fy·W (W = 2I/depth, handbook I), to the same 0.5 %.
    ks = np.array([0.3, 0.9, 1.0, 1.05, 1.2, 1.5, 2.0, 3.0, 6.0, 20.0]) * sec.kappa_y
    ref = []
    for k in ks:
        ye = FY / (E * k)
        pts = [-ye, ye] if ye < half else None
        ref.append(quad(lambda y: np.clip(E * k * y, -FY, FY) * y * width(y), -half, half,
                        points=pts, limit=200, epsabs=0.0, epsrel=1e-10)[0])
    M = _section_moments(sec, ks).M
    assert np.abs(M / np.array(ref) - 1.0).max() < 5e-3
    if "tube" in sec.shape:
        D, d = TUBE["diameter"], TUBE["diameter"] - 2 * TUBE["wall"]
        I = np.pi / 64 * (D**4 - d**4)                # Roark's Formulas, table of sections
    else:
        h, b, tw, tf = (ISHAPE[k] for k in ("h", "b", "tw", "tf"))
        I = (b * h**3 - (b - tw) * (h - 2 * tf) ** 3) / 12
    assert _section_moments(sec, sec.kappa_y).M == pytest.approx(FY * 2 * I / sec.depth, rel=5e-3)


def test_section_unloading_is_elastic_with_residual_curvature():
    # Bend a rectangle to κmax = 3κy (M = Mp·(1 − 1/27)), commit, unload to M = 0.
    # Elastic unloading (slope EI) leaves κr = κmax − Mmax/EI and an extreme-fibre
    # residual stress fy − Mmax/W (Megson 2005, *Structural and Stress Analysis*,
    # plastic bending; from memory). Linear on the elastic branch, so 1e-9.
    sec = FibreSection.rectangle(E, FY, width=B, depth=H_RECT)
    kmax = 3 * sec.kappa_y
    loaded = _section_moments(sec, kmax)
    committed = loaded.state
    dk = 1e-4 * sec.kappa_y
    back = _section_moments(sec, kmax - dk, committed)
    assert (loaded.M - back.M) / dk == pytest.approx(sec.EI, rel=1e-9)     # slope EI
    assert back.D[1, 1] == pytest.approx(sec.EI, rel=1e-12)
    kr = kmax - loaded.M / sec.EI
    res = _section_moments(sec, kr, committed)
    assert abs(res.M) < 1e-9 * sec.Mp
    assert kr > 0.5 * sec.kappa_y                                    # curvature remains
    assert np.any(res.state.eps_p != 0.0)                            # plastic strain remains
    # residual stress σr(y) = fy − Mmax·|y|/I in the plastic zone, at the top fibre's y;
    # within 1 % of fy (it is a difference of two stresses ~1.4·fy, each within 0.25 %)
    i = np.argmax(sec.y)
    ref = -(FY - _m_rectangle_closed_form(kmax, sec.kappa_y, sec.Mp, sec.My)
            * sec.y[i] / (B * H_RECT**3 / 12))
    assert res.sigma[i] == pytest.approx(ref, abs=0.01 * FY)
    assert yielded_fraction(res.state, sec.dA) == pytest.approx(2 / 3, abs=0.05)   # |y| > h/6


def _fd_section(sec, eps0, kappa, state, h_eps, h_k):
    out = np.zeros(eps0.shape + (2, 2))
    for j, (de, dk) in enumerate(((h_eps, 0.0), (0.0, h_k))):
        rp = sec.response(eps0 + de, kappa + dk, state)
        rm = sec.response(eps0 - de, kappa - dk, state)
        out[..., 0, j] = (rp.N - rm.N) / (2 * (de + dk))
        out[..., 1, j] = (rp.M - rm.M) / (2 * (de + dk))
    return out


@pytest.mark.parametrize("make", [
    lambda: FibreSection.rectangle(E, FY, width=B, depth=H_RECT, H=0.02 * E),
    lambda: FibreSection.tube(E, FY, **TUBE),
    lambda: FibreSection.i_shape(E, FY, **ISHAPE, H=0.01 * E),
])
def test_section_tangent_is_derivative_of_forces(make):
    # D = ∂(N, M)/∂(ε0, κ) with axial force and bending together, from a committed
    # plastic state (common practice, no source). Steps 1e-9 strain: exact for the
    # piecewise-linear fibres unless a fibre sits within 1e-9 of the yield surface
    # (fixed seed, none does); round-off ~1e-16·|N|/h.
    sec = make()
    rng = np.random.default_rng(3)
    n = 40
    st = sec.initial_state(n)
    pre = sec.response(rng.normal(0, EPS_Y, n), rng.normal(0, 2, n) * sec.kappa_y, st)
    eps0 = rng.normal(0, EPS_Y, n)
    kappa = rng.normal(0, 3, n) * sec.kappa_y
    r = sec.response(eps0, kappa, pre.state)
    assert 0.1 < np.mean(yielding(r.state, pre.state)) < 0.9
    D = _fd_section(sec, eps0, kappa, pre.state, 1e-9, 1e-9 / sec.depth)
    scale = np.abs(r.D[:, 0, 0]).max() * np.array([[1, sec.depth], [sec.depth, sec.depth**2]])
    assert np.abs((D - r.D) / scale).max() < 1e-6


def test_stack_pads_with_zero_area_fibres():
    a = FibreSection.rectangle(E, FY, width=B, depth=H_RECT, n_fibres=10)
    b = FibreSection.tube(E, 2 * FY, **TUBE, n_fibres=16)
    t = stack([a, b], [1, 0, 1])
    assert t.y.shape == (3, 16) and np.all(t.dA[1, 10:] == 0.0)
    assert np.sum(t.dA[0]) == pytest.approx(b.A) and t.fy[0, 0] == 2 * FY


def test_section_rejects_bad_shapes():
    with pytest.raises(ModelError, match="wall t = 0.2 is thicker than half the diameter D = 0.2"):
        FibreSection.tube(E, FY, diameter=0.2, wall=0.2)
    with pytest.raises(ModelError, match="`n_fibres` must be an integer of at least 2, got 1"):
        FibreSection.rectangle(E, FY, width=B, depth=H_RECT, n_fibres=1)


# -- fibre beam -------------------------------------------------------------------
def _random_beams(seed, n, theta, strain, rotation_scale=3.0):
    """Elements with a large rigid turn plus local deformation.

    End rotations relative to the chord ~ ``theta``·L0 (curvatures ~ 6·theta) and
    chord strain ~ ``strain``, both normally distributed.
    """
    rng = np.random.default_rng(seed)
    L0 = rng.uniform(0.5, 2.0, n)
    phi = rng.uniform(-np.pi, np.pi, n)
    dX = L0[:, None] * np.column_stack([np.cos(phi), np.sin(phi)])
    turn = rotation_scale * rng.normal(size=n)
    c, s = np.cos(turn), np.sin(turn)
    stretched = dX * (1.0 + strain * rng.normal(size=n))[:, None]
    u = np.zeros((n, 6))
    u[:, 0:2] = rng.normal(size=(n, 2))
    u[:, 3:5] = u[:, 0:2] + np.column_stack([c * stretched[:, 0] - s * stretched[:, 1],
                                             s * stretched[:, 0] + c * stretched[:, 1]]) - dX
    u[:, 2] = turn + theta * L0 * rng.normal(size=n)
    u[:, 5] = turn + theta * L0 * rng.normal(size=n)
    return dX, L0, u


@pytest.mark.parametrize("rule, n_gauss", [("lobatto", 3), ("lobatto", 5), ("gauss", 2), ("gauss", 3)])
def test_fibre_beam_equals_elastic_beam_below_yield(rule, n_gauss):
    # Below yield the fibre beam is the elastic corotational beam with EA = ΣE·dA,
    # EI = ΣE·y²·dA: both rules integrate the quadratic integrands exactly, so only
    # round-off differs (1e-12); large rigid turns included.
    sec = FibreSection.tube(E, FY, **TUBE)
    dX, L0, u = _random_beams(0, 8, 0.05 * sec.kappa_y, 0.1 * EPS_Y)
    st = fibre_beam.initial_state(8, sec.n_fibres, n_gauss)
    r = fibre_beam.response(dX, L0, u, sec.table, st, rule=rule)
    e = beam.response(dX, L0, u, np.full(8, sec.EA), np.full(8, sec.EI))
    assert np.all(r.state.acc == 0.0)
    assert np.abs(r.f - e.f).max() < 1e-12 * np.abs(e.f).max()
    assert np.abs(r.q - e.q).max() < 1e-12 * np.abs(e.q).max()
    assert np.abs(r.K - e.K).max() < 1e-12 * np.abs(e.K).max()
    assert np.allclose(r.l, e.l, rtol=1e-15)


@pytest.mark.parametrize("seed", range(3))
@pytest.mark.parametrize("plastic", [False, True])
def test_fibre_beam_tangent_is_derivative_of_force(seed, plastic):
    # K = ∂f/∂u, material and geometric parts, at large rotation (common practice, no
    # source); with ``plastic`` the committed state already holds plastic strain and
    # the trial point yields further in part of the fibres. Central differences with
    # h = 1e-8 (strain steps ~1e-8, εy = 1.25e-3): truncation-free for the
    # piecewise-linear fibres, round-off ~1e-16·|f|/h.
    sec = FibreSection.tube(E, FY, **TUBE, H=0.02 * E)
    n = 6
    theta, strain = (0.5 * sec.kappa_y, 0.5 * EPS_Y) if plastic else (0.05 * sec.kappa_y, 0.1 * EPS_Y)
    dX, L0, u = _random_beams(seed, n, theta, strain)
    st = fibre_beam.initial_state(n, sec.n_fibres, 4)
    if plastic:
        _, _, u_pre = _random_beams(seed, n, theta, strain)   # same geometry and turn,
        u_pre[:, [2, 5]] += theta * L0[:, None] * np.random.default_rng(seed + 9).normal(size=(n, 2))
        st = fibre_beam.response(dX, L0, u_pre, sec.table, st, tangent=False).state
    r = fibre_beam.response(dX, L0, u, sec.table, st)
    flow = yielding(r.state, st)
    assert (0.05 < flow.mean() < 0.95) if plastic else not flow.any()
    Kfd = element_jacobian(lambda v: fibre_beam.response(dX, L0, v, sec.table, st, tangent=False).f,
                      u, 1e-8)
    assert np.abs(r.K - Kfd).max() / np.abs(r.K).max() < 1e-6


def test_fibre_beam_yielded_is_objective():
    # A rigid rotation (two full turns plus 0.7 rad) and translation of a yielded
    # element leaves its local forces and fibre state unchanged (common practice,
    # no source); round-off of the local rotations ~1e-15.
    sec = FibreSection.rectangle(E, FY, width=B, depth=H_RECT)
    dX, L0, u = _random_beams(5, 4, 0.7 * sec.kappa_y, 0.3 * EPS_Y, rotation_scale=0.0)
    st = fibre_beam.initial_state(4, sec.n_fibres)
    r0 = fibre_beam.response(dX, L0, u, sec.table, st)
    a = 4 * np.pi + 0.7
    c, s = np.cos(a), np.sin(a)
    R = np.array([[c, -s], [s, c]])
    X1 = np.zeros((4, 2))
    x1, x2 = X1 + u[:, 0:2], X1 + dX + u[:, 3:5]
    v = np.column_stack([x1 @ R.T + [0.3, -2.0] - X1, u[:, 2] + a,
                         x2 @ R.T + [0.3, -2.0] - X1 - dX, u[:, 5] + a])
    r1 = fibre_beam.response(dX, L0, v, sec.table, st)
    assert np.any(r0.state.acc > 0)
    assert np.allclose(r1.q, r0.q, rtol=1e-9, atol=1e-9 * np.abs(r0.q).max())
    assert np.allclose(r1.state.eps_p, r0.state.eps_p, atol=1e-12)


def test_fibre_beam_plastic_end_moment_and_unloading():
    # A single element with end 1 fixed and end rotation θ2 at end 2: κ(ξ) = (6ξ − 2)·θ2/L.
    # With κ at end 2 far beyond κy, the end section is fully plastic: M(ξ = 1) → Mp
    # (Neal 1977; from memory). Unloading θ2 back to 0 from a committed state leaves
    # a residual end moment (plastic strain remains), and the unloading slope of M2
    # is the elastic 4EI/L (linear elastic branch, 1e-9).
    sec = FibreSection.rectangle(E, FY, width=B, depth=H_RECT)
    dX, L0 = np.array([[1.0, 0.0]]), np.array([1.0])
    st = fibre_beam.initial_state(1, sec.n_fibres)
    th = 250 * sec.kappa_y * L0[0] / 4                    # κ(1) = 4θ/L = 250·κy
    u = np.array([[0, 0, 0, 0, 0, th]], dtype=float)
    r = fibre_beam.response(dX, L0, u, sec.table, st)
    assert r.NM[0, -1, 1] == pytest.approx(sec.Mp, rel=1e-4)     # elastic core 1/250 of depth
    assert yielded_fraction(r.state, sec.dA)[0, -1] == 1.0
    committed = r.state
    dth = 1e-6 * th
    r2 = fibre_beam.response(dX, L0, u - [0, 0, 0, 0, 0, dth], sec.table, committed)
    assert (r.q[0, 2] - r2.q[0, 2]) / dth == pytest.approx(4 * sec.EI / L0[0], rel=1e-9)
    r0 = fibre_beam.response(dX, L0, 0 * u, sec.table, committed)
    assert abs(r0.q[0, 2]) > 0.1 * sec.Mp


def test_fibre_beam_rejects_mismatched_state():
    sec = FibreSection.rectangle(E, FY, width=B, depth=H_RECT)
    dX, L0 = np.array([[1.0, 0.0]]), np.array([1.0])
    with pytest.raises(ModelError, match=r"Fibre state must have shape .* = \(1, n_gauss, 20\), got \(1, 3, 10\)"):
        fibre_beam.response(dX, L0, np.zeros((1, 6)), sec.table, fibre_beam.initial_state(1, 10))


def test_quadrature_rejects_bad_rule():
    with pytest.raises(ModelError, match="`n_gauss` must be an integer of at least 3 for the lobatto"):
        fibre_beam.quadrature(2, "lobatto")
    with pytest.raises(ModelError, match="`rule` must be 'lobatto' or 'gauss', got 'simpson'"):
        fibre_beam.quadrature(3, "simpson")
