"""Who owns a trace's state: frozen snapshots, independent steppers, pickling, the group protocol."""
from __future__ import annotations

import pickle

import numpy as np
import pytest

import largerot as lr
from largerot.assembly import Assembly
from largerot.solvers.problem import Problem

from helpers import element_jacobian, residual_jacobian

B, H, FY, E = 0.05, 0.1, 250e6, 200e9
MP = FY * B * H**2 / 4            # plastic moment of the rectangle
L = 2.0


def yielding_cantilever_on_stop(segments: int = 12):
    """A fibre-section cantilever that yields and then meets a stop below its tip."""
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(L, 0.0)
    s.beam(a, b, lr.FibreSection.rectangle(E=E, fy=FY, width=B, depth=H, n_fibres=16), segments=segments)
    s.fix(a)
    s.contact(b, lr.Line(point=(L, -0.05), normal=(0.0, 1.0)))
    s.load(b, fy=-MP / L)
    return s, b


def load_then_unload(stepper, up: float = 1.2):
    lr.run(stepper, max_steps=100)
    stepper.resume(step=-0.1, target_load_factor=0.0)
    return lr.run(stepper, max_steps=100)


def test_two_steppers_on_one_structure_are_independent():
    # Interleaving two traces of one structure (fibre history and contact multipliers
    # included) gives bit-identical paths to two traces of two copies, through a
    # resume to unloading: no state is shared through the structure.
    s, tip = yielding_cantilever_on_stop()
    ref = [load_then_unload(lr.by_load(0.1).stepper(s.copy(), target_load_factor=1.2)) for _ in range(2)]
    st1 = lr.by_load(0.1).stepper(s, target_load_factor=1.2)
    st2 = lr.by_load(0.1).stepper(s, target_load_factor=1.2)
    while st1.running or st2.running:          # bounded by the target: 12 steps each
        for st in (st1, st2):
            if st.running:
                st.step()
    for st in (st1, st2):
        st.resume(step=-0.1, target_load_factor=0.0)
    while st1.running or st2.running:
        for st in (st1, st2):
            if st.running:
                st.step()
    for st, r in zip((st1, st2), ref):
        p = st.result()
        assert p.status == "target" and r.status == "target"
        assert p.yielded.max() > 0 and p.contact_forces.max() > 0     # both mechanisms worked
        np.testing.assert_array_equal(p.u, r.u)
        np.testing.assert_array_equal(p.load_factor, r.load_factor)
        np.testing.assert_array_equal(p.extra["fibre_q"], r.extra["fibre_q"])
    assert -ref[0].displacement(tip, "uy")[-1] > 1e-3                # a permanent set remains


def test_pickle_round_trip_of_structure_path_and_running_stepper():
    s, tip = yielding_cantilever_on_stop()
    s2 = pickle.loads(pickle.dumps(s))
    np.testing.assert_array_equal(s2.xy, s.xy)
    path = lr.trace(s, lr.by_load(0.2), target_load_factor=1.0)
    path2 = pickle.loads(pickle.dumps(path))
    np.testing.assert_array_equal(path2.u, path.u)
    np.testing.assert_array_equal(path2.extra["yielded"], path.extra["yielded"])
    np.testing.assert_array_equal(path2.reaction_vector(-1), path.reaction_vector(-1))
    assert [e.kind for e in path2.events] == [e.kind for e in path.events]
    # a stepper pickled half-way goes on to the same end point as the original
    st = lr.by_load(0.1).stepper(s, target_load_factor=1.2)
    for _ in range(6):
        st.step()
    clone = pickle.loads(pickle.dumps(st))
    a, b = lr.run(st), lr.run(clone)
    assert a.status == b.status == "target"
    np.testing.assert_array_equal(a.u, b.u)
    np.testing.assert_array_equal(a.load_factor, b.load_factor)


def test_editing_the_structure_after_tracing_leaves_the_path_unchanged():
    s, tip = yielding_cantilever_on_stop()
    path = lr.trace(s, lr.by_load(0.25), target_load_factor=1.0)
    u, R, M = path.u.copy(), path.reaction_vector(-1), path.member_forces(-1)["beam"]["M"].copy()
    lines = path.shape(-1)["beam"].copy()
    extra = s.node(5.0, 5.0)                         # edits after the trace
    s.beam(tip, extra, lr.Section(E=E, A=1e-3, I=1e-6))
    s.load(tip, fx=1e6)
    s.fix(extra)
    np.testing.assert_array_equal(path.u, u)
    np.testing.assert_array_equal(path.reaction_vector(-1), R)
    np.testing.assert_array_equal(path.member_forces(-1)["beam"]["M"], M)
    np.testing.assert_array_equal(path.shape(-1)["beam"], lines)
    assert path.structure.n_nodes == len(u[0]) // 3 != s.n_nodes
    with pytest.raises(ValueError):                  # the snapshot is read-only
        path.structure.xy[0, 0] = 1.0
    import matplotlib
    matplotlib.use("Agg")
    lr.plotting.plot_shape(path, -1)                 # draws the snapshot, not the edited model


