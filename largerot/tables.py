"""A structure as tables (pandas DataFrames or CSV files), in and out.

:meth:`Structure.to_tables <largerot.model.Structure.to_tables>` writes every
modelling feature of a :class:`~largerot.model.Structure` as tables, and
:meth:`Structure.from_tables <largerot.model.Structure.from_tables>` builds one from
them: the round trip gives a structure whose snapshot is equal bit for bit. The same
tables, typed by hand in a spreadsheet, are a way to enter a model: most columns may
be left out, a blank cell is "not given".

Tables and columns (required ones in **bold**; "id" columns may be left out, then
the row order gives the ids):

``structure`` (one row)
    ``name`` (the structure's name), ``units`` (``"N-m"``, ``"kN-m"``, ``"N-mm"``,
    ``"kip-in"``). Both carried in a table, not in DataFrame attributes, which a
    CSV file would lose.
``nodes``
    ``id``, **x**, **y**, ``name``, ``member``. The ids must be 0, 1, …, n − 1
    (the structure keeps them: node 3 of the table is node 3 of the structure and of
    its paths). ``member`` marks a node made by meshing a member (an interior node
    of that member's chain, listed in order along it); leave the column out and the
    members mesh themselves, their interior nodes numbered after the listed ones.
    ``to_tables`` lists every node, so curved members (arcs, sagging cables, moved
    nodes) come back with their nodes where they were.
``sections``
    ``id`` (any label, e.g. ``"tube 100"``), ``kind`` (``"elastic"``, the default,
    or ``"fibre"``), **E**, ``A``, ``I``, ``density``, ``fy``, ``depth``, ``G``,
    ``shear_area``, ``shear_factor`` (an elastic :class:`~largerot.sections.Section`:
    A required), ``H``, ``W``, ``Z``, ``shape`` (a fibre section: with ``E``, ``fy``,
    ``depth``, ``density``; its fibres in the ``fibres`` table). Instead of a table,
    ``sections`` may be a dict ``{id: Section or FibreSection}``. Without
    ``sections`` the members table may carry the section columns itself (E, A, I...
    on each row; rows with equal values share one section).
``fibres``
    **section**, **y**, **dA**: one row per fibre of a fibre section (its position
    from the centroid and its area), in order.
``members``
    ``id``, ``kind`` (``"beam"`` default, ``"bar"``, ``"cable"``), **start**,
    **end** (node ids), ``segments`` (default 1; a cable's default as in
    :meth:`~largerot.model.Structure.cable`), **section** (an id of the sections
    table), ``name``, ``hinge`` (``"start"``, ``"end"``, ``"both"``),
    ``hinge_stiffness`` (moment/radian; blank or 0 a free hinge),
    ``unstretched_length`` (a cable's whole length without force; blank: its chord),
    ``pretension`` (a cable's initial tension instead), ``rise``, ``radius``,
    ``shape`` (a curved member as in :meth:`~largerot.model.Structure.arc`, when its
    interior nodes are not listed). ``segment_length`` (each element's unstretched
    length) is written by ``to_tables`` only for a cable whose
    segment length no value of ``unstretched_length`` divides back to exactly
    (about one cable in ten: measured on 20,000 random lengths and segment counts).
``supports`` (one row per support, **node** and **kind** always)
    ``kind="fix"``: ``dof`` the restrained DOFs, e.g. ``"ux uy"`` (blank: all three);
    ``kind="spring"``: ``dof``, ``value`` the stiffness;
    ``kind="impose"``: ``dof``, ``value``, ``constant`` (True: held from the start);
    ``kind="roller"``: ``dx``, ``dy`` the rolling direction.
``loads`` (one row per load, **kind** always; ``constant`` True for a load held at
full value, default False)
    ``kind="nodal"``: ``node``, ``fx``, ``fy``, ``mz``;
    ``kind="follower"``: ``node``, ``fx``, ``fy`` (turning with the node);
    ``kind="line"``: ``member`` (id or name), ``qx``, ``qy`` (dead, per undeformed
    length), ``normal``, ``tangential`` (following, per deformed length);
    ``kind="gravity"``: ``g`` (blank: the units' default), ``dx``, ``dy`` (blank:
    downward).
``contacts``
    **node**, ``obstacle`` (a label shared by the contacts with one obstacle; blank:
    an obstacle of its own), **shape** (``"line"`` or ``"circle"``), **x**, **y**
    (a point of the line or the centre), ``nx``, ``ny`` (the line's normal, toward
    the free side), ``radius`` (the circle's).
``masses``
    **node**, **m** (concentrated mass on both translations), ``inertia`` (rotary,
    blank: 0): the nodal masses of ``Structure.mass`` (dynamics only).

Any table may also be the path of a CSV file. :meth:`Tables.to_csv` writes all of
them to a folder with 17 significant digits (``float_format="%.17g"``), so floats
come back exactly, and :meth:`Tables.read_csv` reads them back (with pandas'
``float_precision="round_trip"`` before pandas 3, whose default parser is exact). Errors name the table, the row (counted from 0,
as pandas shows it) and the column.
"""
from __future__ import annotations

import math
import os
from typing import Mapping

import numpy as np
import pandas as pd

