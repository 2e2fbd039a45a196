"""Natural frequencies about traced points (largerot/vibration.py) against closed forms.

Slender sections (radius of gyration r = √(I/A) = 1 mm on a 4 m beam) keep the rotary
inertia ρI, which the Euler–Bernoulli closed forms leave out, below 1e-7 of the
frequencies (a relative effect of order (β·r/L)²; common practice, no source).
"""
import math

import numpy as np
import pytest

import largerot as lr

E, I, A, RHO, L = 210e9, 1e-8, 1e-2, 7850.0, 4.0
#: β_n·L of the cantilever, roots of cos β·cosh β = −1 (Timoshenko, Young & Weaver
#: 1974, *Vibration Problems in Engineering*; from memory), here solved with scipy
CANTILEVER_ROOTS = (1.8751, 4.6941, 7.8548)


def _cantilever_roots():
    from scipy.optimize import brentq
    return np.array([brentq(lambda b: math.cos(b) * math.cosh(b) + 1.0, r - 0.01, r + 0.01)
                     for r in CANTILEVER_ROOTS])


def beam(n, support, lumped_section=None):
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, lr.Section(E=E, A=A, I=I, density=RHO), segments=n)
    if support == "cantilever":
        s.fix(a)
    else:
        s.fix(a, "ux", "uy")
        s.fix(b, "uy")
    return s


def closed_form(support):
    # ω_n = (β_n·L)²·√(EI/(ρA·L⁴)) (Euler–Bernoulli beam; Timoshenko, Young & Weaver
    # 1974, from memory): β_n·L the cantilever's roots, or n·π simply supported
    bl = _cantilever_roots() if support == "cantilever" else math.pi * np.arange(1, 4)
    return bl**2 * math.sqrt(E * I / (RHO * A * L**4)) / (2.0 * math.pi)


@pytest.mark.parametrize("support", ["cantilever", "simply supported"])
def test_beam_frequencies_converge_as_h4_with_consistent_mass(support):
    # consistent (Hermite) mass and stiffness: eigenvalue errors O(h^(2(p+1−m))) = h⁴
    # for cubics and a 4th-order operator (Strang & Fix 1973, An Analysis of the
    # Finite Element Method, from memory). Measured orders 3.7–4.5 between 2, 4 and
    # 8 elements (mode 1) and 4, 8, 16 (modes 2, 3), where the error is far above
    # the round-off floor (~6e-7, LAPACK on stiffness ratios EA/EI·L² ~ 1e7)
    ref = closed_form(support)
    errors = {n: lr.frequencies(beam(n, support), modes=3) / ref - 1.0 for n in (2, 4, 8, 16)}
    assert np.all(np.abs(errors[16]) < 1e-4)          # measured ≤ 8.0e-5 (ss mode 3)
    for mode, (n1, n2) in ((0, (2, 4)), (0, (4, 8)), (1, (4, 8)), (1, (8, 16)), (2, (8, 16))):
        order = math.log2(abs(errors[n1][mode] / errors[n2][mode]))
        assert 3.6 < order < 4.6, (mode, n1, order)
    # the consistent mass bounds the frequencies from above (Rayleigh quotient over a
    # subspace; common practice, no source)
    assert np.all(errors[4] > 0.0) and np.all(errors[8] > 0.0)


@pytest.mark.parametrize("support", ["cantilever", "simply supported"])
def test_beam_frequencies_converge_as_h2_with_lumped_mass(support):
    # lumped masses: first-order mass error, frequencies O(h²) and below the exact ones
    # (common practice, no source); measured orders 1.95–2.02 from 8 to 32 elements
    ref = closed_form(support)
    e = {n: lr.frequencies(beam(n, support), modes=3, lumped=True) / ref - 1.0 for n in (8, 16, 32)}
    for n1, n2 in ((8, 16), (16, 32)):
        order = np.log2(np.abs(e[n1] / e[n2]))
        assert np.all((1.85 < order) & (order < 2.15)), order
    assert np.all(e[32] < 0.0) and np.all(np.abs(e[32]) < 4e-3)   # measured ≤ 3.5e-3


def column(n=16):
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, L)
    s.beam(a, b, lr.Section(E=E, A=A, I=I, density=RHO), segments=n)
    s.fix(a, "ux", "uy")
    s.fix(b, "ux")
    P_cr = math.pi**2 * E * I / L**2
    s.load(b, fy=-P_cr)
    return s


