"""Linear buckling, imperfections, bifurcation on the perfect path and branch switching.

References: Euler's column loads π²EI/(4L²) (cantilever) and π²EI/L² (pinned-pinned)
with their modes 1 − cos(πy/2L) and sin(πy/L), the amplification 1/(1 − P/P_cr) of
an initial crookedness in the first mode, and the post-buckled elastica of the
cantilever in complete elliptic integrals (Timoshenko & Gere 1961, *Theory of
Elastic Stability*, ch. 1 and §2.7; ``largerot.closed_form.elastica_postbuckling``).
"""
import numpy as np
import pytest
from scipy.optimize import brentq

import largerot as lr
from largerot.assembly import Assembly
from largerot.closed_form import elastica_postbuckling
from largerot.examples import column


@pytest.mark.parametrize("kind, orders", [("cantilever", [1, 3, 5]), ("pinned", [1, 2, 3])])
def test_linear_buckling_matches_euler(kind, orders):
    # Euler (Timoshenko & Gere 1961, ch. 2): P_n = (n π/2)²EI/L² for the cantilever
    # (n odd), (n π)²EI/L² pinned. The reference load is the first Euler load, so
    # λ_n = n². 10 cubic elements with the consistent geometric stiffness: the first
    # load within 0.1 % (the requirement; measured ~1e-6), the third within 0.5 %.
    sc = column(kind, segments=10)
    res = lr.buckling(sc.structure, modes=3)
    assert len(res) == 3 and np.all(np.diff(res.load_factors) > 0)
    n2 = np.array(orders, float) ** 2
    assert res.load_factors[0] == pytest.approx(1.0, rel=1e-3)
    assert np.allclose(res.load_factors, n2, rtol=5e-3)
    # mode shapes at the nodes: on a uniform mesh the eigenvectors are the sampled
    # Euler modes (the discrete system is Toeplitz), so they agree to round-off
    ids = np.array(sc.parameters["node_ids"])
    y = sc.structure.xy[ids, 1] / sc.parameters["length"]
    ux = res.modes[0][3 * ids]
    exact = 1.0 - np.cos(0.5 * np.pi * y) if kind == "cantilever" else np.sin(np.pi * y)
    assert np.abs(ux / ux[np.argmax(np.abs(ux))] - exact).max() < 1e-6
    translations = res.modes[0].reshape(-1, 3)[:, :2]
    assert translations.max() == pytest.approx(1.0) and translations.min() > -1.0


def test_imperfect_gives_new_structure_and_euler_amplification():
    sc = column("pinned", segments=20)
    s = sc.structure
    before = s.xy.copy()
    res = lr.buckling(s, modes=1)
    a0 = sc.parameters["length"] / 1000.0
    crooked = res.perturbed(0, a0)
    assert crooked is not s and np.array_equal(s.xy, before)
    moved = np.hypot(*(crooked.xy - before).T)
    assert moved.max() == pytest.approx(a0, rel=1e-12)
    assert moved[sc.mid] == pytest.approx(a0, rel=1e-12)     # the first mode peaks at mid-height
    assert np.array_equal(crooked.fixed_dofs(), s.fixed_dofs())
    assert np.array_equal(crooked.load_vector(), s.load_vector())
    # the original still traces as a perfect column, unaffected by the copy
    straight = lr.trace(s, lr.by_load(0.25), target_load_factor=0.5)
    assert np.abs(straight.displacement(sc.mid, "ux")).max() == 0.0
    # Crooked bar (Timoshenko & Gere 1961, ch. 1): a first-mode crookedness a0 grows
    # by a0·(P/P_cr)/(1 − P/P_cr), i.e. by a0 at P = P_cr/2. 20 elements: the
    # discretisation error (h², measured 1.7 % / 0.5 % / 0.2 % at 10 / 20 / 40) stays below 1 %.
    path = lr.trace(crooked, lr.by_load(0.25), target_load_factor=0.5)
    grown = path.displacement(sc.mid, "ux")[-1]
    assert grown == pytest.approx(a0, rel=1e-2)


def test_imperfection_errors():
    sc = column("pinned")
    res = lr.buckling(sc.structure, modes=1)
    with pytest.raises(lr.ModelError, match="Mode index 3 out of range: 1 modes were computed"):
        res.perturbed(3, 0.01)
    with pytest.raises(ValueError, match=r"`mode` must be a full DOF vector of shape \(33,\)"):
        lr.imperfect(sc.structure, np.ones(5), 0.01)
    with pytest.raises(ValueError, match="`amplitude` must be finite, got inf"):
        lr.imperfect(sc.structure, res.modes[0], np.inf)
    with pytest.raises(ValueError, match="`modes` must be a positive integer, got 0"):
        lr.buckling(sc.structure, modes=0)
    unloaded = lr.Structure()
    a, b = unloaded.node(0, 0), unloaded.node(0, 1)
    unloaded.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0))
    unloaded.fix(a)
    with pytest.raises(lr.ModelError, match="needs a reference load"):
        lr.buckling(unloaded)


def singular_load_factor(sc, lo, hi):
    """λ at which the tangent of the straight, uniformly shortened column is singular.

    On the perfect path every element shortens by P/EA of its length (nodes move by
    −λ·P_ref·y/EA); scipy's brentq finds the zero of the lowest eigenvalue there.
    """
    asm = Assembly.of(sc.structure)
    y = sc.structure.xy[:, 1]
    strain = sc.parameters["euler_load"] / sc.parameters["EA"]

    def lowest(lam):
        u = np.zeros(3 * sc.structure.n_nodes)
        u[1::3] = -lam * strain * y
        K = asm.evaluate(u, asm.initial_states(), True).K
        return np.linalg.eigvalsh(K.toarray())[0]

    return brentq(lowest, lo, hi, xtol=1e-14)


