"""Work is bounded before it starts: element-count estimates, refusals and refinement targets.

Covers the element-count estimate of ``planar.geometry.mesh`` (global size, refinements at edges,
points and regions with their growth; ``planar.geometry._estimate``) and its refusal beyond
``max_elements`` or the memory at hand, the same refusal in the structured builders before any
allocation, refinement points outside the part (GeometryError), and the order of ``solve()``: the
memory check comes before the element checks. The other direction too: the README's and the samples'
meshes are not refused, and the estimate lies within a factor of 2 of gmsh's count.

Sources: the element density 1 / (c h^2) with c = sqrt(3)/4 for an equilateral triangle of side h
and c = 1 for a square (elementary geometry; common practice for a priori element counts); the
refined counts are checked against gmsh's own meshes (the reference is gmsh, an outside program).
"""
from __future__ import annotations

import math
import time

import numpy as np
import pytest

import planar
from planar.core import solvers
from planar.core.errors import GeometryError, InputError, PlanarError, ResourceError
from planar.geometry import Circle, Outline, Plate, Rectangle, Refine, Slot, mesh
from planar.geometry.meshing import estimate_elements
from planar.geometry.structured import mapped_mesh, quad_panel_mesh, rectangle_mesh

#: a refusal must come in under 2 s (issue 13); the machine is shared, so the tests allow 5 s
REFUSAL_SECONDS = 5.0


def plate_100():
    """The issue's case: a 100 mm plate with a 20 mm hole."""
    return Plate.rectangle(100.0, 100.0).cut(Circle((50.0, 50.0), 10.0, name="hole"))


def timed_refusal(exc, fn, *args, **kw):
    t = time.perf_counter()
    with pytest.raises(exc) as info:
        fn(*args, **kw)
    dt = time.perf_counter() - t
    assert dt < REFUSAL_SECONDS, f"refused after {dt:.1f} s"
    return str(info.value)


# ------------------------------------------------------------------ refinements far too small
@pytest.mark.parametrize("scale", [1e-3, 1.0, 25.4, 1e3])
def test_a_refinement_a_million_times_smaller_than_the_part_is_refused_at_any_scale(scale):
    # issue 13: "a refinement size a million times smaller than the part is refused in under 2 s";
    # the estimate depends on ratios of lengths only, so the refusal holds in any length unit
    p = Plate.rectangle(100.0 * scale, 100.0 * scale).cut(Circle((50.0 * scale, 50.0 * scale), 10.0 * scale,
                                                                 name="hole"))
    msg = timed_refusal(ResourceError, mesh, p, size=5.0 * scale, refine=[Refine("hole", size=1e-4 * scale)])
    assert "would have about" in msg and "max_elements" in msg


@pytest.mark.parametrize("h0", [1e-4, 1e-4 / 3, 1e-5, 1e-6, 1e-7, 1e-9, 1e-12])
@pytest.mark.parametrize("quads", [False, True])
def test_tiny_refinement_at_a_hole_is_refused_at_once_with_the_estimate(h0, quads):
    msg = timed_refusal(ResourceError, mesh, plate_100(), size=5.0, quads=quads, refine=[Refine("hole", size=h0)])
    # leading term L / (c s h0) for the hole's edge (length 20 pi), with the slope s the smaller of
    # growth - 1 and (H - h0) / W across the plate's mean width W = 2 A / P (planar.geometry._estimate)
    c = 0.8 if quads else math.sqrt(3) / 4
    area, perimeter = 100.0**2 - math.pi * 10.0**2, 400.0 + 20 * math.pi
    s = min(0.3, (5.0 - h0) / (2 * area / perimeter))
    lead = 20 * math.pi / (c * s * h0)
    est = float(msg.split("would have about ")[1].split(" elements")[0])
    assert lead * 0.9 < est < lead * 1.2
    assert "Refine('hole'" in msg and "larger size" in msg and "max_elements" in msg


