"""Widgets without a browser: synced state, live stepping, errors shown, export."""
import re

import numpy as np
import pytest

import largerot as lr
from largerot.demo import lighting_pole
from largerot.widgets import data

from helpers import two_bar_truss

PIL = pytest.importorskip("PIL.Image")


@pytest.fixture(scope="module")
def pole():
    s, base, top = lighting_pole(segments=8)
    path = lr.trace(s, lr.by_load(0.05), target_load_factor=1.0)
    return s, top, path


def floats(b, dtype=np.float32):
    return np.frombuffer(b, dtype=dtype)


# -- explorer ----------------------------------------------------------------------------
def test_slider_moves_the_synced_index_and_readout(pole):
    s, top, path = pole
    ex = lr.widgets.explore(path, node=top, dof="ux")
    assert ex.canvas.n_frames == len(path) == ex.slider.max + 1
    ex.slider.value = 7
    assert ex.index == 7 and ex.point == 7
    assert ex.readout["λ"] == pytest.approx(path.load_factor[7])
    # the demo pole names its top
    assert ex.readout["ux[top]"] == pytest.approx(path.displacement(top, "ux")[7])
    ex.index = -1
    assert ex.slider.value == ex.canvas.index == len(path) - 1
    with pytest.raises(IndexError):
        ex.index = len(path)


def test_frames_hold_the_deformed_members_once(pole):
    s, top, path = pole
    ex = lr.widgets.explore(path, node=top, dof="ux")
    c = ex.canvas
    fr = floats(c.frames).reshape(c.n_frames, c.n_vertices, 2)
    starts = floats(c.starts, np.int32)
    assert starts.tolist() == [0, c.n_vertices]          # one beam member, one stroke
    n_sub = ex._layout.n_sub
    assert c.n_vertices == 8 * (n_sub - 1) + 1
    # the ends of the strokes are the base and the tip, at true scale
    for i in (0, 10, len(path) - 1):
        assert np.allclose(fr[i, -1], path.coordinates(i)[top], atol=1e-5)
        assert np.allclose(fr[i, 0], [0.0, 0.0], atol=1e-6)
    assert len(c.frames) == 4 * fr.size


def test_long_paths_are_subsampled_with_both_ends(pole):
    s, top, path = pole
    ex = lr.widgets.explore(path, max_frames=5)
    pts = floats(ex.canvas.points, np.int32)
    assert ex.canvas.n_frames == 5 and pts[0] == 0 and pts[-1] == len(path) - 1
    ex.index = 4
    assert ex.point == len(path) - 1


def test_choosing_the_curve_updates_its_data(pole):
    s, top, path = pole
    ex = lr.widgets.explore(path, node=top, dof="ux")
    assert np.allclose(floats(ex.canvas.curve_x), path.displacement(top, "ux"), atol=1e-6)
    ex.menu.value = (top, "uy")
    assert ex.curve_of == (top, "uy")
    assert np.allclose(floats(ex.canvas.curve_x), path.displacement(top, "uy"), atol=1e-6)
    assert ex.canvas.x_label == "uy of top [m]"   # the node's name; SI by default


def test_scale_magnifies_the_shape(pole):
    s, top, path = pole
    ex = lr.widgets.explore(path, node=top, dof="ux")
    c = ex.canvas
    before = floats(c.frames).reshape(c.n_frames, c.n_vertices, 2)[-1, -1].copy()
    ex.scale_box.value = 2.0
    after = floats(c.frames).reshape(c.n_frames, c.n_vertices, 2)[-1, -1]
    u = path.u[-1][3 * top:3 * top + 2]
    assert np.allclose(after - before, u, atol=1e-4)


def test_stability_and_supports_reach_the_browser():
    s, apex = two_bar_truss()
    path = lr.trace(s, lr.by_displacement(apex, "uy", -0.05), max_steps=20, tol=1e-12)
    ex = lr.widgets.explore(path, node=apex, dof="uy")
    stable = floats(ex.canvas.stable, np.uint8)
    assert stable.tolist() == path.stable.astype(int).tolist()
    assert 0 < stable.sum() < len(stable)
    assert floats(ex.canvas.kinds, np.uint8).tolist() == [1, 1]
    sym = ex.canvas.symbols
    assert sorted(x["held"] for x in sym["supports"]) == ["xy", "xy"]
    assert sym["loads"][0]["fy"] == -1.0


