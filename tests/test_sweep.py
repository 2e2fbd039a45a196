"""Parameter sweeps: the same table serially, on processes and on a Dask cluster;
failing cases as rows; a stored sweep resumed.

The reference of each check is the serial sweep itself (the executors must not change
a single number) and the statuses the issue names (common practice, no source).
"""
import os
import sys
from concurrent.futures import ProcessPoolExecutor

import numpy as np
import pandas as pd
import pytest

import largerot as lr

sys.path.insert(0, os.path.dirname(__file__))
import sweep_cases  # noqa: E402

CASES = lr.grid(rise=[0.15, 0.2, 0.25], segments=[8, 12])
OPTIONS = dict(max_steps=30)


def _numbers(table: pd.DataFrame) -> pd.DataFrame:
    return table.drop(columns=["wall_time"])


def test_grid_is_the_full_factorial_in_order():
    assert lr.grid(a=[1, 2], b=["x", "y", "z"])[:4] == [
        {"a": 1, "b": "x"}, {"a": 1, "b": "y"}, {"a": 1, "b": "z"}, {"a": 2, "b": "x"}]
    assert len(lr.grid(a=[1, 2], b=[3, 4], c=[5, 6, 7])) == 12
    with pytest.raises(lr.ModelError, match="`a` has no values"):
        lr.grid(a=[])
    with pytest.raises(TypeError, match="`a` must be a list"):
        lr.grid(a=3)


def test_serial_process_pool_and_dask_give_the_same_table():
    distributed = pytest.importorskip("distributed")
    serial = lr.sweep(sweep_cases.arch, CASES, lr.by_arc_length(), progress=False, **OPTIONS)
    assert list(serial.columns[:2]) == ["rise", "segments"] and len(serial) == len(CASES)
    assert (serial["status"] == "max_steps").all()
    # every arch snaps: its first limit is found, and a higher rise carries more
    lim = serial.set_index(["rise", "segments"])["first_limit"]
    assert lim.notna().all() and lim[0.25, 12] > lim[0.15, 12]
    with ProcessPoolExecutor(2) as ex:
        pooled = lr.sweep(sweep_cases.arch, CASES, lr.by_arc_length(), executor=ex,
                          progress=False, **OPTIONS)
    pd.testing.assert_frame_equal(_numbers(pooled), _numbers(serial))
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  host="127.0.0.1", dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        dask = lr.sweep(sweep_cases.arch, CASES, lr.by_arc_length(), executor=client,
                        progress=False, **OPTIONS)
    pd.testing.assert_frame_equal(_numbers(dask), _numbers(serial))


def test_failing_cases_become_rows_and_leave_the_others_alone():
    cases = [dict(rise=0.2), dict(rise=0.2, trouble="raise"), dict(rise=-1.0),
             dict(rise=0.2, trouble="slow"), dict(rise=0.25)]
    table = lr.sweep(sweep_cases.arch_or_trouble, cases, lr.by_arc_length(), progress=False,
                     case_timeout=1.5, max_steps=40)
    assert table["status"].tolist() == ["max_steps", "error", "bad parameters", "timeout", "max_steps"]
    assert "the build function broke" in table.loc[1, "message"]
    assert "rise" in table.loc[2, "message"]
    assert "case_timeout" in table.loc[3, "message"]
    ref = lr.sweep(sweep_cases.arch_or_trouble, [cases[0], cases[4]], lr.by_arc_length(),
                   progress=False, max_steps=40)
    np.testing.assert_array_equal(table.loc[[0, 4], "first_limit"], ref["first_limit"])


