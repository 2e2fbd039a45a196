"""Units and names: labels, table columns, name resolution, saving.

The unit texts are the units of each consistent system (common practice, no source:
force × length = moment, force / length² = stress, force = mass × length/s²); the
mechanics checks compare a trace by name with the same trace by id, bit for bit,
and reactions with statics (common practice, no source).
"""
import pickle
import warnings

import numpy as np
import pandas as pd
import pytest

import largerot as lr
from largerot.elements.contact import Line
from largerot.model_figure import plot_model
from largerot.units import SYSTEMS, Units

SEC = lr.Section(E=210e9, A=1e-3, I=1e-6)


def cantilever(named: bool, units="N-m"):
    """A 2 m cantilever, tip loaded sideways, spring and a stop at the tip."""
    s = lr.Structure(units=units)
    a = s.node(0.0, 0.0, name="base" if named else None)
    b = s.node(0.0, 2.0, name="tip" if named else None)
    s.beam("base" if named else a, "tip" if named else b, SEC, segments=6,
           name="pole" if named else None)
    s.fix("base" if named else a)
    s.load("tip" if named else b, fx=1e3, fy=-2e3)
    s.spring("tip" if named else b, "rz", 1e4)
    s.line_load("pole" if named else 0, qx=50.0, constant=True)
    s.contact("tip" if named else b, Line(point=(3.0, 0.0), normal=(-1.0, 0.0)))
    return s


# -- units ------------------------------------------------------------------------
@pytest.mark.parametrize("system, force, length, moment, stress, density, gravity", [
    # common practice, no source: the consistent systems and their mass units
    ("N-m", "N", "m", "N·m", "Pa", "kg/m³", 9.81),
    ("kN-m", "kN", "m", "kN·m", "kPa", "t/m³", 9.81),
    ("N-mm", "N", "mm", "N·mm", "MPa", "t/mm³", 9810.0),
    ("kip-in", "kip", "in", "kip·in", "ksi", "kip·s²/in⁴", 9.81 / 0.0254),
])
def test_unit_text_of_each_system(system, force, length, moment, stress, density, gravity):
    u = Units(system)
    assert (u.of("force"), u.of("length"), u.of("moment"), u.of("stress"), u.of("mass density")) == \
        (force, length, moment, stress, density)
    assert u.of("rotation") == "rad" and u.of("load factor") == ""
    assert u.of("line load") == u.of("translational stiffness") == f"{force}/{length}"
    assert u.of("rotational stiffness") == f"{moment}/rad"
    assert u.gravity == pytest.approx(gravity, rel=1e-12)
    assert u.label("uy of tip", "length") == f"uy of tip [{length}]"
    assert u.label("load factor", "load factor") == "load factor"


def test_default_gravity_follows_the_units():
    # 9.81 m/s² = 9810 mm/s² (common practice, no source): a weight in N-mm with the
    # default g is the SI weight, in N.
    s = lr.Structure(units="N-mm")
    a, b = s.node(0.0, 0.0), s.node(1000.0, 0.0)
    s.bar(a, b, lr.Section(E=210e3, A=100.0, density=7.85e-9))      # t/mm³
    s.gravity()
    assert s.snapshot().gravity[0] == pytest.approx(9810.0)
    # weight ρ·A·L·g = 7.85e-9 · 100 · 1000 · 9810 N = 7.70 N (steel, 100 mm², 1 m)
    assert -s.load_vector(constant=True)[1::3].sum() == pytest.approx(7.85e-9 * 100 * 1000 * 9810)


def test_bad_units_raise_naming_the_value():
    with pytest.raises(lr.ModelError, match=r"Unknown units 'SI'; use one of 'N-m', 'kN-m', 'N-mm', 'kip-in'"):
        lr.Structure(units="SI")
    with pytest.raises(TypeError, match="`units` must be the name of a system"):
        lr.Structure(units=1)
    with pytest.raises(lr.ModelError, match="Unknown kind of quantity 'speed'"):
        Units().of("speed")
    assert set(SYSTEMS) == {"N-m", "kN-m", "N-mm", "kip-in"}


