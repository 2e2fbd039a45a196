"""largerot benchmark suite: ratios measured in one run on one machine.

    python benchmarks/run.py                # full run (a few minutes)
    python benchmarks/run.py --quick        # small sizes only (CI smoke test, < 1 min)
    python benchmarks/run.py --json out.json --profile

Sections (each a JSON key): ``iteration`` (one Newton iteration over a bare
factorise-and-solve with scipy's splu), ``baseline`` (vs the hand-written loop in
baseline.py), ``scaling`` (time per path step vs element count), ``efficiency``
(Newton iterations per point), ``latency`` (interactive re-trace, widget frame),
``build`` (model build + first factorisation over one Newton iteration, in a fresh
process), ``memory`` (peak memory of the model alone and of a long trace, in a fresh
process). Absolute times are indicative; the ratios are the figures that matter.

Memory is the child's own high-water mark, ``VmHWM`` of /proc/self/status. Not
``ru_maxrss``: a child started by subprocess reports the parent's high-water mark
there (Linux keeps it across fork and exec), so the figure would be the benchmark
process's, not the model's.

For figures comparable with a plain numpy install, run it with OPENBLAS_CORETYPE and
OPENBLAS_L2_SIZE unset in that one command (the BLAS kernel in use is recorded).
"""
from __future__ import annotations

import os

# One BLAS thread unless told otherwise: the dense baseline's multi-threaded solves are
# erratic on a small shared machine, and SuperLU is single-threaded anyway. (Set before
# numpy is imported; OPENBLAS_CORETYPE is left alone.)
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import argparse  # noqa: E402
import datetime  # noqa: E402
import gc
import json  # noqa: E402
import platform  # noqa: E402
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import scipy
import scipy.sparse.linalg as spla

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

import largerot as lr  # noqa: E402
from largerot import linalg  # noqa: E402
from largerot.assembly import Assembly  # noqa: E402
from largerot.solvers.newton import LoadConstraint, newton  # noqa: E402
from largerot.solvers.problem import Problem  # noqa: E402

import baseline  # noqa: E402
import models  # noqa: E402

GOALS = {"iteration_ratio_max": 0.5, "baseline_speedup_min": 100.0, "overhead_ratio_max": 10.0,
         "scaling_exponent_max": 1.1, "iterations_per_point_max": 4.0, "frame_ms_max": 15.0,
         "build_ratio_max": 3.0, "peak_memory_MB_max": 400.0}

#: The baseline's trace: 10 load steps to a quarter of the pole's load (P·L²/EI ≈ 0.7,
#: tip rotation ≈ 0.35 rad); steps this small converge without cuts on 1,000 elements.
BASELINE_STEP, BASELINE_TARGET = 0.025, 0.25

FULL = dict(iteration=[1000, 10000, 100000], baseline=[100, 1000],
            scaling=[1000, 3000, 10000, 30000, 100000], scaling_steps=4,
            conditioning=[1000, 10000, 100000],
            memory=(100000, 20), build=100000, frame_points=1000, repeat=5, fine_pole=10000)
QUICK = dict(iteration=[1000, 3000], baseline=[20, 50], scaling=[500, 1000, 2000],
             scaling_steps=2, conditioning=[300, 1000], memory=(2000, 5), build=2000,
             frame_points=100, repeat=2, fine_pole=1000)


#: The sections of a run, in order (each a key of the JSON).
SECTIONS = ["iteration", "baseline", "scaling", "conditioning", "efficiency", "latency", "build",
            "memory"]


def best(fn, repeat: int) -> float:
    """Smallest wall time of ``repeat`` calls (the least disturbed by other load)."""
    times = []
    for _ in range(max(1, repeat)):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times)


def machine() -> dict:
    info = {"python": platform.python_version(), "numpy": np.__version__,
            "scipy": scipy.__version__, "largerot": lr.__version__,
            "cpu": platform.processor() or platform.machine(), "n_cpu": os.cpu_count(),
            "OPENBLAS_CORETYPE": os.environ.get("OPENBLAS_CORETYPE"),
            "OPENBLAS_L2_SIZE": os.environ.get("OPENBLAS_L2_SIZE"),
            "OPENBLAS_NUM_THREADS": os.environ.get("OPENBLAS_NUM_THREADS")}
    try:
        with open("/proc/cpuinfo") as fh:
            for line in fh:
                if line.startswith("model name"):
                    info["cpu"] = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    try:
        from threadpoolctl import threadpool_info
        info["blas"] = [{k: d.get(k) for k in ("internal_api", "architecture", "num_threads", "version")}
                        for d in threadpool_info()]
    except ImportError:
        info["blas"] = "threadpoolctl not installed"
    return info


