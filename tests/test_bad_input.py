"""One error vocabulary: every kind of bad input gives one exception type and a message
naming the parameter, node or value (issue 14, item 3).

A wrong type is a TypeError (strings are never converted to numbers), a bad value a
``lr.ModelError`` (a ValueError); suspicious but legal input an ``lr.InputWarning``.
The expectations are the library's own contract (common practice, no source: Python's
TypeError/ValueError convention), so each row checks the type and a message fragment.
"""
import math
import warnings

import numpy as np
import pytest

import largerot as lr
from largerot import examples
from largerot.export import animation_points, save_figure

SEC = lr.Section(E=1.0, A=1.0, I=1.0)


def cantilever():
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.beam(a, b, SEC)
    s.fix(a)
    s.load(b, fy=-1e-3)
    return s


def two_nodes():
    s = lr.Structure()
    return s, s.node(0.0, 0.0), s.node(1.0, 0.0)


def from_tables(table: str, edit):
    """The cantilever's tables with one table edited by ``edit(frame)``, built back."""
    t = cantilever().to_tables()
    t[table] = edit(t[table].copy())
    return lr.Structure.from_tables(**t)


def _set(column, row, value):
    def edit(frame):
        frame[column] = frame[column].astype(object)
        frame.loc[row, column] = value
        return frame
    return edit


@pytest.fixture(scope="module")
def path():
    return lr.trace(cantilever(), lr.by_load(0.1), max_steps=2)


PATH_ROWS = [
    # (id, f(path), exception, fragment)
    ("path displacement unknown node", lambda p: p.displacement(99, "uy"), lr.ModelError, "unknown node 99"),
    ("path displacement unknown name", lambda p: p.displacement("1", "uy"), lr.ModelError,
     "unknown node name '1'"),
    ("path displacement node as float", lambda p: p.displacement(1.0, "uy"), TypeError,
     "node id must be an integer"),
    ("path displacement unknown dof", lambda p: p.displacement(1, "uz"), lr.ModelError, "Unknown DOF 'uz'"),
    ("path index out of range", lambda p: p[99], lr.ModelError, "Point index 99 is out of range"),
    ("path negative index out of range", lambda p: p.point(-99), lr.ModelError, "Point index -99"),
    ("path index 2.5", lambda p: p[2.5], lr.ModelError, "`i` must be a whole number"),
    ("path shape index", lambda p: p.shape(99), lr.ModelError, "Point index 99"),
    ("path reactions index", lambda p: p.reactions(7), lr.ModelError, "Point index 7"),
    ("path member_forces index", lambda p: p.member_forces(5), lr.ModelError, "Point index 5"),
    ("path coordinates index as str", lambda p: p.coordinates("0"), TypeError, "`i` must be an integer"),
    ("point displacement unknown node", lambda p: p[0].displacement(5, "ux"), lr.ModelError, "unknown node 5"),
    ("explore unknown node", lambda p: lr.widgets.explore(p, node=999), lr.ModelError, "explore: unknown node 999"),
    ("explore not a path", lambda p: lr.widgets.explore("path"), TypeError, "EquilibriumPath"),
    ("explore frequencies not a bool", lambda p: lr.widgets.explore(p, frequencies="yes"), TypeError,
     "`frequencies` must be True or False, got 'yes'"),
    ("explore frequency curve without frequencies", lambda p: lr.widgets.explore(p, node=-1, dof="f1"),
     lr.ModelError, "unknown node -1"),
    ("save_figure index", lambda p: save_figure(p, "unused.png", i=99), lr.ModelError, "Point index 99"),
    ("export frames 2.5", lambda p: lr.widgets.export_animation(p, "unused.gif", frames=2.5),
     lr.ModelError, "`frames` must be a whole number"),
    ("export unknown node", lambda p: lr.widgets.export_animation(p, "unused.gif", node=42, dof="ux"),
     lr.ModelError, "unknown node 42"),
    ("export fps 0", lambda p: lr.widgets.export_animation(p, "unused.gif", fps=0), lr.ModelError,
     "`fps` must be positive"),
]

