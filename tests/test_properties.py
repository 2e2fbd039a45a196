"""Property-based tests: random stable frames, trusses and cable nets, traced and saved.

Each example is a random planar structure built so that it is (almost always) not a
mechanism:

* frames: beams (steel tubes) along a random spanning tree of the nodes plus a few
  extra beams or bars, clamped or pinned at one node and pinned at another;
* trusses: bars (steel tubes) added node by node, each new node joined to two
  earlier ones (a triangulated truss, rigid unless two bars happen to be
  collinear), pinned at two nodes;
* cable nets: one to three free hubs, each held by three to five pretensioned
  rods to anchors spread around it (directions that span the plane), hubs joined
  to each other by more cables.

Loads are a few random point loads scaled so that the linear response is a small
fraction (0.1 %–3 %) of the structure's size, sometimes with a constant load too.

The properties (common practice, no source: what a path follower must guarantee):

1. ``lr.trace`` either raises a documented exception (``lr.ModelError``,
   ``TypeError``) or returns a path with a status of ``lr.STATUS`` whose every
   point is finite and in equilibrium. Equilibrium is checked outside the solver:
   a fresh ``Assembly`` of ``path.model`` recomputes the internal forces from the
   stored ``path.u`` and the point's record, and the residual
   λ·F_ref + F_const − f_int on the free DOFs is compared with the force level.
2. No hang: each trace runs under a hard time limit (``signal.setitimer``, below).
3. ``lr.save``/``lr.load`` round trips of every structure and path are exact.
4. The file reader, given corrupted bytes (truncations, bit flips, insertions,
   deletions), raises ``lr.FileFormatError`` or loads an equal object, never
   another exception.

The example count is bounded for CI (``derandomize=True``: the same examples on
every run); ``LARGEROT_HYPOTHESIS_EXAMPLES=500`` runs more (see DEVELOPERS.md).
"""
from __future__ import annotations

import collections
import math
import os
import signal
import tempfile
import warnings
from pathlib import Path

import numpy as np
import pytest
import scipy.sparse.linalg
from hypothesis import HealthCheck, given, settings, strategies as st

import largerot as lr
from largerot.assembly import Assembly

from helpers import arrays_of

#: Examples per property in CI: 200 traces, 200 structures and 800 corrupted files run
#: in about 13 s here (2 shared cores). A longer run (results in DEVELOPERS.md):
#: LARGEROT_HYPOTHESIS_EXAMPLES=4000 python -m pytest tests/test_properties.py
N_EXAMPLES = int(os.environ.get("LARGEROT_HYPOTHESIS_EXAMPLES", "200"))

#: Hard wall-clock limit of one example's trace, in seconds. The traces here take
#: about 0.03 s on average (200 in 5 s, measured); 60 s leaves room for a loaded
#: machine and still catches a hang.
TIME_LIMIT = 60.0

SETTINGS = dict(deadline=None, derandomize=True, database=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])

#: Outcome of every traced example, by structure kind, for the summary printed at the end.
MIX: dict = collections.defaultdict(collections.Counter)


# -- structures ------------------------------------------------------------------------
def _steel(draw):
    """Young's modulus of a structural steel, Pa (common practice, no source)."""
    return draw(st.floats(195e9, 210e9))


def _grid_nodes(draw, n_min: int, n_max: int, size: float) -> list:
    """Nodes on distinct cells of a 6×6 grid over the box, jittered within their cell.

    Distinct cells keep nodes at least 0.4 cell apart: no zero-length members.
    """
    cells = draw(st.lists(st.tuples(st.integers(0, 5), st.integers(0, 5)),
                          min_size=n_min, max_size=n_max, unique=True))
    h = size / 5.0
    jitter = draw(st.lists(st.tuples(st.floats(-0.3, 0.3), st.floats(-0.3, 0.3)),
                           min_size=len(cells), max_size=len(cells)))
    return [((i + a) * h, (j + b) * h) for (i, j), (a, b) in zip(cells, jitter)]


