"""Fine meshes need no cut steps: the predictor keeps the beams' chords whole."""
import numpy as np
import pytest

import largerot as lr
from largerot import closed_form as cf
from largerot import demo
from largerot.solvers.predictor import chord_consistent

ALPHA = 2.4                      # P·L²/EI of the tip load
L = 8.0                          # the demo pole's height


def _pole(segments):
    EI = lr.Section.tube(E=25e9, diameter=0.12, wall=0.006).EI
    return demo.lighting_pole(segments=segments, tip_load=ALPHA * EI / L**2)


def _elastica_error(path, top):
    # Bisshopp & Drucker 1945 (closed_form.elastica_tip_load): tip deflection along
    # the load of the inextensible elastica at P·L²/EI = α·λ, at every loaded point
    lam, ux = path.load_factor[1:], path.displacement(top, "ux")[1:]
    ref = np.array([cf.elastica_tip_load(ALPHA * x)[0] * L for x in lam])
    return float(np.max(np.abs(ux / ref - 1.0)))


def test_10k_element_pole_by_load_takes_its_8_steps_uncut():
    s, _, top = _pole(10_000)
    path = lr.trace(s, lr.by_load(1.0 / 8), target_load_factor=1.0)
    assert path.status == "target"
    # the goal of the fine-mesh item: 8 load steps, no cut, ≤ 5 Newton iterations per
    # point (measured: 2–3 with the chord fit in predictor and corrections; 3–5 with
    # the predictor's alone; before either, 65 points, 5 cuts, 7.5 per point)
    assert len(path) == 9 and path.counters["step_cuts"] == 0
    assert max(path.iterations[1:]) <= 5
    # measured 5.8e-5: tube EA/EI makes the pole extensible by P/EA ≈ 6e-5 of the
    # elastica's inextensible answer; 2e-4 leaves room for the residual floor
    assert _elastica_error(path, top) < 2e-4


def test_10k_element_pole_by_displacement_uncut():
    s, _, top = _pole(10_000)
    travel = cf.elastica_tip_load(ALPHA)[0] * L
    path = lr.trace(s, lr.by_displacement(top, "ux", travel / 8), target_load_factor=1.0)
    assert path.status == "target"
    # measured 3 iterations per point (one 4), no cut; before 63 points, 5 cuts
    assert path.counters["step_cuts"] == 0 and len(path) <= 11
    assert max(path.iterations[1:]) <= 5
    assert _elastica_error(path, top) < 2e-4          # measured 5.8e-5 (as above)


def test_10k_element_steel_strip_by_load_takes_its_8_steps_uncut():
    # A 10 m flat steel bar (50 × 10 mm: slenderness L/r = 3,460) in 10,000 elements,
    # tip load to P·L²/EI = 2.4 in 8 load steps: no cut, ≤ 5 iterations per point
    # (measured 3–4; without the chord fit in Newton's corrections 8–13 and a cut),
    # against the elastica (Bisshopp & Drucker 1945): measured 1.9e-7 (the strip is
    # nearly inextensible; EA/EI·L² = 1.2e7), tolerance 1e-5.
    sec = lr.Section.rectangle(E=210e9, width=0.05, depth=0.01)
    Ls = 10.0
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, Ls)
    s.beam(a, b, sec, segments=10_000)
    s.fix(a)
    s.load(b, fx=ALPHA * sec.EI / Ls**2)
    path = lr.trace(s, lr.by_load(1.0 / 8), target_load_factor=1.0)
    assert path.status == "target" and len(path) == 9 and path.counters["step_cuts"] == 0
    assert max(path.iterations[1:]) <= 5
    ref = cf.elastica_tip_load(ALPHA)[0] * Ls
    assert path.displacement(b, "ux")[-1] == pytest.approx(ref, rel=1e-5)


@pytest.mark.parametrize("phi", [0.05, 0.5, 1.5])
def test_predictor_turns_a_rigidly_rotated_cantilever_without_stretching_it(phi):
    # The tangent increment of a rigid rotation by φ about the clamp moves each node
    # by φ·(−y, x): chords turn by φ and keep their length to first order. The chord
    # fit must give the exact rotated positions (x, y) → (x cos φ − y sin φ, ...)
    # (plane geometry, common practice, no source); the tangent increment itself
    # stretches each chord by (√(1 + φ²) − 1) of its length.
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(3.0, 4.0)
    s.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0), segments=20)
    s.fix(a)
    asm = s.snapshot().assembly
    xy = asm.xy
    du = np.zeros(asm.n_dof)
    du[0::3], du[1::3], du[2::3] = -phi * xy[:, 1], phi * xy[:, 0], phi
    u = chord_consistent(asm, np.zeros(asm.n_free), du[asm.free])
    U = asm.expand(u)
    c, sn = np.cos(phi), np.sin(phi)
    exact = np.column_stack([c * xy[:, 0] - sn * xy[:, 1], sn * xy[:, 0] + c * xy[:, 1]]) - xy
    # the fit's tie to the tangent predictor (ANCHOR = 1e-12 of a chord's weight) moves it
    # by about ANCHOR·n² of the misfit (∝ φ²): measured 7e-13, 8e-11, 7.5e-10 m for
    # φ = 0.05, 0.5, 1.5 on a 5 m member
    err = np.abs(U.reshape(-1, 3)[:, :2] - exact).max()
    assert err < 3e-9
    assert np.allclose(U[2::3][1:], phi)                   # rotations keep the increment


def test_dense_chord_fit_of_small_models_equals_the_sparse_one():
    # The same least-squares fit two ways (the dense product below DENSE_FIT_MAX
    # translations, the sparse solve above): equal to round-off of the fit itself.
    from largerot.solvers import predictor
    s, base, top = _pole(40)
    A = s.snapshot().assembly
    rng = np.random.default_rng(3)
    u0 = 1e-2 * rng.standard_normal(A.n_free)
    u1 = u0 + 1e-2 * rng.standard_normal(A.n_free)
    fit = predictor.chord_fit(A)
    assert fit.dense is not None                       # 80 translations: the dense path
    dense = chord_consistent(A, u0, u1)
    A.__dict__["_chord_fit"] = predictor.ChordFit(A, dense=False)   # the sparse solve
    assert A.__dict__["_chord_fit"].lu is not None
    sparse = chord_consistent(A, u0, u1)
    assert np.abs(dense - sparse).max() <= 1e-12 * np.abs(u1 - u0).max()
    assert np.abs(dense - u1).max() > 1e-6 * np.abs(u1 - u0).max()   # the fit did act
