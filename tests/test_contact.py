"""Frictionless node-to-obstacle contact: gaps, tangents, augmented-Lagrangian solution.

The small solver below (Newton on nodes tied by isotropic springs, with Uzawa
multiplier updates at converged points) stands in for the path stepper; it uses the
kernel exactly as the stepper will.
"""
import numpy as np
import pytest
from scipy.optimize import brentq

from largerot.elements import contact
from largerot.elements.contact import Circle, Line
from largerot.errors import ModelError

OBSTACLES = [Line(point=(0.0, 0.0), normal=(0.0, 2.0)),          # ground, normal normalised
             Circle(centre=(2.0, 0.0), radius=0.5),               # round stop
             Line(point=(5.0, 0.0), normal=(1.0, 1.0))]           # inclined wall


def _fd(fun, x, h):
    cols = []
    for j in range(2):
        e = np.zeros(2)
        e[j] = h
        cols.append((fun(x + e) - fun(x - e)) / (2 * h))
    return np.stack(cols, axis=-1)


def test_gap_is_signed_distance_with_its_derivatives():
    # Gap = signed distance to the line / circle (common practice, no source); its
    # gradient and curvature against central differences (h = 1e-6 on unit sizes:
    # truncation ~1e-12, round-off ~1e-10).
    rng = np.random.default_rng(0)
    idx = np.repeat([0, 1, 2], 5)
    obs = contact.table(OBSTACLES, idx)
    x = obs.point + rng.uniform(-1.5, 1.5, (15, 2))
    gp = contact.gap(obs, x)
    ref = np.where(idx == 0, x[:, 1],
                   np.where(idx == 1, np.hypot(x[:, 0] - 2.0, x[:, 1]) - 0.5,
                            ((x[:, 0] - 5.0) + x[:, 1]) / np.sqrt(2.0)))
    assert np.allclose(gp.g, ref, atol=1e-14)
    for i in range(15):
        one = contact.table(OBSTACLES, idx[i:i + 1])
        g_fd = _fd(lambda y: contact.gap(one, y[None]).g[0], x[i], 1e-6)
        n_fd = _fd(lambda y: contact.gap(one, y[None]).n[0], x[i], 1e-6)
        assert np.allclose(gp.n[i], g_fd, atol=1e-8)
        assert np.allclose(gp.H[i], n_fd, atol=1e-8)


@pytest.mark.parametrize("seed", range(3))
def test_contact_tangent_is_derivative_of_force(seed):
    # K = ∂f/∂u for active contacts on lines and circles, committed multipliers > 0,
    # nodes penetrating or slightly apart but still active (λ − ε·g > 0) (common
    # practice, no source). Central differences h = 1e-7 on unit sizes with ε = 1e3:
    # force piecewise smooth, error ~1e-9 relative.
    rng = np.random.default_rng(seed)
    idx = np.tile([0, 1, 2], 4)
    obs = contact.table(OBSTACLES, idx)
    nrm = contact.gap(obs, obs.point + rng.normal(size=(12, 2))).n
    base = np.where(idx[:, None] == 1, obs.point + 0.5 * nrm, obs.point)     # a point on the obstacle
    tang = np.column_stack([-nrm[:, 1], nrm[:, 0]])
    X = base + rng.uniform(-1, 1, 12)[:, None] * 0.3 * tang * (idx != 1)[:, None] \
        + rng.uniform(-2e-3, 1e-3, 12)[:, None] * nrm
    u = np.zeros_like(X)
    lam = rng.uniform(0.5, 2.0, 12)
    eps = 1e3
    res = contact.response(X, u, obs, lam, eps)
    assert res.active.all() and (res.g > 0).any() and (res.g < 0).any()
    cols = []
    for j in range(2):
        du = np.zeros_like(u)
        du[:, j] = 1e-7
        fp = contact.response(X, u + du, obs, lam, eps, tangent=False).f
        fm = contact.response(X, u - du, obs, lam, eps, tangent=False).f
        cols.append((fp - fm) / 2e-7)
    Kfd = np.stack(cols, axis=-1)
    assert np.abs(res.K - Kfd).max() / np.abs(res.K).max() < 1e-7
    assert np.allclose(res.K, np.swapaxes(res.K, 1, 2))          # from a potential
    assert np.allclose(res.f, -res.p[:, None] * res.n)


def test_open_contact_has_no_force_or_stiffness():
    obs = contact.table(OBSTACLES, [0, 1])
    X = np.array([[0.0, 0.2], [2.0, 0.9]])
    res = contact.response(X, np.zeros((2, 2)), obs, np.zeros(2), 1e6)
    assert not res.active.any() and np.all(res.f == 0.0) and np.all(res.K == 0.0)
    assert np.allclose(res.g, [0.2, 0.4])


def _solve(X, obs, T, k, lam, tol_gap):
    """Nodes on springs k toward targets T, against the obstacles: Newton + Uzawa.

    Returns the displacements, the last contact response, the multipliers to commit
    and the number of multiplier updates.
    """
    eps = contact.penalty_from_stiffness(np.full(len(X), k))
    u = T - X
    for updates in range(contact.MAX_UPDATES):
        for _ in range(50):
            res = contact.response(X, u, obs, lam, eps)
            r = k * (X + u - T) + res.f
            if np.abs(r).max() <= 1e-12 * k:
                break
            u = u - np.linalg.solve(k * np.eye(2) + res.K, r[:, :, None])[:, :, 0]
        else:
            raise AssertionError("Newton did not converge")
        if contact.converged(res, tol_gap):
            return u, res, contact.updated_multipliers(res), updates, eps
        lam = contact.updated_multipliers(res)
    raise AssertionError("Uzawa updates did not converge")