from .errors import ModelError, is_real

__all__ = ["Tables", "to_tables", "from_tables", "TABLES", "COLUMNS", "FLOAT_FORMAT"]

#: Significant digits that bring every double back exactly from text (17, IEEE 754).
FLOAT_FORMAT = "%.17g"

#: The tables, in the order they are written.
TABLES = ("structure", "nodes", "sections", "fibres", "members", "supports", "loads", "contacts",
          "masses")

#: Known columns of each table; any other column is refused (a misspelt column
#: would otherwise be ignored without a word). ``note`` is free text in any table.
COLUMNS = {
    "structure": ("name", "units"),
    "nodes": ("id", "x", "y", "name", "member"),
    "sections": ("id", "kind", "E", "A", "I", "density", "fy", "depth", "G", "shear_area",
                 "shear_factor", "H", "W", "Z", "shape"),
    "fibres": ("section", "y", "dA"),
    "members": ("id", "kind", "start", "end", "segments", "section", "name", "hinge",
                "hinge_stiffness", "unstretched_length", "segment_length", "pretension",
                "rise", "radius", "shape") + ("E", "A", "I", "density", "fy", "depth", "G",
                                              "shear_area", "shear_factor"),
    "supports": ("node", "kind", "dof", "value", "constant", "dx", "dy"),
    "loads": ("kind", "node", "member", "fx", "fy", "mz", "qx", "qy", "normal", "tangential",
              "g", "dx", "dy", "constant"),
    "contacts": ("node", "obstacle", "shape", "x", "y", "nx", "ny", "radius"),
    "masses": ("node", "m", "inertia"),
}
_SECTION_COLUMNS = ("E", "A", "I", "density", "fy", "depth", "G", "shear_area", "shear_factor")
#: Columns that hold text (read from CSV as text, so a name "12" stays a name).
_TEXT = ("name", "units", "kind", "shape", "dof", "hinge", "note")
#: Relative tolerance within which a unit vector read back is kept as given instead
#: of normalised again (normalising a unit vector may move it by an ulp).
UNIT_TOL = 4.0 * np.finfo(float).eps
_PANDAS_MAJOR = int(pd.__version__.split(".")[0])
#: Neighbouring floats of L0·n tried for a cable's unstretched length that divides
#: back to L0 exactly; when none does (about 9 % of random cases), ``segment_length``
#: is written instead.
LENGTH_SEARCH = 8


class Tables(dict):
    """The tables of a structure: a dict of DataFrames keyed by table name.

    ``Structure.from_tables(**tables)`` builds the structure back; the tables are
    also attributes (``tables.nodes``).
    """

    def __getattr__(self, name):
        try:
            return self[name]
        except KeyError:
            raise AttributeError(f"No table {name!r}; tables: {', '.join(self)}.") from None

    def to_csv(self, folder) -> list:
        """Write each table to ``folder/<name>.csv`` (floats with 17 digits); return the paths."""
        os.makedirs(folder, exist_ok=True)
        paths = []
        for name, frame in self.items():
            path = os.path.join(os.fspath(folder), f"{name}.csv")
            frame.to_csv(path, index=False, float_format=FLOAT_FORMAT)
            paths.append(path)
        return paths

    @classmethod
    def read_csv(cls, folder) -> "Tables":
        """The tables of ``folder`` written by :meth:`to_csv` (those present)."""
        out = cls()
        for name in TABLES:
            path = os.path.join(os.fspath(folder), f"{name}.csv")
            if os.path.exists(path):
                out[name] = read_csv(path)
        if "nodes" not in out or "members" not in out:
            raise ModelError(f"Folder {os.fspath(folder)!r} has no nodes.csv or members.csv.")
        return out


def read_csv(path) -> pd.DataFrame:
    """One table from CSV: floats exactly as written, text columns as text, blank = missing."""
    head = pd.read_csv(path, nrows=0).columns
    exact = {"float_precision": "round_trip"} if _PANDAS_MAJOR < 3 else {}   # exact by default from 3
    return pd.read_csv(path, keep_default_na=False, na_values=[""],
                       dtype={c: str for c in head if c in _TEXT}, **exact)