@st.composite
def frames(draw):
    size = draw(st.floats(2.0, 12.0))
    xy = _grid_nodes(draw, 3, 7, size)
    n = len(xy)
    edges = [(draw(st.integers(0, i - 1)), i) for i in range(1, n)]     # spanning tree
    pairs = [(i, j) for i in range(n) for j in range(i + 1, n)
             if (i, j) not in edges and (j, i) not in edges]
    extra = draw(st.lists(st.sampled_from(pairs), max_size=3, unique=True)) if pairs else []
    members = [("beam", a, b, draw(st.integers(1, 3))) for a, b in edges]
    members += [(draw(st.sampled_from(["beam", "bar"])), a, b, 1) for a, b in extra]
    d = draw(st.floats(0.05, 0.4))
    section = ("tube", _steel(draw), d, d * draw(st.floats(0.04, 0.2)))
    other = draw(st.integers(1, n - 1))
    supports = [(0, draw(st.sampled_from(["fix", "pin"]))), (other, "pin")]
    return dict(kind="frame", size=size, xy=xy, members=members, section=section,
                supports=supports, **_loads(draw, n, {0, other}, moments=True))


@st.composite
def trusses(draw):
    size = draw(st.floats(2.0, 12.0))
    xy = _grid_nodes(draw, 3, 7, size)
    n = len(xy)
    edges = {(0, 1)}
    for i in range(2, n):                           # each new node on two earlier ones
        a, b = draw(st.lists(st.integers(0, i - 1), min_size=2, max_size=2, unique=True))
        edges |= {(a, i), (b, i)}
    pairs = [(i, j) for i in range(n) for j in range(i + 1, n) if (i, j) not in edges]
    extra = draw(st.lists(st.sampled_from(pairs), max_size=2, unique=True)) if pairs else []
    d = draw(st.floats(0.03, 0.25))
    section = ("tube", _steel(draw), d, d * draw(st.floats(0.04, 0.2)))
    other = draw(st.integers(1, n - 1))
    return dict(kind="truss", size=size, xy=xy,
                members=[("bar", a, b, 1) for a, b in sorted(edges) + extra],
                section=section, supports=[(0, "pin"), (other, "pin")],
                **_loads(draw, n, {0, other}, moments=False))


@st.composite
def nets(draw):
    size = draw(st.floats(4.0, 30.0))
    hubs = _grid_nodes(draw, 1, 3, 0.4 * size)
    xy = [(x + 0.3 * size, y + 0.3 * size) for x, y in hubs]
    members, supports = [], []
    for h, (x, y) in enumerate(hubs):
        k = draw(st.integers(3, 5))
        turn = draw(st.floats(0.0, 2 * math.pi))
        for m in range(k):                          # spread within ±0.3 of 2π/k: they span the plane
            t = turn + 2 * math.pi * (m + draw(st.floats(-0.3, 0.3))) / k
            r = size * draw(st.floats(0.3, 0.6))
            xy.append((xy[h][0] + r * math.cos(t), xy[h][1] + r * math.sin(t)))
            supports.append((len(xy) - 1, "pin"))
            members.append(("cable", h, len(xy) - 1, 1))
    members += [("cable", h - 1, h, 1) for h in range(1, len(hubs))]
    d = draw(st.floats(0.01, 0.04))
    strain = draw(st.floats(1e-4, 2e-3))            # pretension as a share of EA
    section = ("rod", _steel(draw), d, strain)
    return dict(kind="net", size=size, xy=xy, members=members, section=section,
                supports=supports, **_loads(draw, len(hubs), set(), moments=False))


def _loads(draw, n: int, supported: set, moments: bool) -> dict:
    """Directions of 1–3 reference loads and maybe one constant load on free nodes."""
    free = [i for i in range(n) if i not in supported] or list(range(n))
    # a force of size 0.3–1 in any direction (a zero one would make the scaling
    # below meaningless), and a moment of at most 1 × size on frames
    direction = st.builds(lambda t, m, z: (m * math.cos(t), m * math.sin(t), z),
                          st.floats(0.0, 2 * math.pi), st.floats(0.3, 1.0),
                          st.floats(-1, 1) if moments else st.just(0.0))
    loads = draw(st.lists(st.tuples(st.sampled_from(free), direction), min_size=1, max_size=3))
    const = draw(st.one_of(st.none(), st.tuples(st.sampled_from(free), direction, st.floats(0.1, 1.0))))
    return dict(loads=loads, constant=const, response=draw(st.floats(1e-3, 3e-2)))


structures = st.one_of(frames(), trusses(), nets())