def test_augmented_lagrangian_reaches_exact_contact():
    # A node on an isotropic spring k pulled toward a target T inside an obstacle ends
    # at the nearest admissible point (the projection of T: minimum of
    # k/2·|x − T|² over the free side; common practice, no source), with contact force
    # k·|x − T|. Tolerance: penetration ≤ GAP_TOL·L (L = 1), so positions within
    # 1e-8 and forces within k·1e-8; Uzawa needs ≤ 3 updates (each divides the
    # penetration by ε/k ≈ 1000).
    idx = np.array([0, 1, 2, 1])
    obs = contact.table(OBSTACLES, idx)
    X = np.array([[0.0, 0.1], [2.2, 0.8], [6.0, 1.0], [1.0, 1.0]])
    T = np.array([[0.3, -0.2], [2.1, 0.1], [5.2, -0.4], [1.2, 0.9]])   # last one is outside
    k = 1e4
    tol = contact.GAP_TOL * 1.0
    u, res, lam, updates, _ = _solve(X, obs, T, k, np.zeros(4), tol)
    c, R = np.array([2.0, 0.0]), 0.5
    n3 = np.array([1.0, 1.0]) / np.sqrt(2)
    g3 = n3 @ (T[2] - [5.0, 0.0])
    x_ref = np.array([[0.3, 0.0], c + R * (T[1] - c) / np.linalg.norm(T[1] - c),
                      T[2] - g3 * n3, T[3]])
    p_ref = k * np.linalg.norm(x_ref - T, axis=1)
    assert np.abs(X + u - x_ref).max() < 2 * tol
    assert np.abs(res.p - p_ref).max() < 2 * k * tol
    assert res.g.min() >= -tol
    assert res.p[3] == 0.0 and lam[3] == 0.0 and not res.active[3]
    assert updates <= 3


def test_contact_closes_and_opens_as_events_along_a_load_path():
    # Load path: target T(λ) = X + λ·(0.1, −0.3) against the ground from height 0.15,
    # out to λ = 1 and back. The event g − p/ε changes sign exactly where the target
    # crosses the ground, λc = 0.5 (the spring statics; common practice, no source);
    # located by brentq to within the gap tolerance (over the target's speed 0.3).
    # On the way back the contact opens again: zero force, zero multiplier, and the
    # node at its free position.
    obs = contact.table(OBSTACLES, [0])
    X = np.array([[0.0, 0.15]])
    dT = np.array([[0.1, -0.3]])
    k, tol = 1e3, contact.GAP_TOL
    lams = np.concatenate([np.linspace(0, 1, 8), np.linspace(1, 0, 8)[1:]])   # λc between points
    lam_c = np.zeros(1)                  # committed multipliers
    values, forces, heights = [], [], []
    for lam in lams:
        u, res, lam_c, _, eps = _solve(X, obs, X + lam * dT, k, lam_c, tol)
        values.append(contact.event_value(res, eps)[0])
        forces.append(res.p[0])
        heights.append(X[0, 1] + u[0, 1])
    values, forces, heights = map(np.array, (values, forces, heights))
    # closed points touch the ground, on unloading too (where the committed multiplier
    # is larger than needed and would hold the node off without the updates)
    assert np.abs(heights[forces > 0]).max() <= 2 * tol
    assert np.all(heights[forces == 0] > 0)
    flips = np.flatnonzero(np.sign(values[1:]) != np.sign(values[:-1]))
    assert len(flips) == 2                                    # one closing, one opening
    assert values[flips[0]] > 0 > values[flips[0] + 1]        # closing on loading
    assert values[flips[1]] < 0 < values[flips[1] + 1]        # opening on unloading

    def event(lam):
        _, r, _, _, e = _solve(X, obs, X + lam * dT, k, np.zeros(1), tol)
        return contact.event_value(r, e)[0]

    for i in flips:
        root = brentq(event, lams[i], lams[i + 1], xtol=1e-12)
        assert root == pytest.approx(0.5, abs=2 * tol / 0.3)
    assert forces[7] == pytest.approx(k * 0.15, rel=1e-6)       # λ = 1: T is 0.15 deep
    assert forces[-1] == 0.0 and lam_c[0] == 0.0
    assert np.allclose(u, lams[-1] * dT)


def test_obstacles_reject_bad_input():
    with pytest.raises(ModelError, match="`normal` must be non-zero"):
        Line(point=(0, 0), normal=(0, 0))
    with pytest.raises(ModelError, match="`radius` must be a finite positive number, got -1"):
        Circle(centre=(0, 0), radius=-1)
    with pytest.raises(ModelError, match="indices must lie in 0..2, got"):
        contact.table(OBSTACLES, [3])
    with pytest.raises(ModelError, match="`k_node` at contact nodes must be positive"):
        contact.penalty_from_stiffness([1.0, 0.0])