def test_loaded_column_frequency_falls_as_one_minus_p_over_pcr():
    # pinned–pinned Euler column under axial P: ω_n² = ω_n0²·(1 − P/(n²·P_cr)),
    # exact for the continuous column (Timoshenko, Young & Weaver 1974, from memory;
    # the mode is sin(nπx/L) for any P). Traced with load control past the bifurcation
    # (λ = P/P_cr): past it the straight column is unstable and ω² < 0 is reported as a
    # negative frequency. Mesh error of 16 elements: the corotational tangent's
    # geometric term is chord-only (DEVELOPERS: buckling loads converge as h² with
    # it), measured ω²/ω0² − (1 − λ) = 3.21e-3·λ + 1.4e-6; tolerance 3.5e-3·λ + 1e-5
    path = lr.trace(column(16), lr.by_load(0.1), target_load_factor=1.2)
    assert path.status == "target"
    f = lr.frequencies(path, modes=2)
    w0 = math.pi**2 / L**2 * math.sqrt(E * I / (RHO * A)) / (2.0 * math.pi)
    lam = path.load_factor
    signed = np.sign(f[:, 0]) * (f[:, 0] / w0) ** 2
    assert np.all(np.abs(signed - (1.0 - lam)) <= 3.5e-3 * lam + 1e-5)
    # second mode: ω2² = 16·ω0²·(1 − P/(4P_cr)); in units of ω0² the mesh error of
    # mode 2 measured 4.9e-4 + 0.0509·λ (the same h² geometric term, 4× per mode)
    second = (f[:, 1] / w0) ** 2 - 16.0 * (1.0 - lam / 4.0)
    assert np.all(np.abs(second) <= 0.055 * lam + 1e-3)
    # the lowest frequency reaches zero at the bifurcation: f² (signed) interpolated
    # between the points around it is zero at the path's located critical point, and
    # that is P_cr to the mesh error (3.2e-3)
    cp = path.critical_points[0]
    k = cp.index
    zero = lam[k] + (lam[k + 1] - lam[k]) * signed[k] / (signed[k] - signed[k + 1])
    assert zero == pytest.approx(cp.load_factor, abs=1e-4)     # f² is linear in λ: measured 3e-7
    assert zero == pytest.approx(1.0, abs=4e-3)
    assert np.all((f[:, 0] < 0.0) == (path.n_negative > 0))


def test_taut_string():
    # f_n = n/(2L)·√(T/μ), μ the mass per unit (stretched) length (common practice,
    # no source); a pretensioned cable of 40 segments with consistent bar masses:
    # measured relative errors 2.6e-4·n² (O(h²)), tolerance 3e-4·n²
    T, span, n = 2000.0, 3.0, 40
    sec = lr.Section(E=200e9, A=1e-5, density=7850.0)
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(span, 0.0)
    s.cable(a, b, sec, segments=n, pretension=T)
    s.fix(a)
    s.fix(b)
    f = lr.frequencies(s, modes=4)
    L0 = span * sec.EA / (sec.EA + T)           # the unstretched length of the cable
    mu = 7850.0 * 1e-5 * L0 / span
    k = np.arange(1, 5)
    ref = k / (2.0 * span) * math.sqrt(T / mu)
    assert np.all(np.abs(f / ref - 1.0) < 3e-4 * k**2)


def test_mass_on_a_massless_spring_bar():
    # f = √(k/m)/2π of a mass on a spring (common practice, no source): a massless
    # bar (k = EA/L) and a grounded spring in parallel; exact up to round-off
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(2.0, 0.0)
    s.bar(a, b, lr.Section(E=3e5, A=1e-2))
    s.fix(a)
    s.fix(b, "uy")
    s.spring(b, "ux", 500.0)
    s.mass(b, 7.0)
    k = 3e5 * 1e-2 / 2.0 + 500.0
    f, phi = lr.frequencies(s, modes=1, shapes=True)
    assert f[0] == pytest.approx(math.sqrt(k / 7.0) / (2.0 * math.pi), rel=1e-12)
    assert phi.shape == (1, 6)
    assert phi[0, 3] == pytest.approx(1.0 / math.sqrt(7.0), rel=1e-12)   # φᵀMφ = 1


def test_tip_mass_on_a_massless_cantilever():
    # f = √(3EI/(m·L³))/2π (common practice, no source): the beam's rotations and
    # the mass's own rotation carry no mass (a singular mass matrix); exact for the
    # cubic element, round-off only
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, lr.Section(E=E, A=A, I=I), segments=3)
    s.fix(a)
    s.mass(b, 12.0)
    f = lr.frequencies(s, modes=1)
    assert f[0] == pytest.approx(math.sqrt(3 * E * I / (12.0 * L**3)) / (2 * math.pi), rel=1e-9)