def build(spec: dict) -> lr.Structure:
    """The Structure a spec describes, its loads scaled to the wanted linear response."""
    s = lr.Structure()
    for x, y in spec["xy"]:
        s.node(x, y)
    kind, E, d, t = spec["section"]
    if kind == "tube":
        sec = lr.Section.tube(E=E, diameter=d, wall=t)
    else:
        sec = lr.Section.rod(E=E, diameter=d)
    for mkind, a, b, seg in spec["members"]:
        if mkind == "cable":
            s.cable(a, b, sec, pretension=t * sec.EA)
        else:
            getattr(s, mkind)(a, b, sec, segments=seg)
    for node, how in spec["supports"]:
        if how == "fix":
            s.fix(node)
        else:
            s.fix(node, "ux", "uy")
    F = np.zeros(3 * s.n_nodes)
    for node, (fx, fy, mz) in spec["loads"]:
        F[3 * node:3 * node + 3] += (fx, fy, mz * spec["size"])
    scale = _scale(s, F, spec["response"] * spec["size"])
    for node, (fx, fy, mz) in spec["loads"]:
        s.load(node, scale * fx, scale * fy, scale * mz * spec["size"])
    if spec["constant"] is not None:
        node, (fx, fy, mz), share = spec["constant"]
        c = scale * share
        s.load(node, c * fx, c * fy, c * mz * spec["size"], constant=True)
    return s


def _scale(s: lr.Structure, F: np.ndarray, wanted: float) -> float:
    """Factor on F giving a largest linear translation of ``wanted`` (1 if that fails)."""
    try:
        asm = Assembly(s.snapshot())
        ev = asm.evaluate(np.zeros(asm.n_dof), asm.initial_states())
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")          # a singular K: caught below
            u = scipy.sparse.linalg.spsolve(ev.K.tocsc(), F[asm.free])
        move = np.abs(u[asm.free % 3 != 2]).max()
    except Exception:                       # a mechanism: the trace will say so
        return 1.0
    return wanted / move if np.isfinite(move) and move > 0 else 1.0


# -- the hard time limit ----------------------------------------------------------------
class Hang(BaseException):
    """Raised by the alarm; a BaseException so no ``except Exception`` inside can swallow it."""


def _alarm(signum, frame):
    raise Hang(f"the example ran past {TIME_LIMIT} s")


def timed(fn, *args, **kwargs):
    """``fn(*args, **kwargs)`` under a hard wall-clock limit of TIME_LIMIT seconds.

    An interval timer in this process rather than a subprocess per example: the
    examples are small (≤ 50 DOFs), so the solver is back in Python bytecode every
    few milliseconds and the signal is delivered at once; a subprocess per example
    would cost an interpreter start and a largerot import (about 1 s) each, and a
    failing example would not shrink in the test process. Main thread only (pytest's).
    """
    old = signal.signal(signal.SIGALRM, _alarm)
    signal.setitimer(signal.ITIMER_REAL, TIME_LIMIT)
    try:
        return fn(*args, **kwargs)
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0.0)
        signal.signal(signal.SIGALRM, old)


# -- equilibrium, checked outside the solver ---------------------------------------------
#: Largest residual accepted, relative to the force level √Σ|f_e|² (each element's end
#: forces, the yardstick Newton uses: an assembled norm can be far smaller where
#: elements balance at a node). Newton accepts 1e-8 of it, or the round-off floor
#: 4·eps·‖|K|·|u|‖ (about 1e-15 of it here), or 1e-6 once its corrections stagnate
#: (``newton.STAGNATION_RESIDUAL``): 1e-6 is the widest it may claim. Measured over
#: the 200 CI examples: at most 9.98e-9, none above 1e-8 (4000 examples: 1.0e-8, see
#: DEVELOPERS.md); a point off its path by a load step is off by ~1e-1.
RESIDUAL_TOL = 1e-6


def residuals(path: lr.EquilibriumPath) -> np.ndarray:
    """Relative residual of every point of the path, shape (n_points,).

    Recomputed from ``path.u``, ``path.load_factor`` and the point's record with a
    fresh ``Assembly`` of ``path.model`` (not the solver's cached copy): the internal
    force of each element kind at the stored displacements, the loads there, and
    r = λ·F_ref + F_const − f_int on the free DOFs.
    """
    asm = Assembly(path.model)
    out = np.zeros(len(path))
    for i in range(len(path)):
        u, record = path.u[i], path._record(i)
        f, level2 = np.zeros(asm.n_dof), 0.0
        for g in asm.groups:
            fe = g.forces(u[g.dofmap], record)             # shape (n_elements, n_dof)
            f += np.bincount(g.dofmap.ravel(), weights=fe.ravel(), minlength=asm.n_dof)
            level2 += float(np.sum(fe * fe))
        F_ref, F_const = asm.external(u)
        ext = (path.load_factor[i] * F_ref + F_const)[asm.free]
        r = ext - f[asm.free]
        level = max(math.sqrt(level2), float(np.linalg.norm(ext)), 1e-300)
        out[i] = np.linalg.norm(r) / level
    return out


