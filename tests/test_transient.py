"""Transient analysis (lr.transient): checks against closed forms and conservation laws."""
from __future__ import annotations

import math
import pickle

import numpy as np
import pytest
from scipy.optimize import brentq, minimize_scalar
from scipy.special import ellipk

import largerot as lr
from largerot.closed_form import two_bar_truss_load
from largerot.examples import two_bar_truss
from largerot.solvers.transient import alpha_parameters


# -- helpers -------------------------------------------------------------------------------------
def spring_mass(k=100.0, m=1.0, F=1.0):
    """A bar along x (axial stiffness k = EA/L, exactly linear along its axis) with a
    mass m at its free end on a roller: a single-DOF oscillator."""
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.bar(a, b, lr.Section(E=k, A=1.0))
    s.fix(a)
    s.fix(b, "uy")
    s.mass(b, m)
    s.load(b, fx=F)
    return s, b


def crossings(t, x):
    """Times where x changes sign, by linear interpolation, shape (n,)."""
    i = np.flatnonzero(np.sign(x[1:]) != np.sign(x[:-1]))
    return t[i] - x[i] * (t[i + 1] - t[i]) / (x[i + 1] - x[i])


def pendulum_period(n_per_period, rho_inf=0.9):
    """Measured period of a stiff bar with a tip mass released at rest from 150°."""
    L, g, m, th0 = 1.0, 9.81, 2.0, math.radians(150.0)
    s = lr.Structure()
    pivot = s.node(0.0, 0.0)
    tip = s.node(L * math.sin(th0), -L * math.cos(th0))
    # EA/L = 10⁷ N/m against a weight of 20 N: the bar stretches by 10⁻⁶ of L
    s.bar(pivot, tip, lr.Section(E=1e7, A=1.0))
    s.fix(pivot, "ux", "uy")
    s.mass(tip, m)
    # gravity acts on the members' own mass only (Section.density; none here): the tip
    # mass's weight is a load of its own, held constant
    s.load(tip, fy=-m * g, constant=True)
    T = 4.0 * math.sqrt(L / g) * ellipk(math.sin(th0 / 2.0) ** 2)
    mo = lr.transient(s, 1.4 * T, dt=T / n_per_period, rho_inf=rho_inf)
    assert mo.status == "target", mo.message
    x = mo.structure.xy[tip, 0] + mo.displacement(tip, "ux")
    tc = crossings(mo.times, x)          # at T/4, 3T/4, 5T/4
    return 2.0 * (tc[1] - tc[0]), T, mo


# -- the scheme's parameters ---------------------------------------------------------------------
def test_alpha_parameters():
    # Chung & Hulbert 1993, J. Appl. Mech. 60, eq. (25): ρ∞ = 1 is the trapezoidal rule
    # (αm = αf = 1/2, γ = 1/2, β = 1/4); ρ∞ = 0.5: αm = 0, αf = 1/3, γ = 5/6, β = 4/9
    assert alpha_parameters(1.0) == (0.5, 0.5, 0.5, 0.25)
    am, af, gamma, beta = alpha_parameters(0.5)
    assert (am, af, gamma, beta) == pytest.approx((0.0, 1.0 / 3.0, 5.0 / 6.0, 4.0 / 9.0))


# -- single DOF against the closed form ----------------------------------------------------------
@pytest.mark.parametrize("zeta", [0.0, 0.05])
def test_single_dof_step_response(zeta):
    # A damped oscillator under a suddenly applied force F (common practice, no source):
    # u(t) = F/k·[1 − e^(−ζωt)·(cos ω_d t + ζ/√(1−ζ²)·sin ω_d t)], ω_d = ω√(1−ζ²).
    # Rayleigh damping with ζ at f1 = f2 = f gives ζ(ω) = ζ at ω (lr.rayleigh).
    k, m, F = 100.0, 1.0, 1.0
    s, b = spring_mass(k, m, F)
    w = math.sqrt(k / m)
    T = 2.0 * math.pi / w
    damping = lr.rayleigh(zeta, w / (2 * math.pi), w / (2 * math.pi)) if zeta else None
    mo = lr.transient(s, 2.0 * T, dt=T / 400, load=lr.step_load(1.0), damping=damping, rho_inf=1.0)
    assert mo.status == "target"
    t = mo.times
    wd = w * math.sqrt(1.0 - zeta**2)
    exact = F / k * (1.0 - np.exp(-zeta * w * t) * (np.cos(wd * t)
                                                     + zeta / math.sqrt(1 - zeta**2) * np.sin(wd * t)))
    err = np.abs(mo.displacement(b, "ux") - exact).max() / (F / k)
    # the trapezoidal rule's period error is (ωΔt)²/12 = 2.1e-5 at ωΔt = 2π/400, a phase
    # error of 2π·2·2.1e-5 = 2.6e-4 of the amplitude after two periods (measured 2.7e-4)
    assert err < 5e-4