ROWS = [
    # model: nodes and members
    ("node x as str", lambda: lr.Structure().node("1.5", 0), TypeError, "Node 0 x must be a number, got '1.5'"),
    ("node y NaN", lambda: lr.Structure().node(0, math.nan), lr.ModelError, "Node 0 y must be finite"),
    ("node at 1e300", lambda: lr.Structure().node(1e300, 0.0), lr.ModelError, "Node 0 x = 1e+300 is beyond"),
    ("beam section None", lambda: (lambda s, a, b: s.beam(a, b, None))(*two_nodes()), TypeError,
     "Member 0: `section` must be a largerot.Section"),
    ("cable section None", lambda: (lambda s, a, b: s.cable(a, b, None))(*two_nodes()), TypeError,
     "`section`"),
    ("beam unknown node", lambda: (lambda s, a, b: s.beam(a, 7, SEC))(*two_nodes()), lr.ModelError, "unknown node 7"),
    ("beam node as float", lambda: (lambda s, a, b: s.beam(a, 1.0, SEC))(*two_nodes()), TypeError,
     "node id must be an integer, got 1.0"),
    ("segments 0", lambda: (lambda s, a, b: s.beam(a, b, SEC, segments=0))(*two_nodes()), lr.ModelError,
     "`segments` must be a positive integer, got 0"),
    ("segments 2.5", lambda: (lambda s, a, b: s.bar(a, b, SEC, segments=2.5))(*two_nodes()), lr.ModelError,
     "`segments` must be a whole number, got 2.5"),
    ("segments as str", lambda: (lambda s, a, b: s.bar(a, b, SEC, segments="4"))(*two_nodes()), TypeError,
     "`segments` must be an integer"),
    ("fix unknown node name", lambda: cantilever().fix("1"), lr.ModelError, "fix: unknown node name '1'"),
    ("fix node as list", lambda: cantilever().fix([1]), TypeError, "fix: node id must be an integer"),
    # end releases and curved members
    ("hinge unknown", lambda: (lambda s, a, b: s.beam(a, b, SEC, hinge="middle"))(*two_nodes()),
     lr.ModelError, "Member 0: `hinge` must be \"start\", \"end\" or \"both\", got 'middle'"),
    ("hinge as bool", lambda: (lambda s, a, b: s.beam(a, b, SEC, hinge=True))(*two_nodes()),
     TypeError, "Member 0: `hinge` must be"),
    ("hinge_stiffness negative", lambda: (lambda s, a, b: s.beam(a, b, SEC, hinge="end",
                                                                 hinge_stiffness=-1.0))(*two_nodes()),
     lr.ModelError, "`hinge_stiffness` must be non-negative, got -1.0"),
    ("hinge_stiffness as str", lambda: (lambda s, a, b: s.beam(a, b, SEC, hinge="end",
                                                               hinge_stiffness="5"))(*two_nodes()),
     TypeError, "Member 0 hinge_stiffness must be a number"),
    ("hinge_stiffness without hinge", lambda: (lambda s, a, b: s.beam(a, b, SEC, hinge_stiffness=5.0))(*two_nodes()),
     lr.ModelError, "`hinge_stiffness` needs `hinge`"),
    ("hinge on a bar", lambda: (lambda s, a, b: s.arc(a, b, SEC, rise=0.2, kind="bar", hinge="end"))(*two_nodes()),
     lr.ModelError, "a bar carries no moment"),
    ("hinge on a fibre section", lambda: (lambda s, a, b: s.beam(a, b, lr.FibreSection.rectangle(E=1.0, fy=1.0, width=0.1, depth=0.1, n_fibres=4), hinge="start"))(*two_nodes()),
     lr.ModelError, "not on a FibreSection"),
    ("arc rise and radius", lambda: (lambda s, a, b: s.arc(a, b, SEC, rise=0.2, radius=3.0))(*two_nodes()),
     lr.ModelError, "Member 0 (nodes 0→1): Give the curve's `rise` or its `radius`"),
    ("arc radius too small", lambda: (lambda s, a, b: s.arc(a, b, SEC, radius=0.4))(*two_nodes()),
     lr.ModelError, "`radius` 0.4 is smaller than half the chord (0.5)"),
    ("arc rise zero", lambda: (lambda s, a, b: s.arc(a, b, SEC, rise=0.0))(*two_nodes()),
     lr.ModelError, "`rise` must be non-zero"),
    ("arc rise as str", lambda: (lambda s, a, b: s.arc(a, b, SEC, rise="1"))(*two_nodes()),
     TypeError, "`rise` must be a number, got '1'"),
    ("arc shape unknown", lambda: (lambda s, a, b: s.arc(a, b, SEC, rise=0.2, shape="ellipse"))(*two_nodes()),
     lr.ModelError, "`shape` must be one of 'circle', 'parabola', 'sine', got 'ellipse'"),
    ("arc parabola by radius", lambda: (lambda s, a, b: s.arc(a, b, SEC, radius=2.0, shape="parabola"))(*two_nodes()),
     lr.ModelError, "a parabola needs its `rise`"),
    ("arc kind cable", lambda: (lambda s, a, b: s.arc(a, b, SEC, rise=0.2, kind="cable"))(*two_nodes()),
     lr.ModelError, "`kind` must be \"beam\" or \"bar\", got 'cable'"),
    ("polyline one point", lambda: lr.Structure().polyline([(0.0, 0.0)], SEC), lr.ModelError,
     "`points` must be a sequence of at least two"),
    ("polyline coincident points", lambda: lr.Structure().polyline([(0.0, 0.0), (0.0, 0.0)], SEC),
     lr.ModelError, "Polyline points 0 and 1 coincide"),
    ("polyline unknown node name", lambda: lr.Structure().polyline([(0.0, 0.0), "b"], SEC),
     lr.ModelError, "Polyline point 1: unknown node name 'b'"),
    ("polyline point as list of 3", lambda: lr.Structure().polyline([(0.0, 0.0), (1.0, 2.0, 3.0)], SEC),
     TypeError, "Polyline point 1 must be a node id or name, or an (x, y) pair"),
    ("polyline unknown node", lambda: lr.Structure().polyline([(0.0, 0.0), 5], SEC), lr.ModelError,
     "unknown node 5"),
    ("fix unknown dof", lambda: cantilever().fix(1, "uz"), lr.ModelError, "Unknown DOF 'uz'"),
    ("fix dof not a str", lambda: cantilever().fix(1, 0), TypeError, "A DOF is named by a string"),
    ("load as str", lambda: cantilever().load(1, fy="1"), TypeError, "Load fy on node 1 must be a number"),
    ("load constant not a bool", lambda: cantilever().load(1, fy=1.0, constant="yes"), TypeError,
     "`constant` must be True or False"),
    ("spring stiffness as str", lambda: cantilever().spring(1, "uy", "5"), TypeError, "must be a number, got '5'"),
    ("spring on unknown dof", lambda: cantilever().spring(1, "uz", 5.0), lr.ModelError, "Unknown DOF 'uz'"),
    ("gravity as str", lambda: cantilever().gravity("9.81"), TypeError, "Gravity g must be a number"),
    ("gravity direction of one number", lambda: cantilever().gravity(9.81, direction=(1.0,)), TypeError,
     "`direction` must be a pair"),
    ("line load on unknown member name", lambda: cantilever().line_load("0", qy=1.0), lr.ModelError,
     "unknown member name '0'"),
    ("line load on member as float", lambda: cantilever().line_load(0.0, qy=1.0), TypeError,
     "a member is given as a Member, its integer id or its name"),
    ("line load on unknown member", lambda: cantilever().line_load(7, qy=1.0), lr.ModelError, "Unknown member 7"),
    ("moved to 1e300", lambda: cantilever().moved([[0.0, 0.0], [1e300, 0.0]]), lr.ModelError,
     "Node 1 would move to a non-finite position"),
    # tables (Structure.from_tables): the table, the row and the column named
    ("table member unknown node", lambda: from_tables("members", _set("end", 0, 7)), lr.ModelError,
     "members table, row 0, column 'end': unknown node 7"),
    ("table missing column", lambda: from_tables("nodes", lambda f: f.drop(columns="y")), lr.ModelError,
     "The nodes table has no column 'y' (required)"),
    ("table duplicate node id", lambda: from_tables("nodes", _set("id", 1, 0)), lr.ModelError,
     "nodes table, row 1, column 'id': duplicate id 0 (also row 0)"),
    ("table node ids from 1", lambda: from_tables("nodes", lambda f: f.assign(id=f["id"] + 1)),
     lr.ModelError, "nodes table, row 1, column 'id': node ids must be 0, 1, …, 1"),
    ("table coordinate not a number", lambda: from_tables("nodes", _set("x", 1, "one")), lr.ModelError,
     "nodes table, row 1, column 'x': expected a number, got 'one'"),
    ("table blank coordinate", lambda: from_tables("nodes", _set("y", 0, None)), lr.ModelError,
     "nodes table, row 0, column 'y': a value is required"),
    ("table unknown column", lambda: from_tables("members", lambda f: f.assign(hinge_stifness=1.0)),
     lr.ModelError, "The members table has an unknown column 'hinge_stifness'"),
    ("table unknown section", lambda: from_tables("members", _set("section", 0, "tube")), lr.ModelError,
     "members table, row 0, column 'section': unknown section 'tube'"),
    ("table unknown member kind", lambda: from_tables("members", _set("kind", 0, "rope")), lr.ModelError,
     "members table, row 0, column 'kind': expected one of 'beam', 'bar', 'cable', got 'rope'"),
    ("table segments 2.5", lambda: from_tables("members", _set("segments", 0, 2.5)), lr.ModelError,
     "members table, row 0, column 'segments': expected a whole number, got 2.5"),
    ("table unknown support kind", lambda: from_tables("supports", _set("kind", 0, "clamp")), lr.ModelError,
     "supports table, row 0, column 'kind': expected one of 'fix', 'spring', 'impose', 'roller'"),
    ("table support unknown dof", lambda: from_tables("supports", _set("dof", 0, "ux uz")), lr.ModelError,
     "supports table, row 0, column 'dof': unknown DOF 'uz'"),
    ("table load on unknown node", lambda: from_tables("loads", _set("node", 0, 9)), lr.ModelError,
     "loads table, row 0, column 'node': unknown node 9"),
    ("table load flag not a bool", lambda: from_tables("loads", _set("constant", 0, "maybe")), lr.ModelError,
     "loads table, row 0, column 'constant': expected True or False, got 'maybe'"),
    ("table section E negative", lambda: from_tables("sections", _set("E", 0, -1.0)), lr.ModelError,
     "sections table, row 0: Section `E` must be a finite positive number, got -1.0"),
    ("table member error from the builder", lambda: from_tables("members", _set("end", 0, 0)),
     lr.ModelError, "members table, row 0: Member 0 (nodes 0→0) joins a node to itself"),
    ("table not a frame", lambda: lr.Structure.from_tables([[0, 0]], None), TypeError,
     "The nodes table must be a pandas DataFrame or the path of a CSV file, got list"),
    ("table csv missing", lambda: lr.Structure.from_tables("no-such-nodes.csv", None), lr.ModelError,
     "The nodes table: no file 'no-such-nodes.csv'"),
    # sections
    ("Section E as str", lambda: lr.Section(E="200e9", A=1.0), TypeError, "Section `E` must be a number, got '200e9'"),
    ("Section EA overflows", lambda: lr.Section(E=1e300, A=1e10), lr.ModelError, "stiffness EA"),
    ("Section A zero", lambda: lr.Section(E=1.0, A=0.0), lr.ModelError, "`A` must be a finite positive number"),
    ("Section G without shear area", lambda: lr.Section(E=1.0, A=1.0, I=1.0, G=0.4), lr.ModelError,
     "Section `G` = 0.4 needs `shear_area` or `shear_factor`"),
    ("Section shear factor without G", lambda: lr.Section(E=1.0, A=1.0, I=1.0, shear_factor=0.8),
     lr.ModelError, "Section `shear_factor` = 0.8 needs the shear modulus `G`"),
    ("Section G negative", lambda: lr.Section(E=1.0, A=1.0, I=1.0, G=-1.0, shear_factor=0.8),
     lr.ModelError, "Section `G` must be a finite positive number, got -1.0"),
    ("Section shear area nan", lambda: lr.Section(E=1.0, A=1.0, I=1.0, G=1.0, shear_area=math.nan),
     lr.ModelError, "Section `shear_area` must be a finite positive number, got nan"),
    ("Section shear area and factor", lambda: lr.Section(E=1.0, A=1.0, I=1.0, G=1.0, shear_area=0.8,
                                                         shear_factor=0.8), lr.ModelError, "not both"),
    ("Section GAs overflows", lambda: lr.Section(E=1.0, A=1e10, I=1.0, G=1e300, shear_factor=1.0),
     lr.ModelError, "shear stiffness GAs"),
    ("Section.rectangle G as str", lambda: lr.Section.rectangle(E=1.0, width=1.0, depth=1.0, G="1"),
     TypeError, "Section `G` must be a number"),
    ("Section.tube diameter as str", lambda: lr.Section.tube(E=1.0, diameter="1", wall=0.1), TypeError,
     "`diameter` must be a number"),
    ("FibreSection n_fibres 2.5", lambda: lr.FibreSection.rectangle(E=1.0, fy=1.0, width=1.0, depth=1.0, n_fibres=2.5),
     lr.ModelError, "`n_fibres` must be a whole number"),
    ("FibreSection fy as str", lambda: lr.FibreSection.rectangle(E=1.0, fy="1", width=1.0, depth=1.0), TypeError,
     "`fy` must be a number"),
    ("Circle radius as str", lambda: lr.Circle((0.0, 0.0), "1"), TypeError, "`radius` must be a number"),
    ("Line point as str", lambda: lr.Line(("0", "0"), (0.0, 1.0)), TypeError, "`point` must be a pair of numbers"),
    # controls and trace options
    ("by_load step as str", lambda: lr.by_load("0.5"), TypeError, "`step` must be a number, got '0.5'"),
    ("by_load step 0", lambda: lr.by_load(0), lr.ModelError, "`step` must be non-zero"),
    ("min_step 0", lambda: lr.by_load(0.1, min_step=0.0), lr.ModelError, "`min_step` must be positive"),
    ("min_step NaN", lambda: lr.by_load(0.1, min_step=math.nan), lr.ModelError, "`min_step` must be finite"),
    ("min_step negative", lambda: lr.by_load(0.1, min_step=-1e-3), lr.ModelError, "`min_step` must be positive"),
    ("at_limit unknown", lambda: lr.by_load(0.1, at_limit="skip"), lr.ModelError, "`at_limit` must be one of"),
    ("by_displacement node as float", lambda: lr.by_displacement(1.0, "uy", 0.1), TypeError, "`node` must be a node id"),
    ("by_displacement unknown node name", lambda: lr.trace(cantilever(), lr.by_displacement("1", "uy", 0.1)),
     lr.ModelError, "by_displacement: unknown node name '1'"),
    ("by_displacement dof unknown", lambda: lr.by_displacement(1, "uz", 0.1), lr.ModelError, "`dof` must be one of"),
    ("by_displacement unknown node", lambda: lr.trace(cantilever(), lr.by_displacement(9, "uy", 0.1)),
     lr.ModelError, "by_displacement: unknown node 9"),
    ("by_arc_length step as str", lambda: lr.by_arc_length("0.1"), TypeError, "`step` must be a number"),
    ("by_arc_length desired_iterations 2.5", lambda: lr.by_arc_length(desired_iterations=2.5), lr.ModelError,
     "`desired_iterations` must be a whole number"),
    ("max_steps 2.5", lambda: lr.trace(cantilever(), lr.by_load(0.1), max_steps=2.5), lr.ModelError,
     "`max_steps` must be a whole number, got 2.5"),
    ("max_steps inf", lambda: lr.trace(cantilever(), lr.by_load(0.1), max_steps=math.inf), lr.ModelError,
     "`max_steps` must be a whole number, got inf"),
    ("max_steps negative", lambda: lr.trace(cantilever(), lr.by_load(0.1), max_steps=-1), lr.ModelError,
     "`max_steps` must be at least 0"),
    ("tol 0", lambda: lr.trace(cantilever(), lr.by_load(0.1), tol=0.0), lr.ModelError, "`tol` must be positive, got 0.0"),
    ("tol as str", lambda: lr.trace(cantilever(), lr.by_load(0.1), tol="1e-8"), TypeError, "`tol` must be a number"),
    ("max_iterations 2.5", lambda: lr.trace(cantilever(), lr.by_load(0.1), max_iterations=2.5), lr.ModelError,
     "`max_iterations` must be a whole number"),
    ("target as str", lambda: lr.trace(cantilever(), lr.by_load(0.1), target_load_factor="1"), TypeError,
     "`target_load_factor` must be a number"),
    ("control not a control", lambda: lr.trace(cantilever(), 0.1), TypeError, "`control` must be"),
    ("trace of not a structure", lambda: lr.trace("frame", lr.by_load(0.1)), TypeError, "Expected a largerot.Structure"),
    ("empty structure traced", lambda: lr.trace(lr.Structure(), lr.by_load(0.1), max_steps=3), lr.ModelError,
     "nothing to solve"),
    ("mechanism", lambda: lr.trace((lambda s, a, b: (s.bar(a, b, SEC), s.load(b, fy=1.0), s)[-1])(*two_nodes()),
                                   lr.by_load(0.1)), lr.ModelError, "mechanism"),
    # buckling
    ("buckling modes 0", lambda: lr.buckling(cantilever(), modes=0), lr.ModelError, "`modes` must be a positive integer, got 0"),
    ("buckling modes 2.5", lambda: lr.buckling(cantilever(), modes=2.5), lr.ModelError, "`modes` must be a whole number"),
    ("buckling modes as str", lambda: lr.buckling(cantilever(), modes="2"), TypeError, "`modes` must be an integer"),
    ("imperfect amplitude as str", lambda: lr.imperfect(cantilever(), np.ones(6), "0.01"), TypeError,
     "`amplitude` must be a number"),
    # examples
    ("example segments 0", lambda: examples.shallow_arch(segments=0), lr.ModelError,
     "`segments` must be a positive integer, got 0"),
    ("example segments odd", lambda: examples.shallow_arch(segments=31), lr.ModelError, "`segments` must be even"),
    ("example rise as str", lambda: examples.shallow_arch(rise="0.2"), TypeError, "`rise` must be a number"),
    ("example support unknown", lambda: examples.shallow_arch(support="fixed"), lr.ModelError,
     "`support` must be 'pinned' or 'clamped'"),
    ("example column kind not a str", lambda: examples.column(kind=1), lr.ModelError, "`kind` must be"),
    ("example angle as str", lambda: examples.inclined_cantilever(angle="30"), TypeError, "`angle` must be a number"),
    ("animation frames 0", lambda: animation_points(10, 0), lr.ModelError, "`frames` must be an integer from 1"),
]

