"""Saving and loading: round trips, corrupt files, checkpoints killed and resumed.

The references here are the objects themselves (a round trip must give bit-for-bit
equal arrays) and an uninterrupted trace (a resumed one must end on the same point);
file defects must raise ``lr.FileFormatError`` (common practice, no source).
"""
import json
import os
import signal
import subprocess
import sys
import textwrap
import zipfile

import numpy as np
import pytest

import largerot as lr
from largerot import demo

from helpers import arrays_of

E, FY, B, H, L = 200e9, 250e6, 0.05, 0.1, 2.0
MP = FY * B * H**2 / 4


def fibre_cantilever_on_stop():
    """Yields at its root (fibre history), then meets a stop (contact)."""
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, lr.FibreSection.rectangle(E=E, fy=FY, width=B, depth=H, n_fibres=16), segments=12)
    s.fix(a)
    s.contact(b, lr.Line(point=(L, -0.05), normal=(0.0, 1.0)))
    s.load(b, fy=-MP / L)
    return s, lr.by_load(0.1), dict(target_load_factor=1.2)


def loaded_frame():
    """Bars, a follower tip force, a follower pressure and a dead line load."""
    s = lr.Structure()
    sec = lr.Section(E=210e9, A=2e-3, I=4e-6)
    a, b, c = s.node(0, 0), s.node(0, 3), s.node(2, 3)
    s.beam(a, b, sec, segments=6)
    beam = s.beam(b, c, sec, segments=4)
    s.bar(a, c, lr.Section(E=210e9, A=1e-4))
    s.fix(a)
    s.load(c, fx=-1e3, follower=True)
    s.line_load(beam, normal=-2e3)
    s.line_load(beam, qy=-1e3, constant=True)
    return s, lr.by_load(0.1), dict(target_load_factor=1.0)


def guyed_mast():
    """Cables, one going slack; self-weight held constant."""
    s, nodes = demo.guyed_mast()
    return s, lr.by_load(0.5), dict(target_load_factor=4.0)


CASES = {"fibre beam, contact": fibre_cantilever_on_stop, "bars, followers, line loads": loaded_frame,
         "cables, slack": guyed_mast}


@pytest.mark.parametrize("case", CASES)
def test_structures_and_paths_round_trip_bit_for_bit(tmp_path, case):
    s, control, options = CASES[case]()
    path = lr.trace(s, control, **options)
    assert path.status == "target", path.message
    lr.save(s, tmp_path / "s.lr")
    lr.save(path, tmp_path / "p.lr")
    s2, path2 = lr.load(tmp_path / "s.lr"), lr.load(tmp_path / "p.lr")
    assert type(s2) is lr.Structure and type(path2) is lr.EquilibriumPath
    a, b = arrays_of(s.snapshot()), arrays_of(s2.snapshot())
    assert a.keys() == b.keys()
    for k in a:
        assert a[k].dtype == b[k].dtype and np.array_equal(a[k], b[k]), k
    a, b = arrays_of(path), arrays_of(path2)
    assert a.keys() == b.keys()
    for k in a:
        assert a[k].dtype == b[k].dtype and np.array_equal(a[k], b[k], equal_nan=True), k
    assert (path2.status, path2.message) == (path.status, path.message)
    assert [(e.kind, e.load_factor) for e in path2.events] == [(e.kind, e.load_factor) for e in path.events]
    # what plots and widgets read: shapes and member forces of every point
    for i in range(len(path)):
        for kind, lines in path.shape(i).items():
            np.testing.assert_array_equal(path2.shape(i)[kind], lines)
        np.testing.assert_array_equal(path2.reaction_vector(i), path.reaction_vector(i))
    # the loaded structure traces the same path
    again = lr.trace(s2, control, **options)
    np.testing.assert_array_equal(again.u, path.u)


def test_a_loaded_path_opens_in_the_explorer(tmp_path):
    pytest.importorskip("anywidget")
    s, control, options = fibre_cantilever_on_stop()
    lr.save(lr.trace(s, control, **options), tmp_path / "p.lr")
    view = lr.widgets.explore(lr.load(tmp_path / "p.lr"))
    assert view is not None