# -- 1. one Newton iteration against the sparse-solve floor ----------------------------------------
def iteration_case(kind: str, n: int, repeat: int) -> dict:
    build = models.pole if kind == "cantilever" else models.lattice
    s, _ = build(n)
    t = time.perf_counter()
    A = Assembly.of(s)
    setup = time.perf_counter() - t
    P = Problem(A)
    # a representative state: the linear prediction at λ = 0.5 (large rotations for the pole)
    _, K0, _ = P.residual(np.zeros(P.n), 0.0)
    lam = 0.5
    u = lam * linalg.factorize(K0).solve(P.F)
    uf = A.expand(u)
    g = A.groups[0]
    ue = uf[g.dofmap]
    states = A.initial_states()
    fe, Ke = g.evaluate(ue, states[0], True)[:2]
    K = A.evaluate(uf, states).K
    pos0 = A.positions[0]
    rhs = np.column_stack([P.F, P.F])

    def scatter():
        np.bincount(g.dofmap.ravel(), weights=fe.ravel(), minlength=A.n_dof)
        np.bincount(pos0, weights=Ke.ravel(), minlength=A.nnz + 1)

    def csc():
        import scipy.sparse as sp
        sp.csc_matrix((K.data, A.indices, A.indptr), shape=K.shape)

    def floor():
        spla.splu(K).solve(rhs)

    lib_opts = dict(permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                    options=dict(SymmetricMode=True))
    fact = linalg.factor(K)
    # the best a solver can do with scipy: the ordering computed once, then NATURAL
    order = np.argsort(spla.splu(K, **lib_opts).perm_c)
    Kp = K[order][:, order].tocsc()
    nat_opts = dict(lib_opts, permc_spec="NATURAL")

    def floor_reused():
        spla.splu(Kp, **nat_opts).solve(rhs[order])

    def newton_iter():
        n0 = P.n_evaluations
        newton(P, u, lam, LoadConstraint(lam), np.zeros(P.n), max_iterations=2)
        return P.n_evaluations - n0

    n_eval = newton_iter()
    t_newton = best(newton_iter, repeat) / n_eval
    out = {
        "model": kind, "n_elements": int(sum(len(x.dofmap) for x in A.groups)),
        "n_free": int(A.n_free), "nnz_K": int(A.nnz), "setup_s": setup,
        "gather_s": best(lambda: uf[g.dofmap], repeat),
        "kernel_s": best(lambda: g.evaluate(ue, states[0], True), repeat),
        "scatter_s": best(scatter, repeat),
        "csc_s": best(csc, repeat),
        "evaluate_s": best(lambda: A.evaluate(uf, states), repeat),
        "splu_library_options_s": best(lambda: spla.splu(K, **lib_opts), repeat),
        "factorize_s": best(lambda: linalg.factor(K), repeat),
        "factorize_superlu_s": best(lambda: linalg.LUFactorization(K), repeat),
        "pivots_s": best(lambda: linalg.factor(K).n_negative, repeat),
        "solve_s": best(lambda: fact.solve(rhs), repeat),
        "floor_s": best(floor, repeat),
        "floor_reused_ordering_s": best(floor_reused, repeat),
        "iteration_s": t_newton,
        "min_pivot_ratio": float(np.min(fact.pivot_ratio)),
        "n_factor_nnz_superlu": int(linalg.LUFactorization(K).lu.nnz),
        "backend": linalg.factor(K).backend,
    }
    out["inertia_extra_s"] = out["pivots_s"] - out["factorize_s"]
    out["ratio"] = out["iteration_s"] / out["floor_s"]
    out["ratio_reused_floor"] = out["iteration_s"] / out["floor_reused_ordering_s"]
    return out


# -- 2. against the hand-written loop -------------------------------------------------------------
def baseline_case(n: int, repeat: int) -> dict:
    sec, P = models.pole_section(), models.POLE
    t = time.perf_counter()
    lams, ux, uy, its = baseline.trace_pole(n, P["length"], sec.EA, sec.EI, P["tip_load"],
                                            step=BASELINE_STEP, target=BASELINE_TARGET)
    t_base = time.perf_counter() - t
    holder = {}

    def run_lr():
        s, top = models.pole(n)
        path = lr.trace(s, lr.by_load(BASELINE_STEP), target_load_factor=BASELINE_TARGET)
        holder["path"], holder["top"] = path, top

    t_lr = best(run_lr, repeat)
    path, top = holder["path"], holder["top"]
    tip = np.hypot(ux[-1], uy[-1])
    dev = max(np.abs(path.displacement(top, "ux") - ux).max(),
              np.abs(path.displacement(top, "uy") - uy).max()) / tip
    return {"n_elements": n, "baseline_s": t_base, "largerot_s": t_lr, "speedup": t_base / t_lr,
            "points": len(lams), "same_iterations": bool(np.array_equal(its, path.iterations)),
            "tip_relative_difference": float(dev), "tip_ux": float(ux[-1])}