def test_negative_frequency_past_the_limit_of_a_two_bar_truss():
    # von Mises truss with a mass at the apex (apex held horizontally): ω² = k(w)/m
    # with k = dF/dw of the closed-form force of two corotational bars,
    # F = 2·N·y/l, N = EA·(l − L0)/L0, y = h − w, l = √(a² + y²) (statics, common
    # practice); negative past the limit point (f = −√|ω²|/2π, module notes); one
    # DOF, exact up to round-off and the traced point's residual (1e-10)
    EA, a_, h, m = 1e6, 1.0, 0.3, 5.0
    s = lr.Structure()
    left, right, top = s.node(-a_, 0.0), s.node(a_, 0.0), s.node(0.0, h)
    s.bar(left, top, lr.Section(E=EA, A=1.0))
    s.bar(right, top, lr.Section(E=EA, A=1.0))
    s.fix(left)
    s.fix(right)
    s.fix(top, "ux")
    s.mass(top, m)
    s.load(top, fy=-1000.0)
    path = lr.trace(s, lr.by_arc_length(0.05), max_steps=12)
    f = lr.frequencies(path, modes=1)[:, 0]
    w = -path.displacement(top, "uy")
    L0, y = math.hypot(a_, h), h - w
    l = np.hypot(a_, y)
    N = EA * (l - L0) / L0
    k = 2.0 * (EA / L0 * (y / l) ** 2 + N * (1.0 / l - y**2 / l**3))
    ref = np.sign(k) * np.sqrt(np.abs(k) / m) / (2.0 * math.pi)
    assert np.allclose(f, ref, rtol=1e-9, atol=1e-9)
    assert (f < 0).any() and (f > 0).any()
    assert np.all((f < 0) == (path.n_negative > 0))


def test_points_shapes_and_sparse_solver_agree_with_dense(monkeypatch):
    # the shift-invert (ARPACK) route gives the dense route's frequencies, to the
    # dense route's round-off floor (~6e-7 relative: LAPACK on EA/EI·L² ~ 1e7)
    path = lr.trace(column(16), lr.by_load(0.3), target_load_factor=0.9)
    dense, phi = lr.frequencies(path, i=[1, -1], modes=3, shapes=True)
    assert dense.shape == (2, 3) and phi.shape == (2, 3, path.model.n_dof)
    one = lr.frequencies(path, i=-1, modes=3)
    assert one.shape == (3,) and np.allclose(one, dense[1])
    from largerot import vibration
    monkeypatch.setattr(vibration, "DENSE_MAX", 10)
    sparse = lr.frequencies(path, i=[1, -1], modes=3)
    assert np.allclose(sparse, dense, rtol=1e-6)


def test_follower_load_warns():
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, L)
    s.beam(a, b, lr.Section(E=E, A=A, I=I, density=RHO), segments=4)
    s.fix(a)
    s.load(b, fy=-1.0, follower=True)
    path = lr.trace(s, lr.by_load(0.5), max_steps=2)
    with pytest.warns(lr.InputWarning, match="non-symmetric"):
        f = lr.frequencies(path, modes=2)
    assert np.all(np.isfinite(f))


BAD = [
    # (id, f, exception, fragment) — the library's own contract (common practice, no source)
    ("no mass", lambda: lr.frequencies(_massless()), lr.ModelError, "no mass"),
    ("modes zero", lambda: lr.frequencies(beam(2, "cantilever"), modes=0), lr.ModelError, "`modes`"),
    ("too many modes", lambda: lr.frequencies(beam(1, "cantilever"), modes=9), lr.ModelError,
     "more than the structure's 3 free DOFs"),
    ("not a path", lambda: lr.frequencies("path"), TypeError, "EquilibriumPath"),
    ("point of a structure", lambda: lr.frequencies(beam(2, "cantilever"), i=3), lr.ModelError,
     "needs a traced path"),
    ("shapes as text", lambda: lr.frequencies(beam(2, "cantilever"), shapes="yes"), TypeError,
     "`shapes`"),
]


def _massless():
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0))
    s.fix(a)
    return s


@pytest.mark.parametrize("name, f, exc, fragment", BAD, ids=[r[0] for r in BAD])
def test_bad_input(name, f, exc, fragment):
    with pytest.raises(exc, match=fragment):
        f()


def test_bad_point_index():
    path = lr.trace(column(4), lr.by_load(0.5), max_steps=1)
    with pytest.raises(lr.ModelError, match="Point index 7"):
        lr.frequencies(path, i=7)


def test_plot_frequencies_draws_the_computed_values():
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    path = lr.trace(column(8), lr.by_load(0.25), target_load_factor=1.25)
    f = lr.frequencies(path, modes=2)
    ax = lr.plotting.plot_frequencies(path, modes=2, f=f)
    lines = [ln for ln in ax.lines if ln.get_label().startswith("mode")]
    assert len(lines) == 2
    assert np.allclose(lines[0].get_ydata(), f[:, 0])
    assert np.allclose(lines[0].get_xdata(), path.load_factor)
    ax2 = lr.plotting.plot_frequencies(path)       # computes its own
    assert np.allclose(ax2.lines[0].get_ydata(), f[:, 0])
    plt.close("all")