def test_a_stored_sweep_resumes_with_only_the_missing_cases(tmp_path):
    calls = []

    def build(rise, segments):
        calls.append(rise)
        if len(calls) == 3 and not getattr(build, "calm", False):
            raise KeyboardInterrupt              # the notebook's stop button, mid-sweep
        return sweep_cases.arch(rise, segments)

    with pytest.raises(KeyboardInterrupt):
        lr.sweep(build, CASES, lr.by_arc_length(), store=tmp_path, progress=False, **OPTIONS)
    assert len(list(tmp_path.glob("case-*.json"))) == 2
    build.calm = True
    calls.clear()
    table = lr.sweep(build, CASES, lr.by_arc_length(), store=tmp_path, progress=False, **OPTIONS)
    assert len(calls) == len(CASES) - 2                    # the two stored ones not rerun
    full = lr.sweep(sweep_cases.arch, CASES, lr.by_arc_length(), progress=False, **OPTIONS)
    pd.testing.assert_frame_equal(_numbers(table), _numbers(full), check_dtype=False)
    path = lr.load(tmp_path / "case-00004.lr")
    assert path.status == "max_steps" and len(path) == table.loc[4, "points"]


def test_the_sweep_panel_opens_stored_and_retraced_cases(tmp_path):
    pytest.importorskip("anywidget")
    cases = lr.grid(rise=[0.15, 0.25], segments=[8, 12])
    table = lr.sweep(sweep_cases.arch, cases, lr.by_arc_length(), store=tmp_path, progress=False,
                     **OPTIONS)
    panel = lr.widgets.sweep_panel(table, sweep_cases.arch, lr.by_arc_length(), x="rise",
                                   y="first_limit", by="segments", store=tmp_path, **OPTIONS)
    assert len(panel.case.options) == 4
    # the plot gets the table's numbers: one curve per mesh, a point per case
    assert [c["label"] for c in panel.plot.series] == ["segments = 8", "segments = 12"]
    pts = {p[0]: p for c in panel.plot.series for p in c["points"]}
    assert sorted(pts) == [0, 1, 2, 3]
    assert pts[3][1:3] == [table.loc[3, "rise"], table.loc[3, "first_limit"]]
    assert "rise=0.25" in pts[3][3]
    panel.case.value = 2
    panel.open_button.click()
    stored = lr.load(tmp_path / "case-00002.lr")
    np.testing.assert_array_equal(panel.path.u, stored.u)
    assert panel.explorer.path is panel.path and "loaded" in panel.status.value
    # without the store the case is re-traced: the same path (the trace is deterministic)
    fresh = lr.widgets.sweep_panel(table, sweep_cases.arch, lr.by_arc_length(), x="rise",
                                   y="first_limit", **OPTIONS)
    np.testing.assert_array_equal(fresh.open_case(2).u, stored.u)
    assert "re-traced" in fresh.status.value
    with pytest.raises(lr.ModelError, match="`y` names no column.*'nope'"):
        lr.widgets.sweep_panel(table, sweep_cases.arch, lr.by_arc_length(), x="rise", y="nope")


def test_a_click_on_a_plotted_point_opens_its_case(tmp_path):
    # the browser sends {"event": "click", "case": i} (sweep_plot.js); here the message
    # arrives through the widget's own message route, as from the front end
    pytest.importorskip("anywidget")
    cases = lr.grid(rise=[0.15, 0.25], segments=[8])
    table = lr.sweep(sweep_cases.arch, cases, lr.by_arc_length(), store=tmp_path, progress=False,
                     **OPTIONS)
    panel = lr.widgets.sweep_panel(table, sweep_cases.arch, lr.by_arc_length(), x="rise",
                                   y="first_limit", store=tmp_path, **OPTIONS)
    assert panel.plot.chosen == 0 and panel.path is None
    panel.plot._handle_custom_msg({"event": "click", "case": 1}, [])
    assert panel.case.value == 1 and panel.plot.chosen == 1     # the list and the mark follow
    np.testing.assert_array_equal(panel.path.u, lr.load(tmp_path / "case-00001.lr").u)
    assert panel.explorer.path is panel.path and "case 1 (loaded" in panel.status.value
    # a click on a case the table does not have is shown in the panel, not raised
    panel.plot._handle_custom_msg({"event": "click", "case": 7}, [])
    assert "no case 7" in panel.error and panel.case.value == 1
    assert "no case 7" in panel.errors.message and "Traceback" in panel.errors.details
    panel.plot._handle_custom_msg({"event": "hover", "case": 0}, [])    # not a click: ignored
    assert panel.case.value == 1
    panel.plot._handle_custom_msg({"event": "click", "case": 0}, [])    # a good case clears it
    assert panel.error == "" and panel.errors.message == "" and panel.case.value == 0