# -- 3. scaling -----------------------------------------------------------------------------------
def scaling(sizes, n_steps: int) -> dict:
    """Time per converged step of the lattice frame (the pole's Newton fails on fine meshes, see
    ``conditioning``)."""
    rows = []
    for n in sizes:
        s, _ = models.lattice(n)
        Assembly.of(s)
        t = time.perf_counter()
        path = lr.trace(s, lr.by_load(1.0 / n_steps), target_load_factor=1.0)
        dt = time.perf_counter() - t
        steps = len(path) - 1
        rows.append({"model": "lattice", "n_elements": int(len(s.element_table("beam")[0])),
                     "status": path.status, "steps": steps, "step_s": dt / max(steps, 1),
                     "iterations_per_point": float(np.mean(path.iterations[1:])),
                     "step_per_iteration_s": dt / path.counters["residual_evaluations"]})
    x = np.log([r["n_elements"] for r in rows])
    exponent = float(np.polyfit(x, np.log([r["step_s"] for r in rows]), 1)[0])
    exp_it = float(np.polyfit(x, np.log([r["step_per_iteration_s"] for r in rows]), 1)[0])
    return {"rows": rows, "exponent": exponent, "exponent_per_iteration": exp_it}


# -- 3b. conditioning of the fine cantilever --------------------------------------------------------
def _pinned_pole(n: int):
    """The pole on a pin instead of a clamp: a mechanism (rigid rotation about the base)."""
    s, top = models.pole(n)
    s2 = lr.Structure()
    base, tip = s2.node(0.0, 0.0), s2.node(0.0, models.POLE["length"])
    s2.beam(base, tip, models.pole_section(), segments=int(n))
    s2.fix(base, "ux", "uy")
    s2.load(tip, fx=models.POLE["tip_load"])
    return s2


def conditioning(sizes) -> list:
    """Smallest pivot ratios of the pole's tangent, the singular-pivot threshold, and the
    residual floor of Newton's method on the first load step.

    * pivot ratio |pivot|/diagonal unloaded, and at the first load step (λ = 0.1, from
      the library's own linear predictor, default tolerances) if Newton converges there;
    * the same pole on a pin (a mechanism): its round-off pivot ratio and whether
      ``linalg.factorize`` calls it singular;
    * the residual floor: the smallest relative residual Newton reaches with tol = 1e-300
      (it iterates on past the floor, so its last iterate is not an equilibrium), next to
      the round-off estimate ε·‖|K|·|u|‖ / scale. Newton's test ``tol`` can only pass where
      the floor lies below it; the driver otherwise accepts the floor (newton.FLOOR_FACTOR).
    """
    rows = []
    for n in sizes:
        s, _ = models.pole(n)
        A = Assembly.of(s)
        P = Problem(A)
        _, K0, _ = P.residual(np.zeros(P.n), 0.0)
        F0 = linalg.factor(K0)
        lam = 0.1
        u = lam * F0.solve(P.F)
        row = {"n_elements": n, "min_pivot_ratio_unloaded": float(F0.pivot_ratio.min()),
               "singular_pivot_threshold": F0.singular_threshold()}
        res = newton(P, u, lam, LoadConstraint(lam), np.zeros(P.n))
        row["loaded_newton_message"] = res.message
        row["min_pivot_ratio_loaded"] = (float(res.factorization.pivot_ratio.min())
                                         if res.converged else None)
        row["n_negative_loaded"] = res.factorization.n_negative if res.converged else None
        deep = newton(P, u, lam, LoadConstraint(lam), np.zeros(P.n), tol=1e-300, tol_u=1e-300,
                      max_iterations=14)
        k_best = int(np.argmin(deep.residuals))
        row["residual_floor"] = float(deep.residuals[k_best])
        row["residual_floor_iteration"] = k_best
        r, K, scale = P.residual(u, lam)
        row["roundoff_estimate"] = (np.finfo(float).eps
                                    * float(np.linalg.norm(abs(K) @ abs(u))) / scale)
        row["iterations_to_1e-3"] = (int(np.argmax(deep.residuals < 1e-3))
                                     if np.any(deep.residuals < 1e-3) else None)
        Am = Assembly.of(_pinned_pole(n))
        _, Km, _ = Problem(Am).residual(np.zeros(Am.n_free), 0.0)
        try:
            Fm = linalg.factor(Km)
            row["mechanism_min_pivot_ratio"] = float(Fm.pivot_ratio.min())
            row["mechanism_threshold"] = Fm.singular_threshold()
            row["mechanism_detected"] = bool(len(Fm.near_singular_dofs()))
        except linalg.SingularTangent:            # an exactly zero pivot
            row["mechanism_min_pivot_ratio"] = 0.0
            row["mechanism_detected"] = True
        rows.append(row)
    return rows


