"""The assembly's sparse pattern against scipy's own COO → CSC conversion.

``Assembly`` builds the CSC pattern of the tangent from node pairs and records, for
every element-matrix entry, its slot in the data array (``sparse_pattern``). The
reference is scipy.sparse: a COO matrix of the same entries (rows and columns of
the free DOFs) converted to CSC, duplicates summed and indices sorted (the
canonical form, scipy.sparse documentation, ``coo_matrix.tocsc``). Weights are
small integers, so both sums are exact and compared with ==.
"""
import numpy as np
import pytest
import scipy.sparse as sp

import largerot as lr
from largerot.assembly import sparse_pattern
from largerot.elements.contact import Line

from helpers import two_bar_truss


def _mixed():
    """Beams, bars, a cable, springs, a contact, nodal and line followers, partial supports."""
    s = lr.Structure()
    sec = lr.Section(E=1.0, A=1.0, I=1.0)
    a, b, c, d, e = (s.node(x, y) for x, y in [(0, 0), (1, 0), (2, 1), (3, 0), (1, 2)])
    s.beam(a, b, sec, segments=3)
    s.bar(b, c, sec)
    s.bar(c, d, sec, segments=2)
    m = s.beam(b, e, sec, segments=2)
    s.cable(e, c, sec)
    s.fix(a)
    s.fix(d, "ux", "uy")
    s.fix(b, "uy")
    s.spring(c, "ux", 3.0)
    s.spring(e, "rz", 2.0)
    s.load(e, fx=1.0, follower=True)
    s.load(b, fy=1.0, follower=True, constant=True)
    s.line_load(m, normal=1.0)
    s.line_load(s.members[2], tangential=1.0, constant=True)
    s.contact(m.nodes[1:], Line((0.0, -1.0), (1.0, 0.0)))
    return s


def _lattice():
    s = lr.Structure()
    sec = lr.Section(E=1.0, A=1.0, I=1.0)
    grid = [[s.node(i, j) for i in range(4)] for j in range(4)]
    for j in range(4):
        for i in range(3):
            s.beam(grid[j][i], grid[j][i + 1], sec, segments=3)
            s.beam(grid[i][j], grid[i + 1][j], sec, segments=2)
    for i in range(3):
        s.bar(grid[i][i], grid[i + 1][i + 1], sec)
    for n in grid[0]:
        s.fix(n)
    return s


def _reference(dofmaps, free_index, weights):
    """CSC over the free DOFs by scipy, from the same element entries and weights."""
    n_free = int((free_index >= 0).sum())
    rows, cols, w = [], [], []
    for dm, we in zip(dofmaps, weights):
        fi = free_index[dm]
        k = dm.shape[1]
        r = np.repeat(fi, k, axis=1).ravel()             # entry [e, i, j]: row DOF i
        c = np.tile(fi, (1, k)).ravel()                   # column DOF j
        keep = (r >= 0) & (c >= 0)
        rows.append(r[keep])
        cols.append(c[keep])
        w.append(we[keep])
    K = sp.coo_matrix((np.concatenate(w), (np.concatenate(rows), np.concatenate(cols))),
                      shape=(n_free, n_free)).tocsc()
    K.sum_duplicates()
    K.sort_indices()
    return K


def _check(dofmaps, free_index, seed=0):
    rng = np.random.default_rng(seed)
    indptr, indices, positions = sparse_pattern(dofmaps, free_index)
    weights = [rng.integers(1, 5, dm.shape[0] * dm.shape[1] ** 2).astype(float) for dm in dofmaps]
    ref = _reference(dofmaps, free_index, weights)
    nnz = len(indices)
    assert indptr.dtype == np.int32 and indices.dtype == np.int32
    np.testing.assert_array_equal(indptr, ref.indptr)
    np.testing.assert_array_equal(indices, ref.indices)
    data = np.zeros(nnz + 1)
    for pos, w in zip(positions, weights):
        assert pos.dtype == np.int32 and pos.shape == w.shape    # the CSC index type
        data += np.bincount(pos, weights=w, minlength=nnz + 1)
    np.testing.assert_array_equal(data[:nnz], ref.data)
    # the dump slot gets exactly the entries whose row or column is constrained
    dumped = sum(float(w[free_index[np.repeat(dm, dm.shape[1], axis=1).ravel()] < 0].sum()
                       + w[(free_index[np.tile(dm, (1, dm.shape[1])).ravel()] < 0)
                           & (free_index[np.repeat(dm, dm.shape[1], axis=1).ravel()] >= 0)].sum())
                 for dm, w in zip(dofmaps, weights))
    assert data[nnz] == dumped


@pytest.mark.parametrize("build", [_mixed, _lattice, lambda: two_bar_truss()[0]])
def test_pattern_and_positions_match_scipy(build):
    A = build().snapshot().assembly
    owners = [*A.groups, *A.load_groups]
    _check([g.dofmap for g in owners], A.free_index)
    # the assembly keeps what sparse_pattern gives
    assert A.nnz == len(A.indices) and len(A.positions) == len(owners)


def test_pattern_does_not_depend_on_element_order():
    A = _lattice().snapshot().assembly
    rng = np.random.default_rng(1)
    dofmaps = [g.dofmap[rng.permutation(len(g.dofmap))] for g in A.groups]
    _check(dofmaps, A.free_index, seed=2)


def test_dofs_that_differ_per_element_and_empty_groups():
    # a spring-like group whose single DOF is ux on one element and rz on another,
    # a group with no elements, and a fully constrained node
    free_index = np.array([0, 1, 2, -1, -1, -1, 3, 4, 5])
    dofmaps = [np.array([[0], [2], [7]]), np.zeros((0, 6), np.int64),
               np.array([[0, 1, 2, 6, 7, 8], [3, 4, 5, 6, 7, 8]])]
    _check(dofmaps, free_index)
    indptr, indices, positions = sparse_pattern([], np.array([0, 1, -1]))
    assert len(indices) == 0 and list(indptr) == [0, 0, 0] and positions == []
