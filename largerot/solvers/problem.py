"""The discrete equilibrium problem r(u, λ) = λ·F_ref + F_const − f_int(u) on free DOFs."""
from __future__ import annotations

import numpy as np

from ..assembly import Assembly

__all__ = ["Problem"]


class Problem:
    """Residual and tangent of a structure as functions of free displacements and λ.

    Parameters
    ----------
    assembly : Assembly
    """

    def __init__(self, assembly: Assembly) -> None:
        self.assembly = assembly
        #: reference load over the free DOFs (∂r/∂λ); with follower loads it is the
        #: one at the last evaluated state
        self.F = assembly.F_ref[assembly.free]
        self.F_const = assembly.F_const[assembly.free]
        # follower loads have a non-symmetric load stiffness
        self.symmetric = not assembly.has_followers
        self.const_factor = 1.0        # < 1 only while the constant loads are ramped in
        self.n_evaluations = 0
        L = assembly.length_scale
        # weights so that rotations count like displacements of the structure's size
        self.weights = np.where(assembly.free % 3 == 2, L, 1.0)
        self.length_scale = L

    @property
    def n(self) -> int:
        return self.assembly.n_free

    def full(self, u: np.ndarray) -> np.ndarray:
        return self.assembly.expand(u)

    def external(self, lam: float) -> np.ndarray:
        return lam * self.F + self.const_factor * self.F_const

    def residual(self, u: np.ndarray, lam: float, tangent: bool = True):
        """Return ``(r, K, scale)``: residual (n_free,), tangent, and force yardstick.

        ``scale`` is the larger of the internal force level and the applied load, so
        the relative residual test has a floor set by round-off in the element forces,
        not by a tiny applied load at the start of a path.
        """
        self.n_evaluations += 1
        a = self.assembly
        uf = self.full(u)
        f, K, scale, _ = a.evaluate(uf, tangent, lam, self.const_factor)
        if a.has_followers:
            F_ref, F_const = a.external(uf)
            self.F, self.F_const = F_ref[a.free], F_const[a.free]
        ext = self.external(lam)
        r = ext - f[self.assembly.free]
        scale = max(scale, float(np.linalg.norm(ext)), np.finfo(float).tiny)
        return r, K, scale

    def point_data(self, u: np.ndarray) -> dict:
        """Per-point results worth keeping along the path (e.g. which cables are slack).

        Returns a dict of name -> ndarray; the path stacks each over its points in
        ``path.extra[name]``. Element kinds add their entries through
        ``Assembly.point_data``.
        """
        fn = getattr(self.assembly, "point_data", None)
        return fn(self.full(u)) if fn is not None else {}

    def norm(self, du: np.ndarray) -> float:
        """Weighted displacement norm (rotations scaled by the structure's size)."""
        return float(np.linalg.norm(du * self.weights))
