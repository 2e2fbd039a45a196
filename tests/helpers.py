"""Small builders and finite-difference helpers shared by the tests."""
import numpy as np

from largerot import examples


def two_bar_truss(half_span: float = 2.0, rise: float = 0.5, EA: float = 1e4):
    """Shallow two-bar truss pinned at both feet, unit reference load down at the apex."""
    sc = examples.two_bar_truss(half_span, rise, EA)
    return sc.structure, sc.apex


def rigidly_turned(angle: float, chord=(2.0, 1.0)):
    """One element turned rigidly by ``angle`` about its first end: (dX (1, 2),
    L0 (1,), u (1, 6) with both end rotations ``angle``)."""
    dX = np.array([chord], dtype=float)
    L0 = np.hypot(*dX[0])[None]
    c, s = np.cos(angle), np.sin(angle)
    d2 = np.array([c * dX[0, 0] - s * dX[0, 1], s * dX[0, 0] + c * dX[0, 1]]) - dX[0]
    return dX, L0, np.array([[0.0, 0.0, angle, d2[0], d2[1], angle]])


def element_jacobian(force, u, h=1e-6):
    """Central differences of stacked element forces, shape (n_elements, n_dof, n_dof)."""
    K = np.zeros(u.shape + (u.shape[1],))
    for j in range(u.shape[1]):
        up, um = u.copy(), u.copy()
        up[:, j] += h
        um[:, j] -= h
        K[:, :, j] = (force(up) - force(um)) / (2 * h)
    return K


def residual_jacobian(problem, u, lam, h):
    """Tangent and central-difference Jacobian −∂r/∂u of a Problem at (u, λ), dense."""
    _, K, _ = problem.residual(u, lam)
    J = np.empty((len(u), len(u)))
    for j in range(len(u)):
        e = np.zeros_like(u)
        e[j] = h
        J[:, j] = -(problem.residual(u + e, lam, tangent=False)[0]
                    - problem.residual(u - e, lam, tangent=False)[0]) / (2 * h)
    return K.toarray(), J


def arrays_of(obj) -> dict:
    """Every numpy array reachable through dicts, lists and tuples of ``vars(obj)``,
    by a path-like name; a path's displacement cache ``_u_full`` left out (not saved)."""
    out = {}

    def walk(x, name):
        if isinstance(x, np.ndarray):
            out[name] = x
        elif isinstance(x, dict):
            for k, v in x.items():
                walk(v, f"{name}[{k!r}]")
        elif isinstance(x, (list, tuple)):
            for i, v in enumerate(x):
                walk(v, f"{name}[{i}]")
    state = dict(vars(obj))
    state.pop("_u_full", None)
    walk(state, "")
    return out


def saved_and_loaded(tmp_path, structure, path):
    """Save a structure and its path, load both back, assert every array of each equal
    (the same names, bit for bit); returns the loaded ``(structure, path)``."""
    import largerot as lr
    lr.save(structure, tmp_path / "s.lr")
    lr.save(path, tmp_path / "p.lr")
    s2, path2 = lr.load(tmp_path / "s.lr"), lr.load(tmp_path / "p.lr")
    for x, y in ((structure, s2), (path, path2)):
        a1, a2 = arrays_of(x), arrays_of(y)
        assert a1.keys() == a2.keys()
        for k in a1:
            np.testing.assert_array_equal(a1[k], a2[k])
    return s2, path2
