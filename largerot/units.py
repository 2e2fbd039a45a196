"""Units: the text that labels each kind of quantity in one consistent system.

Quantities in largerot are plain floats; a structure's units only *label* them
(axes, readouts, table columns) and set the default of :meth:`Structure.gravity`.
The user picks one consistent system and gives every input in it:

============  =====  ======  =======  ======  ==============  ==================  ==========
system        force  length  moment   stress  mass density    spring (transl.)    line load
============  =====  ======  =======  ======  ==============  ==================  ==========
``"N-m"``     N      m       N·m      Pa      kg/m³           N/m                 N/m
``"kN-m"``    kN     m       kN·m     kPa     t/m³            kN/m                kN/m
``"N-mm"``    N      mm      N·mm     MPa     t/mm³           N/mm                N/mm
``"kip-in"``  kip    in      kip·in   ksi     kip·s²/in⁴      kip/in              kip/in
============  =====  ======  =======  ======  ==============  ==================  ==========

Rotations are in radians in every system, a rotational spring in moment per radian
(N·m/rad...), and Young's modulus in the stress unit. The mass unit is the one that
makes force = mass × acceleration with accelerations in length/s²: kg with N and m,
the tonne (1000 kg) with kN and m and with N and mm, kip·s²/in with kip and in. So
gravity is 9.81 m/s² in N-m and kN-m, 9810 mm/s² in N-mm and 386.2 in/s² in kip-in
(:attr:`Units.gravity`, the default of ``Structure.gravity()``).

>>> u = Units("kN-m")
>>> u.of("moment"), u.of("stress"), u.of("load factor")
('kN·m', 'kPa', '')
>>> u.label("uy of tip", "length")
'uy of tip [m]'
>>> u.label("load factor", "load factor")
'load factor'
"""
from __future__ import annotations

from dataclasses import dataclass

from .errors import ModelError

__all__ = ["Units", "SYSTEMS", "KINDS", "checked_units"]

#: The consistent systems: force, length, moment, stress, mass density, and the
#: length of one metre in the system's length unit (for the default gravity).
_TABLE = {
    "N-m": ("N", "m", "N·m", "Pa", "kg/m³", 1.0),
    "kN-m": ("kN", "m", "kN·m", "kPa", "t/m³", 1.0),
    "N-mm": ("N", "mm", "N·mm", "MPa", "t/mm³", 1000.0),
    "kip-in": ("kip", "in", "kip·in", "ksi", "kip·s²/in⁴", 1.0 / 0.0254),
}
#: Names of the systems, SI first (the default).
SYSTEMS = tuple(_TABLE)
#: Standard gravity used by ``Structure.gravity()`` when no g is given, in m/s²
#: (the value the package has always used; 9.80665 differs by 0.03 %).
G_SI = 9.81

#: Kinds of quantity :meth:`Units.of` knows; aliases map to the same text.
KINDS = ("length", "displacement", "coordinate", "force", "reaction force", "moment",
         "rotation", "angle", "stress", "modulus", "mass density", "line load", "distributed load",
         "spring stiffness", "translational stiffness", "rotational stiffness", "area",
         "second moment", "acceleration", "load factor", "strain", "dimensionless")


@dataclass(frozen=True)
class Units:
    """The unit text of each kind of quantity in one consistent system.

    Parameters
    ----------
    system : {"N-m", "kN-m", "N-mm", "kip-in"}
        See the table in :mod:`largerot.units`. Default SI, ``"N-m"``.

    Quantities stay plain floats: this object only labels them.
    """

    system: str = "N-m"

    def __post_init__(self) -> None:
        if not isinstance(self.system, str):
            raise TypeError(f"`units` must be the name of a system, one of "
                            f"{', '.join(map(repr, SYSTEMS))}; got {self.system!r}.")
        if self.system not in _TABLE:
            raise ModelError(f"Unknown units {self.system!r}; use one of "
                             f"{', '.join(map(repr, SYSTEMS))}.")

    @property
    def force(self) -> str:
        return _TABLE[self.system][0]

    @property
    def length(self) -> str:
        return _TABLE[self.system][1]

    @property
    def moment(self) -> str:
        return _TABLE[self.system][2]

    @property
    def stress(self) -> str:
        return _TABLE[self.system][3]

    @property
    def gravity(self) -> float:
        """Standard gravity (9.81 m/s²) in the system's length per second squared."""
        return G_SI * _TABLE[self.system][5]

    def of(self, kind: str) -> str:
        """Unit text of a kind of quantity (one of :data:`KINDS`); "" for dimensionless.

        >>> Units().of("rotational stiffness")
        'N·m/rad'
        """
        f, L, M, S, rho, _ = _TABLE[self.system]
        table = {
            "length": L, "displacement": L, "coordinate": L,
            "force": f, "reaction force": f, "moment": M,
            "rotation": "rad", "angle": "rad",
            "stress": S, "modulus": S, "mass density": rho,
            "line load": f"{f}/{L}", "distributed load": f"{f}/{L}",
            "spring stiffness": f"{f}/{L}", "translational stiffness": f"{f}/{L}",
            "rotational stiffness": f"{M}/rad",
            "area": f"{L}²", "second moment": f"{L}⁴", "acceleration": f"{L}/s²",
            "load factor": "", "strain": "", "dimensionless": "",
        }
        if not isinstance(kind, str) or kind not in table:
            raise ModelError(f"Unknown kind of quantity {kind!r}; use one of {', '.join(KINDS)}.")
        return table[kind]

    def label(self, text: str, kind: str) -> str:
        """``text`` with its unit in brackets: ``"uy of tip [m]"``; no brackets when dimensionless."""
        unit = self.of(kind)
        return f"{text} [{unit}]" if unit else text

    def dof_unit(self, dof: str) -> str:
        """Unit of a displacement DOF: length for ``"ux"``/``"uy"``, ``"rad"`` for ``"rz"``."""
        return self.of("rotation" if _dof_position(dof) == 2 else "length")

    def reaction_unit(self, dof: str) -> str:
        """Unit of the force a DOF carries (load, reaction): force, or moment for ``"rz"``."""
        return self.of("moment" if _dof_position(dof) == 2 else "force")

    def __str__(self) -> str:
        return self.system


def _dof_position(dof: str) -> int:
    names = ("ux", "uy", "rz", "fx", "fy", "mz")
    if not isinstance(dof, str) or dof not in names:
        raise ModelError(f"Unknown DOF {dof!r}; use one of ux, uy, rz (or fx, fy, mz).")
    return names.index(dof) % 3


def checked_units(units) -> Units:
    """``units`` (a system's name or a :class:`Units`) as a Units; else a ModelError naming it."""
    if isinstance(units, Units):
        return units
    return Units(units)