# -- 4. path efficiency ---------------------------------------------------------------------------
def _path_stats(name, path, control, seconds):
    its = path.iterations[1:]
    return {"example": name, "control": control, "status": path.status, "points": len(path),
            "iterations_per_point": float(np.mean(its)) if len(its) else float("nan"),
            "max_iterations": int(its.max()) if len(its) else 0,
            "step_cuts": int(path.counters.get("step_cuts", 0)), "seconds": seconds}


def _timed(fn):
    t = time.perf_counter()
    out = fn()
    return out, time.perf_counter() - t


def efficiency(fine_pole: int = 10000) -> list:
    rows = []
    for n in (40, fine_pole):           # the fine pole with the coarse one's load steps
        s, top = models.pole(n)
        path, dt = _timed(lambda: lr.trace(s, lr.by_load(0.05), target_load_factor=1.0, tol=1e-8))
        rows.append(_path_stats(f"pole, {n:,} el.", path, "by_load(0.05)", dt))
    arc = getattr(lr, "by_arc_length", None)
    cases = [("arch snap-through", models.arch, lambda p, n: p.displacement(n, "uy") < -1.9, 0.05),
             ("snap-back frame", models.snap_back_frame, lambda p, n: p.displacement(n, "uy") < -1.5, 0.05)]
    for name, build, done, step in cases:
        if arc is None:
            rows.append({"example": name, "status": "skipped: lr.by_arc_length does not exist yet"})
            continue
        try:
            s, node = build()
            path, dt = _timed(lambda: lr.trace(s, arc(step), max_steps=400, tol=1e-8,
                                               stop=lambda p: done(p, node)))
            rows.append(_path_stats(name, path, f"by_arc_length({step})", dt))
        except Exception as exc:  # report, do not hide: an API still being written
            rows.append({"example": name, "status": f"error: {type(exc).__name__}: {exc}"})
    if not hasattr(lr.Structure, "cable"):
        rows.append({"example": "catenary", "status": "skipped: Structure.cable does not exist yet"})
    else:
        try:
            s, mid = models.catenary()
            path, dt = _timed(lambda: lr.trace(s, lr.by_load(0.1), target_load_factor=1.0, tol=1e-8))
            rows.append(_path_stats("catenary", path, "by_load(0.1)", dt))
        except Exception as exc:
            rows.append({"example": "catenary", "status": f"error: {type(exc).__name__}: {exc}"})
    return rows


# -- 5. interactive latency -----------------------------------------------------------------------
def latency(frame_points: int, repeat: int) -> dict:
    arc = getattr(lr, "by_arc_length", None)

    def retrace():
        s, _ = models.pole(40)
        if arc is not None:
            return lr.trace(s, arc(0.05), max_steps=50)
        return lr.trace(s, lr.by_load(1.0 / 50), target_load_factor=1.0)

    # the trace over its points × one bare splu + solve of the model's tangent: what the
    # path following costs beyond the sparse algebra a point cannot avoid. The two are
    # timed in alternation, 10 rounds of the best of 3 traces then the best of 50 floors,
    # and the figure is the median of the rounds' ratios: on a shared machine both move
    # with its state (within one run the trace by 1.4x and the floor by 2x on the 2-core
    # VM), and a ratio of two minima of far-apart moments would pair different states.
    # Both sides are minima of repeats, so that a pause of the machine inside one trace
    # (a trace is some 400 floors long) is not counted against the code; the median
    # of single traces is kept beside it ("overhead_ratio_single")
    s, _ = models.pole(40)
    P = Problem(Assembly.of(s))
    _, K, _ = P.residual(np.zeros(P.n), 0.0)
    rhs = np.column_stack([P.F, P.F])
    retrace()                                            # imports and caches warm
    # The floor is SuperLU's arithmetic, not its memory traffic: its workspace for this
    # matrix is above glibc's initial mmap threshold, so in a process that never freed
    # a large block every splu maps and unmaps fresh pages (117-127 µs here against
    # 55 µs once one 16 MB block was freed, which raises the threshold; the trace's own
    # arrays are far smaller and unaffected). Freeing one such block first makes the
    # floor the strict one whatever ran before in this process.
    np.ones(2_000_000).sum()
    traces, singles, floors = [], [], []
    for _ in range(max(10, repeat)):
        three = [best(retrace, 1) for _ in range(3)]
        traces.append(min(three))
        singles.append(three[0])
        floors.append(best(lambda: spla.splu(K).solve(rhs), 50))
    out = {"retrace_control": "by_arc_length(0.05)" if arc is not None else "by_load(0.02)",
           "retrace_s": min(traces), "retrace_points": len(retrace()),
           "retrace_floor_s": min(floors),
           "retrace_rounds": [[t, f] for t, f in zip(traces, floors)]}
    per_floor = out["retrace_points"] * np.array(floors)
    ratios = np.array(traces) / per_floor
    out["overhead_ratio"] = float(np.median(ratios))
    out["overhead_ratio_range"] = [float(ratios.min()), float(ratios.max())]
    out["overhead_ratio_single"] = float(np.median(np.array(singles) / per_floor))
    s, _ = models.pole(200)
    path = lr.trace(s, lr.by_load(1.0 / frame_points), target_load_factor=1.0)
    out["frame_model"] = {"n_elements": 200, "points": len(path)}
    idx = np.random.default_rng(0).integers(0, len(path), 50)

    def proxy():                  # what any frame must compute: the deformed shape of a point
        for i in idx:
            path.shape(int(i))

    out["frame_proxy_ms"] = 1e3 * best(proxy, repeat) / len(idx)
    try:
        import largerot.widgets as w  # noqa: F401
    except ImportError:
        out["widget_frame_ms"] = None
        out["widget_status"] = "not available: largerot.widgets does not exist yet"
        return out
    out["widget_frame_ms"], out["widget_status"] = _widget_frame(w, path, idx, repeat)
    return out