def test_force_diagram_draws_what_the_path_provides(pole):
    s, top, path = pole
    ex = lr.widgets.explore(path, node=top, dof="ux")
    ex.force_buttons.value = "M"
    # the library's member results: drawn as the path gives them
    assert ex.canvas.force_kind == "M"
    n_el = 8
    got = floats(ex.canvas.forces).reshape(len(path), n_el, 2)
    want = np.array([path.member_forces(i)["beam"]["M"] for i in range(len(path))])
    assert np.allclose(got, want, rtol=1e-6, atol=1e-6 * np.abs(want).max())
    # any per-element arrays the path hands over are drawn as given: the widget
    # computes nothing itself
    M = np.linspace(0, 1, len(path))[:, None, None] * np.arange(1, n_el + 1)[None, :, None] * [1, -1]
    path.member_forces = lambda i: {"M": M[i], "N": -M[i, :, 0]}
    try:
        ex2 = lr.widgets.explore(path, node=top, dof="ux", forces="M")
        assert ex2.canvas.force_kind == "M"
        got = floats(ex2.canvas.forces).reshape(len(path), n_el, 2)
        assert np.allclose(got, M)
        assert ex2.canvas.force_max == pytest.approx(n_el)
        ex2.index = 10
        assert ex2.readout["max |M|"] == pytest.approx(np.abs(M[10]).max())
        assert ex2.readout["max N"] == pytest.approx((-M[10, :, 0]).max())
        ex2.forces = "V"                       # not provided: nothing drawn, said so
        assert ex2.canvas.force_kind == "" and "shear" in ex2.note.value
    finally:
        del path.member_forces


def test_bad_magnification_is_shown_in_the_widget(pole):
    s, top, path = pole
    ex = lr.widgets.explore(path)
    ex.scale = -1.0
    assert "scale" in ex.error
    # one line in the panel, the traceback behind "details"
    assert ex.errors.message == "ValueError: `scale` must be positive, got -1.0."
    assert "Traceback" in ex.errors.details and "<details" in ex.errors.value
    assert ex.errors.layout.display == ""


def test_layout_joins_element_chains_and_keeps_bars_apart():
    s = lr.Structure()
    a, b, c = s.node(0, 0), s.node(0, 3), s.node(4, 3)
    sec = lr.Section(E=2e11, A=1e-3, I=1e-6)
    s.beam(a, b, sec, segments=3)
    s.beam(b, c, sec, segments=2)
    s.bar(a, c, sec)
    lay = data.Layout(s, n_sub=4)
    assert lay.kinds.tolist() == [0, 1]                 # the two beams join at b
    assert lay.n_vertices == 5 * 3 + 1 + 2
    assert lay.element_ends.shape == (6, 2)
    assert lay.node_vertex[c] == lay.element_ends[4, 1]


# -- live stepping ---------------------------------------------------------------------
def test_live_steps_runs_backs_and_resets():
    s, base, top = lighting_pole(segments=6)
    lv = lr.widgets.live(s, lr.by_load(0.1), target_load_factor=0.5, node=top, dof="ux")
    assert lv.n_points == 1 and lv.view.canvas.n_frames == 1
    msg = lv.step()
    assert lv.n_points == 2 and "λ = 0.1" in msg and msg in lv.messages
    assert lv.view.canvas.n_frames == 2 and lv.view.index == 1
    lv.run()                                           # background thread
    lv.wait(60)
    assert lv.stepper.status == "target" and lv.status == "target" and not lv.busy
    assert lv.path.load_factor[-1] == pytest.approx(0.5)
    assert lv.n_points == 6 and lv.bar.value == pytest.approx(1.0)
    lv.back()
    assert lv.view.index == 4 and lv.n_points == 6     # view only
    lv.reset()
    assert lv.n_points == 1 and lv.stepper.status == "running"


def test_live_draws_each_new_point_once(monkeypatch):
    # A live trace grows point by point: the view draws the new points only (the
    # frames already sent are reused), not the whole path at every refresh.
    from largerot.widgets import data
    drawn = []
    original = data.frames
    monkeypatch.setattr(data, "frames", lambda path, pts, *a, **k: (drawn.extend(int(i) for i in pts),
                                                                    original(path, pts, *a, **k))[1])
    s, base, top = lighting_pole(segments=6)
    lv = lr.widgets.live(s, lr.by_load(0.05), target_load_factor=1.0, node=top, dof="ux",
                         update_interval=0.0)
    lv.run(block=True)
    assert lv.n_points == 21 and lv.view.canvas.n_frames == 21
    assert sorted(drawn) == list(range(21))          # every point drawn exactly once
    lv.view.scale = 2.0                              # a new scale redraws them all
    assert len(drawn) == 42


