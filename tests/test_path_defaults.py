"""Path following with default options: no hang, no tuning for small loads, safe to interrupt."""
from __future__ import annotations

import signal
import subprocess
import sys
import textwrap
import time

import numpy as np
import pytest

import largerot as lr
from largerot.closed_form import elastic_catenary, elastica_tip_load
from largerot.examples import shallow_arch

# -- no hang: bad options are refused where they come in ----------------------------------
HANG_CHECKS = {
    "load nan": "lr.by_load(float('nan'))",
    "load inf": "lr.by_load(float('inf'))",
    "displacement nan": "lr.by_displacement(1, 'uy', float('nan'))",
    "target inf": "lr.trace(s, lr.by_load(0.1), target_load_factor=float('inf'))",
    "target behind": "lr.trace(s, lr.by_load(0.1), target_load_factor=-1.0)",
    "max_steps inf": "lr.trace(s, lr.by_load(0.1), max_steps=float('inf'))",
    "max_steps fraction": "lr.trace(s, lr.by_load(0.1), max_steps=2.5)",
    "tol text": "lr.trace(s, lr.by_load(0.1), tol='1e-8')",
    "min_step zero": "lr.by_load(0.1, min_step=0.0)",
}


@pytest.mark.parametrize("name", sorted(HANG_CHECKS))
def test_non_finite_and_misplaced_options_fail_promptly(name):
    # Each in a subprocess with a timeout: a hang is a failure, not a stuck test run.
    code = textwrap.dedent(f"""
        import largerot as lr
        s = lr.Structure(); a, b = s.node(0, 0), s.node(2, 0)
        s.beam(a, b, lr.Section(E=1e3, A=1.0, I=1e-3), segments=4); s.fix(a); s.load(b, fy=-1.0)
        try:
            {HANG_CHECKS[name]}
        except (ValueError, TypeError) as exc:
            print("refused:", exc)
        else:
            print("accepted")
    """)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert out.returncode == 0, out.stderr
    assert out.stdout.startswith("refused:"), out.stdout


def test_overflowing_load_ends_promptly_as_a_failed_trace():
    # A load of 1e300: the automatic arc-length step and load control overflow. The
    # trace ends (status "failed", nothing non-finite kept) instead of halving forever.
    code = textwrap.dedent("""
        import numpy as np, largerot as lr
        s = lr.Structure(); a, b = s.node(0, 0), s.node(2, 0)
        s.beam(a, b, lr.Section(E=1e3, A=1.0, I=1e-3), segments=4); s.fix(a); s.load(b, fy=-1e300)
        for c in (lr.by_arc_length(), lr.by_load(0.1)):
            p = lr.trace(s, c, max_steps=20)
            assert np.all(np.isfinite(p.u)), p
            print(p.status)
    """)
    out = subprocess.run([sys.executable, "-W", "ignore", "-c", code], capture_output=True,
                         text=True, timeout=60)
    assert out.returncode == 0, out.stderr
    assert out.stdout.split() == ["failed", "failed"]


# -- small reference loads, mechanisms ---------------------------------------------------
def test_one_newton_reference_load_on_an_arch_and_an_inclined_beam():
    # λ in newtons: a 1 N reference load. The at-rest round-off of a stiff arch must
    # not read as an imbalance. The arch's limit load is the same as with its 1 kN
    # default, scaled by 1000 (the path is the same; 1e-7, the locating accuracy).
    kN = lr.trace(shallow_arch().structure, lr.by_arc_length(), **shallow_arch().trace_options)
    sc = shallow_arch(load=1.0)
    N = lr.trace(sc.structure, lr.by_arc_length(), **sc.trace_options)
    assert N.critical_points[0].kind == "limit"
    assert N.critical_points[0].load_factor == pytest.approx(1e3 * kN.critical_points[0].load_factor,
                                                             rel=1e-7)
    # a steel tube clamped at 30°, 1 N tip load across it to P·L²/EI = 2: the
    # elastica (Bisshopp & Drucker 1945, Quart. Appl. Math. 3), 32 elements: 1.5e-4
    from largerot.examples import inclined_cantilever
    sc = inclined_cantilever(angle=30.0, length=4.0, load=1.0, segments=32)
    s, b, L = sc.structure, sc.tip, 4.0
    n = np.array(sc.parameters["normal"])
    target = 2.0 * sc.parameters["EI"] / L**2
    path = lr.trace(s, lr.by_load(target / 10), target_load_factor=target)
    assert path.status == "target"
    along = path.u[-1, 3 * b:3 * b + 2] @ n
    assert along == pytest.approx(elastica_tip_load(2.0)[0] * L, rel=5e-4)


