"""Hand-written reference: the pole's load-controlled trace the straightforward way.

A Python loop over elements computes each corotational beam's force and tangent
with small numpy arrays, a dense global matrix is assembled, and every Newton
correction is a ``numpy.linalg.solve``. The mechanics and the Newton criteria are
those of largerot (same predictor, same residual and correction tests), so both give
the same points; this file is what largerot's vectorised, sparse code is timed against.
"""
from __future__ import annotations

import math

import numpy as np


def beam_element(X1, X2, ue, EA, EI):
    """Force (6,) and tangent (6, 6) of one corotational beam element."""
    dX = X2 - X1
    L0 = math.hypot(dX[0], dX[1])
    du = ue[3:5] - ue[0:2]
    x = dX + du
    l = math.hypot(x[0], x[1])
    c, s = x[0] / l, x[1] / l
    stretch = (2.0 * (dX[0] * du[0] + dX[1] * du[1]) + du[0] ** 2 + du[1] ** 2) / (l + L0)
    c0, s0 = dX[0] / L0, dX[1] / L0
    ca, sa = c * c0 + s * s0, s * c0 - c * s0
    t = []
    for rz in (ue[2], ue[5]):
        cr, sr = math.cos(rz), math.sin(rz)
        t.append(math.atan2(sr * ca - cr * sa, cr * ca + sr * sa))
    ka, kb = EA / L0, EI / L0
    N = ka * stretch
    M1 = kb * (4.0 * t[0] + 2.0 * t[1])
    M2 = kb * (2.0 * t[0] + 4.0 * t[1])
    r = np.array([-c, -s, 0.0, c, s, 0.0])
    z = np.array([s, -c, 0.0, -s, c, 0.0]) / l
    b1 = -z.copy()
    b1[2] += 1.0
    b2 = -z.copy()
    b2[5] += 1.0
    f = N * r + M1 * b1 + M2 * b2
    K = (ka * np.outer(r, r)
         + kb * (4.0 * np.outer(b1, b1) + 2.0 * (np.outer(b1, b2) + np.outer(b2, b1))
                 + 4.0 * np.outer(b2, b2))
         + N * l * np.outer(z, z)
         + (M1 + M2) / l * (np.outer(r, z) + np.outer(z, r)))
    return f, K


def assemble(xy, elements, EA, EI, u):
    """Global internal force (n_dof,), dense tangent (n_dof, n_dof) and force level."""
    n_dof = 3 * len(xy)
    f = np.zeros(n_dof)
    K = np.zeros((n_dof, n_dof))
    scale2 = 0.0
    for a, b in elements:
        dofs = [3 * a, 3 * a + 1, 3 * a + 2, 3 * b, 3 * b + 1, 3 * b + 2]
        fe, Ke = beam_element(xy[a], xy[b], u[dofs], EA, EI)
        scale2 += float(fe @ fe)
        for i in range(6):
            f[dofs[i]] += fe[i]
            for j in range(6):
                K[dofs[i], dofs[j]] += Ke[i, j]
    return f, K, math.sqrt(scale2)


def trace_pole(n_elements, length, EA, EI, tip_load, step=0.1, target=1.0, tol=1e-8,
               tol_u=1e-6, max_iterations=25):
    """Load-controlled trace of a clamped vertical pole with a sideways tip load.

    Returns ``(load_factors, tip_ux, tip_uy, iterations)``, one entry per point.
    """
    n_nodes = n_elements + 1
    xy = np.column_stack([np.zeros(n_nodes), np.linspace(0.0, length, n_nodes)])
    elements = [(k, k + 1) for k in range(n_elements)]
    n_dof = 3 * n_nodes
    free = np.arange(3, n_dof)                       # node 0 clamped
    F = np.zeros(n_dof)
    F[3 * n_elements] = tip_load
    F = F[free]
    weights = np.where(free % 3 == 2, length, 1.0)   # rotations weighed by the structure's size
    u = np.zeros(n_dof)
    lam = 0.0
    _, K, _ = assemble(xy, elements, EA, EI, u)
    Kf = K[np.ix_(free, free)]
    lams, ux, uy, its = [0.0], [0.0], [0.0], [0]
    while abs(lam - target) > 1e-12 * max(1.0, abs(target)):
        dlam = min(step, target - lam)
        v = np.linalg.solve(Kf, F)
        uf = u[free] + dlam * v
        u_start = u[free].copy()
        lam_new = lam + dlam
        for k in range(max_iterations + 1):
            u_try = np.zeros(n_dof)
            u_try[free] = uf
            f, K, scale = assemble(xy, elements, EA, EI, u_try)
            r = lam_new * F - f[free]
            scale = max(scale, float(np.linalg.norm(lam_new * F)))
            ratio = float(np.linalg.norm(r)) / scale
            Kf = K[np.ix_(free, free)]
            du = np.linalg.solve(Kf, r)
            corr = float(np.linalg.norm(du * weights)) / max(
                float(np.linalg.norm((uf - u_start) * weights)), 1e-300)
            # converged; or corrections at round-off with a small residual (largerot's
            # stagnation rule: fine meshes have a residual floor above tol)
            if (ratio <= tol and corr <= tol_u) or (k > 0 and corr <= 1e-13 and ratio <= 1e-6):
                break
            if k == max_iterations:
                raise RuntimeError(f"baseline Newton did not converge at λ = {lam_new}")
            uf = uf + du
        u = u_try
        lam = lam_new
        lams.append(lam)
        ux.append(u[3 * n_elements])
        uy.append(u[3 * n_elements + 1])
        its.append(k)
    return np.array(lams), np.array(ux), np.array(uy), np.array(its)