def test_first_yield_located_by_root_finding_whatever_the_step():
    # The first-yield event is the zero of the largest yield margin E·|ε|/fy − 1 on
    # the path; located by Brent's method on the path between the two points that
    # bracket it, its load factor does not depend on the step (1e-6 relative, the
    # tolerance Newton's residual test leaves in the margin), and a trace to that
    # load factor ends with the margin at zero. Against elastic bending (first yield
    # where the root curvature reaches κy = 2fy/(E·h), i.e. M = EI·κy with the layered
    # section's own EI, λ = EI·κy/Mp; common practice, no source) it differs by the
    # shortening of the lever arm at a tip rotation of 0.02 rad (measured 1.5e-4).
    s, tip = yielding_cantilever_on_stop()
    found = []
    for step in (0.02, 0.13, 0.4):
        path = lr.trace(s, lr.by_load(step), target_load_factor=0.9)
        first = [e.load_factor for e in path.events if e.kind == "first yield"]
        assert len(first) == 1
        found.append(first[0])
    assert max(found) - min(found) <= 1e-6 * found[0]
    sec = lr.FibreSection.rectangle(E=E, fy=FY, width=B, depth=H, n_fibres=16)
    assert found[0] == pytest.approx(sec.EI * sec.kappa_y / MP, rel=3e-4)
    at = lr.trace(s, lr.by_load(0.1), target_load_factor=found[0])
    assert abs(float(at.extra["yield_margin"][-1])) <= 1e-6


def test_user_event_located_and_terminal():
    # An event function of a point, as in scipy: the tip reaching 0.2 m of deflection.
    # The trace ends there (terminal) and the event's λ is where the deflection is
    # 0.2 m on the path: retracing to that λ gives 0.2 m to the solver's accuracy.
    from largerot.examples import column
    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(2.0, 0.0)
    s.beam(a, b, lr.Section(E=1e3, A=1.0, I=1e-3), segments=8)
    s.fix(a)
    s.load(b, fy=-1.0)

    def deflected(p):
        return -p.displacement(b, "uy") - 0.2
    deflected.terminal = True
    deflected.direction = 1
    path = lr.trace(s, lr.by_load(0.1), events=deflected, target_load_factor=5.0)
    assert path.status == "event" and "deflected" in path.message
    ev = [e for e in path.events if e.kind == "deflected"]
    assert len(ev) == 1
    again = lr.trace(s, lr.by_load(0.05), target_load_factor=ev[0].load_factor)
    assert -again.displacement(b, "uy")[-1] == pytest.approx(0.2, rel=1e-7)
    del column


def test_kernels_are_not_evaluated_again_for_a_converged_point(monkeypatch):
    # Work done for a converged state is reused: recording a point and committing its
    # history cost no kernel evaluation beyond Newton's own residual evaluations.
    s, tip = yielding_cantilever_on_stop()
    from largerot import groups
    calls = {"n": 0}
    original = groups.FibreBeamGroup.evaluate

    def counted(self, *args, **kwargs):
        calls["n"] += 1
        return original(self, *args, **kwargs)

    monkeypatch.setattr(groups.FibreBeamGroup, "evaluate", counted)
    st = lr.by_load(0.1).stepper(s, target_load_factor=0.6)      # elastic: no events to locate
    lr.run(st)
    assert calls["n"] == st.problem.n_evaluations


# -- the group protocol ------------------------------------------------------------------
def every_kind():
    """One structure with every group kind: beam, fibre beam, bar, cable, spring, contact,
    follower nodal and line loads."""
    s = lr.Structure()
    a, b, c, d = s.node(0, 0), s.node(1.0, 0.2), s.node(2.0, 0.0), s.node(1.0, -1.0)
    s.beam(a, b, lr.Section(E=100.0, A=1.0, I=0.01), segments=2)
    s.beam(b, c, lr.FibreSection.rectangle(E=100.0, fy=1.0, width=0.2, depth=0.3, n_fibres=6), segments=2)
    s.bar(a, d, lr.Section(E=50.0, A=1.0))
    s.cable(d, c, lr.Section(E=80.0, A=1.0), pretension=40.0)   # taut: slack has a regularised tangent
    s.fix(a)
    s.spring(c, "uy", 30.0)
    s.fix(c, "ux")
    s.contact(d, lr.Circle(centre=(1.0, -1.5), radius=0.3))
    s.load(b, fx=0.3, fy=-1.0, follower=True)
    s.line_load(s.members[0], normal=-0.5)
    return s