def test_the_file_is_an_open_zip_of_npy_arrays_and_json(tmp_path):
    s, control, options = loaded_frame()
    path = lr.trace(s, control, **options)
    lr.save(path, tmp_path / "p.lr")
    with zipfile.ZipFile(tmp_path / "p.lr") as z:
        header = json.loads(z.read("largerot.json"))
        names = [n for n in z.namelist() if n.endswith(".npy")]
        arrays = [np.load(z.open(n), allow_pickle=False) for n in names]
    assert header["format"] == "largerot" and header["schema"] == lr.storage.SCHEMA
    assert header["kind"] == "path"
    assert any(a.shape == path.load_factor.shape and np.array_equal(a, path.load_factor) for a in arrays)


def _saved(tmp_path):
    s, control, options = loaded_frame()
    f = tmp_path / "p.lr"
    lr.save(lr.trace(s, control, **options), f)
    return f, f.read_bytes()


def test_truncated_files_are_refused(tmp_path):
    f, data = _saved(tmp_path)
    for cut in (0, 10, len(data) // 3, len(data) // 2, len(data) - 30):
        g = tmp_path / f"cut{cut}.lr"
        g.write_bytes(data[:cut])
        with pytest.raises(lr.FileFormatError, match="truncated|corrupt|not a largerot"):
            lr.load(g)


def test_flipped_bytes_raise_a_file_format_error_or_load_the_same(tmp_path):
    # a flipped byte in the header or an array fails the zip's CRC or the JSON parse;
    # one in the zip's bookkeeping may go unread: then the object must be the same
    f, data = _saved(tmp_path)
    ref = lr.load(f)
    rng = np.random.default_rng(7)
    outcomes = {"refused": 0, "same": 0}
    for i in range(120):
        b = bytearray(data)
        j = int(rng.integers(len(b)))
        b[j] ^= 1 << int(rng.integers(8))
        g = tmp_path / "flip.lr"
        g.write_bytes(bytes(b))
        try:
            p = lr.load(g)
        except lr.FileFormatError:
            outcomes["refused"] += 1
            continue
        np.testing.assert_array_equal(p.u, ref.u)
        np.testing.assert_array_equal(p.load_factor, ref.load_factor)
        outcomes["same"] += 1
    assert outcomes["refused"] > 60, outcomes


def test_other_files_kinds_and_newer_schemas_are_refused(tmp_path):
    text = tmp_path / "notes.txt"
    text.write_text("just text")
    with pytest.raises(lr.FileFormatError, match="not a largerot file"):
        lr.load(text)
    npz = tmp_path / "plain.npz"
    np.savez(npz, a=np.arange(3))
    with pytest.raises(lr.FileFormatError, match="not a largerot file"):
        lr.load(npz)
    f, data = _saved(tmp_path)
    with pytest.raises(lr.FileFormatError, match="holds a path, not a structure"):
        lr.load(f, kind="structure")
    with zipfile.ZipFile(f) as z:
        entries = {n: z.read(n) for n in z.namelist()}
    header = json.loads(entries["largerot.json"])
    header["schema"] = lr.storage.SCHEMA + 1
    entries["largerot.json"] = json.dumps(header).encode()
    newer = tmp_path / "newer.lr"
    with zipfile.ZipFile(newer, "w") as z:
        for n, b in entries.items():
            z.writestr(n, b)
    with pytest.raises(lr.FileFormatError, match=f"schema {lr.storage.SCHEMA + 1}.*newer"):
        lr.load(newer)


def test_only_largerot_classes_are_rebuilt(tmp_path):
    f, _ = _saved(tmp_path)
    with zipfile.ZipFile(f) as z:
        entries = {n: z.read(n) for n in z.namelist()}
    text = entries["largerot.json"].decode().replace("largerot.results:EquilibriumPath",
                                                     "subprocess:Popen", 1)
    entries["largerot.json"] = text.encode()
    bad = tmp_path / "foreign.lr"
    with zipfile.ZipFile(bad, "w") as z:
        for n, b in entries.items():
            z.writestr(n, b)
    with pytest.raises(lr.FileFormatError, match="class outside largerot"):
        lr.load(bad)


def test_saving_is_atomic_and_refuses_foreign_objects(tmp_path):
    with pytest.raises(TypeError, match="Structure, an EquilibriumPath or a path stepper"):
        lr.save({"a": 1}, tmp_path / "x.lr")
    s, control, options = loaded_frame()
    s.label_for_test = lambda: None                    # a function is code, not data
    with pytest.raises(TypeError, match="Cannot save an object of type"):
        lr.save(s, tmp_path / "x.lr")
    assert not any(tmp_path.iterdir())                  # no file, no temporary left


_KILLED = textwrap.dedent('''
    import os, signal, sys
    import largerot as lr
    sys.path.insert(0, {tests!r})
    from test_storage import fibre_cantilever_on_stop
    s, control, options = fibre_cantilever_on_stop()
    def kill(point):
        if point.load_factor > 0.65:
            os.kill(os.getpid(), signal.SIGKILL)        # no clean-up, no final save
    lr.trace(s, control, checkpoint={file!r}, checkpoint_every=2, callback=kill, **options)
''')


def test_a_killed_trace_resumes_to_the_same_end(tmp_path):
    # a trace with checkpoints, killed (SIGKILL) halfway in a subprocess, then
    # resumed from its file: the same final point as an uninterrupted trace
    f = tmp_path / "run.lr"
    code = _KILLED.format(tests=os.path.dirname(__file__), file=str(f))
    proc = subprocess.run([sys.executable, "-c", code], timeout=120, capture_output=True)
    assert proc.returncode == -signal.SIGKILL, proc.stderr.decode()
    saved = lr.load(f, kind="checkpoint")
    assert saved.status == "running" and 0.0 < saved.lam < 0.65
    s, control, options = fibre_cantilever_on_stop()
    ref = lr.trace(s, control, **options)
    path = lr.resume(f)
    assert path.status == ref.status == "target"
    np.testing.assert_array_equal(path.load_factor, ref.load_factor)
    np.testing.assert_array_equal(path.u, ref.u)
    np.testing.assert_array_equal(path.extra["fibre_q"], ref.extra["fibre_q"])
    assert lr.load(f, kind="checkpoint").status == "target"      # saved at the end too


def test_resume_asks_for_the_event_functions_again(tmp_path):
    s, control, options = loaded_frame()

    def tip_down(point):
        return point.load_factor - 0.45
    f = tmp_path / "run.lr"
    path = lr.trace(s, control, events=tip_down, max_steps=3, checkpoint=f, **options)
    assert path.status == "max_steps"
    with pytest.raises(lr.ModelError, match="1 event function.*tip_down"):
        lr.resume(f)
    resumed = lr.resume(f, events=[tip_down])
    ref = lr.trace(s, control, events=tip_down, **options)
    assert resumed.status == ref.status == "target"
    np.testing.assert_array_equal(resumed.u, ref.u)
    assert [e.load_factor for e in resumed.events] == [e.load_factor for e in ref.events]


_DETERMINISM = textwrap.dedent('''
    import sys
    import largerot as lr
    sys.path.insert(0, {tests!r})
    from test_storage import guyed_mast
    s, control, options = guyed_mast()
    sys.stdout.write(lr.trace(s, control, **options).u.tobytes().hex())
''')


def test_paths_are_bit_identical_across_processes():
    code = _DETERMINISM.format(tests=os.path.dirname(__file__))
    runs = [subprocess.run([sys.executable, "-c", code], timeout=120, capture_output=True, text=True)
            for _ in range(2)]
    assert all(r.returncode == 0 for r in runs), runs[0].stderr
    assert runs[0].stdout == runs[1].stdout and len(runs[0].stdout) > 100