# no user mistake may escape as one of these
FORBIDDEN = (IndexError, AttributeError, OverflowError, np.linalg.LinAlgError, KeyError)


def test_the_table_is_large_enough():
    assert len(ROWS) + len(PATH_ROWS) >= 30


@pytest.mark.parametrize("name, f, exc, fragment", ROWS, ids=[r[0] for r in ROWS])
def test_bad_input(name, f, exc, fragment):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", lr.InputWarning)
        with pytest.raises(exc) as info:
            f()
    assert fragment in str(info.value), str(info.value)
    assert not isinstance(info.value, FORBIDDEN), type(info.value)


@pytest.mark.parametrize("name, f, exc, fragment", PATH_ROWS, ids=[r[0] for r in PATH_ROWS])
def test_bad_path_input(path, name, f, exc, fragment, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)           # nothing may be written; if it were, not here
    with pytest.raises(exc) as info:
        f(path)
    assert fragment in str(info.value), str(info.value)
    assert not isinstance(info.value, FORBIDDEN), type(info.value)
    assert not list(tmp_path.iterdir())


def test_model_error_is_a_value_error_and_the_warning_a_user_warning():
    assert issubclass(lr.ModelError, ValueError)
    assert issubclass(lr.InputWarning, UserWarning)
    assert "InputWarning" in lr.__all__


