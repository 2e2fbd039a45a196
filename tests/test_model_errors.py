"""Bad input raises lr.ModelError naming the offending node, member or value."""
import math

import pytest

import largerot as lr

SEC = lr.Section(E=200e9, A=1e-3, I=1e-6)


def base():
    s = lr.Structure()
    return s, s.node(0.0, 0.0), s.node(1.0, 0.0)


@pytest.mark.parametrize("kwargs, match", [
    (dict(E=0.0, A=1.0, I=1.0), "`E` must be a finite positive"),
    (dict(E=-1.0, A=1.0, I=1.0), "got -1.0"),
    (dict(E=1.0, A=math.nan, I=1.0), "`A`"),
    (dict(E=1.0, A=1.0, I=math.inf), "`I`"),
    (dict(E=1.0, A=1.0, I=-2.0), "`I`"),
])
def test_bad_section_values(kwargs, match):
    with pytest.raises(lr.ModelError, match=match):
        lr.Section(**kwargs)


def test_model_error_is_value_error():
    assert issubclass(lr.ModelError, ValueError)


def test_zero_length_member():
    s, a, b = base()
    c = s.node(0.0, 0.0)
    with pytest.raises(lr.ModelError, match=r"Member 0 \(nodes 0→2\) has zero length"):
        s.beam(a, c, SEC)


def test_duplicate_member():
    s, a, b = base()
    s.beam(a, b, SEC)
    with pytest.raises(lr.ModelError, match="duplicates member 0"):
        s.beam(b, a, SEC)


def test_unknown_node_and_dof():
    s, a, b = base()
    with pytest.raises(lr.ModelError, match="unknown node 7"):
        s.beam(a, 7, SEC)
    with pytest.raises(lr.ModelError, match="Unknown DOF 'uz'"):
        s.fix(a, "uz")
    with pytest.raises(lr.ModelError, match="unknown node 9"):
        s.load(9, fx=1.0)


def test_nan_coordinates_and_loads():
    s, a, b = base()
    with pytest.raises(lr.ModelError, match="Node 2 y must be finite"):
        s.node(0.0, math.nan)
    with pytest.raises(lr.ModelError, match="Load fy on node 1 must be finite"):
        s.load(b, fy=math.inf)


def test_bad_segments_and_beam_without_I():
    s, a, b = base()
    with pytest.raises(lr.ModelError, match="`segments` must be a positive integer, got 0"):
        s.beam(a, b, SEC, segments=0)
    with pytest.raises(lr.ModelError, match="its section has I = 0.0"):
        s.beam(a, b, lr.Section(E=1.0, A=1.0))


def test_mechanism_names_free_dofs():
    # A beam on a single pin can rotate freely about it: a mechanism.
    s, a, b = base()
    s.beam(a, b, SEC, segments=2)
    s.fix(a, "ux", "uy")
    s.load(b, fy=1.0)
    with pytest.raises(lr.ModelError, match=r"mechanism.*node \d+ uy"):
        lr.trace(s, lr.by_load(0.1), max_steps=2)


def test_truss_mechanism_is_reported_not_rotation():
    # Four bars in a square without a diagonal sway: a mechanism in translations,
    # while the bar-only nodes' rotations are dropped silently.
    s = lr.Structure()
    n = [s.node(0, 0), s.node(1, 0), s.node(1, 1), s.node(0, 1)]
    sec = lr.Section(E=1.0, A=1.0)
    for i in range(4):
        s.bar(n[i], n[(i + 1) % 4], sec)
    s.fix(n[0], "ux", "uy")
    s.fix(n[1], "uy")
    s.load(n[2], fx=1.0)
    with pytest.raises(lr.ModelError, match="mechanism") as info:
        lr.trace(s, lr.by_load(0.1), max_steps=1)
    assert "rz" not in str(info.value)


def test_moment_on_bar_only_node():
    s = lr.Structure()
    a, b = s.node(0, 0), s.node(1, 0)
    s.bar(a, b, lr.Section(E=1.0, A=1.0))
    s.fix(a, "ux", "uy")
    s.fix(b, "uy")
    s.load(b, mz=1.0)
    with pytest.raises(lr.ModelError, match="Node 1 carries a moment on rz"):
        lr.trace(s, lr.by_load(0.1), max_steps=1)


def test_displacement_control_on_restrained_dof():
    s, a, b = base()
    s.beam(a, b, SEC)
    s.fix(a)
    s.load(b, fy=1.0)
    with pytest.raises(lr.ModelError, match="node 0 uy is not a free DOF"):
        lr.trace(s, lr.by_displacement(a, "uy", 0.1), max_steps=1)


def test_bad_solver_options():
    s, a, b = base()
    s.beam(a, b, SEC)
    s.fix(a)
    s.load(b, fy=1.0)
    with pytest.raises(ValueError, match="`tol` must be positive, got 0.0"):
        lr.trace(s, lr.by_load(0.1), tol=0.0)
    with pytest.raises(TypeError, match="`control` must be"):
        lr.trace(s, 0.1)
