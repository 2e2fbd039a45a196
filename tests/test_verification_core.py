"""Verification of the geometrically nonlinear core against closed-form solutions."""
import numpy as np
import pytest

import largerot as lr
from largerot.closed_form import elastica_tip_load, end_moment_tip, two_bar_truss_load

from helpers import two_bar_truss


def cantilever(segments=32, EI=2.0, L=3.0, slenderness=1e6):
    """Cantilever along +x; EA = slenderness·EI/L² keeps axial strain negligible."""
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    I = 1e-4
    E = EI / I
    A = slenderness * I / L**2
    s.beam(a, b, lr.Section(E=E, A=A, I=I), segments=segments)
    s.fix(a)
    return s, a, b


@pytest.mark.parametrize("alpha", [1.0, 3.0, 6.0, 10.0])
def test_cantilever_tip_load_matches_elastica(alpha):
    # Bisshopp & Drucker (1945) elliptic-integral elastica (largerot.closed_form).
    # 32 elements: discretisation error ~1e-4 of L; EA·L²/EI = 1e6 makes the
    # extensible answer differ from the inextensible one by ~α·1e-6. Tolerance 0.2 %.
    EI, L = 2.0, 3.0
    s, a, b = cantilever(EI=EI, L=L)
    s.load(b, fy=-alpha * EI / L**2)
    path = lr.trace(s, lr.by_load(0.1), target_load_factor=1.0, tol=1e-10)
    assert path.status == "target" and path.load_factor[-1] == pytest.approx(1.0, abs=1e-14)
    along, shortening, slope = elastica_tip_load(alpha)
    v = -path.displacement(b, "uy")[-1] / L
    u = -path.displacement(b, "ux")[-1] / L
    assert v == pytest.approx(along, rel=2e-3)
    assert u == pytest.approx(shortening, rel=2e-3)
    assert -path.displacement(b, "rz")[-1] == pytest.approx(slope, rel=2e-3)


def test_elastica_reference_known_value():
    # Sanity of the reference itself: P·L²/EI = 10 gives a tip deflection of about
    # 0.81·L along the load (Bisshopp & Drucker 1945, table; from memory: 0.8106).
    along, shortening, _ = elastica_tip_load(10.0)
    assert along == pytest.approx(0.8106, abs=5e-4)
    assert shortening == pytest.approx(0.5545, abs=1e-3)


@pytest.mark.parametrize("theta", [np.pi / 4, np.pi, 1.5 * np.pi, 2 * np.pi])
def test_end_moment_rolls_up_into_circle(theta):
    # Pure bending: the cantilever is a circular arc of radius L·EI/(M·L)
    # (common practice, no source). Equal chords of a polygon inscribed in the arc
    # close exactly at M·L/EI = 2π; at other angles the chord/arc difference of
    # θ_e²/24 (θ_e = θ/32) bounds the error: 0.2 % of L suffices.
    EI, L = 2.0, 3.0
    s, a, b = cantilever(EI=EI, L=L)
    s.load(b, mz=theta * EI / L)
    n = int(np.ceil(theta / 0.2))
    path = lr.trace(s, lr.by_load(1.0 / n), target_load_factor=1.0, tol=1e-10)
    assert path.status == "target"
    ux, uy = end_moment_tip(theta)
    assert path.displacement(b, "ux")[-1] / L == pytest.approx(ux, abs=2e-3)
    assert path.displacement(b, "uy")[-1] / L == pytest.approx(uy, abs=2e-3)
    assert path.displacement(b, "rz")[-1] == pytest.approx(theta, rel=1e-9)
    if theta == 2 * np.pi:
        tip = path.coordinates(-1)[b]
        assert np.hypot(*tip) < 1e-6 * L


def test_end_moment_several_turns_without_wraparound():
    # Rotations accumulate past ±π: two full turns (M·L/EI = 4π) stay a circle
    # wound twice, every node on a circle of radius L/(4π) through the root.
    EI, L = 2.0, 3.0
    s, a, b = cantilever(segments=64, EI=EI, L=L)
    s.load(b, mz=4 * np.pi * EI / L)
    path = lr.trace(s, lr.by_load(1 / 64), target_load_factor=1.0, tol=1e-10)
    assert path.status == "target"
    R = L / (4 * np.pi)
    # equal chords L/64 turning by 4π/64 each: a polygon inscribed in one circle
    R_chords = (L / 64) / (2 * np.sin(np.pi / 32))
    xy = path.coordinates(-1)
    r = np.hypot(*(xy - [0.0, R_chords]).T)
    assert np.allclose(r, R_chords, rtol=1e-6)
    assert R_chords == pytest.approx(R, rel=2e-3)
    assert path.displacement(b, "rz")[-1] == pytest.approx(4 * np.pi, rel=1e-12)


def test_two_bar_truss_snap_through_by_displacement_control():
    # Exact statics of the two-bar truss (largerot.closed_form); displacement control
    # passes both limit points in load. Solver tolerance 1e-12 → agreement to 1e-9
    # relative to the peak load.
    s, apex = two_bar_truss()
    path = lr.trace(s, lr.by_displacement(apex, "uy", -0.025), max_steps=48, tol=1e-12)
    assert path.status == "max_steps" and len(path) == 49
    v = -path.displacement(apex, "uy")
    assert v[-1] == pytest.approx(1.2)                   # past the flat position (v = 0.5)
    P = two_bar_truss_load(v, 2.0, 0.5, 1e4)
    peak = np.abs(P).max()
    assert np.abs(path.load_factor - P).max() < 1e-9 * peak
    assert path.load_factor.min() < 0 < path.load_factor.max()   # went through snap-through
    assert np.allclose(path.displacement(apex, "ux"), 0.0, atol=1e-12)


def test_tangent_stiffness_sign_tracks_stability_of_truss():
    # Under load control the unstable (descending) branch has a negative pivot:
    # the recorded inertia must show it (common practice, no source).
    s, apex = two_bar_truss()
    path = lr.trace(s, lr.by_displacement(apex, "uy", -0.05), max_steps=20, tol=1e-12)
    dP = np.gradient(path.load_factor, -path.displacement(apex, "uy"))
    inner = slice(2, -2)
    assert np.all((path.n_negative[inner] > 0) == (dP[inner] < 0))