# -- labels ---------------------------------------------------------------------------
def test_labels_use_names_and_units():
    s = cantilever(True, units="kN-m")
    m = s.snapshot()
    for obj in (s, m):
        assert obj.dof_label("tip", "uy") == "uy of tip [m]"
        assert obj.dof_label(3, "rz") == "rz of node 3 [rad]"
        assert obj.dof_label("base", "mz") == "mz at base [kN·m]"
        assert obj.dof_label(0, "fx") == "fx at base [kN]"
        assert obj.node_label(1) == "tip" and obj.node_label(4) == "node 4"
        assert obj.member_label(0) == obj.member_label("pole") == "pole"
        assert obj.node_names == {"base": 0, "tip": 1} and obj.member_names == {"pole": 0}
    u = cantilever(False)
    assert u.member_label(0) == "member 0" and u.node_label(1) == "node 1"


def test_names_unique_and_checked():
    s = lr.Structure()
    s.node(0, 0, name="a")
    with pytest.raises(lr.ModelError, match="Node 1: the name 'a' is taken by node 0"):
        s.node(1, 0, name="a")
    s.node(1, 0, name="b")
    s.beam("a", "b", SEC, name="m")
    c = s.node(2, 0)
    with pytest.raises(lr.ModelError, match="Member 1: the name 'm' is taken by member 0"):
        s.bar("b", c, SEC, name="m")
    with pytest.raises(lr.ModelError, match="Member 1: unknown node name 'x'; named nodes: 'a', 'b'"):
        s.cable("b", "x", SEC)
    with pytest.raises(TypeError, match="`name` must be a string, got 3"):
        s.node(3, 0, name=3)
    with pytest.raises(lr.ModelError, match="`name` must be a non-empty string"):
        s.node(3, 0, name=" ")
    with pytest.raises(lr.ModelError, match="unknown member name 'n'"):
        s.line_load("n", qy=1.0)
    for call in (lambda: s.fix("z"), lambda: s.load("z", fx=1.0), lambda: s.spring("z", "ux", 1.0),
                 lambda: s.contact("z", Line(point=(0, -1), normal=(0, 1)))):
        with pytest.raises(lr.ModelError, match="unknown node name 'z'"):
            call()


# -- the same results by name and by id -------------------------------------------------
def _same_path(p, q):
    np.testing.assert_array_equal(p.load_factor, q.load_factor)
    np.testing.assert_array_equal(p.u, q.u)
    assert p.status == q.status and len(p) == len(q)


@pytest.mark.parametrize("control", ["load", "displacement"])
def test_a_trace_by_name_equals_the_trace_by_id(control):
    by_name, by_id = cantilever(True), cantilever(False)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", lr.InputWarning)
        if control == "load":
            p = lr.trace(by_name, lr.by_load(0.5), max_steps=4)
            q = lr.trace(by_id, lr.by_load(0.5), max_steps=4)
        else:
            p = lr.trace(by_name, lr.by_displacement("tip", "ux", 0.01), max_steps=4)
            q = lr.trace(by_id, lr.by_displacement(1, "ux", 0.01), max_steps=4)
    _same_path(p, q)
    np.testing.assert_array_equal(p.displacement("tip", "ux"), q.displacement(1, "ux"))
    assert p[2].displacement("tip", "uy") == q[2].displacement(1, "uy")
    np.testing.assert_array_equal(lr.buckling(by_name, modes=1).load_factors,
                                  lr.buckling(by_id, modes=1).load_factors)
    df_name = p.to_dataframe(nodes=["tip"])
    df_id = q.to_dataframe(nodes=[1])
    np.testing.assert_array_equal(df_name["ux of tip [m]"], df_id["ux of node 1 [m]"])
    # a user's event reads the point by name
    hit = lr.trace(by_name, lr.by_load(0.5), max_steps=4,
                   events=[lambda pt: pt.displacement("tip", "ux") - 1e-3])
    assert [e.kind for e in hit.events if e.kind == "<lambda>"] == ["<lambda>"]