def test_single_dof_energy_balance_and_damping():
    # With damping the work of the load is the kinetic energy plus the strain energy
    # ½·k·u² plus the damping's share, up to the numerical dissipation (zero for
    # ρ∞ = 1 up to the quadrature; common practice, no source)
    k, m = 100.0, 1.0
    s, b = spring_mass(k, m)
    mo = lr.transient(s, 3.0, dt=0.005, load=lr.step_load(1.0), damping=(1.0, 0.0), rho_inf=1.0)
    u = mo.displacement(b, "ux")
    np.testing.assert_allclose(mo.strain, 0.5 * k * u**2, rtol=1e-8, atol=1e-12)
    assert abs(mo.dissipated).max() < 1e-6 * mo.external.max()
    assert mo.damping[-1] > 0.0


# -- large-amplitude pendulum ---------------------------------------------------------------------
def test_pendulum_period_large_amplitude():
    # Period of a simple pendulum released from rest at θ0 (common practice; e.g.
    # Landau & Lifshitz, Mechanics, §11): T = 4·√(L/g)·K(k) with modulus k = sin(θ0/2);
    # scipy's ellipk takes the parameter m = k². θ0 = 150°: T = 1.762 × 2π√(L/g).
    T200, T, _ = pendulum_period(200)
    T400, _, _ = pendulum_period(400)
    e200, e400 = abs(T200 / T - 1.0), abs(T400 / T - 1.0)
    # generalised-α is second order: halving Δt divides the period error by 4
    # (measured 1.02e-3 → 2.59e-4, order 1.98)
    order = math.log2(e200 / e400)
    assert 1.8 < order < 2.2
    # measured error 2.6e-4 at 400 steps a period
    assert e400 < 4e-4


# -- undamped free vibration: energy --------------------------------------------------------------
def corotational_energy(model, u, EA, EI):
    """Strain energy of corotational Euler–Bernoulli beams at the full displacements u:
    EA/(2L0)·(l − L0)² + EI/L0·(2θ1² + 2θ1θ2 + 2θ2²), θ the end rotations relative to
    the chord (Crisfield 1991, Non-linear Finite Element Analysis of Solids and
    Structures, vol. 1, §7.1): computed here from the node positions and rotations."""
    U = 0.0
    X = model.xy
    for i, j in model.beam_nodes:
        dX = X[j] - X[i]
        L0 = math.hypot(*dX)
        d = dX + u[3 * j:3 * j + 2] - u[3 * i:3 * i + 2]
        alpha = math.atan2(d[1], d[0]) - math.atan2(dX[1], dX[0])
        t1 = math.remainder(u[3 * i + 2] - alpha, 2 * math.pi)
        t2 = math.remainder(u[3 * j + 2] - alpha, 2 * math.pi)
        U += EA / (2 * L0) * (math.hypot(*d) - L0) ** 2 + EI / L0 * (2 * t1 * t1 + 2 * t1 * t2 + 2 * t2 * t2)
    return U


@pytest.fixture(scope="module")
def deflected_cantilever():
    """A steel cantilever (2 m, 20 × 20 mm, 8 elements) bent by a tip load 2EI/L² to a
    tip rotation of 0.78 rad, traced statically."""
    L, n = 2.0, 8
    sec = lr.Section.rectangle(E=210e9, width=0.02, depth=0.02, density=7850.0)
    s = lr.Structure()
    ids = [s.node(L * k / n, 0.0) for k in range(n + 1)]
    for k in range(n):
        s.beam(ids[k], ids[k + 1], sec)
    s.fix(ids[0])
    s.load(ids[-1], fy=-2.0 * sec.EI / L**2)
    path = lr.trace(s, lr.by_load(0.25), target_load_factor=1.0)
    assert path.status == "target"
    # first period of the cantilever, 2π/(1.875²·√(EI/(ρA·L⁴))) (common practice)
    T1 = 2 * math.pi / (1.875**2 * math.sqrt(sec.EI / (sec.A * sec.density * L**4)))
    return s, path, sec, T1