def test_live_runs_to_a_number_of_points_and_takes_edited_steps():
    s, base, top = lighting_pole(segments=6)
    lv = lr.widgets.live(s, lr.by_load(0.1), target_load_factor=None, target_kind="points",
                         target=4, node=top, dof="ux")
    lv.step_box.value = 0.05
    lv.run(block=True)
    assert lv.n_points == 4
    assert lv.path.load_factor[1:].tolist() == pytest.approx([0.05, 0.10, 0.15])
    lv.kind_menu.value = "displacement"
    lv.target_box.value = 2.0
    assert lv.path.displacement(top, "ux")[-1] < 2.0
    lv.run(block=True)
    ux = lv.path.displacement(top, "ux")
    assert ux[-1] >= 2.0 > ux[-2]
    assert any("Reached the target displacement" in m for m in lv.messages)


def test_an_ended_trace_disables_step_and_run_and_says_so_without_a_traceback():
    s, base, top = lighting_pole(segments=4)
    lv = lr.widgets.live(s, lr.by_load(0.5), target_load_factor=0.5)
    lv.step()
    assert lv.stepper.status == "target" and lv.state == "finished" and lv.error == ""
    assert lv.step_button.disabled and lv.run_button.disabled and not lv.reset_button.disabled
    assert lv.step() is None and lv.run() is None
    lv.run_button.click()                     # a disabled button's click does nothing
    assert lv.error == "" and lv.errors.layout.display == "none"
    assert "press reset" in lv.messages[-1]
    assert "finished" in lv.state_label.value


def test_live_reports_a_change_of_stability():
    s, apex = two_bar_truss()
    lv = lr.widgets.live(s, lr.by_displacement(apex, "uy", -0.05), target_load_factor=None,
                         target_kind="points", target=16, node=apex, dof="uy", tol=1e-12)
    lv.run(block=True)
    assert any("Stability changed" in m for m in lv.messages)


# -- parameter study ---------------------------------------------------------------------
def cantilever(length=6.0, load=2e3, segments=6):
    s = lr.Structure()
    a, b = s.node(0, 0), s.node(0, length)
    s.beam(a, b, lr.Section.tube(E=25e9, diameter=0.12, wall=0.006), segments=segments)
    s.fix(a)
    s.load(b, fx=load)
    return s


def test_study_rebuilds_and_retraces_on_a_slider_move():
    st = lr.widgets.study(cantilever, length=(4.0, 8.0), load=(1e3, 4e3), debounce=0,
                          target_load_factor=1.0)
    assert st.controls["length"].value == 6.0 and st.values["load"] == 2e3
    tip = st.explorer.path.displacement(st.explorer.curve_of[0], "ux")[-1]
    st.controls["length"].value = 8.0
    assert st.values["length"] == 8.0 and st.n_builds == 2
    assert st.explorer.path.structure.xy[:, 1].max() == 8.0
    assert st.explorer.path.displacement(st.explorer.curve_of[0], "ux")[-1] > tip
    assert "points" in st.status


def test_study_debounces_quick_moves():
    st = lr.widgets.study(cantilever, segments=(2, 8, 2), debounce=1.0)
    assert st.n_builds == 1 and st.controls["segments"].value == 6
    st.controls["segments"].value = 2
    st.controls["segments"].value = 4
    st.wait()
    assert st.n_builds == 2 and st.values["segments"] == 4


def test_study_shows_build_errors_in_the_widget():
    def build(height=3.0):
        if height > 5:
            raise ValueError(f"height {height} is too tall for this test")
        return cantilever(length=height)

    st = lr.widgets.study(build, height=(1.0, 9.0), debounce=0)
    assert st.error == ""
    st.controls["height"].value = 8.0
    assert "too tall" in st.error
    # one line, the traceback folded; the old result greyed out
    assert st.errors.message == "ValueError: height 8.0 is too tall for this test"
    assert "Traceback" in st.errors.details
    assert st.explorer.stale and st.explorer.canvas.stale
    assert "failed" in st.status_label.value and "height = 3" in st.status_label.value
    assert st.values["height"] == 3.0                   # the last good path stays shown
    st.controls["height"].value = 2.0
    assert st.error == "" and st.errors.message == "" and st.errors.layout.display == "none"
    assert not st.explorer.stale


def test_study_rejects_a_build_returning_something_else():
    st = lr.widgets.study(lambda x=1.0: "not a model", x=(0.0, 2.0), debounce=0)
    assert "must return a Structure or an EquilibriumPath" in st.error


@pytest.mark.parametrize("spec, match", [((3, 1), "low < high"), ("abc", "must be"), ([], "no choices")])
def test_parameter_ranges_are_checked(spec, match):
    with pytest.raises(ValueError, match=match):
        lr.widgets.study(cantilever, length=spec)


