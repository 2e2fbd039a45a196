"""Figures the package makes: no text clipped or overlapping, legends and labels off the
curves, magnification chosen and stated, slack cables drawn apart, exports titled.

The layout checks measure the drawn figure (``get_window_extent`` after
``fig.canvas.draw()``): every text inside the figure, no two texts overlapping, no
legend or critical-point label over a plotted point. That text must not cover text
or data, nor leave the figure, is common practice in technical drawing (no source).
"""
import re

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
from matplotlib.collections import LineCollection  # noqa: E402
from matplotlib.text import Text  # noqa: E402

import largerot as lr  # noqa: E402
from largerot import examples, export, plotting  # noqa: E402
from largerot.demo import guyed_mast, lighting_pole  # noqa: E402

#: Sub-pixel rounding of text extents; anything more is a real overlap.
TOLERANCE_PX = 0.5


@pytest.fixture(scope="module")
def arch():
    """Shallow arch: two limit points, an unstable stretch, a load arrow over a flat shape."""
    sc = examples.shallow_arch()
    return lr.trace(sc.structure, lr.by_arc_length(), **sc.trace_options), sc.curve


@pytest.fixture(scope="module")
def deep():
    """Deep arch: a bifurcation and a limit point close together near the peak."""
    sc = examples.deep_arch()
    return lr.trace(sc.structure, lr.by_arc_length(), **sc.trace_options), sc.curve


@pytest.fixture(scope="module")
def mast():
    """Guyed mast: tiny motion (0.11 m on 30 m) and the leeward guy going slack."""
    s, nodes = guyed_mast()
    return lr.trace(s, lr.by_load(0.25), target_load_factor=6.0), (nodes["top"], "ux")


@pytest.fixture(scope="module")
def pole():
    """Pole bent far: true-scale motion is large."""
    s, _, top = lighting_pole(segments=8)
    return lr.trace(s, lr.by_load(0.1), target_load_factor=1.0), (top, "ux")


# -- the measuring ----------------------------------------------------------------------
def _drawn_texts(fig, renderer):
    """Every visible, non-empty text drawn: titles, axis and tick labels, annotations, legends."""
    ticks = set()
    for ax in fig.axes:
        for axis in (ax.xaxis, ax.yaxis):
            for t in axis._update_ticks():            # the ticks actually drawn
                ticks.update({id(t.label1), id(t.label2)})
    out = []
    for t in fig.findobj(Text):
        if not (t.get_visible() and t.get_text().strip()):
            continue
        in_axis = any(t is tk.label1 or t is tk.label2 for ax in fig.axes
                      for axis in (ax.xaxis, ax.yaxis) for tk in axis.get_major_ticks() + axis.get_minor_ticks())
        if in_axis and id(t) not in ticks:
            continue
        out.append((t, plotting.text_box(t, renderer)))
    return out


def _curve_points(ax):
    """Display points every pixel along the axes' lines and line collections, markers as discs."""
    pts = [np.zeros((0, 2))]

    def along(xy):
        xy = np.asarray(xy, float)
        for a, b in zip(xy[:-1], xy[1:]):
            if np.isfinite(a).all() and np.isfinite(b).all():
                n = int(np.ceil(np.hypot(*(b - a)))) + 1
                pts.append(a + np.linspace(0, 1, n)[:, None] * (b - a))
        pts.append(xy[np.isfinite(xy).all(axis=1)])

    for ln in ax.lines:
        xy = ln.get_transform().transform(ln.get_xydata())
        if ln.get_linestyle() not in ("None", "", " ", "none"):
            along(xy)
        if ln.get_marker() not in (None, "None", "", " ", "none"):
            r = 0.5 * ln.get_markersize() * ax.figure.dpi / 72
            for t in np.linspace(0, 2 * np.pi, 12, endpoint=False):
                pts.append(xy + r * np.array([np.cos(t), np.sin(t)]))
    for c in ax.collections:
        if isinstance(c, LineCollection) and np.max(c.get_linewidth(), initial=0) > 0:
            for seg in c.get_segments():
                along(c.get_transform().transform(seg))
    return np.vstack(pts)


def _in(pts, bb):
    x, y = pts[:, 0], pts[:, 1]
    return int(((x > bb.x0) & (x < bb.x1) & (y > bb.y0) & (y < bb.y1)).sum())