# -- tables ------------------------------------------------------------------------------
def test_reactions_table_and_vector():
    # statics (common practice, no source): a clamped cantilever's reactions balance
    # the tip load, fx = −P_x, fy = −P_y, and the base moment P_x·L at small λ.
    s = lr.Structure(units="kN-m")
    a, b = s.node(0.0, 0.0, name="base"), s.node(0.0, 2.0, name="tip")
    s.beam(a, b, lr.Section(E=210e6, A=1e-2, I=1e-4), segments=4)
    s.fix("base")
    s.load("tip", fx=1e-3, fy=-2.0)
    p = lr.trace(s, lr.by_load(1.0), max_steps=1)
    R = p.reactions(1)
    assert isinstance(R, pd.DataFrame)
    assert list(R.columns) == ["node", "name", "dof", "force", "value", "unit"]
    assert list(R["dof"]) == ["ux", "uy", "rz"] and list(R["name"]) == ["base"] * 3
    assert list(R["unit"]) == ["kN", "kN", "kN·m"]
    assert R["value"].iloc[0] == pytest.approx(-1e-3, rel=1e-6)
    assert R["value"].iloc[1] == pytest.approx(2.0, rel=1e-9)
    # moment of the loads about the base at the deformed tip (tolerance: the sway of
    # the axial load, 2 kN × 1e-9 m, far below 1e-6 relative)
    assert abs(R["value"].iloc[2]) == pytest.approx(1e-3 * 2.0, rel=1e-3)
    vec = p.reaction_vector(1)
    np.testing.assert_array_equal(vec[[0, 1, 2]], R["value"].to_numpy())
    assert vec.shape == (3 * s.n_nodes,) and not vec[3:].any()


def test_unit_columns_of_path_tables():
    s = cantilever(True, units="N-mm")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", lr.InputWarning)
        p = lr.trace(s, lr.by_load(0.5), max_steps=2)
    df = p.to_dataframe(nodes=["tip", 3], forces=True)
    for col in ("load factor", "ux of tip [mm]", "rz of tip [rad]", "uy of node 3 [mm]",
                "max |M| [N·mm]", "max N [N]", "min N [N]", "slack cables"):
        assert col in df.columns, col
    ft = p.forces_table(-1)
    assert {"member", "N [N]", "V [N]", "M_1 [N·mm]", "M_2 [N·mm]"} <= set(ft.columns)
    assert set(ft["member"]) == {"pole"}
    with pytest.raises(lr.ModelError, match="to_dataframe: unknown node name 'top'"):
        p.to_dataframe(nodes=["top"])


# -- keeping units and names -------------------------------------------------------------
def test_units_and_names_survive_pickle_and_save(tmp_path):
    s = cantilever(True, units="kip-in")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", lr.InputWarning)
        p = lr.trace(s, lr.by_load(0.5), max_steps=2)
    for obj in (s, p):
        copies = [pickle.loads(pickle.dumps(obj)), lr.load(lr.save(obj, tmp_path / "x.lr"))]
        for c in copies:
            m = c.snapshot() if hasattr(c, "snapshot") and not hasattr(c, "load_factor") else c.model
            assert m.units == Units("kip-in")
            assert m.node_names == {"base": 0, "tip": 1} and m.member_names == {"pole": 0}
            assert m.dof_label("tip", "ux") == "ux of tip [in]"
    s2 = lr.load(lr.save(s, tmp_path / "s.lr"))
    s2.node(5.0, 5.0, name="new")               # the loaded builder goes on naming
    with pytest.raises(lr.ModelError, match="the name 'tip' is taken"):
        s2.node(6.0, 6.0, name="tip")


