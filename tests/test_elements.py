"""Unit tests of the element kernels: tangent = derivative of force, objectivity."""
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from largerot.elements import bar, beam

from helpers import element_jacobian, rigidly_turned


def _random_beams(seed, n=6, rotation_scale=3.0):
    rng = np.random.default_rng(seed)
    dX = rng.normal(size=(n, 2))
    L0 = np.hypot(dX[:, 0], dX[:, 1])
    EA = rng.uniform(1.0, 1e3, n)
    EI = rng.uniform(0.1, 10.0, n)
    u = 0.3 * rng.normal(size=(n, 6))
    common = rotation_scale * rng.normal(size=n)          # large rigid turn plus bending
    u[:, 2] += common
    u[:, 5] += common
    return dX, L0, u, EA, EI


@pytest.mark.parametrize("seed", range(5))
def test_beam_tangent_is_derivative_of_force(seed):
    # The consistent tangent must equal dF/du (common practice, no source);
    # central differences with h = 1e-6 leave ~1e-9 relative truncation/round-off.
    dX, L0, u, EA, EI = _random_beams(seed)
    K = beam.response(dX, L0, u, EA, EI).K
    Kfd = element_jacobian(lambda v: beam.response(dX, L0, v, EA, EI, tangent=False).f, u)
    assert np.abs(K - Kfd).max() / np.abs(K).max() < 1e-6


@pytest.mark.parametrize("seed", range(5))
def test_bar_tangent_is_derivative_of_force(seed):
    rng = np.random.default_rng(seed)
    dX = rng.normal(size=(8, 2))
    L0 = np.hypot(dX[:, 0], dX[:, 1]) * rng.uniform(0.8, 1.2, 8)
    u = 0.4 * rng.normal(size=(8, 4))
    EA = rng.uniform(1.0, 100.0, 8)
    K = bar.response(dX, L0, u, EA).K
    Kfd = element_jacobian(lambda v: bar.response(dX, L0, v, EA, tangent=False).f, u)
    assert np.abs(K - Kfd).max() / np.abs(K).max() < 1e-6


@settings(max_examples=40, deadline=None)
@given(angle=st.floats(-40.0, 40.0), tx=st.floats(-5, 5), ty=st.floats(-5, 5))
def test_beam_rigid_motion_gives_no_force(angle, tx, ty):
    # Objectivity: a rigid rotation by any angle (several turns included) and a
    # translation leave the corotational beam unstrained (common practice, no source).
    dX = np.array([[1.3, -0.4], [0.0, 2.0]])
    X1 = np.array([[0.2, 0.1], [-1.0, 0.5]])
    c, s = np.cos(angle), np.sin(angle)
    R = np.array([[c, -s], [s, c]])
    X2 = X1 + dX
    u1 = X1 @ R.T + [tx, ty] - X1
    u2 = X2 @ R.T + [tx, ty] - X2
    u = np.column_stack([u1, np.full(2, angle), u2, np.full(2, angle)])
    L0 = np.hypot(dX[:, 0], dX[:, 1])
    res = beam.response(dX, L0, u, np.full(2, 1e8), np.full(2, 1e3))
    # forces scale with EA·(round-off in l) ~ 1e8·1e-15; compare with a unit-strain force
    assert np.abs(res.f).max() < 1e-5
    assert np.abs(res.q[:, 1:]).max() < 1e-9


def test_beams_at_rest_have_exactly_zero_force_at_every_angle():
    # An unloaded structure must show no round-off forces at all, or the relative
    # residual of its first point (0/0 scaled) is noise (common practice, no source):
    # the kernel's chord turn is exactly zero where the chord is undeformed.
    angle = np.linspace(-np.pi, np.pi, 37)
    dX = 0.4 * np.column_stack([np.cos(angle), np.sin(angle)])
    L0 = np.hypot(dX[:, 0], dX[:, 1])
    n = len(L0)
    res = beam.response(dX, L0, np.zeros((n, 6)), np.full(n, 2e9), np.full(n, 3e5))
    assert not res.f.any() and not res.q.any()


@pytest.mark.parametrize("angle", [0.5, 3.0, 10.0])
def test_free_element_rotated_rigidly_is_unstressed(angle):
    # The named angles; bar and beam alike.
    dX, L0, ub = rigidly_turned(angle)
    rb = beam.response(dX, L0, ub, np.array([1e6]), np.array([1.0]))
    assert np.abs(rb.f).max() < 1e-8
    rr = bar.response(dX, L0, ub[:, [0, 1, 3, 4]], np.array([1e6]))
    assert np.abs(rr.f).max() < 1e-8


def test_beam_curve_passes_through_nodes_with_end_slopes():
    dX = np.array([[1.0, 0.0]])
    u = np.array([[0.0, 0.0, 0.1, -0.05, 0.2, 0.3]])
    pts = beam.curve(np.zeros((1, 2)), dX, u, n_points=201)[0]
    assert np.allclose(pts[0], [0.0, 0.0]) and np.allclose(pts[-1], [0.95, 0.2])
    slope0 = np.arctan2(*(pts[1] - pts[0])[::-1])
    slope1 = np.arctan2(*(pts[-1] - pts[-2])[::-1])
    assert abs(slope0 - 0.1) < 2e-2 and abs(slope1 - 0.3) < 2e-2


def test_beam_kernel_in_blocks_equals_one_piece(monkeypatch):
    # Large groups are evaluated in blocks written into the full outputs: the same
    # numbers bit for bit as one piece (one arithmetic per element either way).
    dX, L0, u, EA, EI = _random_beams(3, n=20)
    whole = beam.Beams(dX, L0, EA, EI).response(u)
    monkeypatch.setattr(beam, "BLOCK", 7)
    kernel = beam.Beams(dX, L0, EA, EI)
    assert len(kernel.blocks) == 3
    for tangent in (True, False):
        blocks = kernel.response(u, tangent)
        for a, b in zip(whole, blocks):
            if b is not None:
                assert np.array_equal(a, b)