@pytest.mark.parametrize("rho_inf", [1.0, 0.9])
def test_free_vibration_energy(deflected_cantilever, rho_inf):
    # Released from its static deflection (load removed), the undamped cantilever keeps
    # its energy (kinetic + strain; conservation of energy, common practice): exactly
    # for ρ∞ = 1 up to the O(Δt²) error of the scheme on a nonlinear problem; ρ∞ < 1
    # only ever takes energy out (Chung & Hulbert 1993).
    s, path, sec, T1 = deflected_cantilever
    mo = lr.transient(s, 1000 * T1 / 200, dt=T1 / 200, start=(path, -1), load=lr.step_load(0.0),
                      rho_inf=rho_inf)
    assert mo.status == "target" and len(mo) >= 1001
    U = np.array([corotational_energy(mo.structure, u, sec.EA, sec.EI) for u in mo.u])
    E = mo.kinetic + U
    dev = np.abs(E / E[0] - 1.0)
    # measured over 1,000 steps (5 periods at large amplitude): max |ΔE|/E0 = 5.2e-4
    # for ρ∞ = 1, 8.9e-4 for ρ∞ = 0.9 (its end 6.4e-4 below E0)
    assert dev.max() < 1.5e-3
    if rho_inf < 1.0:
        assert E[-1] < E[0]
    # the Motion's own bookkeeping: internal work matches the strain energy gained
    assert np.abs(mo.strain - (U - U[0])).max() < 1.5e-3 * E[0]


def test_free_vibration_no_spurious_turns(deflected_cantilever):
    # Coarse steps (T1/50) once let Newton land on a root a few full turns away at the
    # free tip (the kernels see rotations modulo 2π): such steps are cut now, so no
    # node turns by more than a radian in a step and the energy stays put
    s, path, sec, T1 = deflected_cantilever
    mo = lr.transient(s, 3 * T1, dt=T1 / 50, start=(path, -1), load=lr.step_load(0.0), rho_inf=0.5)
    assert mo.status == "target"
    rz = mo.u[:, 2::3]
    assert np.abs(np.diff(rz, axis=0)).max() < 1.0
    U = np.array([corotational_energy(mo.structure, u, sec.EA, sec.EI) for u in mo.u])
    assert (mo.kinetic + U).max() < 1.01 * U[0]


# -- two-bar truss: the snap lands on the far branch ----------------------------------------------
A_, H_, EA_ = 2.0, 0.5, 1.0e4


def truss_with_mass(m=1.0):
    sc = two_bar_truss(A_, H_, EA_)
    sc.structure.mass(sc.nodes["apex"], m)
    return sc.structure, sc.nodes["apex"]


def far_branch(level):
    """Apex drop v on the far (inverted, stable) branch where P(v) = level, and the
    stiffness dP/dv there (statics, exact: closed_form.two_bar_truss_load)."""
    P = lambda v: two_bar_truss_load(v, A_, H_, EA_)
    v = brentq(lambda v: P(v) - level, 2 * H_, 10 * H_)
    return v, (P(v + 1e-6) - P(v - 1e-6)) / 2e-6


def test_dynamic_snap_from_the_limit_point():
    s, apex = truss_with_mass()
    path = lr.trace(s, lr.by_load(5.0))
    assert path.status == "limit"
    cp = path.critical_points[0]
    # limit load of the exact statics (its maximum over the apex drop)
    P = lambda v: two_bar_truss_load(v, A_, H_, EA_)
    P_lim = -minimize_scalar(lambda v: -P(v), bounds=(0, H_), method="bounded").fun
    assert cp.load_factor == pytest.approx(P_lim, rel=1e-6)
    level = 1.01 * cp.load_factor
    v_far, k = far_branch(level)
    w = math.sqrt(k / 1.0)
    T = 2 * math.pi / w
    mo = lr.transient(s, 30 * T, dt=T / 40, start=(path, cp), load=lr.step_load(level),
                      damping=(2 * 0.1 * w, 0.0))           # ζ = 0.1 on the far branch
    assert mo.status == "target", mo.message
    v = -mo.displacement(apex, "uy")
    # settled: after 30 periods at ζ = 0.1 the amplitude is e^(−2π·0.1·30) ≈ 6e-9 of its
    # start (measured landing error 2.3e-8 of v)
    assert v[-1] == pytest.approx(v_far, rel=1e-6)
    assert abs(mo.velocity(apex, "uy")[-1]) < 1e-5 * v_far * w
    assert np.abs(mo.displacement(apex, "ux")).max() < 1e-9     # symmetric motion