# -- export ---------------------------------------------------------------------------
def test_export_writes_gif_and_html_with_the_frames_asked_for(pole, tmp_path):
    s, top, path = pole
    pts = lr.widgets.export_animation(path, tmp_path / "a.gif", frames=7, dpi=40)
    assert len(pts) == 7 and pts[0] == 0 and pts[-1] == len(path) - 1
    with PIL.open(tmp_path / "a.gif") as im:
        assert im.n_frames == 7
        first = np.asarray(im.convert("RGB"))
        im.seek(6)
        assert np.any(np.asarray(im.convert("RGB")) != first)
    lr.widgets.export_animation(path, tmp_path / "a.html", frames=5, dpi=40)
    text = (tmp_path / "a.html").read_text()
    assert len(re.findall(r'"data:image/png;base64,', text)) == 5
    assert 'content="5"' in text and "<script>" in text and "http" not in text.split("<script>")[1]


def test_export_checks_its_arguments(pole, tmp_path):
    s, top, path = pole
    with pytest.raises(ValueError, match="`frames` must be"):
        lr.widgets.export_animation(path, tmp_path / "a.gif", frames=0)
    with pytest.raises(ValueError, match=r"\.gif or \.html"):
        lr.widgets.export_animation(path, tmp_path / "a.mp4")


@pytest.mark.parametrize("suffix, magic", [(".png", b"\x89PNG"), (".svg", b"<?xml")])
def test_static_report_figure(pole, tmp_path, suffix, magic):
    s, top, path = pole
    fn = lr.widgets.save_figure(path, tmp_path / f"f{suffix}", i=10)
    assert fn.read_bytes()[:5].startswith(magic)


def test_plot_path_draws_unstable_parts_differently():
    import matplotlib
    matplotlib.use("Agg")
    from largerot import plotting
    s, apex = two_bar_truss()
    path = lr.trace(s, lr.by_displacement(apex, "uy", -0.05), max_steps=20, tol=1e-12)
    ax = plotting.plot_path(path, apex, "uy")
    colors = {matplotlib.colors.to_hex(ln.get_color()): ln.get_linestyle() for ln in ax.lines}
    assert colors[plotting.DEFORMED] == "-" and colors[plotting.UNSTABLE] == "--"
    (xs, ys), (xu, yu) = plotting.path_segments(path.displacement(apex, "uy"), path.load_factor,
                                                path.stable)
    assert np.isfinite(xu).sum() == 2 * (~(path.stable[1:] & path.stable[:-1])).sum()


def test_critical_points_reach_the_plot_data_and_the_figure():
    import matplotlib
    matplotlib.use("Agg")
    from largerot import plotting
    s, apex = two_bar_truss()
    path = lr.trace(s, lr.by_displacement(apex, "uy", -0.05), max_steps=20, tol=1e-12)
    k = int(np.argmax(path.load_factor))
    # a critical point as the library records it (here placed by hand at the peak)
    path.critical_points = [lr.CriticalPoint("limit", float(path.load_factor[k]), k, path.u[k],
                                             np.zeros_like(path.u[k]))]
    cv = data.curve(path, apex, "uy")
    assert cv["critical"] == [{"x": pytest.approx(path.displacement(apex, "uy")[k]),
                               "y": pytest.approx(path.load_factor[k]), "kind": "limit", "index": k}]
    ex = lr.widgets.explore(path, node=apex, dof="uy")
    assert ex.canvas.critical[0]["kind"] == "limit"
    ax = plotting.plot_path(path, apex, "uy")
    labels = [t.get_text() for t in ax.texts]
    assert labels == [f"limit\nλ = {path.load_factor[k]:.4g}"]


def test_obstacles_reach_the_canvas_as_plain_data():
    # what the browser draws: a face where the nodes can meet it, and a disc
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, 4.0)
    pole = s.beam(a, b, lr.Section(E=1e9, A=1e-2, I=1e-5), segments=8)
    s.fix(a)
    s.load(b, fx=1.0)
    s.contact([n for n in pole.nodes if s.xy[n, 1] >= 2.0], lr.Line(point=(1.0, 0.0), normal=(-1.0, 0.0)))
    s.contact(b, lr.Circle(centre=(0.0, 5.0), radius=0.5))
    path = lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)
    ex = lr.widgets.explore(path)
    obs = ex.canvas.symbols["obstacles"]
    assert [o["kind"] for o in obs] == ["line", "circle"]
    ends = sorted([tuple(obs[0]["a"]), tuple(obs[0]["b"])])
    assert ends == [pytest.approx((1.0, 2.0)), pytest.approx((1.0, 4.0))]
    assert obs[0]["normal"] == pytest.approx((-1.0, 0.0))
    assert obs[1]["radius"] == 0.5
