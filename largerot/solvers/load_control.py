"""Load control: the load factor advances by a fixed increment each step."""
from __future__ import annotations

from .newton import LoadConstraint
from .stepper import PathStepper

__all__ = ["LoadStepper"]


class LoadStepper(PathStepper):
    """Increment λ by ``h`` per step; stops being useful at a limit point in load."""

    def __init__(self, structure, step: float, **options) -> None:
        if not step:
            raise ValueError(f"The load step must be non-zero, got {step!r}.")
        super().__init__(structure, step, **options)

    def _predict(self, h: float):
        dlam = h
        if self.target is not None and (self.lam + h - self.target) * (self.lam - self.target) <= 0:
            dlam = self.target - self.lam          # shorten the last step to land on the target
        lam = self.lam + dlam
        return self.u + dlam * self.tangent_direction(), lam, LoadConstraint(lam)
