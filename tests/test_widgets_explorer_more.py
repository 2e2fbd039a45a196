"""The explorer's three additions, checked without a browser: the model as built (node
names, loads with their values and units), a motion on a time axis played in real
time, and the lowest natural frequency against λ."""
import math
import warnings

import numpy as np
import pytest

import largerot as lr
from largerot.widgets import data


def floats(b, dtype=np.float32):
    return np.frombuffer(b, dtype=dtype)


# -- the model as built --------------------------------------------------------------------
@pytest.fixture(scope="module")
def frame_kn():
    """A small portal in kN-m with named nodes, a reference and a constant load, a line
    load, a spring: every kind of input the explorer writes out."""
    s = lr.Structure(units="kN-m")
    a, b = s.node(0.0, 0.0, name="left foot"), s.node(0.0, 3.0, name="knee")
    c, d = s.node(4.0, 3.0), s.node(4.0, 0.0, name="right foot")
    sec = lr.Section.rectangle(E=2e8, width=0.2, depth=0.3)
    s.beam(a, b, sec, segments=4)
    s.beam(b, c, sec, segments=4)
    s.beam(c, d, sec, segments=4)
    s.fix(a)
    s.fix(d, "ux", "uy")
    s.load(b, fx=12.5, fy=-3.0)
    s.load(c, fy=-40.0, constant=True)
    s.line_load(1, qy=-2.0, constant=True)
    s.spring(c, "ux", 150.0)
    return s, (a, b, c, d)


def test_the_data_sent_names_the_nodes_and_writes_the_loads_with_units(frame_kn):
    # Reference: the input itself (the values given to s.load, s.line_load, s.spring above,
    # in the kN-m system of lr.units): what is sent must read it back exactly.
    s, (a, b, c, d) = frame_kn
    path = lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)
    ex = lr.widgets.explore(path, node=b, dof="ux")
    sym = ex.canvas.symbols
    names = {n["text"]: n for n in sym["names"]}
    # the three named nodes by name, the unnamed member end by its id; mesh nodes unlabelled
    assert {"left foot", "knee", "right foot", str(c)} == set(names)
    assert names["knee"]["named"] and not names[str(c)]["named"]
    layout = data.layout(path.structure, len(path))
    assert names["knee"]["v"] == layout.node_vertex[b]
    texts = [f["text"] for f in sym["loads"] if f["text"]]
    assert "λ×fx 12.5, fy -3 kN" in texts            # reference load, scaled by λ
    assert "fy -40 kN" in texts                      # constant load: no λ×
    notes = " | ".join(sym["notes"])
    assert "line load qy -2 kN/m on" in notes
    assert "spring ux at node" in notes and "k = 150 kN/m" in notes
    assert "units kN-m" in notes
    # the supports are those built: a clamp and a pin
    assert sorted(sp["held"] for sp in sym["supports"]) == ["xy", "xyr"]


def test_node_labels_are_capped_named_nodes_first():
    # A chain of 50 user nodes, two named: the cap keeps the named ones (common practice,
    # no source: labels beyond a few dozen cover the drawing).
    s = lr.Structure()
    ids = [s.node(float(k), 0.0, name="start" if k == 0 else "end" if k == 49 else None)
           for k in range(50)]
    sec = lr.Section.rectangle(E=2e11, width=0.1, depth=0.1)
    for p, q in zip(ids[:-1], ids[1:]):
        s.beam(p, q, sec)
    lay = data.layout(s, 1)
    got = data.node_names(s, lay, max_labels=5)
    assert [n["text"] for n in got] == ["start", "end", "1", "2", "3"]


# -- a motion ----------------------------------------------------------------------------
def oscillator(m=2.0, k=800.0):
    """A mass on a bar along x (axial spring k = EA/L), free along x only."""
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(1.0, 0.0, name="mass")
    s.bar(a, b, lr.Section(E=k, A=1.0))
    s.fix(a)
    s.fix(b, "uy")
    s.mass(b, m)
    s.load(b, fx=10.0)
    return s, b


@pytest.fixture(scope="module")
def motion():
    s, b = oscillator()
    # two periods of T = 2π·√(m/k) = 0.3142 s (common practice, no source): 0.628 s
    T = 2 * math.pi * math.sqrt(2.0 / 800.0)
    return lr.transient(s, 2 * T, load=lr.step_load(1.0)), b, T


def test_a_motion_is_explored_on_a_time_axis(motion):
    m, b, T = motion
    assert m.status == "target"
    for ex in (lr.widgets.explore(m, node=b, dof="ux"),
               lr.widgets.explore(m.as_path(), node=b, dof="ux", time=True)):
        c = ex.canvas
        assert c.y_label == "time t [s]" and c.motion
        assert ex.slider.description == "step"
        ex.index = len(m) - 1
        assert ex.readout["t"] == pytest.approx(m.times[-1])
        assert "λ" not in ex.readout
        last = c.readouts[-1]
        assert last.startswith(f"step {len(m) - 1} of {len(m) - 1}")
        assert f"t = {data.format_value(m.times[-1])} s" in last
        assert "stable" not in last                  # no static stability word for a motion
        # the curve's ordinate is the time of each frame
        np.testing.assert_allclose(floats(c.curve_y), m.times, rtol=1e-6)
        assert "seconds" in ex.about.value


