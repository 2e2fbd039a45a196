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


def cowper_factor(shape: str, E: float, G: float, inner_ratio: float = 0.0) -> float:
    """Shear factor κ of a solid rectangle or a round tube (a rod: ``inner_ratio`` 0).

    Cowper 1966, "The shear coefficient in Timoshenko's beam theory", J. Appl. Mech.
    33 (from memory), with Poisson's ratio ν = E/(2G) − 1 of an isotropic material:
    rectangle 10(1 + ν)/(12 + 11ν); tube of radius ratio m = inner/outer
    6(1 + ν)(1 + m²)² / [(7 + 6ν)(1 + m²)² + (20 + 12ν)m²] (solid circle at m = 0,
    thin tube 2(1 + ν)/(4 + 3ν) at m → 1). At ν = 0 these are the common 5/6, 6/7
    and 1/2 (common practice). ν is clipped to [0, 0.5]: a G that is not E/(2(1 + ν))
    of an isotropic material (a sandwich core, a lattice) still gets a value of the
    shape, within 0.05 of any other; give ``shear_factor=`` or ``shear_area=`` when
    you know better.
    """
    nu = min(max(E / (2.0 * G) - 1.0, 0.0), 0.5)
    if shape == "rectangle":
        return 10.0 * (1.0 + nu) / (12.0 + 11.0 * nu)
    m2 = inner_ratio**2
    return 6.0 * (1.0 + nu) * (1.0 + m2) ** 2 / ((7.0 + 6.0 * nu) * (1.0 + m2) ** 2
                                                 + (20.0 + 12.0 * nu) * m2)


def _shear_extra(extra: dict, E: float, shape: str, inner_ratio: float = 0.0) -> dict:
    """``extra`` with the shape's shear factor when G is given and no shear area or factor."""
    if (extra.get("G") is not None and extra.get("shear_factor") is None
            and extra.get("shear_area") is None):
        G = _check("G", extra["G"], positive=True)
        E = _check("E", E, positive=True)
        extra = dict(extra, shear_factor=cowper_factor(shape, E, G, inner_ratio))
    return extra


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
    G : float, optional
        Shear modulus [force/length²]. With ``shear_area`` or ``shear_factor`` it
        makes the section shear-flexible: its beams are then Timoshenko beams
        (:mod:`largerot.elements.timoshenko`) of shear stiffness :attr:`GAs`.
        Without G (the default) beams are Euler–Bernoulli (rigid in shear).
    shear_area : float, optional
        Effective shear area A_s = κ·A [length²].
    shear_factor : float, optional
        Shear factor κ, so that A_s = κ·A (give this or ``shear_area``, not both;
        each is filled in from the other). :meth:`tube`, :meth:`rectangle` and
        :meth:`rod` choose Cowper's κ of the shape when only G is given
        (:func:`cowper_factor`).

    Examples
    --------
    >>> sec = Section.tube(E=70e9, diameter=0.2, wall=0.005)
    >>> round(sec.A * 1e4, 3)
    30.631
    >>> deep = Section.rectangle(E=10e9, width=0.1, depth=0.4, G=5e9)   # ν = 0: κ = 5/6
    >>> round(deep.shear_factor, 4), round(deep.GAs / 1e6, 1)
    (0.8333, 166.7)
    """

    E: float
    A: float
    I: float = 0.0
    density: float = 0.0
    fy: float | None = None
    depth: float | None = None
    G: float | None = None
    shear_area: float | None = None
    shear_factor: float | None = None

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
        self._check_shear()

    def _check_shear(self) -> None:
        G, As, kappa = self.G, self.shear_area, self.shear_factor
        if G is None:
            if As is not None or kappa is not None:
                name = "shear_area" if As is not None else "shear_factor"
                raise ModelError(f"Section `{name}` = {As if As is not None else kappa!r} "
                                 "needs the shear modulus `G` too.")
            return
        G = _check("G", G, positive=True)
        if As is None and kappa is None:
            raise ModelError(f"Section `G` = {G!r} needs `shear_area` or `shear_factor` "
                             "(the shear area is κ·A).")
        if As is not None and kappa is not None:
            raise ModelError(f"Section: give `shear_area` ({As!r}) or `shear_factor` "
                             f"({kappa!r}), not both.")
        if As is None:
            kappa = _check("shear_factor", kappa, positive=True)
            As = kappa * self.A
        else:
            As = _check("shear_area", As, positive=True)
            kappa = As / self.A
        if not math.isfinite(G * As):
            raise ModelError(f"Section shear stiffness GAs = {G!r}·{As!r} overflows double "
                             "precision (inf); use consistent units of a sensible size.")
        for name, value in (("G", G), ("shear_area", As), ("shear_factor", kappa)):
            object.__setattr__(self, name, value)

    @classmethod
    def tube(cls, E: float, diameter: float, wall: float, **extra) -> "Section":
        """Round tube of outer ``diameter`` and ``wall`` thickness.

        The same argument names as :meth:`largerot.FibreSection.tube`. With ``G=``
        and no shear area or factor, κ is Cowper's for the tube (:func:`cowper_factor`).
        """
        d = _check("diameter", diameter, positive=True)
        t = _check("wall", wall, positive=True)
        if 2.0 * t > d:
            raise ModelError(f"Tube wall {t!r} is thicker than half the diameter {d!r}.")
        di = d - 2.0 * t
        A = math.pi / 4.0 * (d**2 - di**2)
        I = math.pi / 64.0 * (d**4 - di**4)
        return cls(E=E, A=A, I=I, depth=d, **_shear_extra(extra, E, "tube", di / d))

    @classmethod
    def rectangle(cls, E: float, width: float, depth: float, **extra) -> "Section":
        """Solid rectangle of ``width``; its ``depth`` lies in the plane of bending.

        The same argument names as :meth:`largerot.FibreSection.rectangle`. With
        ``G=`` and no shear area or factor, κ is Cowper's (5/6 at ν = 0;
        :func:`cowper_factor`).
        """
        b = _check("width", width, positive=True)
        h = _check("depth", depth, positive=True)
        return cls(E=E, A=b * h, I=b * h**3 / 12.0, depth=h, **_shear_extra(extra, E, "rectangle"))

    @classmethod
    def rod(cls, E: float, diameter: float, **extra) -> "Section":
        """Solid round rod of ``diameter``: A = πd²/4, I = πd⁴/64.

        Not a wire rope of that nominal diameter: a stranded rope's metallic area is
        only about 0.5–0.6 of πd²/4 (a fill factor; common practice, from memory — take
        the maker's figure), and its modulus is below that of the wire. For a rope give
        ``Section(E=..., A=...)`` with the rope's own metallic area and modulus.
        """
        d = _check("diameter", diameter, positive=True)
        return cls(E=E, A=math.pi * d**2 / 4.0, I=math.pi * d**4 / 64.0, depth=d,
                   **_shear_extra(extra, E, "tube"))

    @property
    def EA(self) -> float:
        return self.E * self.A

    @property
    def EI(self) -> float:
        return self.E * self.I

    @property
    def GAs(self) -> float | None:
        """Shear stiffness κ·G·A = G·A_s, or None for a section rigid in shear."""
        return None if self.G is None else self.G * self.shear_area