def layout_problems(fig) -> list:
    """What a reader would find cut off or covered, as sentences (empty when clean)."""
    fig.canvas.draw()
    r = fig.canvas.get_renderer()
    problems = []
    W, H = fig.bbox.width, fig.bbox.height
    texts = _drawn_texts(fig, r)
    for t, b in texts:
        if b.x0 < -TOLERANCE_PX or b.y0 < -TOLERANCE_PX or b.x1 > W + TOLERANCE_PX or b.y1 > H + TOLERANCE_PX:
            problems.append(f"text {t.get_text()!r} leaves the figure: {b.bounds}")
    for k, (t, b) in enumerate(texts):
        for u, c in texts[k + 1:]:
            if (min(b.x1, c.x1) - max(b.x0, c.x0) > TOLERANCE_PX
                    and min(b.y1, c.y1) - max(b.y0, c.y0) > TOLERANCE_PX):
                problems.append(f"texts {t.get_text()!r} and {u.get_text()!r} overlap")
    arrows = [(t, t.arrow_patch.get_window_extent(r)) for ax in fig.axes for t in ax.texts
              if getattr(t, "arrow_patch", None) is not None and t.arrow_patch.get_visible()]
    arrows += [(a, a.get_window_extent(r)) for ax in fig.axes for a in ax.patches
               if type(a).__name__ == "FancyArrowPatch" and a.get_visible()]
    for owner, a in arrows:
        for t, b in texts:
            if t is not owner and (min(b.x1, a.x1) - max(b.x0, a.x0) > TOLERANCE_PX
                                   and min(b.y1, a.y1) - max(b.y0, a.y0) > TOLERANCE_PX):
                problems.append(f"an arrow crosses the text {t.get_text()!r}")
    for ax in fig.axes:
        pts = _curve_points(ax)
        leg = ax.get_legend()
        if leg is not None:
            b = leg.get_window_extent(r)
            if b.x0 < -TOLERANCE_PX or b.y0 < -TOLERANCE_PX or b.x1 > W + TOLERANCE_PX or b.y1 > H + TOLERANCE_PX:
                problems.append(f"a legend leaves the figure: {b.bounds}")
            if _in(pts, b):
                problems.append(f"a legend covers {_in(pts, b)} curve points")
        for t in ax.texts:
            if t.get_gid() == plotting.CRITICAL_GID and _in(pts, plotting.text_box(t, r)):
                problems.append(f"label {t.get_text()!r} covers {_in(pts, plotting.text_box(t, r))} curve points")
    return problems


# -- every figure function on every example ---------------------------------------------
CASES = ["arch", "deep", "mast", "pole"]


def _case(request, name):
    return request.getfixturevalue(name)