# -- reading cells ------------------------------------------------------------------
class _Table:
    """A table being read: its frame and name, for cells read with checks and errors
    that name the table, the row and the column."""

    def __init__(self, name: str, frame, required: tuple = ()) -> None:
        self.name = name
        if frame is None:
            frame = pd.DataFrame(columns=list(required))
        elif isinstance(frame, (str, os.PathLike)):
            if not os.path.exists(frame):
                raise ModelError(f"The {name} table: no file {os.fspath(frame)!r}.")
            frame = read_csv(frame)
        elif not isinstance(frame, pd.DataFrame):
            raise TypeError(f"The {name} table must be a pandas DataFrame or the path of a CSV "
                            f"file, got {type(frame).__name__}.")
        unknown = [c for c in frame.columns if c not in COLUMNS[name] and c != "note"]
        if unknown:
            hint = " (write CSV files with index=False)" if any(str(c).startswith("Unnamed") for c in unknown) else ""
            raise ModelError(f"The {name} table has an unknown column {unknown[0]!r}{hint}; its "
                             f"columns are {', '.join(COLUMNS[name])}.")
        for c in required:
            if c not in frame.columns:
                raise ModelError(f"The {name} table has no column {c!r} (required).")
        self.frame = frame.reset_index(drop=True)
        self.columns = set(frame.columns)

    def __len__(self) -> int:
        return len(self.frame)

    def where(self, i: int, column: str | None = None) -> str:
        return f"{self.name} table, row {i}" + (f", column {column!r}" if column else "")

    def raw(self, i: int, column: str):
        if column not in self.columns:
            return None
        v = self.frame.at[i, column]
        if v is None or (isinstance(v, float) and math.isnan(v)) or v is pd.NA or v is pd.NaT:
            return None
        if isinstance(v, str) and not v.strip():
            return None
        return v

    def number(self, i: int, column: str, default=None, *, required: bool = False):
        v = self.raw(i, column)
        if v is None:
            if required:
                raise ModelError(f"{self.where(i, column)}: a value is required.")
            return default
        if isinstance(v, str):
            try:
                v = float(v)
            except ValueError:
                raise ModelError(f"{self.where(i, column)}: expected a number, got {v!r}.") from None
        if not is_real(v):
            raise ModelError(f"{self.where(i, column)}: expected a number, got {v!r}.")
        v = float(v)
        if not math.isfinite(v):
            raise ModelError(f"{self.where(i, column)}: expected a finite number, got {v!r}.")
        return v

    def integer(self, i: int, column: str, default=None, *, required: bool = False):
        v = self.number(i, column, None, required=required)
        if v is None:
            return default
        if v != math.floor(v):
            raise ModelError(f"{self.where(i, column)}: expected a whole number, got {v!r}.")
        return int(v)

    def text(self, i: int, column: str, default=None, *, required: bool = False):
        v = self.raw(i, column)
        if v is None:
            if required:
                raise ModelError(f"{self.where(i, column)}: a value is required.")
            return default
        if not isinstance(v, str):
            if is_real(v) and float(v) == int(float(v)):
                return str(int(float(v)))
            return str(v)
        return v.strip() if column != "name" else v

    def choice(self, i: int, column: str, choices: tuple, default=None):
        v = self.text(i, column, default, required=default is None)
        if v not in choices:
            raise ModelError(f"{self.where(i, column)}: expected one of {', '.join(map(repr, choices))}, "
                             f"got {v!r}.")
        return v

    def flag(self, i: int, column: str) -> bool:
        v = self.raw(i, column)
        if v is None:
            return False
        if isinstance(v, (bool, np.bool_)):
            return bool(v)
        if isinstance(v, str) and v.strip().lower() in ("true", "yes", "1"):
            return True
        if isinstance(v, str) and v.strip().lower() in ("false", "no", "0"):
            return False
        if is_real(v) and float(v) in (0.0, 1.0):
            return bool(float(v))
        raise ModelError(f"{self.where(i, column)}: expected True or False, got {v!r}.")

    def key(self, i: int, column: str, *, required: bool = True):
        """A label (section or obstacle id): an integer when it is a whole number, else text."""
        v = self.raw(i, column)
        if v is None:
            if required:
                raise ModelError(f"{self.where(i, column)}: a value is required.")
            return None
        return _label(v)

    def ids(self, column: str = "id") -> list:
        """Each row's id: the column's whole numbers, or the row order without it."""
        if column not in self.columns:
            return list(range(len(self)))
        ids = [self.integer(i, column, required=True) for i in range(len(self))]
        seen = {}
        for i, v in enumerate(ids):
            if v in seen:
                raise ModelError(f"{self.where(i, column)}: duplicate id {v} (also row {seen[v]}).")
            seen[v] = i
        return ids


def _label(v):
    if isinstance(v, str):
        s = v.strip()
        try:
            f = float(s)
        except ValueError:
            return s
        return int(f) if math.isfinite(f) and f == math.floor(f) else s
    if is_real(v) and math.isfinite(float(v)) and float(v) == math.floor(float(v)):
        return int(float(v))
    return str(v)


def _wrap(where: str, f, *args, **kwargs):
    """Call a Structure method; its ModelError or TypeError comes back naming the row."""
    try:
        return f(*args, **kwargs)
    except (ModelError, TypeError) as exc:
        raise ModelError(f"{where}: {exc}") from None


def _unit_or_given(dx: float, dy: float) -> tuple:
    """(dx, dy) as given when it is a unit vector to round-off, else None."""
    n = math.hypot(dx, dy)
    return (dx, dy) if abs(n - 1.0) <= UNIT_TOL else None


# -- out -------------------------------------------------------------------------------
def _frame(rows: list, columns: tuple, ints: tuple = ()) -> pd.DataFrame:
    data = {}
    for k, c in enumerate(columns):
        values = [r[k] for r in rows]
        if c in ints:
            data[c] = pd.array([None if v is None else int(v) for v in values], dtype="Int64")
        elif values and all(isinstance(v, (bool, np.bool_)) or v is None for v in values) \
                and any(v is not None for v in values):
            data[c] = pd.array(values, dtype="boolean")
        elif all(v is None or isinstance(v, str) for v in values):
            data[c] = pd.Series(values, dtype=object)
        else:
            data[c] = pd.array([np.nan if v is None else float(v) for v in values], dtype=float)
    return pd.DataFrame(data, columns=list(columns))


