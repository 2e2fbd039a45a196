"""The factorisation layer: LDLᵀ (QDLDL) against SuperLU and dense eigenvalues.

References outside the project: scipy's dense symmetric eigensolver
(``scipy.linalg.eigvalsh``) for the inertia, and the residual of the solve itself for
the backward error (common practice, no source).
"""
import numpy as np
import pytest
import scipy.linalg as sl
import scipy.sparse as sp

import largerot as lr
from largerot import examples, linalg
from largerot.assembly import Assembly
from largerot.solvers.problem import Problem

pytestmark = pytest.mark.skipif(linalg.qdldl is None, reason="qdldl not installed")


def _portal_tangent():
    """A loaded 3 × 40-element portal frame's tangent and a load vector."""
    s = lr.Structure()
    sec = lr.Section(E=210e9, A=5e-3, I=8e-5)
    a, b, c, d = s.node(0, 0), s.node(0, 4), s.node(6, 4), s.node(6, 0)
    for p, q in ((a, b), (b, c), (c, d)):
        s.beam(p, q, sec, segments=40)
    s.fix(a)
    s.fix(d)
    s.load(b, fx=50e3, fy=-200e3)
    s.load(c, fy=-200e3)
    P = Problem(Assembly.of(s))
    _, K0, _ = P.residual(np.zeros(P.n), 0.0)
    u = linalg.factor(K0).solve(P.F)
    _, K, _ = P.residual(u, 1.0)
    return K, P.F


def test_ldl_solves_like_superlu_with_a_backward_error_at_round_off():
    K, F = _portal_tangent()
    b = np.column_stack([F, np.random.default_rng(1).standard_normal(len(F))])
    ldl, lu = linalg.factor(K), linalg.LUFactorization(K)
    assert ldl.backend == "ldl" and lu.backend == "superlu"
    x, y = ldl.solve(b), lu.solve(b)
    norm_K = sp.linalg.norm(K, 1)
    for j in range(2):
        # normwise backward error ‖b − K·x‖ / (‖K‖·‖x‖ + ‖b‖) (Rigal & Gaches 1967)
        eta = np.linalg.norm(b[:, j] - K @ x[:, j], 1) / (norm_K * np.linalg.norm(x[:, j], 1)
                                                          + np.linalg.norm(b[:, j], 1))
        assert eta < 1e-12, eta                      # measured 1.8e-17, 2.0e-17
        # the two factors differ by rounding times the condition number: 7e-11 measured
        assert np.linalg.norm(x[:, j] - y[:, j]) <= 1e-8 * np.linalg.norm(y[:, j])
    np.testing.assert_array_equal(ldl.solve(b[:, 0]), x[:, 0])   # one column as several


def _inertia(K) -> int:
    return int(np.count_nonzero(sl.eigvalsh(K.toarray()) < 0.0))


def test_inertia_past_a_limit_point_equals_the_dense_eigenvalue_count():
    # the shallow arch traced by arc length through its limit point and onto the
    # unstable branch: at every point the negative entries of D, SuperLU's negative
    # pivots and the negative eigenvalues of the dense tangent agree
    sc = examples.shallow_arch(segments=16)
    path = lr.trace(sc.structure, lr.by_arc_length(), max_steps=40)
    A = Assembly.of(path.model)
    P = Problem(A)
    counts = []
    for i in range(len(path)):
        _, K, _ = P.residual(path.u[i][A.free], path.load_factor[i])
        n = _inertia(K)
        assert linalg.factor(K).n_negative == n
        assert linalg.LUFactorization(K).n_negative == n
        counts.append(n)
    assert max(counts) >= 1                          # the path did pass the limit point


def _straight_column() -> Problem:
    """A clamped-free column (EI = 1, L = 1, EA = 1e3) in 20 elements, unit axial load."""
    s = lr.Structure()
    sec = lr.Section(E=1.0, A=1e3, I=1.0)
    base, top = s.node(0, 0), s.node(0, 1)
    s.beam(base, top, sec, segments=20)
    s.fix(base)
    s.load(top, fy=-1.0)
    return Problem(Assembly.of(s))


def test_inertia_past_two_bifurcations_of_a_straight_column():
    # a straight clamped-free column under an axial load P: the trivial path's tangent
    # has one negative eigenvalue for π²EI/4L² < P < 9π²EI/4L² and two above it
    # (Timoshenko & Gere 1961, §2.1); the discrete 20-element column within 0.1 %
    P = _straight_column()
    pcr = np.pi**2 / 4
    for lam, expected in ((0.5 * pcr, 0), (1.5 * pcr, 1), (5 * pcr, 1), (12 * pcr, 2)):
        _, K0, _ = P.residual(np.zeros(P.n), 0.0)
        u = lam * linalg.factor(K0).solve(P.F)          # straight: axial shortening only
        _, K, _ = P.residual(u, lam)
        assert _inertia(K) == expected
        assert linalg.factor(K).n_negative == expected
        assert linalg.LUFactorization(K).n_negative == expected


