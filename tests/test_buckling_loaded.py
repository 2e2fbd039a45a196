"""Linear buckling about the state under constant loads; fibre-section beams in buckling.

References: the heavy cantilever column with a tip load, EI·θ'' + (P + q·(L − s))·θ = 0,
solved independently with scipy (``largerot.closed_form.heavy_column_tip_load``);
Greenhill's self-weight buckling q·L³/EI = 7.837 (Timoshenko & Gere 1961, *Theory of
Elastic Stability*, §2.10; ``largerot.closed_form.greenhill_weight``); Euler's
cantilever load π²EI/(4L²) (same book, ch. 2).

The FE weight is lumped to the nodes, so each element carries the axial force of its
midpoint, constant along it: with weight the buckling factors converge as h² (measured
ratio 4.0 from 20 to 40 elements), not as the h⁴ of the consistent geometric stiffness
under a constant axial force. Tolerances below are sized to that, at 40 elements.
"""
import numpy as np
import pytest

import largerot as lr
from largerot.closed_form import greenhill_weight, heavy_column_tip_load

L, EI = 1.0, 1.0
P_EULER = np.pi**2 * EI / (4 * L**2)      # Euler, cantilever (Timoshenko & Gere 1961, ch. 2)
A = 1e4                                    # EA ≫ EI/L²: axial shortening plays no part
TIP = 1                                    # node ids: base 0, tip 1, then the inner nodes


def heavy_pole(q, P, segments=40, weight_constant=True, section=None):
    """Vertical cantilever, clamped at the base, weight q per length, tip load P down."""
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, L)
    sec = section or lr.Section(E=EI, A=A, I=1.0, density=q / A)
    s.beam(a, b, sec, segments=segments)
    s.fix(a)
    if q:
        s.gravity(1.0, constant=weight_constant)      # q = density·A·g with g = 1
    if P:
        s.load(b, fy=-P)
    return s


def test_reference_solver_against_euler_and_greenhill():
    # Sanity of the independent reference: without weight it is Euler's π²EI/(4L²);
    # at Greenhill's weight the tip load that buckles the column is zero; Greenhill's
    # constant, from the first zero of J₋₁/₃, is the book's 7.837 (Timoshenko & Gere
    # 1961, §2.10, to its four digits). Tolerances: the shooting's rtol 1e-12
    # (measured 6e-15 and 2e-14).
    assert heavy_column_tip_load(0.0, L, EI) == pytest.approx(P_EULER, rel=1e-10)
    qG = greenhill_weight(L, EI)
    assert round(qG * L**3 / EI, 3) == 7.837
    assert abs(heavy_column_tip_load(qG, L, EI)) < 1e-10 * P_EULER
    # beyond Greenhill's weight the tip must be pulled (P < 0)
    assert heavy_column_tip_load(1.2 * qG, L, EI) < 0.0


@pytest.mark.parametrize("weight, tol", [
    # qL as a share of Euler's load; tolerance 1.5–2× the measured error at 40 elements
    (0.0, 1e-8),      # measured 3.3e-9 (h⁴: consistent Kσ under a constant force)
    (0.5, 1e-4),      # measured 6.0e-5
    (1.5, 4e-4),      # measured 2.6e-4
])
def test_heavy_cantilever_tip_load_factor(weight, tol):
    # Weight held constant, tip load scaled: λ·P against the lowest eigenvalue P of
    # EI·θ'' + (P + q(L − s))·θ = 0, θ(0) = 0 (clamp), θ'(L) = 0 (no moment at the
    # free top); the equation is lateral equilibrium of the part above s, the shear
    # at the free top being zero as both loads stay vertical (closed_form docstring).
    q = weight * P_EULER / L
    exact = heavy_column_tip_load(q, L, EI)
    res = lr.buckling(heavy_pole(q, P_EULER), modes=1)
    assert res.load_factors[0] * P_EULER == pytest.approx(exact, rel=tol)
    # the mode is a lateral sway of the whole pole, largest at the tip
    ux = res.modes[0][0::3]
    assert np.argmax(np.abs(ux)) == TIP and np.all(ux[1:] > 0)


def test_heavy_cantilever_converges_at_second_order():
    # The h² of the lumped weight (module notes): the error against the reference
    # falls by 4 when the elements are halved; measured 4.00 (20 → 40, qL = 1.5 P_E).
    q = 1.5 * P_EULER / L
    exact = heavy_column_tip_load(q, L, EI)
    err = [abs(lr.buckling(heavy_pole(q, P_EULER, segments=n), modes=1).load_factors[0]
               * P_EULER / exact - 1.0) for n in (20, 40)]
    assert np.log2(err[0] / err[1]) == pytest.approx(2.0, abs=0.1)