@pytest.mark.parametrize("at,h0", [("top", 1e-6), (["left", "right"], 1e-5), ("hole", 1e-3)])
def test_tiny_edge_refinements_and_long_within_are_refused(at, h0):
    # a size kept over 40 mm (within) at 1e-3 asks for 20 pi * 40 / (c h0^2), ~10^10 elements
    within = 40.0 if h0 == 1e-3 else 0.0
    msg = timed_refusal(ResourceError, mesh, plate_100(), size=5.0, refine=[Refine(at, size=h0, within=within)])
    assert "elements" in msg and "Refine(" in msg


@pytest.mark.parametrize("h0", [1e-6, 1e-9, 1e-12])
def test_tiny_size_function_is_refused_at_once(h0):
    # a ring of size h0 along the hole's edge, growing by 0.3 per unit distance
    def ring(x, y):
        return h0 + 0.3 * np.abs(np.hypot(x - 50.0, y - 50.0) - 10.0)

    msg = timed_refusal(ResourceError, mesh, plate_100(), size=5.0, size_function=ring)
    assert "size function" in msg and "elements" in msg


def test_curved_edges_sizes_count_too():
    # circle_elements sides per turn: 2 pi 10 / 10^5 = 6.3e-4 along the hole, about 2 million elements
    msg = timed_refusal(ResourceError, mesh, plate_100(), size=5.0, circle_elements=100_000, max_elements=10**6)
    assert "circle_elements" in msg


def test_global_size_too_small_is_refused():
    msg = timed_refusal(ResourceError, mesh, plate_100(), size=1e-3)
    # 100 x 100 - pi 10^2 over sqrt(3)/4 h^2 (the c of an equilateral triangle)
    want = (100.0 * 100.0 - math.pi * 10.0**2) / (math.sqrt(3) / 4 * 1e-3**2)  # 2.24e10
    assert f"about {want:.3g} elements" in msg and "larger size" in msg


def test_max_elements_is_the_users_bound_both_ways():
    with pytest.raises(ResourceError, match="max_elements=300"):
        mesh(plate_100(), size=5.0, refine=[Refine("hole", size=0.5)], max_elements=300)
    m = mesh(plate_100(), size=5.0, refine=[Refine("hole", size=0.5)], max_elements=10_000)
    assert m.n_cells > 300  # accepted once raised (the estimate, about 4300, is a bound for refusing)
    with pytest.raises(InputError, match="max_elements"):
        mesh(plate_100(), size=5.0, max_elements=0)


def test_memory_at_hand_bounds_a_mesh_whatever_max_elements(monkeypatch):
    monkeypatch.setattr(solvers, "available_memory", lambda: 1 << 20)  # 1 MiB free
    msg = timed_refusal(ResourceError, mesh, plate_100(), size=0.5, max_elements=10**9)
    assert "GiB" in msg and "available" in msg


# ------------------------------------------------------------------ structured builders
HUGE = [(10**9, 10**9), (10**5, 10**5), (5_000_001, 1), (1, 2_500_001)]


@pytest.mark.parametrize("nx,ny", HUGE)
@pytest.mark.parametrize("build", ["rectangle", "panel", "mapped"])
def test_structured_builders_refuse_before_allocating(build, nx, ny):
    element = "T6" if ny == 2_500_001 else "Q4"  # triangles count twice: 5 000 002 cells
    if build == "rectangle":
        fn, args = rectangle_mesh, (1.0, 1.0, nx, ny, element)
    elif build == "panel":
        fn, args = quad_panel_mesh, ([[0, 0], [1, 0], [1, 1], [0, 1]], nx, ny, element)
    else:
        fn, args = mapped_mesh, (lambda s, t: (s, t), nx, ny, element)
    msg = timed_refusal(ResourceError, fn, *args)
    assert f"{nx:,} x {ny:,}" in msg and "max_elements" in msg