def _total_length(L0: float, n: int):
    """A float x with fl(x / n) == L0 (the cable's whole unstretched length), or None."""
    x = L0 * n
    for k in range(LENGTH_SEARCH + 1):
        for cand in {x, *(_step(x, k, s) for s in (1.0, -1.0))}:
            if cand / n == L0:
                return cand
    return None


def _step(x: float, k: int, sign: float) -> float:
    for _ in range(k):
        x = float(np.nextafter(x, sign * math.inf))
    return x


def to_tables(s) -> Tables:
    """The tables of a structure; see the module notes for the columns."""
    from .fibres import FibreSection
    xy = s._xy.array()
    owner = {}
    for m in s.members:
        for n in m.node_array[1:-1].tolist():
            owner[n] = m.id
    names = s._name_of
    nodes = _frame([(i, float(x), float(y), names.get(i), owner.get(i)) for i, (x, y) in enumerate(xy)],
                   COLUMNS["nodes"], ints=("id", "member"))
    sec_rows, fibre_rows = [], []
    for k, sec in enumerate(s._sections):
        if isinstance(sec, FibreSection):
            sec_rows.append((k, "fibre", sec.E, None, None, sec.density, sec.fy, sec.depth, None,
                             None, None, sec.H, sec.W, sec.Z, sec.shape))
            fibre_rows += [(k, float(y), float(a)) for y, a in zip(sec.y, sec.dA)]
        else:
            sec_rows.append((k, "elastic", sec.E, sec.A, sec.I, sec.density, sec.fy, sec.depth,
                             sec.G, sec.shear_area, sec.shear_factor, None, None, None, None))
    sections = _frame(sec_rows, COLUMNS["sections"], ints=("id",))
    fibres = _frame(fibre_rows, COLUMNS["fibres"], ints=("section",))
    section_of = {id(sec): k for k, sec in enumerate(s._sections)}
    bar_L0 = s._bar_L0.array()
    hinges = s.__dict__.get("_hinges", {})
    member_rows = []
    for m in s.members:
        n = len(m.elements)
        a, b = m.ends
        hinge = stiffness = None
        if m.id in hinges:
            k0, k1 = hinges[m.id]
            hinge = {(True, False): "start", (False, True): "end", (True, True): "both"}[
                (math.isfinite(k0), math.isfinite(k1))]
            stiffness = k0 if math.isfinite(k0) else k1
        total = segment = None
        if m.kind == "cable":
            L0 = float(bar_L0[m.elements[0]])
            total = _total_length(L0, n)
            segment = L0 if total is None else None
        member_rows.append((m.id, m.kind, a, b, n, section_of[id(m.section)], m.name, hinge,
                            stiffness, total, segment, None, None, None, None))
    members = _frame(member_rows, COLUMNS["members"][:15], ints=("id", "start", "end", "segments", "section"))
    if members["segment_length"].isna().all():
        members = members.drop(columns="segment_length")
    members = members.drop(columns=["pretension", "rise", "radius", "shape"])
    supports = []
    fixed = {}
    for node, d in sorted(s._fixed):
        fixed.setdefault(node, []).append(("ux", "uy", "rz")[d])
    supports += [(n, "fix", " ".join(d), None, None, None, None) for n, d in fixed.items()]
    supports += [(n, "spring", ("ux", "uy", "rz")[d], k, None, None, None)
                 for (n, d), k in sorted(s._springs.items())]
    supports += [(n, "impose", ("ux", "uy", "rz")[d], v, c, None, None)
                 for (n, d, c), v in s._imposed.items()]
    supports += [(n, "roller", None, None, None, dx, dy) for n, (dx, dy) in sorted(s._inclined.items())]
    supports = _frame(supports, COLUMNS["supports"], ints=("node",))
    loads = []
    for (n, d, c), v in s._loads.items():   # runs of one node's components in insertion order
        last = loads[-1] if loads else None
        if last is not None and last[0] == "nodal" and last[1] == n and last[-1] == c and \
                all(last[3 + j] is None for j in range(d, 3)):
            last[3 + d] = v
        else:
            row = ["nodal", n, None, None, None, None, None, None, None, None, None, None, None, c]
            row[3 + d] = v
            loads.append(row)
    for (n, c), (fx, fy) in s._followers.items():
        loads.append(["follower", n, None, fx, fy, None, None, None, None, None, None, None, None, c])
    for mid, qx, qy, p, t, c in s._line_loads:
        loads.append(["line", None, mid, None, None, None, qx, qy, p, t, None, None, None, c])
    if s._gravity is not None:
        g, dx, dy, c = s._gravity
        loads.append(["gravity", None, None, None, None, None, None, None, None, None, g, dx, dy, c])
    loads = _frame([tuple(r) for r in loads], COLUMNS["loads"], ints=("node", "member"))
    obstacles = list(dict.fromkeys(o for _, o in s._contacts))
    contact_rows = []
    for n, o in s._contacts:
        k = obstacles.index(o)
        if hasattr(o, "normal"):
            contact_rows.append((n, k, "line", o.point[0], o.point[1], o.normal[0], o.normal[1], None))
        else:
            contact_rows.append((n, k, "circle", o.centre[0], o.centre[1], None, None, o.radius))
    contacts = _frame(contact_rows, COLUMNS["contacts"], ints=("node", "obstacle"))
    masses = _frame([(n, m, j) for n, (m, j) in sorted(s.masses().items())], COLUMNS["masses"],
                    ints=("node",))
    structure = pd.DataFrame({"name": [s.name or None], "units": [s.units.system]})
    return Tables(structure=structure, nodes=nodes, sections=sections, fibres=fibres,
                  members=members, supports=supports, loads=loads, contacts=contacts,
                  masses=masses)