def test_no_load_warns_at_trace_start():
    s, a, b = two_nodes()
    s.beam(a, b, SEC)
    s.fix(a)
    with pytest.warns(lr.InputWarning, match="no load at all") as record:
        p = lr.trace(s, lr.by_load(0.1), max_steps=2)
    assert record[0].filename == __file__          # attributed to the caller's line
    assert np.all(p.u == 0.0)


def test_constant_loads_alone_or_a_reference_load_do_not_warn():
    t = lr.Structure()
    a, b = t.node(0.0, 0.0), t.node(1.0, 0.0)
    t.beam(a, b, SEC)
    t.fix(a)
    t.load(b, fy=-1e-3, constant=True)        # settling under constant loads: legal
    with warnings.catch_warnings():
        warnings.simplefilter("error", lr.InputWarning)
        lr.trace(t, lr.by_load(0.1), max_steps=0)
        lr.trace(cantilever(), lr.by_load(0.1), max_steps=1)


def test_load_on_a_fixed_dof_warns():
    s = cantilever()
    s.load(0, fx=5.0)
    with pytest.warns(lr.InputWarning, match=r"restrained DOFs \(node 0 ux\)"):
        lr.trace(s, lr.by_load(0.1), max_steps=1)


def test_self_weight_at_supports_does_not_warn():
    # gravity lumps half an element's weight onto its support node: legal and usual
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0)
    s.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0, density=1e-3), segments=2)
    s.fix(a)
    s.gravity(constant=False)
    with warnings.catch_warnings():
        warnings.simplefilter("error", lr.InputWarning)
        lr.trace(s, lr.by_load(0.1), max_steps=1)