@pytest.mark.parametrize("name", CASES)
def test_shape_path_figure_has_nothing_clipped_or_covered(request, name):
    path, (node, dof) = _case(request, name)
    for i in (0, len(path) // 2, len(path) - 1):
        fig = plotting.shape_path_figure(path, i, node, dof)
        assert layout_problems(fig) == [], f"point {i}"


@pytest.mark.parametrize("name", CASES)
def test_overview_has_nothing_clipped_or_covered(request, name):
    path, (node, dof) = _case(request, name)
    fig = plotting.plot_overview(path, node, dof)
    assert layout_problems(fig) == []
    plt.close(fig)


@pytest.mark.parametrize("name", CASES)
def test_plot_path_and_plot_shape_alone_have_nothing_clipped_or_covered(request, name):
    path, (node, dof) = _case(request, name)
    fig, (a1, a2) = plt.subplots(1, 2, figsize=(9, 4))
    plotting.plot_shape(path, -1, ax=a1)
    plotting.plot_path(path, node, dof, ax=a2, marker=len(path) // 2)
    plotting.finish_layout(fig)
    assert layout_problems(fig) == []
    plt.close(fig)


@pytest.mark.parametrize("name", CASES)
def test_every_animation_frame_has_its_title_inside_and_nothing_covered(request, name):
    path, (node, dof) = _case(request, name)
    points = export.animation_points(len(path), 6)
    fig, show = export.animation_figure(path, points, node, dof)
    for k, i in enumerate(points):
        show(k)
        assert layout_problems(fig) == [], f"frame of point {i}"
        assert fig.axes[0].get_title() == f"point {i}: λ = {path.load_factor[i]:.4g}"


def test_the_checker_finds_a_legend_on_the_curve_and_a_title_cut_off():
    # the measuring itself: matplotlib's own placement over a curve, a title pushed out
    fig, ax = plt.subplots(figsize=(3, 2))
    x = np.linspace(0, 1, 50)
    ax.plot(x, np.full_like(x, 0.95), label="a curve along the top")
    ax.set_ylim(0.0, 1.0)
    ax.legend(loc="upper center")
    ax.set_title("a title", y=1.6)
    ax.annotate("", xy=(0.5, 0.5), xytext=(0.5, 1.3), arrowprops=dict(arrowstyle="-|>"),
                annotation_clip=False)
    ax.set_xlabel("x")
    found = layout_problems(fig)
    assert any("legend covers" in p for p in found) and any("leaves the figure" in p for p in found)
    assert any("arrow crosses the text 'a curve" in p for p in found)
    plt.close(fig)


# -- magnification ------------------------------------------------------------------------
def test_mast_shapes_are_magnified_by_a_round_factor_and_say_so(mast):
    path, (top, dof) = mast
    # the largest translation along the path against the 30 m height (recomputed here)
    t = path.u.reshape(len(path), -1, 3)[:, :, :2]
    big = np.sqrt((t ** 2).sum(axis=2)).max()
    assert big / 30.0 < plotting.MAGNIFY_BELOW                 # 0.11 m: 0.4 % of the height
    target = plotting.MAGNIFIED_TO * 30.0 / big                # about 40
    factor = plotting.displacement_scale(path)
    assert factor in (1, 2, 5, 10, 20, 50, 100) and factor <= target < 2.5 * factor
    fig = plotting.shape_path_figure(path, -1)
    leg = fig.axes[0].get_legend()
    assert leg.get_title().get_text() == f"displacements × {factor:g}"
    # drawn magnified: the top's drawn position moved by factor × its displacement
    drawn = np.vstack([np.asarray(s) for c in fig.axes[0].collections if c.get_label() == "deformed"
                       for s in c.get_segments()])
    assert drawn[:, 0].max() == pytest.approx(factor * path.displacement(top, "ux")[-1], rel=1e-6)


def test_large_motion_is_drawn_true_scale_and_a_scale_can_be_set(pole, mast):
    path, _ = pole
    assert plotting.displacement_scale(path) == 1.0              # the tip moves over half the height
    fig = plotting.shape_path_figure(path, -1)
    assert fig.axes[0].get_legend() is None                       # nothing to state
    mpath, _ = mast
    fig = plotting.shape_path_figure(mpath, -1, scale=1.0)
    assert fig.axes[0].get_legend().get_title().get_text() == ""  # true scale asked: no note
    ax = plotting.plot_shape(mpath, -1, scale=100.0)
    assert ax.get_legend().get_title().get_text() == "displacements × 100"
    plt.close(ax.figure)


# -- slack cables -------------------------------------------------------------------------
def test_slack_guy_is_dashed_light_and_in_the_legend(mast):
    path, _ = mast
    last = int(np.flatnonzero(path.slack[:, 1])[-1])
    first_taut = 0
    assert not path.slack[first_taut].any()
    ax = plotting.plot_shape(path, last)
    slack = [c for c in ax.collections if c.get_label() == "slack cable"]
    assert len(slack) == 1 and len(slack[0].get_segments()) == int(path.slack[last].sum())
    assert slack[0].get_linestyle()[0][1] is not None                  # dashed
    assert matplotlib.colors.to_hex(slack[0].get_color()[0]) == plotting.SLACK
    assert "slack cable" in [t.get_text() for t in ax.get_legend().get_texts()]
    plt.close(ax.figure)
    ax = plotting.plot_shape(path, first_taut)
    assert not [c for c in ax.collections if c.get_label() == "slack cable"]
    plt.close(ax.figure)


# -- exports ------------------------------------------------------------------------------
def test_html_export_is_titled_by_the_model_not_its_repr(mast, tmp_path):
    path, (top, dof) = mast
    export.export_animation(path, tmp_path / "a.html", frames=3, dpi=30)
    text = (tmp_path / "a.html").read_text()
    title = re.search(r"<title>(.*)</title>", text).group(1)
    heading = re.search(r"<h1>(.*)</h1>", text).group(1)
    assert title == heading and "EquilibriumPath(" not in text and "Model(" not in text
    # the demo mast is named (Structure(name=...)): its name heads the page
    assert title.startswith("Guyed mast, 30 m: equilibrium path (")
    unnamed = lr.Structure()
    a, b = unnamed.node(0.0, 0.0), unnamed.node(0.0, 1.0)
    unnamed.beam(a, b, lr.Section(E=1e9, A=1e-3, I=1e-6))
    unnamed.fix(a)
    unnamed.load(b, fx=1.0)
    p2 = lr.trace(unnamed, lr.by_load(0.5), target_load_factor=1.0)
    assert export.default_title(p2).startswith("Equilibrium path of a structure of 2 nodes")
    export.export_animation(path, tmp_path / "b.html", frames=3, dpi=30, title="Guyed mast <30 m>")
    text = (tmp_path / "b.html").read_text()
    assert "<h1>Guyed mast &lt;30 m&gt;</h1>" in text
    # the readout under the frame names the plotted DOF
    assert f'const QUANTITY = "{plotting.label_of(path.structure, dof, top)}"' in text
    with pytest.raises(TypeError, match="`title` must be a string"):
        export.export_animation(path, tmp_path / "c.html", frames=3, title=3)