def test_a_motion_plays_in_its_own_duration(motion):
    m, b, T = motion
    duration = float(m.times[-1] - m.times[0])
    ex = lr.widgets.explore(m, node=b, dof="ux")
    # 0.63 s is below the shortest play (1 s): slowed to 1 s, and said so
    assert duration < data.MOTION_PLAY_RANGE[0]
    assert ex.canvas.play_seconds == pytest.approx(data.MOTION_PLAY_RANGE[0])
    assert "slowed" in ex.about.value
    due = floats(ex.canvas.frame_times)
    assert due[0] == 0.0 and due[-1] == pytest.approx(ex.canvas.play_seconds)
    # each frame is due at its own time (uneven steps keep their pace)
    np.testing.assert_allclose(due, (m.times - m.times[0]) / duration * ex.canvas.play_seconds,
                               rtol=1e-5, atol=1e-6)
    # a motion between 1 s and 30 s plays in real time
    s, node = oscillator()
    long = lr.transient(s, 2.5, load=lr.step_load(1.0))
    ex2 = lr.widgets.explore(long, node=node, dof="ux")
    assert ex2.canvas.play_seconds == pytest.approx(2.5)
    assert "in real time" in ex2.about.value
    # a path keeps its even pacing (no frame times)
    assert data.motion_play_seconds(120.0) == data.MOTION_PLAY_RANGE[1]


def test_frequencies_of_a_motion_are_refused(motion):
    m, b, T = motion
    with pytest.raises(ValueError, match="frequencies=True"):
        lr.widgets.explore(m, frequencies=True)


# -- frequency against λ -----------------------------------------------------------------
def tethered_mass(m=3.0, L=2.0):
    """A mass on a stiff bar hinged at the ground, pulled up by a constant 100 N plus
    λ·400 N: a taut string with one mass."""
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, L, name="mass")
    s.bar(a, b, lr.Section(E=1e12, A=1.0))
    s.fix(a, "ux", "uy")
    s.mass(b, m)
    s.load(b, fy=100.0, constant=True)
    s.load(b, fy=400.0)
    return s, b


def test_lowest_frequency_against_load_factor():
    # A mass m on a string of length L under tension T sways at ω² = T/(m·L) (the
    # pendulum in a field T/m; common practice, no source). T = 100 + 400·λ N.
    # Tolerance: the bar stretches by T/EA ~ 1e-10 and the eigensolver is exact to
    # round-off; 1e-6 relative.
    m, L = 3.0, 2.0
    s, b = tethered_mass(m, L)
    path = lr.trace(s, lr.by_load(0.25), target_load_factor=1.0)
    ex = lr.widgets.explore(path, frequencies=True)
    lam = path.load_factor
    expect = np.sqrt((100.0 + 400.0 * lam) / (m * L)) / (2 * math.pi)
    pts, f = ex.frequency
    np.testing.assert_allclose(f, expect[pts], rtol=1e-6)
    c = ex.canvas
    assert ex.curve_of == data.FREQUENCY                    # shown first
    assert c.x_label == "lowest natural frequency f1 [Hz]" and c.y_label == "load factor λ"
    np.testing.assert_allclose(floats(c.curve_x), expect, rtol=1e-6)
    assert f"f1 = {data.format_value(expect[-1])} Hz" in c.readouts[-1]
    # the displacements stay in the menu; the readout keeps the frequency
    ex.curve_of = (b, "uy")
    assert c.x_label.startswith("uy of mass")
    assert "f1 =" in c.readouts[-1]
    assert ex.readout["f1"] == pytest.approx(expect[ex.point], rel=1e-6)


def test_long_paths_compute_the_frequency_on_a_subsample(monkeypatch):
    # Same closed form; 3 computed points of 5, straight lines between them (by point
    # index): the points between are the chords' midpoints, below the closed form since
    # f is concave in λ (3.4 % at λ = 0.25, 0.8 % at λ = 0.75).
    s, b = tethered_mass()
    path = lr.trace(s, lr.by_load(0.25), target_load_factor=1.0)
    monkeypatch.setattr(data, "MAX_FREQUENCY_POINTS", 3)
    ex = lr.widgets.explore(path, frequencies=True)
    pts, f = ex.frequency
    assert pts.tolist() == [0, 2, 4]
    assert "at 3 of 5 points" in ex.about.value
    expect = np.sqrt((100.0 + 400.0 * path.load_factor) / 6.0) / (2 * math.pi)
    x = floats(ex.canvas.curve_x)
    np.testing.assert_allclose(x[[0, 2, 4]], expect[[0, 2, 4]], rtol=1e-6)
    assert np.all(x[[1, 3]] <= expect[[1, 3]] * (1 + 1e-6))
    np.testing.assert_allclose(x[[1, 3]], 0.5 * (expect[[0, 2]] + expect[[2, 4]]), rtol=1e-6)


def test_frequencies_need_mass_and_a_boolean():
    s, b = tethered_mass()
    path = lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)
    with pytest.raises(TypeError, match="`frequencies` must be True or False"):
        lr.widgets.explore(path, frequencies="yes")
    from largerot.demo import lighting_pole
    pole, base, top = lighting_pole(segments=4)
    massless = lr.trace(pole, lr.by_load(0.5), target_load_factor=1.0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        with pytest.raises(lr.ModelError, match="no mass"):
            lr.widgets.explore(massless, frequencies=True)