def test_every_group_kind_passes_the_protocol():
    s = every_kind()
    asm = Assembly.of(s)
    names = [g.name for g in asm.groups]
    assert names == ["beam", "fibre beam", "bar", "spring", "contact"]
    rng = np.random.default_rng(3)
    u = 0.02 * rng.standard_normal(asm.n_dof)
    states = asm.initial_states()
    k_contact = names.index("contact")
    states[k_contact] = {"lam": np.array([0.5]), "penalty": np.array([40.0])}
    u[3 * s.n_nodes - 2] = -0.3               # node d pressed into the disc: contact active
    for g, st in zip(asm.groups, states):
        ue = u[g.dofmap]
        res = g.evaluate(ue, st, True)
        # finite-difference tangent (central differences, h = 1e-7: error ~1e-8 of K)
        J = element_jacobian(lambda x: g.evaluate(x, st, False).f, ue, h=1e-7)
        np.testing.assert_allclose(res.K, J, atol=1e-6 * max(np.abs(res.K).max(), 1.0), err_msg=g.name)
        # forces rebuilt from the record equal those of the evaluation
        np.testing.assert_allclose(g.forces(ue, g.record(res)), res.f, rtol=1e-12, atol=1e-12,
                                   err_msg=g.name)
        clone = pickle.loads(pickle.dumps(g))
        np.testing.assert_array_equal(clone.evaluate(ue, st, False).f, res.f)
    # end forces balance the internal force vector: beams and bars from N, V, M
    ev = asm.evaluate(u, states, False)
    rec = asm.record(ev)
    np.testing.assert_allclose(asm.internal_force(u, rec), ev.f, rtol=1e-12, atol=1e-12)
    ef = asm.element_forces(u, rec)
    for g, res in zip(asm.groups, ev.results):
        if g.table == "beam":
            N, V, M = ef["beam"]["N"][g.rows], ef["beam"]["V"][g.rows], ef["beam"]["M"][g.rows]
            # the nodal moments are the end moments (sign: M stretches the right-hand
            # side), and the element is in equilibrium: the end forces have no
            # resultant, and their moment balance gives V·l = M1 + M2
            np.testing.assert_allclose(res.f[:, [2, 5]], np.stack([-M[:, 0], M[:, 1]], axis=1),
                                       rtol=1e-12, atol=1e-12)
            np.testing.assert_allclose(res.f[:, 0:2] + res.f[:, 3:5], 0.0, atol=1e-12)
            fx, fy = res.f[:, 3], res.f[:, 4]
            shear = np.hypot(fx, fy) ** 2 - N**2
            np.testing.assert_allclose(np.sqrt(np.maximum(shear, 0.0)), np.abs(V), rtol=1e-9, atol=1e-12)
        if g.table == "bar":
            N = ef["bar"]["N"][g.rows]
            np.testing.assert_allclose(np.hypot(res.f[:, 0], res.f[:, 1]), np.abs(N), rtol=1e-12)
    # the global tangent with follower load stiffness against central differences
    p = Problem(asm, states)
    uf = u[asm.free]
    K, J = residual_jacobian(p, uf, 0.7, h=1e-7)
    np.testing.assert_allclose(K, J, atol=1e-6 * np.abs(K).max())


def test_buckling_refuses_a_kind_it_cannot_handle():
    from largerot import groups

    class Odd(groups.SpringGroup):
        def stress_stiffness(self, ue):
            return groups.Group.stress_stiffness(self, ue)

    s = lr.Structure()
    a, b = s.node(0.0, 0.0), s.node(0.0, 1.0)
    s.beam(a, b, lr.Section(E=1.0, A=1e4, I=1.0), segments=4)
    s.fix(a)
    s.spring(b, "ux", 1.0)
    s.load(b, fy=-1.0)
    asm = Assembly.of(s)
    spring = next(g for g in asm.groups if g.name == "spring")
    spring.__class__ = Odd
    with pytest.raises(lr.ModelError, match="Linear buckling cannot handle"):
        lr.buckling(s)


def test_contact_closing_and_opening_located_where_the_gap_closes():
    # A 3 m cantilever 2 mm above a stop, loaded to twice the touching load and back:
    # the contact closes and opens where the open (resp. closed) path has the gap
    # (resp. the force) at zero, found by root finding on the path continued from
    # the side before the event, so at the same load factor whatever the step (1e-9;
    # an elastic structure closes and opens at one load). Small-deflection
    # superposition (common practice, no source) puts it at λ = 1; the tip rotation
    # of 1e-3 moves it by 4.6e-7 (tolerance 1e-6).
    from test_yield_and_contact_paths import loaded_onto_stop
    s, tip, P = loaded_onto_stop(2e-3, 3.0)
    found = []
    for step in (0.1, 0.35, 0.7):
        st = lr.by_load(step).stepper(s, target_load_factor=2.0)
        lr.run(st)
        st.resume(step=-step, target_load_factor=0.0)
        path = lr.run(st)
        kinds = [e.kind for e in path.events]
        assert kinds == ["contact closes", "contact opens"]
        assert all("interpolated" not in e.detail for e in path.events)
        found += [e.load_factor for e in path.events]
    assert max(found) - min(found) <= 1e-9
    assert found[0] == pytest.approx(1.0, abs=1e-6)