def test_greenhill_weight_as_the_scaled_load():
    # Weight alone as the reference load (gravity with constant=False): λ·q·L³/EI is
    # Greenhill's 9j²/4 = 7.8373 (Timoshenko & Gere 1961, §2.10). 40 elements:
    # measured 2.6e-4 below (1.0e-3 at 20), tolerance 4e-4.
    qG = greenhill_weight(L, EI)
    res = lr.buckling(heavy_pole(qG, 0.0, weight_constant=False), modes=1)
    assert res.load_factors[0] == pytest.approx(1.0, rel=4e-4)
    assert res.load_factors[0] < 1.0          # lumped weight: the FE column is weaker


def test_weight_near_greenhill_leaves_little_tip_load():
    # Near Greenhill's weight only a small tip load is left. The weight is taken as a
    # share of the FE column's own Greenhill weight (previous test's analysis), which
    # is where the tip load factor must reach zero: a weight held constant and one
    # scaled must agree on it.
    qGh = greenhill_weight(L, EI) * lr.buckling(
        heavy_pole(greenhill_weight(L, EI), 0.0, weight_constant=False), modes=1).load_factors[0]
    tip = 1e-3 * P_EULER                      # a tiny reference tip load
    lam = lr.buckling(heavy_pole(0.999 * qGh, tip), modes=1).load_factors[0]
    # against the reference P at 0.999 of the exact Greenhill weight (P ≈ 2.6e-3
    # EI/L², 1e-3 of Euler's): measured 8.6e-5 (3.4e-4 at 20 elements), tolerance 2e-4
    assert lam * tip == pytest.approx(heavy_column_tip_load(0.999 * greenhill_weight(L, EI), L, EI),
                                      rel=2e-4)
    # just past the FE column's Greenhill weight, the weight alone buckles it
    with pytest.raises(lr.ModelError, match="constant loads alone are beyond"):
        lr.buckling(heavy_pole(1.001 * qGh, tip), modes=1)
    # at 0.9 of Greenhill's weight, against the reference: the error of λ·P in units
    # of Euler's load is that of the weight (measured 2.5e-4 of P_E; tolerance 4e-4)
    q = 0.9 * greenhill_weight(L, EI)
    lam = lr.buckling(heavy_pole(q, P_EULER), modes=1).load_factors[0]
    assert abs(lam * P_EULER - heavy_column_tip_load(q, L, EI)) < 4e-4 * P_EULER


def test_constant_tip_load_takes_its_share():
    # Constant and reference loads on the same line of action add: with a constant
    # tip load c·P_E the reference tip load P_E has λ = 1 − c (Euler, Timoshenko &
    # Gere 1961, ch. 2; 10 elements: h⁴, measured 8e-7 relative to 1). Kσ is linear
    # in the load, so the shift is exact up to the central difference that takes the
    # element forces (measured 3e-13, modes 8e-14); the modes are those without it.
    s = heavy_pole(0.0, P_EULER, segments=10)
    alone = lr.buckling(s, modes=2)
    s.load(TIP, fy=-0.3 * P_EULER, constant=True)
    held = lr.buckling(s, modes=2)
    assert held.load_factors == pytest.approx(alone.load_factors - 0.3, abs=1e-11)
    assert np.allclose(held.modes, alone.modes, atol=1e-9)


def test_constant_loads_beyond_buckling_raise():
    # A constant tip load above Euler's load (Timoshenko & Gere 1961, ch. 2): no
    # reference load can be added; the error says why instead of returning λ < 0.
    s = heavy_pole(0.0, 1.0, segments=10)
    s.load(TIP, fy=-1.05 * P_EULER, constant=True)
    with pytest.raises(lr.ModelError, match=r"constant loads alone are beyond .*λ_cr ≤ 0"):
        lr.buckling(s)
    # below it, the reference load's factor is what is left: (1 − 0.95)·P_E / 1.0;
    # the FE Euler load's 8e-7 is magnified by 1/0.05: measured 1.7e-5, tolerance 1e-4
    s2 = heavy_pole(0.0, 1.0, segments=10)
    s2.load(TIP, fy=-0.95 * P_EULER, constant=True)
    assert lr.buckling(s2, modes=1).load_factors[0] == pytest.approx(0.05 * P_EULER, rel=1e-4)


