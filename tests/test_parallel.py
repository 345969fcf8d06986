"""Threads, the shared recovery operator and its background build change no number.

References: a result must not depend on how many threads computed it (common practice for
reproducible analysis); SPR is linear in the sampled values (O. C. Zienkiewicz and J. Z. Zhu, "The
superconvergent patch recovery and a posteriori error estimates", Part 1, Int. J. Numer. Methods
Eng. 33, 1331-1364, 1992, eqs. 7-9), so one operator serves every load case and combination; the
uniaxial strip stress P / A (common practice) checks the recovered values themselves.
"""
import numpy as np
import pytest

import planar
from _models import strip_model
from planar.core import parallel
from planar.core.errors import InputError, PluginError
from planar.post import recovery


def _model(element="Q8", nx=100, ny=50):
    # more elements than one chunk (4096), so the pool really splits the work
    return strip_model(200.0, 50.0, nx, ny, element, hold="roller", units="N, mm, MPa",
                       loads={"pull": planar.Traction("right", tx=40.0), "press": planar.Traction("top", ty=-5.0)})


def _run(monkeypatch, n):
    monkeypatch.setenv("PLANAR_THREADS", str(n))
    res = planar.solve(_model(), keep_system=True)
    return res, {c: r.nodal_stress("spr")[0] for c, r in res.items()}


def test_threads_change_no_bit(monkeypatch):
    r1, s1 = _run(monkeypatch, 1)
    r2, s2 = _run(monkeypatch, 2)
    L1, L2 = r1["pull"].assembly.system.lower, r2["pull"].assembly.system.lower
    assert np.array_equal(L1.indptr, L2.indptr) and np.array_equal(L1.indices, L2.indices)
    assert np.array_equal(L1.data, L2.data)
    for case in ("pull", "press"):
        assert np.array_equal(r1[case].u, r2[case].u)
        assert np.array_equal(s1[case], s2[case])
    # the uniaxial strip: sigma_xx = 40 MPa everywhere (common practice), to rounding
    np.testing.assert_allclose(s2["pull"][:, 0], 40.0, rtol=1e-9)
    np.testing.assert_allclose(s2["pull"][:, 1:], 0.0, atol=1e-8)


def test_planar_threads_must_be_a_whole_number(monkeypatch):
    monkeypatch.setenv("PLANAR_THREADS", "two")
    with pytest.raises(InputError, match="PLANAR_THREADS"):
        parallel.threads()
    monkeypatch.setenv("PLANAR_THREADS", "0")
    with pytest.raises(InputError, match="at least 1"):
        parallel.threads()
    monkeypatch.setenv("PLANAR_THREADS", "3")
    assert parallel.threads() == 3


def test_map_chunks_keeps_order_and_raises_the_error(monkeypatch):
    monkeypatch.setenv("PLANAR_THREADS", "2")
    assert parallel.map_chunks(lambda s: s * s, range(0, 50, 5)) == [s * s for s in range(0, 50, 5)]

    def bad(s):
        if s == 20:
            raise ZeroDivisionError("chunk 20")
        return s

    with pytest.raises(ZeroDivisionError, match="chunk 20"):
        parallel.map_chunks(bad, range(0, 50, 5))
    # nested calls run serially inside a pool thread, with the same answer
    assert parallel.map_chunks(lambda s: sum(parallel.map_chunks(lambda t: t, range(s))), [3, 4]) == [3, 6]


def test_one_operator_serves_every_case_and_combination(monkeypatch):
    monkeypatch.setenv("PLANAR_THREADS", "2")
    res = planar.solve(_model("T6", 60, 20))
    pull, press = res["pull"].nodal_stress("spr")[0], res["press"].nodal_stress("spr")[0]
    cache = res["pull"].assembly.cache
    ops = [v for k, v in cache.items() if k[0] == "spr"]
    assert len(ops) == 1 and isinstance(ops[0], recovery.RecoveryOperator)
    # the combination uses the same operator; SPR is linear, so it recovers 1.5 pull - 0.5 press
    from planar.post.combine import combine

    comb = combine(res, {"pull": 1.5, "press": -0.5}, name="mix")
    np.testing.assert_allclose(comb.nodal_stress("spr")[0], 1.5 * pull - 0.5 * press, rtol=1e-12, atol=1e-10)
    assert len([k for k in cache if k[0] == "spr"]) == 1
    # and it gives what a fresh one built from scratch gives
    samples = recovery.stress_samples(res["press"])
    fresh = recovery.patch_recovery(res["press"].mesh, samples)
    np.testing.assert_array_equal(fresh[:, :3], press)