def test_structured_bound_can_be_raised_and_memory_still_binds(monkeypatch):
    with pytest.raises(ResourceError):
        rectangle_mesh(1.0, 1.0, 40, 40, max_elements=1000)
    assert rectangle_mesh(1.0, 1.0, 40, 40, max_elements=1600).n_cells == 1600
    with pytest.raises(InputError, match="max_elements"):
        rectangle_mesh(1.0, 1.0, 4, 4, max_elements=0.5)
    monkeypatch.setattr(solvers, "available_memory", lambda: 1 << 20)
    with pytest.raises(ResourceError, match="GiB"):
        rectangle_mesh(1.0, 1.0, 1000, 1000, max_elements=10**9)


# ------------------------------------------------------------------ refinement targets off the part
@pytest.mark.parametrize("at,where", [
    ((500.0, 5.0), "outside the plate"),
    ((-0.5, 50.0), "outside the plate"),
    ((50.0, 100.01), "outside the plate"),
    ((1e9, -1e9), "outside the plate"),
    ((50.0, 50.0), "in a hole"),
    ((55.0, 47.0), "in a hole"),
])
def test_refinement_point_off_the_plate_is_an_error(at, where):
    msg = timed_refusal(GeometryError, mesh, plate_100(), size=10.0, refine=[Refine(at, size=1.0)])
    assert where in msg and "spans x 0 to 100, y 0 to 100" in msg


def test_refinement_point_on_the_side_a_symmetry_cut_removes_is_an_error():
    q = Plate.rectangle(100.0, 60.0, centre=(0.0, 0.0)).cut(Circle((0.0, 0.0), 8.0, name="hole")).quarter()
    with pytest.raises(GeometryError, match="symmetry cut removes"):
        mesh(q, size=10.0, refine=[Refine((-20.0, 10.0), size=1.0)])
    # the same point mirrored onto the kept quarter is fine, and so is a point on the plate's edge
    assert mesh(q, size=10.0, refine=[Refine((20.0, 10.0), size=1.0), Refine((50.0, 0.0), size=1.0)]).n_cells > 0


def test_named_targets_off_the_part_are_errors():
    # a named point off the plate is refused where it is named; a region must overlap the plate
    with pytest.raises(GeometryError, match="outside the plate"):
        Plate.rectangle(10.0, 10.0).add_point("tip", (20.0, 5.0))
    with pytest.raises(GeometryError, match="does not overlap"):
        Plate.rectangle(10.0, 10.0).with_region(Rectangle(2.0, 2.0, corner=(30.0, 30.0)), name="pad")
    # an edge that the symmetry cut removed is no name of the meshed plate
    q = Plate.rectangle(100.0, 60.0, centre=(0.0, 0.0)).quarter()
    with pytest.raises(PlanarError, match="left"):
        mesh(q, size=10.0, refine=[Refine("left", size=1.0)])


# ------------------------------------------------------------------ solve: memory before the checks
def test_solve_refuses_for_memory_before_the_element_checks(monkeypatch):
    from planar.core import assembly

    m = rectangle_mesh(40.0, 10.0, 40, 10, "Q8")
    model = planar.Model(m, planar.Isotropic(E=200e3, nu=0.3), thickness=1.0)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1.0), case="pull")
    checked = []
    real = assembly.prepare
    monkeypatch.setattr(assembly, "prepare", lambda *a, **k: checked.append(1) or real(*a, **k))
    monkeypatch.setattr(solvers, "available_memory", lambda: 1 << 20)
    msg = timed_refusal(ResourceError, planar.solve, model)
    assert "unknowns" in msg and "GiB" in msg
    assert not checked  # the element checks did not run
    monkeypatch.undo()
    assert planar.solve(model)["pull"].u.shape == (m.n_nodes, 2)


# ------------------------------------------------------------------ the other direction
def _readme_quarter():
    plate = Plate.rectangle(120.0, 50.0, centre=(0.0, 0.0)).cut(Circle((0.0, 0.0), 8.0, name="bolt_hole"))
    return plate.quarter(), 4.0, [Refine("bolt_hole", size=0.5, growth=1.25)], False