# -- exact round trips ------------------------------------------------------------------
def assert_same_arrays(a, b) -> None:
    x, y = arrays_of(a), arrays_of(b)
    assert x.keys() == y.keys()
    for k in x:
        assert x[k].dtype == y[k].dtype and x[k].shape == y[k].shape, k
        assert x[k].tobytes() == y[k].tobytes(), k        # bit for bit, NaNs included


def assert_same_path(p: lr.EquilibriumPath, q: lr.EquilibriumPath) -> None:
    assert type(q) is lr.EquilibriumPath
    assert_same_arrays(p, q)
    assert_same_arrays(p.model, q.model)
    assert (p.status, p.status_code, p.message) == (q.status, q.status_code, q.message)
    assert [(e.kind, e.load_factor) for e in p.events] == [(e.kind, e.load_factor) for e in q.events]
    assert [(c.kind, c.load_factor) for c in p.critical_points] == \
        [(c.kind, c.load_factor) for c in q.critical_points]


def assert_same_structure(s: lr.Structure, t: lr.Structure) -> None:
    assert type(t) is lr.Structure
    assert_same_arrays(s.snapshot(), t.snapshot())


# -- the properties -----------------------------------------------------------------------
CONTROLS = {"load": (lambda: lr.by_load(0.25), dict(target_load_factor=1.0, max_steps=40)),
            "arc length": (lambda: lr.by_arc_length(), dict(target_load_factor=1.0, max_steps=8))}


@settings(max_examples=N_EXAMPLES, **SETTINGS)
@given(spec=structures, control=st.sampled_from(sorted(CONTROLS)))
def test_a_trace_ends_in_equilibrium_or_says_why(spec, control):
    s = build(spec)
    make, options = CONTROLS[control]
    try:
        path = timed(lr.trace, s, make(), **options)
    except lr.ModelError as exc:
        word = "mechanism" if "mechanism" in str(exc) else f"ModelError: {str(exc)[:60]}"
        MIX[f'{spec["kind"]}, {control}'][word] += 1
        return
    except TypeError:
        MIX[f'{spec["kind"]}, {control}']["TypeError"] += 1       # none measured
        return
    MIX[f'{spec["kind"]}, {control}'][path.status] += 1
    assert path.status in lr.STATUS, path.status
    assert len(path) >= 1
    assert np.isfinite(path.u).all() and np.isfinite(path.load_factor).all()
    for k, v in path.extra.items():
        v = np.asarray(v)
        if v.dtype.kind == "f":
            assert np.isfinite(v).all(), k
    r = residuals(path)
    MIX["_worst"]["residual"] = max(MIX["_worst"]["residual"], float(r.max()))
    MIX["_worst"]["points above 1e-8"] += int((r > 1e-8).sum())
    assert r.max() <= RESIDUAL_TOL, (r, path.status, path.message)
    with tempfile.TemporaryDirectory() as tmp:
        lr.save(s, Path(tmp) / "s.lr")
        lr.save(path, Path(tmp) / "p.lr")
        assert_same_structure(s, lr.load(Path(tmp) / "s.lr"))
        assert_same_path(path, lr.load(Path(tmp) / "p.lr"))


@settings(max_examples=N_EXAMPLES, **SETTINGS)
@given(spec=structures)
def test_every_generated_structure_round_trips_exactly(spec):
    s = build(spec)
    with tempfile.TemporaryDirectory() as tmp:
        lr.save(s, Path(tmp) / "s.lr")
        t = lr.load(Path(tmp) / "s.lr", kind="structure")
    assert_same_structure(s, t)
    assert repr(t) == repr(s)


# -- the file reader under corrupted bytes --------------------------------------------------
FRAME_WITH_CONSTANT_LOAD = dict(
    kind="frame", size=4.0, xy=[(0.0, 0.0), (0.0, 3.0), (4.0, 3.0), (4.0, 0.0)],
    members=[("beam", 0, 1, 2), ("beam", 1, 2, 3), ("beam", 2, 3, 2), ("bar", 0, 2, 1)],
    section=("tube", 205e9, 0.2, 0.01), supports=[(0, "fix"), (3, "pin")],
    loads=[(1, (1.0, -0.3, 0.0))], constant=(2, (0.0, -1.0, 0.0), 0.5), response=0.003)