@pytest.mark.parametrize("kind, k", [("cantilever", 0.5), ("pinned", 1.0)])
def test_bifurcation_found_on_perfect_path(kind, k):
    sc = column(kind, segments=10)
    path = lr.trace(sc.structure, lr.by_arc_length(), **sc.trace_options)
    cps = path.critical_points
    assert [c.kind for c in cps] == ["bifurcation"] and cps[0].located
    assert cps[0].load_cosine < 1e-9                   # mode orthogonal to the load
    lam = cps[0].load_factor
    # located to 1e-6 against the singular point of the same discrete tangent on the
    # exactly known straight path (brentq to 1e-14): the accuracy of the search
    assert lam == pytest.approx(singular_load_factor(sc, 0.9, 1.1), rel=1e-6)
    # against Euler (Timoshenko & Gere 1961): the corotational tangent's geometric
    # stiffness is the chord term N/l, whose error for a sine of wavenumber kπ/L on
    # elements h is ≈ (kπh/L)²/12 (0.2 % cantilever, 0.8 % pinned at 10 elements)
    h = sc.parameters["length"] / 10
    est = (k * np.pi * h / sc.parameters["length"]) ** 2 / 12
    assert 0.0 < lam - 1.0 < 1.5 * est
    # the critical mode is the Euler mode: lateral, sampled 1 − cos or sin
    ids = np.array(sc.parameters["node_ids"])
    y = sc.structure.xy[ids, 1] / sc.parameters["length"]
    ux = cps[0].mode[3 * ids]
    exact = 1.0 - np.cos(0.5 * np.pi * y) if kind == "cantilever" else np.sin(np.pi * y)
    assert np.abs(ux / ux[np.argmax(np.abs(ux))] - exact).max() < 1e-3
    # stability: stable up to the bifurcation, one negative eigenvalue beyond on the
    # primary (straight) path
    i = cps[0].index
    assert np.all(path.stable[: i + 1]) and np.all(path.n_negative[i + 1:] >= 1)
    assert np.abs(path.displacement(sc.tip, "ux")).max() < 1e-9 * sc.parameters["length"]


@pytest.mark.parametrize("sign", [1, -1])
def test_branch_switch_onto_postbuckled_elastica(sign):
    # Post-buckled cantilever (Timoshenko & Gere 1961, §2.7): at tip slope α,
    # P/P_cr = (2K(p)/π)², δ/L = 2p/K(p), drop/L = 2 − 2E(p)/K(p), p = sin(α/2).
    # 10 elements: the FE bifurcation is 0.2 % above Euler (test above) and the
    # curve follows it; tolerance 1 % on the load ratio at the traced tip slope,
    # and 1 % of L on the deflections (α > 0.3 rad, where they are not tiny).
    sc = column("cantilever", segments=10)
    L = sc.parameters["length"]
    path = lr.trace(sc.structure, lr.by_arc_length(branch_sign=sign), follow="secondary",
                    **sc.trace_options)
    assert path.status == "stopped", path.message
    assert [c.kind for c in path.critical_points] == ["bifurcation"]
    i0 = path.critical_points[0].index + 1
    alpha = -path.displacement(sc.tip, "rz")
    lateral = path.displacement(sc.tip, "ux") / L
    drop = -path.displacement(sc.tip, "uy") / L
    assert np.all(sign * lateral[i0 + 1:] > 0) and abs(alpha).max() > 1.5  # far up the branch
    checked = 0
    for i in range(i0 + 1, len(path)):
        ratio, lat, dr = elastica_postbuckling(abs(alpha[i]))
        assert path.load_factor[i] == pytest.approx(ratio, rel=1e-2)
        if abs(alpha[i]) > 0.3:
            assert abs(lateral[i]) == pytest.approx(lat, abs=1e-2)
            assert drop[i] == pytest.approx(dr, abs=1e-2)
            checked += 1
    assert checked >= 10
    # the post-buckled elastica of the cantilever is stable (Timoshenko & Gere 1961)
    assert np.all(path.stable)


def test_elastica_postbuckling_reference_against_ode():
    # Sanity of the reference itself: the elastica ODE EI·θ'' + P·sin θ = 0 (θ from
    # the vertical; θ(0) = 0 at the clamp, θ'(L) = 0 at the free top), shot from the
    # tip with scipy.integrate.solve_ivp and P found by brentq, must give the same
    # load and tip deflections as the elliptic integrals (to the ODE tolerance).
    from scipy.integrate import solve_ivp
    assert elastica_postbuckling(0.0)[:2] == (1.0, 0.0)
    EI, L = 1.0, 1.0
    P_cr = np.pi**2 * EI / (4 * L**2)
    for alpha in (0.5, np.radians(120), 2.5):
        def shoot(P):
            f = lambda s, y: [y[1], -P / EI * np.sin(y[0]), np.sin(y[0]), np.cos(y[0])]
            return solve_ivp(f, (L, 0.0), [alpha, 0.0, 0.0, 0.0], rtol=1e-12, atol=1e-12)
        ratio, lat, drop = elastica_postbuckling(alpha)
        # bracket ±10 % about the reference: the fundamental branch only
        P = brentq(lambda P: shoot(P).y[0, -1], 0.9 * ratio * P_cr, 1.1 * ratio * P_cr, xtol=1e-13)
        end = shoot(P).y[:, -1]                 # integrals from the tip down to the base
        assert P / P_cr == pytest.approx(ratio, rel=1e-8)
        assert -end[2] / L == pytest.approx(lat, rel=1e-8)
        assert 1.0 + end[3] / L == pytest.approx(drop, rel=1e-7)
