"""Stability along the path and critical points of pinned circular arches.

Reference: shallow-arch (Marguerre) theory for a pinned arch under a central point
load, as in Timoshenko & Gere 1961, *Theory of Elastic Stability*, ch. 7, solved in
Fourier series after Fung & Kaplan 1952 (NACA TN 2840, "Buckling of low arches or
curved beams of small curvature"; citation from memory), evaluated with scipy in
``largerot.closed_form.shallow_arch_central_load``. The theory neglects terms of the
order of the squared slope of the arch (rise/span ≤ 0.05 here: (πh/L)² ≤ 2.5 %
of the thrust's lever arm) and the change of the arch's length under thrust; the
32-element model adds a discretisation error below 0.1 %.
"""
import numpy as np
import pytest

import largerot as lr
from largerot.closed_form import shallow_arch_central_load
from largerot.examples import deep_arch, shallow_arch


def theory(sc):
    q = sc.parameters
    return shallow_arch_central_load(q["rise"], q["span"], q["EI"], q["EA"]) 


def mirror_parts(sc, vec):
    """Symmetric and antisymmetric parts (about mid-span) of a full DOF vector.

    Mirror x → L − x maps (ux, uy, rz) at node k to (−ux, uy, −rz) at its image.
    """
    ids = np.array(sc.parameters["node_ids"])
    v = vec.reshape(-1, 3)[ids]
    image = v[::-1] * np.array([-1.0, 1.0, -1.0])
    return 0.5 * (v + image), 0.5 * (v - image)


@pytest.fixture(scope="module")
def shallow():
    sc = shallow_arch()
    return sc, lr.trace(sc.structure, lr.by_arc_length(), **sc.trace_options)


@pytest.fixture(scope="module")
def deep():
    sc = deep_arch()
    return sc, lr.trace(sc.structure, lr.by_arc_length(), **sc.trace_options)


def test_shallow_arch_snaps_through_at_limit_point(shallow):
    sc, path = shallow
    ref = theory(sc)
    assert ref["first"] == "limit"                   # theory: no bifurcation first
    assert path.status == "stopped", path.message
    cps = path.critical_points
    assert [c.kind for c in cps] == ["limit", "limit"] and all(c.located for c in cps)
    P_lim = cps[0].load_factor * sc.parameters["load"]
    # against shallow-arch theory (module docstring): within 1 % (measured 0.25 %)
    assert P_lim == pytest.approx(ref["limit_load"], rel=1e-2)
    # the snap is symmetric: the critical mode has no antisymmetric part
    sym, anti = mirror_parts(sc, cps[0].mode)
    assert np.abs(anti).max() < 1e-6 * np.abs(sym).max()
    # and it goes through: the crown ends below the chord (the rib inverted)
    assert -path.displacement(sc.crown, "uy")[-1] > 2 * sc.parameters["rise"]


def test_stability_flags_along_snap_through(shallow):
    # Positive-definite tangent before the first limit point; one negative
    # eigenvalue on the unloading stretch between the two limit points; stable again
    # once the inverted arch stiffens (common practice, no source).
    sc, path = shallow
    first, second = path.critical_points
    assert np.all(path.stable[: first.index + 1])
    assert np.all(path.n_negative[first.index + 1: second.index + 1] >= 1)
    assert np.all(path.stable[second.index + 1:])
    # the load falls between the limit points and rises outside them
    lam = path.load_factor
    assert np.all(np.diff(lam[: first.index + 1]) > 0)
    assert np.all(np.diff(lam[first.index + 1: second.index + 1]) < 0)
    # the inertia recorded from the factorisation equals the count of negative
    # eigenvalues of the tangent rebuilt at that point (numpy eigvalsh)
    from largerot.assembly import Assembly
    asm = Assembly.of(sc.structure)
    for i in (first.index, first.index + 1, second.index + 1):
        K = asm.evaluate(path.u[i], asm.initial_states(), True).K.toarray()
        assert np.count_nonzero(np.linalg.eigvalsh(K) < 0) == path.n_negative[i]


def test_deeper_arch_bifurcates_asymmetrically_before_limit(deep):
    sc, path = deep
    ref = theory(sc)
    assert ref["first"] == "bifurcation"
    cps = path.critical_points
    assert [c.kind for c in cps] == ["bifurcation", "limit"] and all(c.located for c in cps)
    P_bif = cps[0].load_factor * sc.parameters["load"]
    P_lim = cps[1].load_factor * sc.parameters["load"]
    # against shallow-arch theory: the thrust reaches 4π²EI/L² (antisymmetric mode
    # n = 2) at P_bif; the symmetric limit point follows. rise/span = 0.05, so the
    # neglected squared slope is ≈ 2.5 %: tolerance 1.5 % (measured 0.8 % and 0.2 %)
    assert P_bif == pytest.approx(ref["bifurcation_load"], rel=1.5e-2)
    assert P_lim == pytest.approx(ref["limit_load"], rel=1.5e-2)
    assert P_bif < P_lim
    # the bifurcation mode is antisymmetric, the limit mode symmetric
    sym, anti = mirror_parts(sc, cps[0].mode)
    assert np.abs(sym).max() < 1e-6 * np.abs(anti).max()
    assert abs(cps[0].mode[3 * sc.crown + 1]) < 1e-6
    sym, anti = mirror_parts(sc, cps[1].mode)
    assert np.abs(anti).max() < 1e-6 * np.abs(sym).max()
    # on the primary (symmetric) path: stable before, ≥ 1 negative eigenvalue after
    # the bifurcation, ≥ 2 after the limit point
    i, j = cps[0].index, cps[1].index
    assert np.all(path.stable[: i + 1])
    assert np.all(path.n_negative[i + 1:] >= 1) and np.all(path.n_negative[j + 1:] >= 2)
    _, anti = mirror_parts(sc, path.u[-1])
    assert np.abs(anti).max() < 1e-8 * sc.parameters["rise"]


def test_deeper_arch_switches_to_asymmetric_branch():
    # follow="secondary": the arch leaves the symmetric path along the antisymmetric
    # mode at the bifurcation; on that branch the load falls (the asymmetric snap of
    # shallow-arch theory: H stays at 4π²EI/L² and P decreases as the crown drops).
    sc = deep_arch()
    path = lr.trace(sc.structure, lr.by_arc_length(), follow="secondary", **sc.trace_options)
    assert path.status == "stopped", path.message
    cp = path.critical_points[0]
    assert cp.kind == "bifurcation"
    after = slice(cp.index + 2, None)
    _, anti = mirror_parts(sc, path.u[-1])
    assert np.abs(anti).max() > 0.1 * sc.parameters["rise"]
    assert path.load_factor[after].max() <= cp.load_factor * (1 + 1e-6)
    assert path.load_factor[-1] < 0.9 * cp.load_factor
    assert np.all(path.n_negative[after] >= 1)            # the asymmetric branch is unstable