def test_an_unlocated_critical_point_gives_no_load_in_the_summary():
    # The rise-0.5 m arch moved 0.151 mm along its first buckling mode: the default
    # arc-length step (0.79 m there) jumps across the sharp turn at the limit point onto
    # the neighbouring branch (λ = 1181 there, above the perfect arch's bifurcation at
    # 1179.6), the search between the two branches fails, and the critical point is
    # reported with located False and the midpoint λ 1103 (measured). The summary must
    # not report that midpoint as a load.
    structure = sweep_cases.imperfect_arch(amplitude=1.51e-4, rise=0.5)
    path = lr.trace(structure, lr.by_arc_length(), max_steps=8)
    assert path.critical_points and not path.critical_points[0].located
    row = lr.sweep(sweep_cases.imperfect_arch, [dict(amplitude=1.51e-4, rise=0.5)],
                   lr.by_arc_length(), progress=False, max_steps=8).iloc[0]
    assert np.isnan(row["first_critical"]) and np.isnan(row["first_limit"])
    assert not row["first_critical_located"]
    # with the step bounded the limit point is located, and it lies below the perfect
    # arch's bifurcation load: an imperfect structure whose perfect twin has an unstable
    # symmetric bifurcation reaches a limit below that load (Koiter 1945; Thompson & Hunt
    # 1973, ch. 3), and above the last converged point before it (a maximum of λ)
    lam_c = lr.sweep(sweep_cases.imperfect_arch, [dict(amplitude=0.0, rise=0.5)],
                     lr.by_arc_length(), progress=False, max_steps=10).loc[0, "first_bifurcation"]
    bounded = lr.trace(structure, lr.by_arc_length(max_step=0.25), max_steps=30)
    first = bounded.critical_points[0]
    row = lr.sweep(sweep_cases.imperfect_arch, [dict(amplitude=1.51e-4, rise=0.5)],
                   lr.by_arc_length(max_step=0.25), progress=False, max_steps=30).iloc[0]
    assert first.located and first.kind == "limit" and row["first_critical_located"]
    assert row["first_critical"] == first.load_factor
    assert bounded.load_factor[first.index] < first.load_factor < lam_c


def test_imperfection_sensitivity_follows_koiters_two_thirds_law():
    # The pinned shallow arch of rise 0.3 m bifurcates into its antisymmetric mode
    # before its limit point; by symmetry the bifurcation is of the symmetric
    # (unstable) kind, for which the limit load of the imperfect structure drops like
    # the 2/3 power of the imperfection amplitude as it goes to zero (Koiter 1945;
    # Thompson & Hunt 1973, *A General Theory of Elastic Stability*, ch. 3 — the issue's
    # square root is the asymmetric case). Measured local exponents, amplitudes
    # 1e-6 → 2.56e-4 m in steps of 4×: 0.697, 0.722, 0.769, 0.822 — falling toward 2/3
    # as the amplitude shrinks (higher-order terms fade). Demanded: that fall, and the
    # smallest pair within 0.05 of 2/3.
    amps = [0.0, 1e-6, 4e-6, 1.6e-5, 6.4e-5, 2.56e-4]
    table = lr.sweep(sweep_cases.imperfect_arch, [dict(amplitude=a) for a in amps],
                     lr.by_arc_length(), progress=False, max_steps=60)
    lam_c = table.loc[0, "first_bifurcation"]
    assert np.isfinite(lam_c) and np.isnan(table.loc[0, "first_limit"])
    drops = lam_c - table["first_limit"].to_numpy()[1:]
    assert np.all(drops > 0)
    slopes = np.diff(np.log(drops)) / np.diff(np.log(amps[1:]))
    assert np.all(np.diff(slopes) > 0), slopes
    assert abs(slopes[0] - 2 / 3) < 0.05, slopes
