"""Displacement control: one DOF advances by a fixed increment, λ is solved for.

The bordered Newton system makes λ an unknown, so the path passes limit points
in load (where load control stops), though not turning points of the controlled
DOF itself (snap-back), which need arc-length control.
"""
from __future__ import annotations

from ..errors import ModelError, checked_node, is_real
from ..model import dof_index
from .newton import DisplacementConstraint
from .stepper import PathStepper

__all__ = ["DisplacementStepper"]


class DisplacementStepper(PathStepper):
    """Advance the DOF ``dof`` of ``node`` by ``h`` per step."""

    def __init__(self, structure, node: int, dof: str, step: float, **options) -> None:
        if is_real(step) and not step:
            raise ModelError(f"The displacement step must be non-zero, got {step!r}.")
        node = (structure.node_id(node, "by_displacement") if hasattr(structure, "node_id")
                else checked_node(node, getattr(structure, "n_nodes", 0), "by_displacement"))
        g = 3 * node + dof_index(dof)
        super().__init__(structure, step, **options)
        if self.slack_start:
            raise ModelError("by_displacement cannot start from a slack structure (a sagging cable "
                             "with no load to stretch it): take the first step with lr.by_load, or "
                             "hold part of the load constant.")
        self.node, self.dof = int(node), dof
        j = int(self.assembly.free_index[g])
        if j < 0:
            raise ModelError(f"by_displacement: node {node} {dof} is not a free DOF "
                             "(it is restrained or carries no stiffness).")
        if not self.problem.F.any():
            raise ModelError("by_displacement needs a reference load to scale; the structure has none.")
        self.j = j

    def _predict(self, h: float):
        v = self.tangent_direction()
        if v[self.j] == 0.0:
            return None
        dlam = h / v[self.j]
        return (self._along(dlam * v, dlam), self.lam + dlam,
                DisplacementConstraint(self.j, self.u[self.j] + h))
