"""Shared test helpers."""
import numpy as np
import pytest


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


@pytest.fixture
def fd_jacobian():
    return residual_jacobian