def test_step_load_from_rest_snaps_through():
    # From rest a step load above the limit load snaps the truss through; it settles
    # (Rayleigh damping) on the far branch of the exact statics
    s, apex = truss_with_mass()
    P = lambda v: two_bar_truss_load(v, A_, H_, EA_)
    P_lim = -minimize_scalar(lambda v: -P(v), bounds=(0, H_), method="bounded").fun
    level = 1.2 * P_lim
    v_far, k = far_branch(level)
    w = math.sqrt(k)
    T = 2 * math.pi / w
    mo = lr.transient(s, 30 * T, dt=T / 40, load=lr.step_load(level), damping=lr.rayleigh(0.1, w / (2 * math.pi), w / (2 * math.pi)))
    assert mo.status == "target"
    assert -mo.displacement(apex, "uy")[-1] == pytest.approx(v_far, rel=1e-6)


# -- results: saving, interrupts, failures, options -----------------------------------------------
def test_motion_pickles_and_saves(tmp_path):
    s, b = spring_mass()
    mo = lr.transient(s, 0.5, dt=0.01, load=lr.ramp_load(1.0, rise=0.2))
    back = pickle.loads(pickle.dumps(mo))
    np.testing.assert_array_equal(back.u, mo.u)
    f = tmp_path / "motion.lr"
    lr.save(mo, f)
    loaded = lr.load(f, kind="motion")
    assert isinstance(loaded, lr.Motion) and loaded.status == mo.status
    np.testing.assert_array_equal(loaded.u, mo.u)
    np.testing.assert_array_equal(loaded.kinetic, mo.kinetic)
    # the ramp's end (t = 0.2) is a break: a step lands on it
    assert np.any(np.isclose(mo.times, 0.2, rtol=0, atol=1e-12))
    assert mo.load_factor[-1] == 1.0


def test_interrupt_keeps_the_steps():
    s, b = spring_mass()
    calls = []

    def progress(t, duration):
        calls.append(t)
        if len(calls) == 5:
            raise KeyboardInterrupt

    mo = lr.transient(s, 1.0, dt=0.01, load=lr.step_load(1.0), progress=progress)
    assert mo.status == "interrupted" and mo.status_code > 0
    assert len(mo) == 6                        # the start and five steps


def test_failure_is_a_status():
    # a load 50 times the truss's limit load from t = 0.25 with two Newton iterations
    # allowed and no room to cut: Newton fails, the motion keeps what it computed
    s, apex = truss_with_mass()
    mo = lr.transient(s, 1.0, dt=0.1, load=lr.step_load(3e3, t0=0.25), min_dt=0.05,
                      max_iterations=2)
    assert mo.status == "failed" and mo.status_code < 0 and not mo.success
    np.testing.assert_allclose(mo.times, [0.0, 0.1, 0.2])
    assert "t = 0.2" in mo.message


def test_path_view_and_figure():
    s, b = spring_mass()
    mo = lr.transient(s, 0.3, dt=0.01, load=lr.step_load(1.0))
    p = mo.as_path()
    np.testing.assert_array_equal(p.load_factor, mo.times)
    np.testing.assert_array_equal(p.u, mo.u)
    import matplotlib
    matplotlib.use("Agg")
    ax = mo.plot(b, "ux")
    assert ax.get_lines()


@pytest.mark.parametrize("kwargs, error, match", [
    (dict(duration=0.0), lr.ModelError, "duration"),
    (dict(dt=-1.0), lr.ModelError, "dt"),
    (dict(rho_inf=1.5), lr.ModelError, "rho_inf"),
    (dict(damping=0.1), TypeError, "damping"),
    (dict(damping=(-1.0, 0.0)), lr.ModelError, "a0"),
    (dict(load=3.0), TypeError, "load"),
    (dict(load=lambda t: float("nan")), lr.ModelError, "load"),
    (dict(start=5), TypeError, "start"),
    (dict(lumped="yes"), TypeError, "lumped"),
])
def test_bad_options(kwargs, error, match):
    s, b = spring_mass()
    args = dict(duration=1.0)
    args.update(kwargs)
    with pytest.raises(error, match=match):
        lr.transient(s, args.pop("duration"), **args)


def test_no_mass_is_an_error():
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.bar(a, b, lr.Section(E=1.0, A=1.0))
    s.fix(a)
    s.fix(b, "uy")
    s.load(b, fx=1.0)
    with pytest.raises(lr.ModelError, match="no mass"):
        lr.transient(s, 1.0)
