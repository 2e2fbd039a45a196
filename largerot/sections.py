"""Cross-section properties of members."""
from __future__ import annotations

import math
from dataclasses import dataclass

from .errors import ModelError, checked_number

__all__ = ["Section"]


def check_stiffness(owner: str, E: float, A: float, I: float) -> None:
    """Refuse a section whose EA or EI is not a finite float (1e300·1e10 = inf)."""
    for name, factor in (("EA", A), ("EI", I)):
        if not math.isfinite(E * factor):
            raise ModelError(f"{owner} stiffness {name} = {E!r}·{factor!r} overflows double "
                             "precision (inf); use consistent units of a sensible size.")


def _check(name: str, value, *, positive: bool) -> float:
    return checked_number("Section", name, value, positive=positive, nonnegative=not positive)


@dataclass(frozen=True)
class Section:
    """Elastic properties of a member's cross-section, in any consistent units.

    Parameters
    ----------
    E : float
        Young's modulus [force/length², e.g. Pa].
    A : float
        Area [length², e.g. m²].
    I : float, optional
        Second moment of area for bending in the plane [length⁴]; needed by beams only.
    density : float, optional
        Mass per unit volume [mass/length³, e.g. kg/m³]; with ``s.gravity()`` it gives
        the self-weight ρ·A·g per unit length.
    fy : float, optional
        Yield stress, ``None`` when not given. Only stored, for your own checks (e.g.
        σ = N/A + M·depth/(2I) against fy from ``path.member_forces``): nothing in
        largerot reads it from an elastic Section, and a beam of a Section never
        yields. For yielding use :class:`largerot.FibreSection`.
    depth : float, optional
        Overall depth in the plane of bending (set by :meth:`tube`, :meth:`rectangle`
        and :meth:`rod`). Only stored, like ``fy``: nothing in largerot reads it from
        an elastic Section.

    Examples
    --------
    >>> sec = Section.tube(E=70e9, diameter=0.2, wall=0.005)
    >>> round(sec.A * 1e4, 3)
    30.631
    """

    E: float
    A: float
    I: float = 0.0
    density: float = 0.0
    fy: float | None = None
    depth: float | None = None

    def __post_init__(self) -> None:
        object.__setattr__(self, "E", _check("E", self.E, positive=True))
        object.__setattr__(self, "A", _check("A", self.A, positive=True))
        object.__setattr__(self, "I", _check("I", self.I, positive=False))
        object.__setattr__(self, "density", _check("density", self.density, positive=False))
        if self.fy is not None:
            object.__setattr__(self, "fy", _check("fy", self.fy, positive=True))
        if self.depth is not None:
            object.__setattr__(self, "depth", _check("depth", self.depth, positive=True))
        check_stiffness("Section", self.E, self.A, self.I)

    @classmethod
    def tube(cls, E: float, diameter: float, wall: float, **extra) -> "Section":
        """Round tube of outer ``diameter`` and ``wall`` thickness.

        The same argument names as :meth:`largerot.FibreSection.tube`.
        """
        d = _check("diameter", diameter, positive=True)
        t = _check("wall", wall, positive=True)
        if 2.0 * t > d:
            raise ModelError(f"Tube wall {t!r} is thicker than half the diameter {d!r}.")
        di = d - 2.0 * t
        A = math.pi / 4.0 * (d**2 - di**2)
        I = math.pi / 64.0 * (d**4 - di**4)
        return cls(E=E, A=A, I=I, depth=d, **extra)

    @classmethod
    def rectangle(cls, E: float, width: float, depth: float, **extra) -> "Section":
        """Solid rectangle of ``width``; its ``depth`` lies in the plane of bending.

        The same argument names as :meth:`largerot.FibreSection.rectangle`.
        """
        b = _check("width", width, positive=True)
        h = _check("depth", depth, positive=True)
        return cls(E=E, A=b * h, I=b * h**3 / 12.0, depth=h, **extra)

    @classmethod
    def rod(cls, E: float, diameter: float, **extra) -> "Section":
        """Solid round rod of ``diameter``: A = πd²/4, I = πd⁴/64.

        Not a wire rope of that nominal diameter: a stranded rope's metallic area is
        only about 0.5–0.6 of πd²/4 (a fill factor; common practice, from memory — take
        the maker's figure), and its modulus is below that of the wire. For a rope give
        ``Section(E=..., A=...)`` with the rope's own metallic area and modulus.
        """
        d = _check("diameter", diameter, positive=True)
        return cls(E=E, A=math.pi * d**2 / 4.0, I=math.pi * d**4 / 64.0, depth=d, **extra)

    @property
    def EA(self) -> float:
        return self.E * self.A

    @property
    def EI(self) -> float:
        return self.E * self.I