def test_a_truss_free_to_spin_is_a_mechanism():
    # A pinned triangle held at one pin only turns freely about it: no traced path,
    # a ModelError naming the DOFs (before: a settle of 6–16 s and the wrong error).
    s = lr.Structure()
    p, q, t = s.node(0, 0), s.node(4, 0), s.node(2, 1)
    sec = lr.Section(E=210e9, A=1e-3)
    for i, j in ((p, q), (q, t), (t, p)):
        s.bar(i, j, sec)
    s.fix(p, "ux", "uy")
    s.load(t, fy=-1.0)
    for control in (lr.by_load(0.1), lr.by_arc_length()):
        with pytest.raises(lr.ModelError, match="mechanism"):
            lr.trace(s, control)


def test_sagging_cable_loaded_only_by_scaled_weight_starts_from_its_hanging_shape():
    # A cable whose own weight grows with λ hangs slack at λ = 0 (no tangent there):
    # the first point is found by relaxation, and the sag follows the elastic
    # catenary (Irvine 1981, *Cable Structures*) at every point; 40 segments, mid-span
    # sag within 1e-3 (measured 3e-4).
    rope = lr.Section(E=160e9, A=4e-4, density=7850.0)
    for control in (lr.by_load(0.25), lr.by_arc_length()):
        s = lr.Structure()
        a, b = s.node(0.0, 0.0), s.node(60.0, 0.0)
        s.gravity(constant=False)
        m = s.cable(a, b, rope, segments=40, unstretched_length=61.5)
        s.fix(a, "ux", "uy")
        s.fix(b, "ux", "uy")
        path = lr.trace(s, control, target_load_factor=1.0)
        assert path.status == "target", path.message
        mid = m.nodes[len(m.nodes) // 2]
        w = rope.density * rope.A * 9.81
        for i in range(1, len(path)):
            sag = -path.coordinates(i)[mid][1]
            ref = elastic_catenary(60.0, 0.0, 61.5, path.load_factor[i] * w, rope.EA)["sag"]
            assert sag == pytest.approx(ref, rel=1e-3)


# -- interrupts ---------------------------------------------------------------------------
def _interrupt_after(seconds: float) -> None:
    def handler(signum, frame):
        raise KeyboardInterrupt
    signal.signal(signal.SIGALRM, handler)
    signal.setitimer(signal.ITIMER_REAL, seconds)


@pytest.mark.skipif(not hasattr(signal, "setitimer"), reason="needs POSIX interval timers")
def test_an_interrupt_at_random_moments_leaves_a_consistent_trace_that_goes_on():
    # The notebook's stop button is a KeyboardInterrupt arriving anywhere: inside
    # Newton, in the middle of recording a point. The trace returns what it has
    # (status "interrupted", arrays of one length), and the stepper goes on to the
    # same end point as an uninterrupted trace (the target, to Newton's tolerance).
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(2.0, 0.0)
    s.beam(a, b, lr.FibreSection.rectangle(E=200e9, fy=250e6, width=0.05, depth=0.1, n_fibres=12),
           segments=30)
    s.fix(a)
    s.load(b, fy=-31.25e3 / 2.0)
    ref = lr.trace(s, lr.by_load(0.05), target_load_factor=0.9)
    st = lr.by_load(0.05).stepper(s, target_load_factor=0.9)
    t0 = time.perf_counter()
    lr.run(st)
    total = time.perf_counter() - t0                  # the run's own time on this machine
    rng = np.random.default_rng(7)
    interrupted = 0
    for delay in rng.uniform(0.02, 0.9, 12) * total:
        st = lr.by_load(0.05).stepper(s, target_load_factor=0.9)
        _interrupt_after(delay)
        try:
            path = lr.run(st)
        finally:
            signal.setitimer(signal.ITIMER_REAL, 0.0)
        n = len(path)
        assert len(path.load_factor) == len(path.iterations) == len(path.u) == n
        assert all(len(v) == n for v in path.extra.values())
        if path.status == "interrupted":
            interrupted += 1
            assert st.status == "interrupted"
            st.resume()
            path = lr.run(st)
        assert path.status == "target"
        assert path.load_factor[-1] == ref.load_factor[-1]
        np.testing.assert_allclose(path.u[-1], ref.u[-1], rtol=1e-7, atol=1e-12)
    assert interrupted >= 3                             # the timer did land inside traces