def test_a_structure_saved_before_units_loads_in_si():
    # a Structure pickled without the new attributes (as an older largerot wrote it)
    s = cantilever(False)
    state = s.__getstate__()
    for k in ("units", "_named", "_name_of"):
        state.pop(k)
    old = lr.Structure.__new__(lr.Structure)
    old.__setstate__(state)
    assert old.units == Units("N-m") and old.node_label(1) == "node 1"
    m = old.snapshot()
    mstate = m.__getstate__()
    for k in ("units", "named_nodes", "nodal_loads", "line_loads", "gravity"):
        mstate.pop(k)
    m_old = lr.Model.__new__(lr.Model)
    m_old.__setstate__(mstate)
    assert m_old.units.system == "N-m" and m_old.node_label(1) == "node 1"
    assert m_old.nodal_loads.shape == (0, 4)


# -- the model figure --------------------------------------------------------------------
def test_plot_model_labels_do_not_overlap():
    s = lr.Structure(units="kN-m")
    a, b = s.node(0, 0, name="base"), s.node(0, 4, name="top")
    c, _ = s.node(5, 4, name="tip"), s.node(5, 0, name="foot")
    s.beam(a, b, SEC, 4, name="column")
    s.beam(b, c, SEC, 5, name="girder")
    s.bar("tip", "foot", SEC, name="strut")
    s.fix("base"); s.fix("foot", "ux", "uy")
    s.spring("top", "ux", 500.0)
    s.load("tip", fy=-10.0); s.load("top", fx=2.0, constant=True); s.load("tip", mz=3.0)
    s.line_load("girder", qy=-1.5, constant=True)
    ax = plot_model(s)
    texts = [t for t in ax.texts if t.get_text()]
    shown = {t.get_text() for t in texts}
    for word in ("base", "top", "tip", "foot", "column", "girder", "strut", "k = 500 kN/m",
                 "λ×fy -10 kN; mz 3 kN·m", "fx 2 kN", "qy -1.5 kN/m"):
        assert word in shown, (word, shown)
    assert ax.get_xlabel() == "x [m]" and "kN-m" in ax.get_title()
    renderer = ax.figure.canvas.get_renderer()
    boxes = [t.get_window_extent(renderer) for t in texts]
    overlaps = [(texts[i].get_text(), texts[j].get_text()) for i in range(len(boxes))
                for j in range(i) if boxes[i].overlaps(boxes[j])]
    assert overlaps == []
    legend = [t.get_text() for t in ax.get_legend().get_texts()]
    assert "reference load (× λ)" in legend and "constant load" in legend
    assert plot_model(s.snapshot()).get_title() == ax.get_title()


# -- names and units where the user reads them: figures, widgets, exports --------------
def test_figure_axes_and_widget_readouts_carry_names_and_units():
    import matplotlib
    matplotlib.use("Agg")
    import largerot.widgets as lw
    from largerot.widgets import data
    s = cantilever(named=True, units="kN-m")
    tip = s.node_id("tip")
    path = lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)
    fig = lr.plotting.shape_path_figure(path, -1, "tip", "ux")
    labels = [a.get_xlabel() for a in fig.axes] + [a.get_ylabel() for a in fig.axes]
    assert "ux of tip [m]" in labels and "x [m]" in labels and "y [m]" in labels
    ex = lw.explore(path, node="tip", dof="ux")          # a name where a node id goes
    assert ex.curve_of == (tip, "ux") and ex.canvas.x_label == "ux of tip [m]"
    last = data.readout_lines(path, tip, np.array([len(path) - 1]))[0]
    assert "ux[tip] = " in last and " m " in last and "rz[tip] = " in last
    assert "max |M| = " in last and "kN·m" in last
    with pytest.raises(lr.ModelError, match="unknown node name 'top'"):
        lw.explore(path, node="top", dof="ux")


def test_exported_html_is_titled_with_the_structure_name(tmp_path):
    s = cantilever(named=True)
    s.name = "Lamp post, 8 m"
    path = lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)
    out = lr.widgets.export_animation(path, tmp_path / "post.html", node="tip", dof="ux")
    text = out.read_text() if hasattr(out, "read_text") else (tmp_path / "post.html").read_text()
    assert "<title>Lamp post, 8 m: equilibrium path" in text
    with pytest.raises(lr.ModelError, match="name must be a string"):
        lr.Structure(name=3)