# -- in ------------------------------------------------------------------------------------
def _sections(sections, fibres) -> dict:
    """Section objects by label."""
    from .fibres import FibreSection
    from .sections import Section
    if isinstance(sections, Mapping):
        out = {}
        for k, sec in sections.items():
            if not isinstance(sec, (Section, FibreSection)):
                raise TypeError(f"sections[{k!r}] must be a largerot.Section or FibreSection, got {sec!r}.")
            out[_label(k)] = sec
        return out
    if sections is None:
        return {}
    t = _Table("sections", sections, ("E",))
    f = _Table("fibres", fibres, ("section", "y", "dA"))
    layers = {}
    for i in range(len(f)):
        layers.setdefault(f.key(i, "section"), []).append(
            (f.number(i, "y", required=True), f.number(i, "dA", required=True)))
    labels = [t.key(i, "id") for i in range(len(t))] if "id" in t.columns else list(range(len(t)))
    out = {}
    for i, k in enumerate(labels):
        if k in out:
            raise ModelError(f"{t.where(i, 'id')}: duplicate id {k!r}.")
        kind = t.choice(i, "kind", ("elastic", "fibre"), "elastic")
        where = t.where(i)
        if kind == "fibre":
            if k not in layers:
                raise ModelError(f"{where}: fibre section {k!r} has no rows in the fibres table.")
            y, dA = np.array(layers.pop(k)).T
            out[k] = _wrap(where, FibreSection, t.number(i, "E", required=True),
                           t.number(i, "fy", required=True), t.number(i, "H", 0.0), y, dA,
                           depth=t.number(i, "depth", 0.0), W=t.number(i, "W", 0.0),
                           Z=t.number(i, "Z", 0.0), shape=t.text(i, "shape", ""),
                           density=t.number(i, "density", 0.0))
        else:
            out[k] = _elastic(t, i)
    if layers:
        k = next(iter(layers))
        raise ModelError(f"fibres table: section {k!r} is not a fibre section of the sections table.")
    return out


def _elastic(t: _Table, i: int):
    """An elastic Section from row i of a sections (or members) table."""
    from .sections import Section
    where = t.where(i)
    As, kappa = t.number(i, "shear_area"), t.number(i, "shear_factor")
    sec = _wrap(where, Section, E=t.number(i, "E", required=True), A=t.number(i, "A", required=True),
                I=t.number(i, "I", 0.0), density=t.number(i, "density", 0.0), fy=t.number(i, "fy"),
                depth=t.number(i, "depth"), G=t.number(i, "G"), shear_area=As,
                shear_factor=kappa if As is None else None)
    if As is not None and kappa is not None:
        # both written by to_tables: the factor as it was (A_s/A may differ from it by an ulp)
        if abs(kappa - sec.shear_factor) > 1e-12 * abs(kappa):
            raise ModelError(f"{where}: `shear_area` {As!r} and `shear_factor` {kappa!r} disagree "
                             f"(A_s/A = {sec.shear_factor!r}); give one of them.")
        object.__setattr__(sec, "shear_factor", kappa)
    return sec


def _inline_sections(members: _Table) -> list:
    """One section per member row from its own E, A, I... columns; equal rows share one."""
    shared, out = {}, []
    for i in range(len(members)):
        values = tuple(members.number(i, c) for c in _SECTION_COLUMNS)
        if values not in shared:
            shared[values] = _elastic(members, i)
        out.append(shared[values])
    return out