def _widget_frame(w, path, idx, repeat):
    """Python-side time of one slider move, and of preparing all frames once.

    A public explorer class of ``largerot.widgets`` taking a path and having an ``index``
    trait is used if there is one; otherwise the drawing surface of the package's data
    layer (``widgets.data`` frames into a ``widgets.canvas.ShapeCanvas``).
    """
    try:
        for name in getattr(w, "__all__", []):
            cls = getattr(w, name)
            if isinstance(cls, type) and hasattr(cls, "class_trait_names") and "index" in cls.class_trait_names():
                try:
                    widget = cls(path)
                except Exception:
                    continue
                break
        else:
            from largerot.widgets import canvas, data
            name = "widgets.data.frames + canvas.ShapeCanvas"
            t = time.perf_counter()
            pts = data.frame_points(len(path))
            lay = data.layout(path.structure, len(pts))
            fr = data.frames(path, pts, lay)
            prepare = time.perf_counter() - t
            widget = canvas.ShapeCanvas(frames=fr.tobytes(), n_frames=len(pts),
                                        n_vertices=lay.n_vertices)
            name += f" (all {len(pts)} frames prepared once in {1e3 * prepare:.0f} ms)"

        def move():
            for i in idx:
                widget.index = int(i)

        return 1e3 * best(move, repeat) / len(idx), name
    except Exception as exc:
        return None, f"error: {type(exc).__name__}: {exc}"


# -- 6. model build and memory, each in a fresh process --------------------------------------------
def peak_memory_mb() -> tuple[float, str]:
    """This process's own peak resident memory [MB] and where the figure comes from.

    ``VmHWM`` of /proc/self/status (Linux): the high-water mark of this process's
    memory. ``ru_maxrss`` is the fallback elsewhere, though after fork + exec it may
    hold the parent's high-water mark (see the module docstring).
    """
    try:
        with open("/proc/self/status") as fh:
            for line in fh:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024, "VmHWM"
    except OSError:
        pass
    import resource
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return rss / (2**20 if sys.platform == "darwin" else 1024), "ru_maxrss"


def _first_iteration(n: int):
    """Lattice built from nothing to its first factorisation: (stage times, problem, factorisation)."""
    times = {}
    t = time.perf_counter()
    s, _ = models.lattice(n)
    times["structure_s"] = time.perf_counter() - t
    t = time.perf_counter()
    A = s.snapshot().assembly
    times["assembly_s"] = time.perf_counter() - t       # snapshot, groups, DOFs, sparse pattern
    t = time.perf_counter()
    P = Problem(A)
    _, K0, _ = P.residual(np.zeros(P.n), 0.0)
    times["evaluation_s"] = time.perf_counter() - t
    t = time.perf_counter()
    fact = linalg.factorize(K0)
    times["factorization_s"] = time.perf_counter() - t
    times["build_s"] = sum(times.values())
    return times, s, P, fact