def test_numpy_scalars_are_numbers():
    s = lr.Structure()
    a = s.node(np.float64(0.0), np.int64(0))
    b = s.node(np.float32(1.0), 0.0)
    sec = lr.Section(E=np.float64(1.0), A=np.int64(1), I=np.float64(1.0))
    s.beam(np.int64(a), np.int32(b), sec, segments=np.int64(2))
    s.fix(np.int64(a))
    s.load(np.int64(b), fy=np.float64(-1e-3))
    p = lr.trace(s, lr.by_load(np.float64(0.1), min_step=np.float64(1e-4)), max_steps=np.int64(2),
                 tol=np.float64(1e-8), target_load_factor=np.float64(0.2))
    assert p.status == "target" and len(p) == 3
    assert p.displacement(np.int64(b), "uy")[np.int64(-1)] < 0.0
    assert p[np.int64(1)].index == 1
    assert lr.trace(s, lr.by_load(0.1), max_steps=2.0).n_negative.size == 3   # a whole float counts
    assert len(lr.buckling(s, modes=np.int64(1))) == 1


def test_empty_path_is_representable(path):
    empty = lr.EquilibriumPath(path.structure, path.free, [], np.zeros((0, len(path.free))), [], [], [],
                               "failed", "nothing converged")
    assert repr(empty) == "EquilibriumPath(0 points, status='failed')"
    assert len(empty) == 0 and empty.u.shape == (0, 3 * path.structure.n_nodes)
    with pytest.raises(lr.ModelError, match="Point index 0 is out of range: the path has 0 points"):
        empty[0]


def test_a_constant_load_that_turns_an_element_inside_out_warns():
    # a bar (EA = 1) pushed by a constant 1.5 past its far support: legal, rarely meant
    s = lr.Structure()
    a, b = s.node(0, 0), s.node(1, 0)
    s.bar(a, b, lr.Section(E=1.0, A=1.0))
    s.fix(a)
    s.fix(b, "uy")
    s.load(b, fx=-1.5, constant=True)
    s.load(b, fx=-0.01)
    with pytest.warns(lr.InputWarning, match="inside out .*bar element 0 of member 0"):
        lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)


def test_displacements_beyond_what_the_widgets_draw_warn():
    from largerot.widgets import data
    s = lr.Structure()
    a, b = s.node(0, 0), s.node(1, 0)
    s.beam(a, b, lr.Section(E=1.0, A=1.0, I=1.0))
    s.fix(a)
    s.load(b, fy=-1.0)
    path = lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)
    lay = data.layout(path.structure, len(path))
    with pytest.warns(lr.InputWarning, match="beyond what the widgets draw"):
        data.frames(path, np.arange(len(path)), lay, scale=1e39)