def from_tables(nodes, members, supports=None, loads=None, *, sections=None, fibres=None,
                contacts=None, masses=None, structure=None, units=None, name=None):
    """Build a Structure from tables; see the module notes for the columns."""
    from .model import Structure
    st = _Table("structure", structure)
    if len(st) > 1:
        raise ModelError(f"The structure table must have one row, got {len(st)}.")
    t_units = st.text(0, "units") if len(st) else None
    t_name = st.text(0, "name") if len(st) else None
    for word, kw, tv in (("units", units, t_units), ("name", name, t_name)):
        if kw is not None and tv is not None and kw != tv:
            raise ModelError(f"`{word}` = {kw!r} disagrees with the structure table's {tv!r}; give one.")
    s = _wrap("structure table, row 0", Structure, units=units or t_units or "N-m", name=name or t_name)

    tn = _Table("nodes", nodes, ("x", "y"))
    tm = _Table("members", members, ("start", "end"))
    node_ids = tn.ids()
    if sorted(node_ids) != list(range(len(node_ids))):
        bad = next((i for i, v in enumerate(node_ids) if not 0 <= v < len(node_ids)), 0)
        raise ModelError(f"{tn.where(bad, 'id')}: node ids must be 0, 1, …, {len(node_ids) - 1} "
                         f"(the structure keeps them), got {node_ids[bad]}.")
    row_of_node = {v: i for i, v in enumerate(node_ids)}
    member_ids = tm.ids()
    if sorted(member_ids) != list(range(len(member_ids))):
        bad = next((i for i, v in enumerate(member_ids) if not 0 <= v < len(member_ids)), 0)
        raise ModelError(f"{tm.where(bad, 'id')}: member ids must be 0, 1, …, {len(member_ids) - 1} "
                         f"(the structure keeps them), got {member_ids[bad]}.")
    row_of_member = {v: i for i, v in enumerate(member_ids)}

    # sections
    if sections is not None:
        if "section" not in tm.columns:
            raise ModelError("The members table has no column 'section' (required with a sections table).")
        by_label = _sections(sections, fibres)
        member_section = []
        for i in range(len(tm)):
            k = tm.key(i, "section")
            if k not in by_label:
                raise ModelError(f"{tm.where(i, 'section')}: unknown section {k!r}; sections: "
                                 f"{', '.join(map(repr, by_label))}.")
            member_section.append(by_label[k])
    elif "E" in tm.columns:
        member_section = _inline_sections(tm)
    else:
        raise ModelError("The members table needs a 'section' column and a sections table, "
                         "or the section's own columns (E, A, I...) on each row.")

    # nodes: coordinates, names, interior nodes per member
    xy = [(tn.number(i, "x", required=True), tn.number(i, "y", required=True)) for i in range(len(tn))]
    interior = {}
    for uid in sorted(node_ids):
        i = row_of_node[uid]
        m = tn.integer(i, "member")
        if m is None:
            continue
        if m not in row_of_member:
            raise ModelError(f"{tn.where(i, 'member')}: unknown member {m}.")
        if tn.text(i, "name") is not None:
            raise ModelError(f"{tn.where(i, 'name')}: node {uid} is an interior node of member {m}; "
                             "only the nodes joined by members may be named.")
        interior.setdefault(m, []).append(uid)

    # gravity first: a cable that sags hangs along it
    tl = _Table("loads", loads, ("kind",))
    kinds = [tl.choice(i, "kind", ("nodal", "follower", "line", "gravity")) for i in range(len(tl))]
    for i in [i for i, k in enumerate(kinds) if k == "gravity"]:
        _gravity(s, tl, i)

    def node_ref(t: _Table, i: int, column: str) -> int:
        v = t.raw(i, column)
        if v is None:
            raise ModelError(f"{t.where(i, column)}: a node is required.")
        if isinstance(v, str) and _label(v) == v.strip():          # a name
            names = s._named
            if v.strip() in names:
                return names[v.strip()]
            raise ModelError(f"{t.where(i, column)}: unknown node name {v.strip()!r}.")
        n = t.integer(i, column, required=True)
        if not 0 <= n < s.n_nodes:            # a member's interior node may be loaded too
            raise ModelError(f"{t.where(i, column)}: unknown node {n} (the structure has nodes "
                             f"0…{s.n_nodes - 1}).")
        return n

    # check every member row's references before anything is built
    ends = []
    for i in range(len(tm)):
        a, b = _end_node(tm, i, "start", row_of_node, tn), _end_node(tm, i, "end", row_of_node, tn)
        ends.append((a, b))

    created = {}

    def make_node(uid: int) -> None:
        i = row_of_node[uid]
        got = _wrap(tn.where(i), s.node, *xy[i], name=tn.text(i, "name"))
        if got != uid:
            raise ModelError(f"{tn.where(i, 'id')}: node {uid} would be node {got} of the structure: "
                             "list the interior nodes of every meshed member (column 'member') or none.")
        created[uid] = True

    def make_member(mid: int) -> None:
        i = row_of_member[mid]
        for e in ends[i]:
            if e not in created:
                raise ModelError(f"{tm.where(i)}: member {mid} starts or ends at node {e}, which "
                                 "comes after the interior nodes of a later member in the nodes "
                                 "table; list the nodes in the order they were made.")
        inner = interior.get(mid, [])
        pts = [xy[row_of_node[u]] for u in inner]
        got = _member(s, tm, i, mid, ends[i], member_section[i], pts)
        if list(got.node_array[1:-1]) != inner and inner:
            raise ModelError(f"{tm.where(i)}: the interior nodes of member {mid} in the nodes table "
                             f"({inner}) are not numbered as the structure numbers them "
                             f"({got.node_array[1:-1].tolist()}).")
        for u in inner:
            created[u] = True

    if interior:
        meshed = [mid for mid in member_ids if mid not in interior
                  and _segments_of(tm, row_of_member[mid]) not in (1,)]
        if meshed:
            i = row_of_member[meshed[0]]
            raise ModelError(f"{tm.where(i, 'segments')}: the nodes table lists the interior nodes of "
                             "some members (column 'member') but not of this one; list all or none.")
    next_member = 0
    for uid in sorted(node_ids):
        if uid in created:
            continue
        m = tn.integer(row_of_node[uid], "member")
        if m is None:
            make_node(uid)
            continue
        while next_member <= m:
            make_member(next_member)
            next_member += 1
    while next_member < len(member_ids):
        make_member(next_member)
        next_member += 1

    _supports(s, _Table("supports", supports, ("node", "kind")), node_ref)
    for i, kind in enumerate(kinds):
        if kind != "gravity":
            _load(s, tl, i, kind, node_ref)
    _contacts(s, _Table("contacts", contacts, ("node", "shape", "x", "y")), node_ref)
    tm = _Table("masses", masses, ("node", "m"))
    for i in range(len(tm)):
        _wrap(tm.where(i), s.mass, node_ref(tm, i, "node"), tm.number(i, "m", required=True),
              tm.number(i, "inertia", 0.0))
    return s