def build_child(n: int, repeat: int) -> dict:
    """Model build + first factorisation against one Newton iteration (lattice frame).

    The first build is the fresh process's; the ratio uses the best of ``repeat``
    builds (each a new structure) over the best Newton iteration, as section 1 does.
    """
    first, s, P, fact = _first_iteration(n)
    peak, source = peak_memory_mb()
    builds = [first] + [_first_iteration(n)[0] for _ in range(max(1, repeat) - 1)]
    best_build = {k: min(b[k] for b in builds) for k in first}
    lam = 0.5
    u = lam * fact.solve(P.F)

    def newton_iter():
        n0 = P.n_evaluations
        newton(P, u, lam, LoadConstraint(lam), np.zeros(P.n), max_iterations=2)
        return P.n_evaluations - n0

    t_iter = best(newton_iter, repeat) / newton_iter()
    out = {"model": "lattice", "n_elements": int(len(s.element_table("beam")[0])),
           "first_build_s": first["build_s"], "first_stages": first, **best_build, "iteration_s": t_iter,
           "ratio": best_build["build_s"] / t_iter, "first_ratio": first["build_s"] / t_iter,
           "peak_after_first_build_MB": peak,
           "memory_source": source}
    return out


def memory_child(n: int, points: int) -> dict:
    start, source = peak_memory_mb()
    s, _ = models.lattice(n)
    A = Assembly.of(s)
    P = Problem(A)
    P.residual(np.zeros(P.n), 0.0)                    # one evaluation with its tangent
    del P
    gc.collect()
    peak_model, _ = peak_memory_mb()
    path = lr.trace(s, lr.by_load(1.0 / points), target_load_factor=1.0)
    peak_trace, _ = peak_memory_mb()
    gc.collect()
    structures = sum(isinstance(o, lr.Structure) for o in gc.get_objects())
    u_bytes = path._u_free.nbytes
    return {"model": "lattice", "n_elements": int(len(s.element_table("beam")[0])),
            "status": path.status, "points": len(path), "n_free": int(path.free.size),
            "memory_source": source, "interpreter_MB": start,
            "peak_model_MB": peak_model, "peak_trace_MB": peak_trace,
            "path_u_MB": u_bytes / 2**20,
            "path_u_bytes_per_point_per_free_dof": u_bytes / (len(path) * path.free.size),
            "structures_alive": structures, "path_shares_snapshot": path.structure is s.snapshot()}