def test_tension_reference_load_has_no_positive_factor():
    # Weight held, reference tip load pulling up: the column only gets stiffer, so
    # there is no positive critical factor (the sense of a negative one is not the
    # reference load's: none returned, as without constant loads).
    s = heavy_pole(0.5 * P_EULER / L, -P_EULER)
    assert len(lr.buckling(s)) == 0


def fibre_column(section, segments=10):
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, 2.0)
    s.beam(a, b, section, segments=segments)
    s.fix(a)
    s.load(b, fx=1e3, fy=-1e5)
    return s


def test_fibre_column_buckles_like_the_elastic_section():
    # A fibre-section column has the elastic section's EA, EI below yield (fibres.py:
    # A and I summed over the fibres), so linear buckling gives the same factors and
    # modes (to round-off: measured 9e-13 and 2e-13) and Euler's π²EI/(4L²) (Timoshenko & Gere
    # 1961, ch. 2) for the axial part: 10 elements, measured 8e-7, tolerance 1e-5.
    fs = lr.FibreSection.rectangle(E=200e9, fy=250e6, width=0.05, depth=0.1, H=0.01 * 200e9)
    el = lr.Section(E=fs.E, A=fs.A, I=fs.I)
    rf = lr.buckling(fibre_column(fs), modes=3)
    re = lr.buckling(fibre_column(el), modes=3)
    assert len(rf) == 3
    assert rf.load_factors == pytest.approx(re.load_factors, rel=1e-10)
    assert np.allclose(rf.modes, re.modes, atol=1e-8)
    euler = np.pi**2 * fs.EI / (4 * 2.0**2)
    # the lateral 1e3 adds moments, whose Kσ term is small but not nil: compare the
    # axial-only column with Euler
    s = fibre_column(fs)
    s.load(TIP, fx=-1e3)
    assert lr.buckling(s, modes=1).load_factors[0] * 1e5 == pytest.approx(euler, rel=1e-5)


def test_fibre_buckling_ignores_the_history_of_an_earlier_trace():
    # Linear buckling is about the virgin elastic structure: after a trace that yields
    # the fibre column at its base, the factors are those before it (to round-off).
    fs = lr.FibreSection.rectangle(E=200e9, fy=250e6, width=0.05, depth=0.1, H=0.01 * 200e9)
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, 2.0)
    s.beam(a, b, fs, segments=10)
    s.fix(a)
    s.load(b, fx=1.2e4, fy=-2e4)          # base moment 2.4e4 N·m: above M_y = 2.08e4, below M_p
    before = lr.buckling(s, modes=2).load_factors
    path = lr.trace(s, lr.by_load(0.2), target_load_factor=1.0)
    assert path.status == "target", path.message
    assert path.yielded[-1].max() > 0.0, "the trace did not yield"
    assert lr.buckling(s, modes=2).load_factors == pytest.approx(before, rel=1e-12)


def test_ring_with_constant_pressure_nonsymmetric():
    # Ring under pressure normal to the deformed ring (a follower load): buckles at
    # q = 3EI/R³ (Timoshenko & Gere 1961, §7.4). With 0.4 of it held constant, the
    # scaled pressure 3EI/R³ has λ = 0.6: the load stiffnesses of both join the
    # non-symmetric eigenproblem. 64 elements: 0.2 % above 1 without the constant
    # part (tests/test_cables_loads.py), and the constant part shifts λ by exactly
    # 0.4 (Kσ and the load stiffness are linear in the load; measured 9e-10, the
    # O(ε²) left by the central difference that takes the element forces).
    from test_cables_loads import ring
    R, EI = 2.0, 1.0e3
    q = 3 * EI / R**3
    s, members, _ = ring(R=R, EI=EI)
    for m in members:
        s.line_load(m, normal=q)
    alone = lr.buckling(s, modes=1).load_factors[0]
    for m in members:
        s.line_load(m, normal=0.4 * q, constant=True)
    held = lr.buckling(s, modes=1).load_factors[0]
    assert held == pytest.approx(alone - 0.4, abs=1e-8)
    assert held == pytest.approx(0.6, rel=1e-2)
    # 1.2 times the buckling pressure held constant: an error, not a negative λ
    s2, members, _ = ring(R=R, EI=EI)
    for m in members:
        s2.line_load(m, normal=q)
        s2.line_load(m, normal=1.2 * q, constant=True)
    # (the share at which it turns singular is 1.002/1.2 = 0.835)
    with pytest.raises(lr.ModelError, match=r"alone are at or beyond .* turns singular at 0\.835"):
        lr.buckling(s2)
