"""Widgets that explain themselves: the live panel's states, readouts, diagrams, sliders.

What is checked here is what issue 16 asks the panels to show (states idle / tracing /
paused / finished / failed, buttons enabled only where they act, min and max N, round
slider steps): common practice for user interfaces, no source. Mechanical values are
checked against statics (closed form, cited where used).
"""
import numpy as np
import pytest

import largerot as lr
from largerot.demo import lighting_pole
from largerot.widgets import data
from largerot.widgets.live import BUTTONS, ENABLED, STATES, TRANSITIONS, enabled_buttons, outcome
from largerot.widgets.study import parameter_widget, round_step


# -- the live panel's state machine, without a browser -------------------------------------
def test_the_table_covers_every_button_in_every_state():
    assert set(TRANSITIONS) == {(s, b) for s in STATES for b in BUTTONS}
    for (state, button), new in TRANSITIONS.items():
        assert new in STATES
        if button not in ENABLED[state]:
            assert new == state, (state, button)          # a button that cannot act
    # nothing can run twice or step while a run goes on; an ended trace only resets
    assert ENABLED["tracing"] == ("pause",)
    assert "run" not in ENABLED["finished"] and "step" not in ENABLED["failed"]
    assert "pause" not in ENABLED["idle"] + ENABLED["paused"]
    assert all(TRANSITIONS[(s, "reset")] == "idle" for s in STATES if "reset" in ENABLED[s])
    assert enabled_buttons("paused", at_first_point=True) == ("step", "run", "reset")
    assert [outcome(w) for w in ("running", "target", "limit", "max_steps", "failed")] == \
        ["paused", "finished", "finished", "finished", "failed"]


def _panel(state):
    """A live panel brought into ``state`` (a long trace, so a run does not end by itself)."""
    s, base, top = lighting_pole(segments=4)
    lv = lr.widgets.live(s, lr.by_load(0.001), target_load_factor=1.0, node=top, dof="ux",
                         update_interval=10.0)
    if state == "paused":
        lv.step()
    elif state == "tracing":
        lv.run()
    elif state == "finished":
        lv.stepper.set_target(0.001)
        lv.step()
    elif state == "failed":
        def broken():
            raise FloatingPointError("a made-up failure inside a step")
        lv.stepper.step = broken
        lv.step()
    assert lv.state == state
    return lv


@pytest.mark.parametrize("state", STATES)
def test_pressing_every_button_in_every_state(state):
    for button in BUTTONS:
        lv = _panel(state)
        try:
            on = lv.enabled()
            assert [b for b in BUTTONS if not lv.buttons[b].disabled] == list(on), (state, button)
            before = (lv.n_points, lv.view.index)
            lv.buttons[button].click()
            if button not in on:                          # nothing happens, nothing is raised
                assert lv.state == state and (lv.n_points, lv.view.index) == before
                assert lv.error == ("" if state != "failed" else lv.error)
                continue
            if button == "run":
                assert lv.state == "tracing"
                lv.pause()
            want = TRANSITIONS[(state, button)]
            if button in ("step", "run") or (button == "pause" and state == "tracing"):
                want = outcome(lv.stepper.status)
            assert lv.state == want, (state, button)
            assert [b for b in BUTTONS if not lv.buttons[b].disabled] == list(lv.enabled())
            assert f"data-state='{lv.state}'" in lv.state_label.value
        finally:
            lv.pause()


def test_a_failure_shows_one_line_with_the_traceback_behind_details():
    lv = _panel("failed")
    assert lv.errors.message == "FloatingPointError: a made-up failure inside a step"
    assert "Traceback" in lv.errors.details and "broken" in lv.errors.details
    assert "\n" not in lv.errors.message
    lv.reset()
    assert lv.state == "idle" and lv.errors.layout.display == "none" and lv.error == ""


def test_previous_shows_the_point_before_and_leaves_the_trace():
    lv = _panel("paused")
    lv.step()
    assert lv.view.index == 2 and lv.previous_button.description == "previous"
    lv.previous_button.click()
    assert lv.view.index == 1 and lv.n_points == 3
    lv.previous_button.click()
    assert lv.view.index == 0 and lv.previous_button.disabled   # nothing before the first