def _lug():
    outline = (Outline((0.0, 0.0), name="base").line_to((70.0, 0.0), name="base")
               .line_to((70.0, 75.0), name="side").arc_to((0.0, 75.0), centre=(35.0, 75.0), name="crown")
               .close(name="side"))
    plate = Plate(outline).cut(Circle((35.0, 75.0), 13.0, name="pin_hole"))
    return plate, 5.0, [Refine("pin_hole", size=0.8, growth=1.25)], False


def _multi_hole():
    plate = Plate.rectangle(160.0, 100.0).cut(Circle((0.0, 0.0), 6.5, name="bolt_hole"),
                                              at=[(25.0, 25.0), (135.0, 25.0), (25.0, 75.0), (135.0, 75.0)])
    plate = plate.cut(Slot((80.0, 55.0), 40.0, 16.0, name="cable_slot"))
    return plate, 6.0, [Refine(["bolt_hole", "cable_slot"], size=0.8, growth=1.25)], True


def _notched_half():
    plate = (Plate.rectangle(200.0, 40.0, centre=(0.0, 0.0))
             .notch("top", at=0.0, depth=6.0, radius=3.0, kind="U", name="clip_notch")
             .notch("bottom", at=0.0, depth=6.0, radius=3.0, kind="U", name="clip_notch"))
    half = plate.half("x").add_point("axis_point", (0.0, 0.0))
    return half, 4.0, [Refine("clip_notch", size=0.3, growth=1.25)], False


def _point_and_region():
    plate = (Plate.rectangle(60.0, 40.0).add_point("tip", (30.0, 20.0))
             .with_region(Rectangle(10.0, 8.0, corner=(5.0, 5.0)), name="pad"))
    return plate, 4.0, [Refine("tip", size=0.05, growth=1.3), Refine("pad", size=0.5, growth=1.3)], False


@pytest.mark.parametrize("case", [_readme_quarter, _lug, _multi_hole, _notched_half, _point_and_region])
def test_ordinary_meshes_are_not_refused_and_the_estimate_is_near_gmsh(case):
    plate, size, refine, quads = case()
    t = time.perf_counter()
    est = estimate_elements(plate, size, refine, quads=quads, area=plate.area())
    assert time.perf_counter() - t < 0.5  # a few ms (loosely: a shared machine)
    m = mesh(plate, size=size, refine=refine, quads=quads, order=2)
    # gmsh's count is the reference; the estimate is a bound for refusing, within a factor of 2
    assert 0.5 < est / m.n_cells < 2.0, (est, m.n_cells)


@pytest.mark.slow
@pytest.mark.parametrize("quads", [False, True])
@pytest.mark.parametrize("case", [
    ("hole 0.1", lambda: (plate_100(), 5.0, [Refine("hole", size=0.1, growth=1.2)])),
    ("hole within", lambda: (plate_100(), 5.0, [Refine("hole", size=0.1, growth=1.1, within=2.0)])),
    ("edge", lambda: (Plate.rectangle(100.0, 60.0), 5.0, [Refine("top", size=0.05, growth=1.1)])),
    ("all edges", lambda: (Plate.rectangle(100.0, 60.0), 5.0,
                           [Refine(["top", "bottom", "left", "right"], size=0.5, growth=1.3)])),
    ("region", lambda: (Plate.rectangle(100.0, 60.0).with_region(Rectangle(30.0, 20.0, corner=(35.0, 20.0)),
                                                                 name="pad"), 5.0, [Refine("pad", size=0.1)])),
    ("xy point", lambda: (Plate.rectangle(50.0, 50.0), 5.0, [Refine((25.0, 25.0), size=0.001, growth=1.2)])),
])
def test_estimate_against_gmsh_counts(case, quads):
    _, make = case
    plate, size, refine = make()
    est = estimate_elements(plate, size, refine, quads=quads, area=plate.area())
    m = mesh(plate, size=size, refine=refine, quads=quads)
    assert 0.5 < est / m.n_cells < 2.0, (est, m.n_cells)