def _end_node(t: _Table, i: int, column: str, row_of_node: dict, tn: _Table) -> int:
    """A member end: a node id, or the name of a node of the nodes table."""
    v = t.raw(i, column)
    if v is None:
        raise ModelError(f"{t.where(i, column)}: a node is required.")
    if isinstance(v, str) and not isinstance(_label(v), int):
        name = v.strip()
        for uid, r in row_of_node.items():
            if tn.text(r, "name") == name:
                return uid
        raise ModelError(f"{t.where(i, column)}: unknown node name {name!r}.")
    n = t.integer(i, column, required=True)
    if n not in row_of_node:
        raise ModelError(f"{t.where(i, column)}: unknown node {n} (the nodes table has ids "
                         f"0…{len(row_of_node) - 1}).")
    return n


def _segments_of(t: _Table, i: int):
    n = t.integer(i, "segments")
    if n is not None and n < 1:
        raise ModelError(f"{t.where(i, 'segments')}: expected a positive integer, got {n}.")
    return n


def _member(s, t: _Table, i: int, mid: int, ends: tuple, section, pts: list):
    """Add member ``mid`` from row i; ``pts`` its listed interior nodes' coordinates."""
    where = t.where(i)
    kind = t.choice(i, "kind", ("beam", "bar", "cable"), "beam")
    a, b = ends
    n = _segments_of(t, i)
    name = t.text(i, "name")
    hinge, k = t.text(i, "hinge"), t.number(i, "hinge_stiffness")
    if k is not None and hinge is None:
        k = None if k == 0.0 else k             # 0 is "no spring": fine without a hinge
    rise, radius, shape = t.number(i, "rise"), t.number(i, "radius"), t.text(i, "shape")
    L, L0, T = t.number(i, "unstretched_length"), t.number(i, "segment_length"), t.number(i, "pretension")
    if pts:
        if n is not None and n != len(pts) + 1:
            raise ModelError(f"{t.where(i, 'segments')}: member {mid} has {n} segments but the nodes "
                             f"table lists {len(pts)} interior nodes of it (expected {n - 1}).")
        n = len(pts) + 1
        if rise is not None or radius is not None:
            raise ModelError(f"{where}: member {mid} has its interior nodes listed; leave `rise` "
                             "and `radius` blank.")
    if kind != "cable" and any(v is not None for v in (L, L0, T)):
        raise ModelError(f"{where}: `unstretched_length`, `segment_length` and `pretension` are "
                         f"for cables; member {mid} is a {kind}.")
    if kind == "cable":
        if hinge is not None:
            raise ModelError(f"{t.where(i, 'hinge')}: a cable carries no moment; leave `hinge` blank.")
        if rise is not None or radius is not None:
            raise ModelError(f"{where}: a cable hangs by its own length; give `unstretched_length`, "
                             "not `rise` or `radius`.")
        if not pts and L0 is None:
            return _wrap(where, s.cable, a, b, section, n, unstretched_length=L, pretension=T, name=name)
        n = n or 1
        if L0 is None:
            if T is not None:
                raise ModelError(f"{where}: with interior nodes listed give the cable's "
                                 "`unstretched_length`, not `pretension`.")
            chord = math.hypot(*np.subtract(s._xy[b], s._xy[a]))
            L0 = (chord if L is None else L) / n
        elif L is not None and abs(L0 * n - L) > 1e-12 * L:
            raise ModelError(f"{where}: `segment_length` {L0!r} × {n} disagrees with "
                             f"`unstretched_length` {L!r}; give one.")
        if not L0 > 0.0:
            raise ModelError(f"{where}: a cable's unstretched length must be positive, got {L0 * n!r}.")
        return _wrap(where, s._member, "cable", a, b, section, n, points=pts or None, L0=L0, name=name)
    spec = _wrap(where, s._hinge_spec, mid, kind, section, hinge, k)
    if not pts and (rise is not None or radius is not None):
        return _wrap(where, s.arc, a, b, section, rise=rise, radius=radius, segments=n or 16,
                     shape=shape or "circle", kind=kind, hinge=hinge, hinge_stiffness=k, name=name)
    if shape is not None and not pts:
        raise ModelError(f"{t.where(i, 'shape')}: a curved member needs its `rise` or `radius`.")
    n = n or 1
    curved = bool(pts) and not _straight(s, a, b, pts)
    member = _wrap(where, s._member, kind, a, b, section, n, points=pts or None, curved=curved,
                   name=name)
    return s._hinged(member, spec)