# -- readouts and diagrams ----------------------------------------------------------------
def column(P=1e3, segments=6):
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, 4.0)
    s.beam(a, b, lr.Section.tube(E=2e11, diameter=0.2, wall=0.01), segments=segments)
    s.fix(a)
    s.load(b, fy=-P)
    return s, b


def test_readout_shows_the_largest_compression_and_the_largest_tension():
    # A straight column under an axial end load P far below buckling: every element
    # carries N = -λP (equilibrium of the part above a cut; statics, closed form).
    s, top = column()
    path = lr.trace(s, lr.by_load(0.5), target_load_factor=1.0)
    r = data.readout(path, -1, top)
    assert r["min N"] == pytest.approx(-1e3, rel=1e-6)
    assert r["max N"] == pytest.approx(-1e3, rel=1e-6)      # the least compression
    ex = lr.widgets.explore(path, node=top, dof="uy", forces="N")
    line = ex.canvas.readouts[-1]
    assert "min N = -1000" in line and "max N = -1000" in line and line.endswith("stable")
    assert ex.canvas.force_legend == ["axial force N", "tension", "compression"]


@pytest.mark.parametrize("v, text", [(23760.4, "2.376e4"), (3347.2, "3347"), (0.069731, "0.06973"),
                                     (1.525e5, "1.525e5"), (-0.5, "-0.5"), (9999.7, "1e4"),
                                     (4.853, "4.853"), (1.0, "1"), (float("nan"), "—")])
def test_numbers_are_written_with_four_significant_digits(v, text):
    assert data.format_value(v) == text


def test_hover_data_names_every_node_with_its_displacements():
    s, base, top = lighting_pole(segments=4)
    path = lr.trace(s, lr.by_load(0.25), target_load_factor=1.0)
    ex = lr.widgets.explore(path, node=top, dof="ux")
    nodes = ex.canvas.hover_nodes
    assert [h["node"] for h in nodes] == list(range(s.n_nodes))
    assert nodes[top]["label"] == "top" and nodes[1 + top]["label"] == f"node {1 + top}"
    assert nodes[top]["dofs"] == ["ux", "uy", "rz"]
    u = np.frombuffer(ex.canvas.node_u, np.float32).reshape(len(path), len(nodes), 3)
    assert np.allclose(u[:, top, 0], path.displacement(top, "ux"), rtol=1e-6, atol=1e-7)


def test_a_path_plays_in_a_few_seconds_at_most():
    s, base, top = lighting_pole(segments=4)
    path = lr.trace(s, lr.by_load(0.001), target_load_factor=1.0, max_steps=2000)
    ex = lr.widgets.explore(path)
    assert len(path) == 1001 and ex.canvas.play_seconds <= 10.0      # the brief: ≤ 10 s
    ex.canvas.playing = True                 # the browser plays; the button says pause
    assert ex.play.description == "pause"
    ex.canvas.playing = False
    assert ex.play.description == "play"
    short = lr.widgets.explore(lr.trace(s, lr.by_load(0.25), target_load_factor=1.0))
    assert short.canvas.play_seconds == data.MIN_PLAY_SECONDS


# -- slider steps ---------------------------------------------------------------------------
ROUND = {1.0, 2.0, 2.5, 5.0}


def is_round(step):
    k = np.floor(np.log10(step))
    return any(np.isclose(step / 10 ** k, m) for m in ROUND)


@pytest.mark.parametrize("lo, hi, default", [(0.01, 0.3, 0.07), (0.0, 1.0, 0.07), (1e3, 6e3, 4e3),
                                             (4.0, 12.0, 8.0), (0.013, 0.3, 0.07), (1.0, 9.0, None),
                                             (-2.0, 3.0, 0.7), (1e9, 2.1e11, 2.1e11)])
def test_slider_steps_are_round_and_keep_the_default(lo, hi, default):
    sl = parameter_widget("p", (lo, hi), default)
    assert is_round(sl.step), sl.step
    assert (hi - lo) / sl.step >= 50                # fine enough to move smoothly
    if default is not None:
        assert sl.value == default
        q = (default - lo) / sl.step               # the browser's slider keeps it
        assert q == pytest.approx(round(q), abs=1e-6)


def test_round_step_prefers_a_step_that_reaches_both_ends():
    assert round_step(0.0, 1.0) == 0.01
    assert round_step(0.0, 0.7) == 0.005