def _child(flag: str, *args) -> dict:
    """Run a ``--<flag>`` section in a fresh Python process and return its JSON."""
    cmd = [sys.executable, str(Path(__file__).resolve()), f"--{flag}", *map(str, args)]
    out = subprocess.run(cmd, capture_output=True, text=True, check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def build(n: int, repeat: int) -> dict:
    return _child("build-child", n, repeat)


def memory(n: int, points: int) -> dict:
    return _child("memory-child", n, points)


# -- profile (by hand) ----------------------------------------------------------------------------
def profile(sizes, out_dir: Path) -> None:
    """cProfile of a 4-step lattice trace and of 6 Newton iterations on the pole, per size."""
    import cProfile
    import pstats

    for n in sizes:
        jobs = {"lattice": lambda: lr.trace(models.lattice(n)[0], lr.by_load(0.25),
                                            target_load_factor=1.0)}

        def pole_newton():
            s, _ = models.pole(n)
            P = Problem(Assembly.of(s))
            _, K0, _ = P.residual(np.zeros(P.n), 0.0)
            u = 0.1 * linalg.factorize(K0).solve(P.F)
            newton(P, u, 0.1, LoadConstraint(0.1), np.zeros(P.n), max_iterations=5)

        jobs["pole"] = pole_newton
        for name, job in jobs.items():
            pr = cProfile.Profile()
            pr.enable()
            job()
            pr.disable()
            path = out_dir / f"profile_{name}_{n}.txt"
            with open(path, "w") as fh:
                pstats.Stats(pr, stream=fh).sort_stats("tottime").print_stats(25)
            print(f"profile written to {path}")


# -- report ---------------------------------------------------------------------------------------
def _fmt(x, spec="8.3g"):
    return "—" if x is None else format(x, spec)


def table(res: dict) -> str:
    L = [f"largerot benchmarks ({res['mode']}), {res['date']}, {res['machine']['cpu']}, "
         f"{res['machine']['n_cpu']} CPU, BLAS {res['machine']['blas']}"]
    for name in SECTIONS:                  # each section has its _<name>_table
        if name in res:
            globals()[f"_{name}_table"](res, L)
    return "\n".join(L)


def _iteration_table(res, L):
    L.append("\n1. One Newton iteration / (scipy splu factorise + solve of the same K)   goal ≤ "
             f"{GOALS['iteration_ratio_max']:g} at ≥ 10,000")
    L.append(f"{'model':>11} {'elements':>9} {'kernel':>8} {'scatter':>8} {'csc':>8} {'factorize':>9}"
             f" {'(splu)':>8} {'solve':>8} {'iteration':>9} {'floor':>8} {'ratio':>6} {'floor*':>8} {'ratio*':>6}")
    for r in res["iteration"]:
        L.append(f"{r['model']:>11} {r['n_elements']:9d} {r['kernel_s']:8.4f} {r['scatter_s']:8.4f}"
                 f" {r['csc_s']:8.4f} {r['factorize_s']:9.4f} {r['splu_library_options_s']:8.4f}"
                 f" {r['solve_s']:8.4f} {r['iteration_s']:9.4f} {r['floor_s']:8.4f} {r['ratio']:6.2f}"
                 f" {r['floor_reused_ordering_s']:8.4f} {r['ratio_reused_floor']:6.2f}")
    L.append("   (seconds, best of repeats; floor = splu(K) default options + 2-column solve;"
             " floor* = the same with the ordering computed beforehand, permc_spec NATURAL;"
             " factorize = largerot's: LDLᵀ numbers refactored on the pattern's analysis, pivots not extracted;"
             " (splu) = SuperLU with the library's options)")


def _baseline_table(res, L):
    L.append("\n2. Hand-written loop + dense solve vs largerot, pole by load control   goal ≥ "
             f"{GOALS['baseline_speedup_min']:g}× at 1,000")
    for r in res["baseline"]:
        L.append(f"   {r['n_elements']:6d} elements: baseline {r['baseline_s']:8.3f} s, largerot "
                 f"{r['largerot_s']:7.4f} s, speed-up {r['speedup']:7.1f}×, tip difference "
                 f"{r['tip_relative_difference']:.1e} of the tip displacement, same iterations: "
                 f"{r['same_iterations']}")


def _scaling_table(res, L):
    sc = res["scaling"]
    L.append(f"\n3. Time per path step (lattice frame, load control)   goal exponent ≤ 1.1: "
             f"fitted {sc['exponent']:.3f} (per iteration {sc['exponent_per_iteration']:.3f})")
    for r in sc["rows"]:
        L.append(f"   {r['n_elements']:7d} elements: {r['step_s']:8.4f} s/step, "
                 f"{r['iterations_per_point']:.2f} iterations/point, {r['status']}")


def _conditioning_table(res, L):
    L.append("\n3b. Pole conditioning: smallest |pivot|/diagonal vs the singular threshold "
             "(16·eps·‖D^-½KD^-½‖₁), the same pole on a pin (a mechanism), Newton's residual floor")
    for r in res["conditioning"]:
        loaded = (f"{r['min_pivot_ratio_loaded']:.2e}" if r["min_pivot_ratio_loaded"] is not None
                  else f"— ({r['loaded_newton_message']})")
        L.append(f"   {r['n_elements']:7d} elements: threshold {r['singular_pivot_threshold']:.1e}; "
                 f"clamped unloaded {r['min_pivot_ratio_unloaded']:.2e}, at λ = 0.1 {loaded}; "
                 f"pinned {r['mechanism_min_pivot_ratio']:.2e} "
                 f"({'detected' if r['mechanism_detected'] else 'NOT detected'}); residual floor "
                 f"{r['residual_floor']:.1e} at iteration {r['residual_floor_iteration']} "
                 f"(round-off estimate {r['roundoff_estimate']:.1e})")


def _efficiency_table(res, L):
    L.append("\n4. Path efficiency at tol = 1e-8   goal mean ≤ 4 iterations per point")
    for r in res["efficiency"]:
        if "points" in r:
            L.append(f"   {r['example']:>18}: {r['control']}, {r['points']} points, "
                     f"{r['iterations_per_point']:.2f} iterations/point (max {r['max_iterations']}), "
                     f"{r['step_cuts']} cuts, {r['status']}")
        else:
            L.append(f"   {r['example']:>18}: {r['status']}")


def _latency_table(res, L):
    la = res["latency"]
    L.append("\n5. Interactive latency")
    L.append(f"   40-element pole, {la['retrace_points']} points by {la['retrace_control']}: "
             f"{1e3 * la['retrace_s']:.1f} ms (best round); trace / (points × one splu + solve, "
             f"{1e3 * la['retrace_floor_s']:.3f} ms best) in each of {len(la['retrace_rounds'])} "
             f"rounds (best of 3 traces): median {la['overhead_ratio']:.1f} (range "
             f"{la['overhead_ratio_range'][0]:.1f}–{la['overhead_ratio_range'][1]:.1f}; one trace "
             f"per round {_fmt(la.get('overhead_ratio_single'), '.1f')})   "
             f"goal ≤ {GOALS['overhead_ratio_max']:g}")
    L.append(f"   frame proxy (path.shape of one point, 200 elements, {la['frame_model']['points']}-point "
             f"path): {la['frame_proxy_ms']:.2f} ms")
    L.append(f"   widget frame update: {_fmt(la['widget_frame_ms'])} ms ({la['widget_status']})")


def _build_table(res, L):
    b = res["build"]
    L.append(f"\n6. Model build + first factorisation / one Newton iteration, {b['n_elements']}-element "
             f"{b['model']}   goal ≤ {GOALS['build_ratio_max']:g}: first build in a fresh process "
             f"{b['first_build_s'] / b['iteration_s']:.2f}; a rebuild {b['ratio']:.2f} (best of repeats, "
             f"the pattern's symbolic analysis and the process's memory reused)")
    L.append(f"   build {b['build_s']:.3f} s = structure {b['structure_s']:.3f} + snapshot and assembly "
             f"{b['assembly_s']:.3f} + first evaluation {b['evaluation_s']:.3f} + first factorisation "
             f"{b['factorization_s']:.3f} (best of repeats; the fresh process's first: "
             f"{b['first_build_s']:.3f} s); one iteration {b['iteration_s']:.4f} s")
    f = b.get("first_stages")
    if f:
        L.append(f"   the fresh process's first build {f['build_s']:.3f} s = structure {f['structure_s']:.3f} "
                 f"+ snapshot and assembly {f['assembly_s']:.3f} + first evaluation {f['evaluation_s']:.3f} "
                 f"+ first factorisation {f['factorization_s']:.3f}")


def _memory_table(res, L):
    m = res["memory"]
    L.append(f"\n7. Peak memory ({m['memory_source']}, the child's own), {m['n_elements']}-element "
             f"{m['model']}, fresh process   goal ≤ {GOALS['peak_memory_MB_max']:.0f} MB")
    L.append(f"   model alone (build, snapshot, assembly, one evaluation) {m['peak_model_MB']:.0f} MB; "
             f"with a {m['points'] - 1}-step trace ({m['status']}) {m['peak_trace_MB']:.0f} MB; "
             f"the interpreter with its imports {m['interpreter_MB']:.0f} MB")
    L.append(f"   path displacements {m['path_u_MB']:.1f} MB ({m['path_u_bytes_per_point_per_free_dof']:.0f} B "
             f"per point per free DOF); structures alive {m['structures_alive']}, path shares the "
             f"structure: {m['path_shares_snapshot']}")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="small sizes only (CI smoke test)")
    ap.add_argument("--json", default=str(HERE / "results.json"), help="where to write the results")
    ap.add_argument("--profile", action="store_true", help="also write cProfile reports of traces")
    ap.add_argument("--memory-child", nargs=2, type=int, help=argparse.SUPPRESS)
    ap.add_argument("--build-child", nargs=2, type=int, help=argparse.SUPPRESS)
    ap.add_argument("--only", nargs="+", choices=SECTIONS, help="run only these sections")
    args = ap.parse_args(argv)
    if args.memory_child:
        print(json.dumps(memory_child(*args.memory_child)))
        return 0
    if args.build_child:
        print(json.dumps(build_child(*args.build_child)))
        return 0
    cfg = QUICK if args.quick else FULL
    t0 = time.perf_counter()
    res = {"mode": "quick" if args.quick else "full",
           "date": datetime.datetime.now(datetime.timezone.utc).isoformat(timespec="seconds"),
           "machine": machine(), "goals": GOALS}
    sections = {
        "iteration": lambda: [iteration_case(kind, n, cfg["repeat"])
                              for kind in ("cantilever", "lattice") for n in cfg["iteration"]],
        "baseline": lambda: [baseline_case(n, cfg["repeat"]) for n in cfg["baseline"]],
        "scaling": lambda: scaling(cfg["scaling"], cfg["scaling_steps"]),
        "conditioning": lambda: conditioning(cfg["conditioning"]),
        "efficiency": lambda: efficiency(cfg["fine_pole"]),
        "latency": lambda: latency(cfg["frame_points"], cfg["repeat"]),
        "build": lambda: build(cfg["build"], cfg["repeat"]),
        "memory": lambda: memory(*cfg["memory"]),
    }
    for name in args.only or SECTIONS:
        res[name] = sections[name]()
    res["total_s"] = time.perf_counter() - t0
    print(table(res))
    print(f"\ntotal {res['total_s']:.1f} s; results written to {args.json}")
    Path(args.json).write_text(json.dumps(res, indent=1))
    if args.profile:
        profile([1000] if args.quick else [10000, 100000], Path(args.json).parent)
    return 0


if __name__ == "__main__":
    sys.exit(main())