def test_interleaved_factorisations_of_one_pattern_keep_their_own_numbers():
    K, F = _portal_tangent()
    K2 = (K + sp.diags(0.5 * K.diagonal())).tocsc()          # same pattern, other numbers
    f1 = linalg.factor(K)
    f2 = linalg.factor(K2)
    assert f1._symbolic is f2._symbolic
    x1 = f1.solve(F)                                  # refactors K's numbers first
    x2 = f2.solve(F)
    np.testing.assert_allclose(K @ x1, F, rtol=0, atol=1e-6 * np.abs(F).max())
    np.testing.assert_allclose(K2 @ x2, F, rtol=0, atol=1e-6 * np.abs(F).max())


def test_superlu_stands_in_without_qdldl_and_for_non_symmetric_tangents(monkeypatch):
    K, F = _portal_tangent()
    assert linalg.factor(K, symmetric=False).backend == "superlu"
    monkeypatch.setattr(linalg, "qdldl", None)
    assert linalg.factor(K).backend == "superlu"
    # a whole trace with the stand-in finds the same limit point
    sc = examples.shallow_arch(segments=16)
    lam_lu = lr.trace(sc.structure, lr.by_arc_length(), max_steps=40).critical_points[0].load_factor
    monkeypatch.undo()
    lam_ldl = lr.trace(sc.structure, lr.by_arc_length(), max_steps=40).critical_points[0].load_factor
    assert lam_lu == pytest.approx(lam_ldl, rel=1e-8)


def test_a_singular_matrix_of_a_known_pattern_is_refused():
    # QDLDL's numeric update reports no failure by itself: a matrix of a pattern
    # already analysed, with one DOF's row and column zeroed (pattern kept), must
    # still be refused, not solved with the previous matrix's numbers
    K, F = _portal_tangent()
    linalg.factor(K).solve(F)
    Ks = K.copy()
    j = 7
    cols = np.repeat(np.arange(K.shape[0]), np.diff(K.indptr))
    Ks.data[(Ks.indices == j) | (cols == j)] = 0.0
    with pytest.raises(linalg.SingularTangent):
        linalg.factor(Ks)
    np.testing.assert_allclose(K @ linalg.factor(K).solve(F), F, atol=1e-6 * abs(F).max())


def test_a_shifted_tangent_keeps_the_pattern_and_its_analysis():
    K, F = _portal_tangent()
    w = np.linspace(1.0, 2.0, K.shape[0])
    Ks = linalg.shifted(K, w)
    # (K + w) − K in floating point: exact up to the rounding of K's diagonal
    np.testing.assert_allclose((Ks - K).diagonal(), w, rtol=0, atol=4 * np.finfo(float).eps * abs(K.diagonal()).max())
    assert Ks.nnz == K.nnz
    assert linalg.factor(Ks)._symbolic is linalg.factor(K)._symbolic


@pytest.mark.parametrize("j", [0, 1, 2])
def test_the_eigenpair_of_a_large_tangent_matches_the_dense_one(monkeypatch, j):
    # the straight column of the bifurcation test at 12·Pcr (two negative eigenvalues):
    # eigenpair j by shift-invert about zero, as for a large model, against LAPACK's
    # dense symmetric eigensolver (scipy.linalg.eigh)
    from largerot.solvers import stability
    P = _straight_column()
    lam = 12 * np.pi**2 / 4
    _, K0, _ = P.residual(np.zeros(P.n), 0.0)
    _, K, _ = P.residual(lam * linalg.factor(K0).solve(P.F), lam)
    w, v = sl.eigh(K.toarray())
    monkeypatch.setattr(stability, "DENSE_MAX", 0)
    mu, phi = stability.eigenpair(K, j)
    assert mu == pytest.approx(w[j], rel=1e-8, abs=1e-10 * abs(w).max())
    assert abs(phi @ v[:, j]) == pytest.approx(1.0, abs=1e-8)


@pytest.mark.parametrize("block", [1, 3, 64, 1 << 16])
def test_scaled_norm_is_the_one_norm_of_the_diagonally_scaled_matrix(monkeypatch, block):
    """``scaled_norm`` against its definition computed densely, ‖D^-½·|K|·D^-½‖₁ with
    D = |diag K| and a zero diagonal counted as one; blocks of 1 entry (every column
    longer than a block), 3 and 64 entries and one block for the whole matrix, on a
    random symmetric pattern with empty columns and zero diagonals."""
    monkeypatch.setattr(linalg, "NORM_BLOCK", block)
    rng = np.random.default_rng(7)
    A = sp.random(60, 60, density=0.08, random_state=rng, format="csc")
    A = (A + A.T).tolil()
    A[5, :] = 0.0
    A[:, 5] = 0.0                      # an empty column
    A[9, 9] = 0.0                      # a zero diagonal among entries
    A[11, 11] = -3.0                   # a negative diagonal
    K = sp.csc_matrix(A)
    K.eliminate_zeros()
    dense = K.toarray()
    d = np.abs(np.diag(dense))
    w = 1.0 / np.sqrt(np.where(d > 0, d, 1.0))
    expected = np.abs(w[:, None] * dense * w[None, :]).sum(axis=0).max()
    assert linalg.scaled_norm(K) == pytest.approx(expected, rel=1e-14)