def _straight(s, a: int, b: int, pts: list) -> bool:
    """Interior points where a straight member would put them (bit for bit)."""
    pa, pb = np.array(s._xy[a]), np.array(s._xy[b])
    n = len(pts) + 1
    t = np.arange(1, n)[:, None] / n
    return bool(np.array_equal(pa + t * (pb - pa), np.array(pts, dtype=float)))


_DOF_NAMES = ("ux", "uy", "rz")


def _supports(s, t: _Table, node_ref) -> None:
    for i in range(len(t)):
        node = node_ref(t, i, "node")
        kind = t.choice(i, "kind", ("fix", "spring", "impose", "roller"))
        where = t.where(i)
        if kind == "roller":
            dx, dy = t.number(i, "dx", required=True), t.number(i, "dy", required=True)
            _wrap(where, s.roller, node, (dx, dy))
            given = _unit_or_given(dx, dy)
            if given is not None:
                s._inclined[node] = given          # a unit vector stays as written
            continue
        text = t.text(i, "dof")
        if kind == "fix":
            dofs = tuple((text or "").replace(",", " ").replace("+", " ").split())
            for d in dofs:
                if d not in _DOF_NAMES:
                    raise ModelError(f"{t.where(i, 'dof')}: unknown DOF {d!r}; use ux, uy, rz.")
            _wrap(where, s.fix, node, *dofs)
            continue
        dof = t.choice(i, "dof", _DOF_NAMES)
        value = t.number(i, "value", required=True)
        if kind == "spring":
            _wrap(where, s.spring, node, dof, value)
        else:
            _wrap(where, s.impose, node, dof, value, constant=t.flag(i, "constant"))


def _load(s, t: _Table, i: int, kind: str, node_ref) -> None:
    where = t.where(i)
    constant = t.flag(i, "constant")
    if kind == "line":
        v = t.raw(i, "member")
        if v is None:
            raise ModelError(f"{t.where(i, 'member')}: a line load needs its member.")
        member = _label(v)
        if isinstance(member, int) and not 0 <= member < len(s.members):
            raise ModelError(f"{t.where(i, 'member')}: unknown member {member}.")
        _wrap(where, s.line_load, member, t.number(i, "qx", 0.0), t.number(i, "qy", 0.0),
              normal=t.number(i, "normal", 0.0), tangential=t.number(i, "tangential", 0.0),
              constant=constant)
        return
    node = node_ref(t, i, "node")
    if kind == "follower":
        _wrap(where, s.load, node, t.number(i, "fx", 0.0), t.number(i, "fy", 0.0),
              mz=t.number(i, "mz", 0.0), constant=constant, follower=True)
        return
    for d, c in enumerate(("fx", "fy", "mz")):
        v = t.number(i, c)
        if v is None:
            continue
        if v != 0.0:
            _wrap(where, s.load, node, **{c: v}, constant=constant)
        else:                                   # a zero kept as given (loads that cancelled)
            key = (node, d, constant)
            s._loads[key] = s._loads.get(key, 0.0) + v
            s._changed()


def _gravity(s, t: _Table, i: int) -> None:
    where = t.where(i)
    if s._gravity is not None:
        raise ModelError(f"{where}: a second gravity row; a structure has one gravity.")
    dx, dy = t.number(i, "dx", 0.0), t.number(i, "dy", -1.0 if t.raw(i, "dx") is None else 0.0)
    _wrap(where, s.gravity, t.number(i, "g"), direction=(dx, dy), constant=t.flag(i, "constant")
          if t.raw(i, "constant") is not None else True)
    given = _unit_or_given(dx, dy)
    if given is not None:
        g, _, _, c = s._gravity
        s._gravity = (g, *given, c)


def _contacts(s, t: _Table, node_ref) -> None:
    from .elements.contact import Circle, Line
    obstacles = {}
    for i in range(len(t)):
        node = node_ref(t, i, "node")
        label = t.key(i, "obstacle", required=False)
        shape = t.choice(i, "shape", ("line", "circle"))
        x, y = t.number(i, "x", required=True), t.number(i, "y", required=True)
        if shape == "line":
            nx, ny = t.number(i, "nx", required=True), t.number(i, "ny", required=True)
            spec = ("line", x, y, nx, ny)
        else:
            spec = ("circle", x, y, t.number(i, "radius", required=True))
        if label is not None and label in obstacles:
            obstacle, first = obstacles[label]
            if first != spec:
                raise ModelError(f"{t.where(i, 'obstacle')}: obstacle {label!r} is given differently "
                                 "on an earlier row.")
        else:
            if shape == "line":
                obstacle = _wrap(t.where(i), Line, (x, y), (nx, ny))
                given = _unit_or_given(nx, ny)
                if given is not None:
                    object.__setattr__(obstacle, "normal", given)   # a unit normal as written
            else:
                obstacle = _wrap(t.where(i), Circle, (x, y), spec[3])
            if label is not None:
                obstacles[label] = (obstacle, spec)
        _wrap(t.where(i), s.contact, node, obstacle)