NET = dict(
    kind="net", size=10.0, xy=[(5.0, 5.0), (9.0, 5.5), (2.0, 8.0), (3.0, 1.0)],
    members=[("cable", 0, 1, 1), ("cable", 0, 2, 1), ("cable", 0, 3, 1)],
    section=("rod", 205e9, 0.02, 1e-3), supports=[(1, "pin"), (2, "pin"), (3, "pin")],
    loads=[(0, (0.2, -1.0, 0.0))], constant=None, response=0.01)


@pytest.fixture(scope="module")
def saved_files(tmp_path_factory):
    """Bytes of saved structures and paths (one frame, one cable net), with the objects."""
    out = []
    for spec in (FRAME_WITH_CONSTANT_LOAD, NET):
        s = build(spec)
        path = lr.trace(s, lr.by_load(0.25), target_load_factor=1.0)
        assert path.status == "target", path.message
        for obj in (s, path):
            f = tmp_path_factory.mktemp("saved") / "x.lr"
            lr.save(obj, f)
            out.append((obj, f.read_bytes()))
    return out


@st.composite
def corruptions(draw, n: int):
    """A list of edits (truncate, flip a bit, insert or delete bytes) of an n-byte file."""
    edits = []
    for _ in range(draw(st.integers(1, 3))):
        how = draw(st.sampled_from(["truncate", "flip", "insert", "delete"]))
        at = draw(st.integers(0, n - 1))
        if how == "flip":
            edits.append((how, at, draw(st.integers(0, 7))))
        elif how == "insert":
            edits.append((how, at, draw(st.binary(min_size=1, max_size=16))))
        elif how == "delete":
            edits.append((how, at, draw(st.integers(1, 64))))
        else:
            edits.append((how, at, None))
    return edits


def corrupted(data: bytes, edits) -> bytes:
    b = bytearray(data)
    for how, at, arg in edits:
        at = min(at, max(len(b) - 1, 0))
        if how == "truncate":
            del b[at:]
        elif how == "flip" and b:
            b[at] ^= 1 << arg
        elif how == "insert":
            b[at:at] = arg
        elif how == "delete":
            del b[at:at + arg]
    return bytes(b)


READ: collections.Counter = collections.Counter()


@settings(max_examples=4 * N_EXAMPLES, **SETTINGS)
@given(which=st.integers(0, 3), data=st.data())
def test_corrupted_files_are_refused_or_load_the_same(saved_files, which, data):
    obj, raw = saved_files[which]
    edits = data.draw(corruptions(len(raw)))
    bad = corrupted(raw, edits)
    with tempfile.TemporaryDirectory() as tmp:
        f = Path(tmp) / "bad.lr"
        f.write_bytes(bad)
        try:
            got = timed(lr.load, f)
        except lr.FileFormatError:
            READ["refused"] += 1
            return
    READ["loaded the same"] += 1
    if isinstance(obj, lr.Structure):
        assert_same_structure(obj, got)
    else:
        assert_same_path(obj, got)


def test_the_generator_makes_mostly_structures_that_trace(request):
    """The mix of the traces above: mechanisms must stay rare.

    Measured on the 200 CI examples: 2 mechanisms (trusses), 30 ``max_steps``
    (cable nets under arc length, capped at 8 steps), the rest ``target``; with
    4000 examples 0.35 % raised ``ModelError`` (DEVELOPERS.md).
    """
    n = sum(c for kind, counts in MIX.items() if kind != "_worst" for c in counts.values())
    if n == 0:
        pytest.skip("run with test_a_trace_ends_in_equilibrium_or_says_why")
    mech = sum(counts["mechanism"] for counts in MIX.values())
    lines = [f"{kind}: {dict(counts)}" for kind, counts in sorted(MIX.items())]
    lines.append(f"file reader: {dict(READ)}")
    reporter = request.config.pluginmanager.get_plugin("terminalreporter")
    capture = request.config.pluginmanager.get_plugin("capturemanager")
    if reporter is not None and capture is not None:
        with capture.global_and_fixture_disabled():      # shown without -s too
            reporter.write_line("\nproperty-test mix: " + "; ".join(lines))
    # the generator is built for stable structures; a random-frame generator without
    # that care gave 91 % mechanisms (issue 14)
    assert mech <= 0.2 * n, lines
