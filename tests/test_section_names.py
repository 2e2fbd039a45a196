"""Section and FibreSection build tubes and rectangles from the same argument names."""
import math
import warnings

import pytest

import largerot as lr


def test_tube_and_rectangle_take_one_set_of_names():
    # Closed forms: A = π(D² − d²)/4, I = π(D⁴ − d⁴)/64 for a tube, bh and bh³/12 for a
    # rectangle (any strength-of-materials text; common practice, no source). The
    # fibre tube's strips have exact areas, so A agrees to rounding; its I is short by
    # the strips' own second moment (module docstring of largerot.fibres), 0.2 % here.
    D, t, b, h = 0.2, 0.01, 0.05, 0.1
    A_tube, I_tube = math.pi * (D**2 - (D - 2 * t) ** 2) / 4, math.pi * (D**4 - (D - 2 * t) ** 4) / 64
    with warnings.catch_warnings():
        warnings.simplefilter("error")                  # the new names give no warning
        elastic = lr.Section.tube(E=210e9, diameter=D, wall=t)
        fibre = lr.FibreSection.tube(E=210e9, fy=355e6, diameter=D, wall=t)
        rect = lr.Section.rectangle(E=210e9, width=b, depth=h)
        frect = lr.FibreSection.rectangle(E=210e9, fy=355e6, width=b, depth=h)
    assert elastic.A == pytest.approx(A_tube, rel=1e-14) and elastic.I == pytest.approx(I_tube, rel=1e-14)
    assert fibre.A == pytest.approx(A_tube, rel=1e-12) and fibre.I == pytest.approx(I_tube, rel=3e-3)
    assert rect.A == pytest.approx(b * h, rel=1e-14) and frect.A == pytest.approx(b * h, rel=1e-14)
    assert elastic.depth == fibre.depth == D and rect.depth == frect.depth == h


@pytest.mark.parametrize("shape, old, new", [
    ("tube", dict(D=0.2, t=0.01), dict(diameter=0.2, wall=0.01)),
    ("rectangle", dict(b=0.05, h=0.1), dict(width=0.05, depth=0.1)),
])
def test_old_fibre_names_still_work_with_a_deprecation_warning(shape, old, new):
    build = getattr(lr.FibreSection, shape)
    with pytest.warns(DeprecationWarning, match="is now called") as record:
        a = build(E=210e9, fy=355e6, **old)
    said = " ".join(str(w.message) for w in record)
    for o, n in zip(old, new):
        assert f"`{o}` is now called `{n}`" in said
    b = build(E=210e9, fy=355e6, **new)
    assert (a.A, a.I, a.Mp, a.depth) == (b.A, b.I, b.Mp, b.depth)
    positional = build(210e9, 355e6, *new.values())       # positional order unchanged
    assert positional.Mp == b.Mp


def test_old_and_new_name_together_or_neither_are_refused():
    with pytest.raises(TypeError, match="got both `diameter` and its old name `D`"):
        lr.FibreSection.tube(E=1.0, fy=1.0, diameter=0.2, D=0.2, wall=0.01)
    with pytest.raises(TypeError, match="missing required argument `depth`"):
        lr.FibreSection.rectangle(E=1.0, fy=1.0, width=0.1)