def test_background_build_gives_the_same_operator(monkeypatch):
    monkeypatch.setenv("PLANAR_THREADS", "2")
    res = planar.solve(_model("Q8", 40, 10))
    asm = res["pull"].assembly
    asm.cache.clear()
    started = recovery.prepare_recovery(asm, 10**9)
    assert len(started) == 1 and [v for k, v in asm.cache.items() if k[0] == "spr"] == started
    early = res["press"].nodal_stress("spr")[0]  # waits for the build, then uses it
    assert isinstance(asm.cache[next(iter(asm.cache))], recovery.RecoveryOperator)
    fresh = planar.solve(_model("Q8", 40, 10))["press"]
    assert not fresh.assembly.cache  # below PREPARE_ABOVE nothing starts by itself
    np.testing.assert_array_equal(early, fresh.nodal_stress("spr")[0])


def test_failing_background_build_is_built_again_in_the_caller(monkeypatch):
    """A background build that fails leaves no half operator: the request builds it again."""
    calls = []
    real = recovery.recovery_operator

    def flaky(*a, **k):
        calls.append(1)
        if len(calls) == 1:
            raise MemoryError("no room in the background")
        return real(*a, **k)

    res = planar.solve(_model("Q4", 30, 10))
    asm = res["pull"].assembly
    asm.cache.clear()
    monkeypatch.setattr(recovery, "recovery_operator", flaky)
    (fut,) = recovery.prepare_recovery(asm, 10**9)
    assert isinstance(fut.exception(timeout=60), MemoryError)
    s = res["pull"].nodal_stress("spr")[0]
    assert len(calls) == 2
    np.testing.assert_allclose(s[:, 0], 40.0, rtol=1e-9)


def test_numeric_phase_waits_for_the_background_build(monkeypatch):
    """solve() starts the SPR build for a back end that overlaps its ordering (PARDISO), and hands
    the factorization a hook that waits for it; shown here on CHOLMOD given the same role."""
    import planar.core.static as static
    from planar.core import solvers

    monkeypatch.setattr(recovery, "PREPARE_ABOVE", 0)
    monkeypatch.setattr(solvers, "OVERLAPS_ORDERING", frozenset({"cholmod"}))
    seen = []
    real = static.factorize

    def factorize(lower, method, *, rigid_modes=None, after_ordering=None, **kw):
        assert after_ordering is not None
        after_ordering()  # where PARDISO calls it: between ordering and numeric factorization
        seen.append([f.done() for f in pending(lower)])
        return real(lower, method, rigid_modes=rigid_modes, **kw)

    model = _model("T6", 40, 10)
    holder = {}
    real_prepare = recovery.prepare_recovery

    def prepare(asm, n):
        holder["asm"] = asm
        return real_prepare(asm, n)

    def pending(_):
        return [v for k, v in holder["asm"].cache.items() if k[0] == "spr"]

    monkeypatch.setattr(recovery, "prepare_recovery", prepare)
    monkeypatch.setattr(static, "factorize", factorize)
    res = planar.solve(model, solver="cholmod")
    assert seen == [[True]]  # the build had ended when the numeric phase began
    np.testing.assert_allclose(res["pull"].nodal_stress("spr")[0][:, 0], 40.0, rtol=1e-9)


def test_plugin_error_in_a_pool_thread_names_the_plugin(monkeypatch):
    """An element plugin that raises inside a threaded stage is reported as that plugin's fault."""
    from planar.core.elements import Q4

    class Broken(Q4):
        name = "Q4broken"

        @staticmethod
        def shape_derivatives(points):
            raise ZeroDivisionError("bug in the plugin")

    from planar.core.registry import Entry, registry

    table = registry().entries["element"]
    table["Q4broken"] = Entry("element", "Q4broken", Broken, "test", "0", "test:Broken")
    try:
        monkeypatch.setenv("PLANAR_THREADS", "2")
        mesh = planar.rectangle_mesh(200.0, 50.0, 100, 50, "Q4")
        model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness=2.0, elements={"Q4": "Q4broken"})
        model.add_support(planar.Fixed("left"))
        model.add_load(planar.Traction("right", tx=1.0))
        with pytest.raises(PluginError, match="Q4broken"):
            planar.solve(model)
    finally:
        table.pop("Q4broken", None)


def test_gmsh_pieces_mesh_the_same_on_any_thread_count(monkeypatch):
    from planar.geometry import Circle, Plate, mesh
    from planar.geometry import meshing

    monkeypatch.setitem(meshing.PIECE_ELEMENTS, "triangles", 1500)
    plate = Plate.rectangle(120.0, 40.0).cut(Circle((60.0, 20.0), 6.0))
    out = []
    for n in ("1", "2"):
        monkeypatch.setenv("PLANAR_THREADS", n)
        out.append(mesh(plate, size=1.0, order=2, fast=True))
    a, b = out
    assert a.cells["T6"].shape[0] > 6000
    assert np.array_equal(a.nodes, b.nodes) and np.array_equal(a.cells["T6"], b.cells["T6"])
