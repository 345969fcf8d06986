"""Tests of the geometry layer (planar.geometry): shapes, names, booleans, symmetry, meshing.

Every comparison with geometry names its source beside it. Most are plane geometry: the exact area
of a circle, ellipse or slot, and Green's theorem for the area of a mesh.
"""
from __future__ import annotations

import math
import threading
import time
import warnings

import numpy as np
import pytest

gmsh = pytest.importorskip("gmsh")

from planar.core.errors import GeometryError, InputError, NameNotFoundError, ResourceError
from planar.core.mesh import Mesh
from planar.geometry import (
    Circle,
    Ellipse,
    Outline,
    Plate,
    Polygon,
    Rectangle,
    Refine,
    RoundedRectangle,
    Slot,
    mesh,
)

PI = math.pi


# ------------------------------------------------------------------------------------------ helpers
def mesh_area(m: Mesh) -> float:
    """Area of the mesh by Green's theorem over each cell's edges, A = 1/2 contour(x dy - y dx).

    Edges with a mid-side node are the parabolas of the isoparametric element; the integrand is a
    cubic in the edge parameter, so Simpson's rule is exact (common practice).
    """
    return float(sum(cell_areas(m, lay).sum() for lay in m.cells))


def cell_areas(m: Mesh, lay: str) -> np.ndarray:
    c = m.cells[lay]
    nc = 3 if lay[0] == "T" else 4
    X = m.nodes[c]
    total = np.zeros(c.shape[0])
    for i in range(nc):
        a, b = X[:, i], X[:, (i + 1) % nc]
        mid = X[:, nc + i] if c.shape[1] > nc else (a + b) / 2
        d1, d2 = 4 * mid - 3 * a - b, 2 * a + 2 * b - 4 * mid

        def f(t):
            p, dp = a + d1 * t + d2 * t * t, d1 + 2 * d2 * t
            return p[:, 0] * dp[:, 1] - p[:, 1] * dp[:, 0]

        total += (f(0.0) + 4 * f(0.5) + f(1.0)) / 12.0
    return total


def corner_areas(m: Mesh, lay: str) -> np.ndarray:
    """Signed area of the straight-sided polygon of the corners (shoelace formula, common practice)."""
    nc = 3 if lay[0] == "T" else 4
    p = m.nodes[m.cells[lay][:, :nc]]
    x, y = p[..., 0], p[..., 1]
    return 0.5 * np.sum(x * np.roll(y, -1, axis=1) - np.roll(x, -1, axis=1) * y, axis=1)


def element_sizes(m: Mesh) -> tuple[np.ndarray, np.ndarray]:
    """(centroids, side of the equilateral triangle of the same area) for a T3/T6 mesh."""
    lay = [k for k in m.cells if k[0] == "T"][0]
    a = np.abs(corner_areas(m, lay))
    cen = m.nodes[m.cells[lay][:, :3]].mean(axis=1)
    return cen, np.sqrt(4 * a / math.sqrt(3))


def hole_plate(name="bolt_hole"):
    return Plate.rectangle(200.0, 80.0).cut(Circle((100.0, 40.0), 10.0, name=name))


def arc_angles(m: Mesh, edge: str, centre) -> np.ndarray:
    seg = m.edge_sets[edge]
    d = m.nodes[seg[:, :2]] - np.asarray(centre)
    a = np.arctan2(d[..., 1], d[..., 0])
    return np.abs((a[:, 1] - a[:, 0] + PI) % (2 * PI) - PI)


# ------------------------------------------------------------------------------------------ names
def test_rectangle_side_names_and_hole_defaults():
    p = Plate.rectangle(200.0, 80.0).cut(Circle((50, 40), 5), Circle((150, 40), 5, name="bolt"), Circle((100, 40), 5))
    assert p.names() == {
        "edges": ["bolt", "bottom", "hole_1", "hole_3", "left", "right", "top"],
        "points": [],
        "regions": ["plate"],
    }
    m = mesh(p, size=10.0)
    assert sorted(m.edge_sets) == p.names()["edges"]
    # the sides lie where their names say (definition of the rectangle)
    assert np.allclose(m.nodes[m.node_sets["bottom"], 1], 0.0)
    assert np.allclose(m.nodes[m.node_sets["top"], 1], 80.0)
    assert np.allclose(m.nodes[m.node_sets["left"], 0], 0.0)
    assert np.allclose(m.nodes[m.node_sets["right"], 0], 200.0)


def test_polygon_edges_default_names_and_user_names():
    pts = [(0, 0), (60, 0), (60, 20), (20, 20), (20, 50), (0, 50)]
    assert Plate.polygon(pts).names()["edges"] == [f"edge_{i}" for i in range(1, 7)]
    names = ["base", "end", "step", "riser", "head", "back"]
    m = mesh(Plate.polygon(pts, names=names), size=5.0)
    assert sorted(m.edge_sets) == sorted(names)
    assert np.allclose(m.nodes[m.node_sets["step"], 1], 20.0)  # side 3 runs along y = 20
    # clockwise input gives the same names on the same sides
    m2 = mesh(Plate.polygon(pts[::-1], names=names[::-1][1:] + names[::-1][:1]), size=5.0)
    assert np.allclose(m2.nodes[m2.node_sets["step"], 1], 20.0)


def test_named_point_is_a_node_and_splits_nothing_else():
    p = hole_plate().add_point("load_point", (170.0, 25.0)).add_point("corner", (200.0, 80.0))
    m = mesh(p, size=8.0, order=2)
    for nm, xy in [("load_point", (170.0, 25.0)), ("corner", (200.0, 80.0))]:
        ids = m.node_sets[nm]
        assert ids.shape == (1,)
        assert np.allclose(m.nodes[ids[0]], xy, atol=1e-12)
    assert m.names()["points"] == ["corner", "load_point"]


def test_hole_pattern_by_centres_shares_one_name():
    centres = [(30.0, 20.0), (60.0, 20.0), (90.0, 20.0)]
    p = Plate.rectangle(120.0, 40.0).cut(Circle((0, 0), 4.0, name="rivets"), at=centres)
    m = mesh(p, size=4.0, order=2)
    nodes = m.nodes[m.node_sets["rivets"]]
    # every rivet node is 4 from the nearest centre (definition of the circle)
    d = np.min(np.hypot(*(nodes[:, None, :] - np.array(centres)[None]).transpose(2, 0, 1)), axis=1)
    assert np.allclose(d, 4.0, atol=1e-9)
    # exact area of circles (common practice); quadratic boundary error R^2 phi^5 / 960 per arc piece
    assert mesh_area(m) == pytest.approx(120 * 40 - 3 * PI * 16, rel=1e-5)


# ------------------------------------------------------------------------------------------ areas
def test_linear_mesh_area_is_plate_minus_inscribed_polygon():
    m = mesh(hole_plate(), size=4.0, element="T3")
    assert set(m.cells) == {"T3"}
    phi = arc_angles(m, "bolt_hole", (100, 40))
    # inscribed polygon of the hole: sum of 1/2 R^2 sin(phi_i) (plane geometry)
    hole = 0.5 * 100.0 * np.sin(phi).sum()
    assert mesh_area(m) == pytest.approx(200 * 80 - hole, rel=1e-12)
    assert phi.sum() == pytest.approx(2 * PI, rel=1e-12)


@pytest.mark.parametrize("kw", [dict(), dict(quads=True), dict(quads=True, quadratic="Q9")])
def test_quadratic_mesh_area_matches_circle(kw):
    m = mesh(hole_plate(), size=4.0, order=2, **kw)
    phi = arc_angles(m, "bolt_hole", (100, 40))
    R = 10.0
    # each hole piece is a parabola through three points of the arc: triangle to the centre plus
    # the parabolic cap (2/3 chord * sagitta, Archimedes' quadrature of the parabola)
    chord, sag = 2 * R * np.sin(phi / 2), R * (1 - np.cos(phi / 2))
    quad_hole = np.sum(0.5 * R * R * np.sin(phi) + 2.0 / 3.0 * chord * sag)
    assert mesh_area(m) == pytest.approx(200 * 80 - quad_hole, rel=1e-12)
    # and that is pi R^2 to within the parabola's error R^2 phi^5 / 960 per piece (series, derived here)
    bound = np.sum(R * R * phi**5 / 960) * 1.01
    assert abs(quad_hole - PI * R * R) <= bound
    assert abs(mesh_area(m) - (200 * 80 - PI * R * R)) / (200 * 80) < 2e-6


@pytest.mark.parametrize(
    "shape, exact",
    [
        (Ellipse((100, 40), 20.0, 8.0, angle=25.0), PI * 20 * 8),  # ellipse area pi a b (common practice)
        (Slot((100, 40), 50.0, 12.0, angle=-30.0), 38 * 12 + PI * 36),  # rectangle + circle (plane geometry)
        (RoundedRectangle((100, 40), 40.0, 20.0, 4.0, angle=10.0), 800 - (4 - PI) * 16),  # corners cut (plane geometry)
        (Polygon([(80, 30), (120, 30), (100, 55)]), 0.5 * 40 * 25),  # triangle (plane geometry)
    ],
)
def test_cut_out_shapes_area(shape, exact):
    assert shape.area == pytest.approx(exact, rel=1e-12)
    p = Plate.rectangle(200.0, 80.0).cut(shape)
    assert p.area() == pytest.approx(16000 - exact, rel=1e-9)  # exact kernel area
    m = mesh(p, size=3.0, order=2)
    # quadratic boundaries follow curves to O(h^4): 3e-6 relative at h = 3 for these radii
    assert mesh_area(m) == pytest.approx(16000 - exact, rel=3e-6)
    assert sorted(m.edge_sets) == ["bottom", "hole_1", "left", "right", "top"]


def test_outline_with_arcs():
    lug = (
        Outline((0.0, 0.0)).line_to((60.0, 0.0), name="base").line_to((60.0, 20.0))
        .arc_to((60.0, 60.0), centre=(60.0, 40.0), name="lug_edge").line_to((0.0, 60.0)).close(name="back")
    )
    # rectangle plus a half disc (plane geometry)
    assert lug.area == pytest.approx(3600 + PI * 200, rel=1e-12)
    p = Plate(lug).cut(Circle((60.0, 40.0), 8.0, name="pin_hole"))
    assert p.names()["edges"] == ["back", "base", "edge_2", "edge_4", "lug_edge", "pin_hole"]
    m = mesh(p, size=3.0, order=2)
    for nm, r in [("lug_edge", 20.0), ("pin_hole", 8.0)]:
        d = np.hypot(*(m.nodes[m.node_sets[nm]] - [60.0, 40.0]).T)
        assert np.allclose(d, r, atol=1e-9)  # nodes on the true arcs (definition of the circle)
    assert mesh_area(m) == pytest.approx(3600 + PI * 200 - PI * 64, rel=5e-6)


def test_outline_arc_by_radius_and_through_point():
    a = Outline((0, 0)).line_to((10, 0)).arc_to((10, 10), radius=5.0).line_to((0, 10)).close()
    b = Outline((0, 0)).line_to((10, 0)).arc_to((10, 10), through=(15, 5)).line_to((0, 10)).close()
    # a half disc of radius 5 on a 10 x 10 square (plane geometry)
    assert a.area == pytest.approx(100 + PI * 12.5, rel=1e-12)
    assert b.area == pytest.approx(a.area, rel=1e-12)
    c = Outline((0, 0)).line_to((10, 0)).arc_to((10, 10), radius=5.0, clockwise=True).line_to((0, 10)).close()
    assert c.area == pytest.approx(100 - PI * 12.5, rel=1e-12)


def test_union_and_difference():
    lug = Plate.rectangle(60.0, 40.0).union(Circle((60.0, 20.0), 20.0), name="lug_edge")
    assert lug.area() == pytest.approx(2400 + PI * 200, rel=1e-9)  # rectangle + half disc
    assert "lug_edge" in lug.names()["edges"]
    step = Plate.rectangle(100.0, 50.0).difference(Rectangle(30.0, 20.0, corner=(70.0, 30.0)), name="step")
    assert step.area() == pytest.approx(5000 - 600, rel=1e-12)
    m = mesh(step, size=5.0)
    assert sorted(m.edge_sets) == ["bottom", "left", "right", "step", "top"]
    nodes = m.nodes[m.node_sets["step"]]
    assert np.all((np.isclose(nodes[:, 0], 70.0) & (nodes[:, 1] >= 30 - 1e-9)) | np.isclose(nodes[:, 1], 30.0))
    tab = Plate.rectangle(100.0, 50.0) | Rectangle(20.0, 20.0, corner=(100.0, 15.0), name="tab")
    assert tab.area() == pytest.approx(5400, rel=1e-12)


def test_notches_u_and_v():
    plate = Plate.rectangle(100.0, 40.0)
    u = plate.notch("bottom", at=30.0, depth=5.0, radius=1.0, kind="U", name="u_notch")
    # U notch: a 2r wide slot of depth d - r plus a half disc of radius r (plane geometry)
    assert u.area() == pytest.approx(4000 - (2 * 1 * 4 + PI / 2), rel=1e-12)
    D, r, a = 10.0, 2.0, math.radians(30.0)
    v = plate.notch("top", at=50.0, depth=D, radius=r, kind="V", angle=60.0)
    # V notch: the sharp wedge minus the part beyond the root circle (kite minus sector), plane geometry
    qa = D - r + r / math.sin(a)
    wedge = qa * qa * math.tan(a)
    root = r * r / math.tan(a) - 0.5 * r * r * (PI - 2 * a)
    assert v.area() == pytest.approx(4000 - (wedge - root), rel=1e-12)
    m = mesh(v, size=4.0, order=2, refine=[Refine("notch_1", size=0.3, growth=1.2)])
    nodes = m.nodes[m.node_sets["notch_1"]]
    assert nodes[:, 1].min() == pytest.approx(40.0 - D, abs=1e-9)  # the root bottom is at the depth
    assert np.all(nodes[:, 1] <= 40.0 + 1e-9)


def test_fillets():
    p = Plate.rectangle(100.0, 50.0).fillet(("top", "right"), radius=10.0, name="round")
    # a fillet removes (1 - pi/4) r^2 from a right-angled corner (plane geometry)
    assert p.area() == pytest.approx(5000 - (1 - PI / 4) * 100, rel=1e-12)
    m = mesh(p, size=3.0, order=2)
    assert np.allclose(np.hypot(*(m.nodes[m.node_sets["round"]] - [90.0, 40.0]).T), 10.0, atol=1e-9)
    allr = Plate.rectangle(100.0, 50.0).fillet("all", radius=5.0)
    assert allr.names()["edges"] == ["bottom", "fillet_1", "fillet_2", "fillet_3", "fillet_4", "left", "right", "top"]
    assert allr.area() == pytest.approx(5000 - 4 * (1 - PI / 4) * 25, rel=1e-12)


# ------------------------------------------------------------------------------------------ regions
def test_region_boss_shares_nodes():
    p = hole_plate().with_region(Circle((100.0, 40.0), 18.0), name="boss")
    assert p.names()["regions"] == ["boss", "plate"]
    m = mesh(p, size=4.0, order=2)
    assert m.region_names() == ["boss", "plate"]
    boss = m.region_cells("boss")["T6"]
    rest = m.region_cells("plate")["T6"]
    assert boss.size and rest.size and boss.size + rest.size == m.cells["T6"].shape[0]
    # conformal: the two regions share the nodes on the circle r = 18, no node is duplicated
    shared = np.intersect1d(m.cells["T6"][boss], m.cells["T6"][rest])
    assert shared.size > 10
    assert np.allclose(np.hypot(*(m.nodes[shared] - [100, 40]).T), 18.0, atol=1e-9)
    rounded = np.round(m.nodes, 9)
    assert np.unique(rounded, axis=0).shape[0] == m.n_nodes
    # the boss is the annulus between r = 10 and r = 18 (exact area of circles, common practice)
    # tolerance: parabola error R^2 phi^5 / 960 per piece, about 16 pieces on r = 10 and 28 on r = 18
    # at size 4 give 0.015 + 0.005; allow 0.03
    sub = Mesh(m.nodes, {"T6": m.cells["T6"][boss]})
    assert mesh_area(sub) == pytest.approx(PI * (18**2 - 10**2), abs=0.03)


def test_region_on_the_edge_keeps_edge_names():
    p = Plate.rectangle(200.0, 80.0).with_region(Rectangle(20.0, 80.0), name="doubler")
    m = mesh(p, size=5.0)
    assert sorted(m.edge_sets) == ["bottom", "left", "right", "top"]
    cen = m.nodes[m.cells["T6"][m.region_cells("doubler")["T6"]]].mean(axis=1)  # mesh()'s default cells
    assert np.all(cen[:, 0] < 20.0)
    assert np.allclose(m.nodes[m.node_sets["left"], 0], 0.0)


# ------------------------------------------------------------------------------------------ symmetry
def test_quarter_model_symmetry_edges_on_axes():
    full = Plate.rectangle(200.0, 80.0, centre=(0.0, 0.0)).cut(Circle((0.0, 0.0), 10.0, name="hole"))
    q = full.quarter()
    assert q.names()["edges"] == ["hole", "right", "symmetry_x", "symmetry_y", "top"]
    assert q.area() == pytest.approx((16000 - 100 * PI) / 4, rel=1e-12)  # a quarter of the part
    m = mesh(q, size=4.0, order=2)
    assert np.allclose(m.nodes[m.node_sets["symmetry_x"], 0], 0.0, atol=1e-12)  # x = x0, normal x
    assert np.allclose(m.nodes[m.node_sets["symmetry_y"], 1], 0.0, atol=1e-12)
    assert m.nodes[:, 0].min() >= -1e-12 and m.nodes[:, 1].min() >= -1e-12


def test_half_model_and_symmetry_check():
    p = Plate.rectangle(200.0, 80.0).cut(Circle((100.0, 40.0), 10.0)).half("y", keep="negative")
    m = mesh(p, size=5.0)
    assert np.allclose(m.nodes[m.node_sets["symmetry_y"], 1], 40.0)
    assert m.nodes[:, 1].max() <= 40.0 + 1e-12
    with pytest.raises(GeometryError, match="not symmetric about x = 100"):
        Plate.rectangle(200.0, 80.0).cut(Circle((60.0, 40.0), 10.0)).half("x")
    with pytest.raises(GeometryError, match="not on the plate.*symmetry"):
        Plate.rectangle(200.0, 80.0).add_point("p", (10.0, 10.0)).quarter().names()


# ------------------------------------------------------------------------------------------ meshing
def test_hole_nodes_lie_on_the_circle_including_mid_nodes():
    for kw in [dict(), dict(quads=True), dict(quads=True, quadratic="Q9")]:
        m = mesh(hole_plate(), size=5.0, order=2, **kw)
        seg = m.edge_sets["bolt_hole"]
        assert seg.shape[1] == 3
        r = np.hypot(*(m.nodes[seg.ravel()] - [100.0, 40.0]).T)
        assert np.abs(r - 10.0).max() < 1e-9  # definition of the circle


@pytest.mark.parametrize(
    "kw, keys",
    [
        (dict(order=1), {"T3"}),
        (dict(order=2), {"T6"}),
        (dict(order=1, quads=True), {"Q4"}),
        (dict(order=2, quads=True), {"Q8"}),
        (dict(order=2, quads=True, quadratic="Q9"), {"Q9"}),
    ],
)
def test_layouts_counter_clockwise_and_compact(kw, keys):
    p = hole_plate().with_region(Circle((100.0, 40.0), 18.0), name="boss").half("x")
    m = mesh(p, size=4.0, refine=[Refine("bolt_hole", size=1.0)], **kw)
    assert set(m.cells) == keys
    for lay in m.cells:
        assert corner_areas(m, lay).min() > 0  # counter-clockwise corners
        assert cell_areas(m, lay).min() > 0  # curved cells not turned inside out
    assert m.used_nodes().all()  # no stray nodes (e.g. gmsh geometry points)
    assert m.nodes.shape[1] == 2
    nk = {"T3": 2, "T6": 3, "Q4": 2, "Q8": 3, "Q9": 3}[next(iter(keys))]
    assert all(e.shape[1] == nk for e in m.edge_sets.values())


def test_quadratic_edge_sets_are_start_end_middle():
    m = mesh(Plate.rectangle(10.0, 5.0), size=1.0, order=2)
    seg = m.edge_sets["bottom"]
    x = m.nodes[seg, 0]
    assert np.allclose(x[:, 2], (x[:, 0] + x[:, 1]) / 2)  # straight side: the middle node is midway


# ------------------------------------------------------------------------------------------ quadratic nodes
SIDE_PAIRS = {3: [(0, 1), (1, 2), (2, 0)], 4: [(0, 1), (1, 2), (2, 3), (3, 0)]}


def cell_sides(m: Mesh, lay: str) -> np.ndarray:
    """(cells * sides, 3): corner a, corner b, mid-side node of every side of every cell."""
    c = m.cells[lay]
    nc = 3 if lay[0] == "T" else 4
    return np.vstack([np.column_stack([c[:, a], c[:, b], c[:, nc + i]]) for i, (a, b) in enumerate(SIDE_PAIRS[nc])])


def min_angles(m: Mesh, lay: str) -> np.ndarray:
    """Least corner angle of each cell in degrees (straight sides through the corners)."""
    nc = 3 if lay[0] == "T" else 4
    P = m.nodes[m.cells[lay][:, :nc]]
    out = []
    for i in range(nc):
        a, b = P[:, i - 1] - P[:, i], P[:, (i + 1) % nc] - P[:, i]
        out.append(np.degrees(np.arctan2(np.abs(a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0]), (a * b).sum(axis=1))))
    return np.min(out, axis=0)


QUADRATIC = [dict(element="T6"), dict(element="Q8"), dict(element="Q9")]


@pytest.mark.parametrize("kw", QUADRATIC)
def test_mid_nodes_on_true_curves_and_at_midpoints_of_straight_sides(kw):
    ell = Ellipse((150.0, 40.0), 16.0, 7.0, angle=30.0, name="oval")
    p = hole_plate().cut(ell).with_region(Circle((100.0, 40.0), 18.0), name="boss")
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no side put back on its chord (see the next test) here
        m = mesh(p, size=2.5, **kw)
    lay = next(iter(m.cells))
    S = cell_sides(m, lay)
    A, B, M = m.nodes[S[:, 0]], m.nodes[S[:, 1]], m.nodes[S[:, 2]]
    r = lambda X: np.hypot(*(X - [100.0, 40.0]).T)
    th = math.radians(30.0)
    u = lambda X: ((X[:, 0] - 150) * math.cos(th) + (X[:, 1] - 40) * math.sin(th)) / 16.0
    v = lambda X: (-(X[:, 0] - 150) * math.sin(th) + (X[:, 1] - 40) * math.cos(th)) / 7.0
    ell_f = lambda X: u(X) ** 2 + v(X) ** 2
    # sides with both corners on a curve that are segments of that curve: the hole (r = 10), the
    # boss outline inside the plate (r = 18) and the ellipse (x'/a)^2 + (y'/b)^2 = 1 (definitions)
    on_hole = (np.abs(r(A) - 10) < 1e-9) & (np.abs(r(B) - 10) < 1e-9)
    on_boss = (np.abs(r(A) - 18) < 1e-9) & (np.abs(r(B) - 18) < 1e-9)
    on_ell = (np.abs(ell_f(A) - 1) < 1e-9) & (np.abs(ell_f(B) - 1) < 1e-9)
    assert on_hole.sum() and on_boss.sum() and on_ell.sum()
    assert np.abs(r(M[on_hole]) - 10.0).max() < 1e-9
    assert np.abs(r(M[on_boss]) - 18.0).max() < 1e-9
    assert np.abs(ell_f(M[on_ell]) - 1.0).max() < 1e-9
    # the mid node of a curved side is the curve's point equidistant from both corners (the middle
    # of the arc to O(h^3)), not just any point of the curve
    dA, dB = np.hypot(*(M - A).T), np.hypot(*(M - B).T)
    curved = on_hole | on_boss | on_ell
    assert np.all(np.abs(dA - dB)[curved] < 1e-9 * (dA + dB)[curved])
    # every other side is straight: its node is the exact midpoint
    straight = ~(on_hole | on_boss | on_ell)
    assert np.abs(M[straight] - 0.5 * (A[straight] + B[straight])).max() < 1e-12 * 200
    if lay == "Q9":  # the centre of a straight-sided Q9 is the mean of its corners (bilinear map)
        c = m.cells["Q9"]
        flat = np.all(straight.reshape(4, -1), axis=0)
        ctr = m.nodes[c[flat, 8]]
        assert np.abs(ctr - m.nodes[c[flat, :4]].mean(axis=1)).max() < 1e-12 * 200


def test_curved_side_that_would_turn_its_cell_inside_out_stays_straight():
    from planar.core.errors import PlanarWarning
    from planar.geometry._quadratic import quadratic, side_keys

    # a flat triangle whose side 0-1 lies on a curve bulging past the opposite corner (y = 0.1)
    xy = np.array([[0.0, 0.0], [1.0, 0.0], [0.5, 0.1], [0.5, -1.0]])
    tri = np.array([[0, 1, 2], [1, 0, 3]])
    keys = side_keys(np.array([0]), np.array([1]), 4)
    with pytest.warns(PlanarWarning, match="straight chord"):
        nodes, cells, uniq = quadratic(xy, {"T3": tri}, keys, np.array([[0.5, 0.3]]))
    mid = nodes[4 + np.searchsorted(uniq, keys[0])]
    assert np.allclose(mid, [0.5, 0.0])  # back on the chord, for both cells that share the side
    # a gentle curve is kept
    nodes, cells, uniq = quadratic(xy, {"T3": tri}, keys, np.array([[0.5, 0.02]]))
    assert np.allclose(nodes[4 + np.searchsorted(uniq, keys[0])], [0.5, 0.02])
    assert cells["T6"].shape == (2, 6)


@pytest.mark.parametrize("kw", QUADRATIC)
def test_node_count_is_corners_plus_sides(kw):
    # Euler's formula for a plane mesh of a plate with one hole: V - E + F = 1 - 1 = 0 (common practice)
    m = mesh(hole_plate(), size=4.0, **kw)
    lay = next(iter(m.cells))
    nc = 3 if lay[0] == "T" else 4
    corners = np.unique(m.cells[lay][:, :nc]).size
    S = cell_sides(m, lay)
    sides = np.unique(np.sort(S[:, :2], axis=1), axis=0).shape[0]
    F = m.cells[lay].shape[0]
    assert corners - sides + F == 0
    assert m.n_nodes == corners + sides + (F if lay == "Q9" else 0)
    # one node per side: the two cells at an inner side share its mid node
    assert np.unique(S[:, 2]).size == sides


@pytest.mark.parametrize("kw", QUADRATIC)
@pytest.mark.parametrize("fast", [False, True])
def test_quadratic_jacobians_positive(kw, fast, monkeypatch):
    from planar.core.assembly import prepare
    from planar.geometry import meshing

    monkeypatch.setitem(meshing.PIECE_ELEMENTS, "triangles", 1500)
    monkeypatch.setitem(meshing.PIECE_ELEMENTS, "quads", 700)
    p = (
        Plate.rectangle(200.0, 80.0).fillet("all", radius=6.0)
        .notch("top", at=60.0, depth=8.0, radius=1.5, kind="V")
        .cut(Circle((100.0, 40.0), 10.0, name="bolt_hole"), Ellipse((160.0, 40.0), 12.0, 5.0, angle=20.0))
        .with_region(Circle((100.0, 40.0), 18.0), name="boss")
    )
    m = mesh(p, size=2.5, fast=fast, **kw)
    prepare(m)  # raises ElementError for a zero, changing-sign or badly distorted Jacobian
    lay = next(iter(m.cells))
    assert cell_areas(m, lay).min() > 0


# ------------------------------------------------------------------------------------------ fast way
def test_cuts_into_pieces_keep_names_area_and_regions():
    from planar.geometry._build import _build
    from planar.geometry._session import _Session

    p = hole_plate().with_region(Circle((100.0, 40.0), 18.0), name="boss").add_point("lp", (150.0, 60.0))
    with _Session() as s:
        whole = _build(p, s)
    with _Session() as s:
        cut = _build(p, s, pieces=lambda area, bbox: (8, 2.0))
    assert whole.cuts == 0 and cut.cuts >= 3
    assert len(cut.surfaces) > len(whole.surfaces)
    assert sorted(cut.edges) == sorted(whole.edges) and sorted(cut.points) == sorted(whole.points)
    assert sorted(cut.regions) == sorted(whole.regions)
    assert cut.area == pytest.approx(whole.area, rel=1e-12)


@pytest.mark.parametrize("kw", [dict(element="T6"), dict(element="Q8")])
def test_fast_mesh_is_conforming_named_good_and_repeatable(kw, monkeypatch):
    from planar.geometry import meshing

    # pieces so small that the ideal cuts touch the hole (x = 90, 110 and y = 30, 50): the cuts
    # must move away from such tangent places
    monkeypatch.setitem(meshing.PIECE_ELEMENTS, "triangles", 300)
    monkeypatch.setitem(meshing.PIECE_ELEMENTS, "quads", 150)
    p = hole_plate().with_region(Circle((100.0, 40.0), 18.0), name="boss").add_point("lp", (150.0, 60.0))
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        m = mesh(p, size=2.0, fast=True, **kw)
    ref = mesh(p, size=2.0, fast=False, **kw)
    assert m.names() == ref.names()
    lay = next(iter(m.cells))
    # conforming: no two nodes at one point, and the sides used by one cell only are the named edges
    assert np.unique(np.round(m.nodes, 9), axis=0).shape[0] == m.n_nodes
    S = np.sort(cell_sides(m, lay)[:, :2], axis=1)
    key, count = np.unique(S, axis=0, return_counts=True)
    outer = key[count == 1]
    named = np.unique(np.sort(np.vstack([e[:, :2] for e in m.edge_sets.values()]), axis=1), axis=0)
    assert np.array_equal(outer, named)
    # the same area as the mesh in one piece, to the quadratic boundary error (1e-6, see above)
    assert mesh_area(m) == pytest.approx(mesh_area(ref), rel=1e-6)
    # quality: frontal Delaunay triangles keep their least angle above 25 degrees (measured 30-36)
    # also without smoothing; quadrilaterals above 30 degrees (measured 45-50)
    assert min_angles(m, lay).min() > (25.0 if lay == "T6" else 30.0)
    # the same input gives the same mesh
    m2 = mesh(p, size=2.0, fast=True, **kw)
    assert np.array_equal(m.nodes, m2.nodes)
    assert all(np.array_equal(m.cells[k], m2.cells[k]) for k in m.cells)
    assert all(np.array_equal(m.edge_sets[k], m2.edge_sets[k]) for k in m.edge_sets)


def test_fast_mesh_with_size_function_and_msh_round_trip(tmp_path, monkeypatch):
    from planar.geometry import meshing

    monkeypatch.setitem(meshing.PIECE_ELEMENTS, "triangles", 1000)
    p = hole_plate().with_region(Circle((100.0, 40.0), 18.0), name="boss").add_point("lp", (150.0, 60.0))
    path = tmp_path / "fast.msh"
    m = mesh(p, size_function=lambda x, y: 0.8 + 0.04 * np.hypot(x - 100.0, y - 40.0), order=2, fast=True,
             save_msh=path)
    r = Mesh.read(path)
    assert r.names() == m.names()
    # the file holds every node and quadratic cell as made (coordinates to 16 digits)
    assert r.n_nodes == m.n_nodes and np.abs(r.nodes - m.nodes).max() < 1e-13 * 200

    def rows(a):
        return a[np.lexsort(a.T[::-1])]

    def cells_of(mesh_, ids):
        return rows(mesh_.cells["T6"][ids])

    for nm in ("boss", "plate"):
        assert np.array_equal(cells_of(r, r.region_cells(nm)["T6"]), cells_of(m, m.region_cells(nm)["T6"]))
    for nm in m.edge_sets:
        assert np.array_equal(rows(r.edge_sets[nm]), rows(m.edge_sets[nm]))


def test_fast_must_be_a_bool_or_none():
    with pytest.raises(InputError, match="fast"):
        mesh(hole_plate(), size=10.0, fast="yes")


def test_refinement_makes_elements_near_hole_smaller():
    coarse = mesh(hole_plate(), size=6.0)
    fine = mesh(hole_plate(), size=6.0, refine=[Refine("bolt_hole", size=0.5, growth=1.2)])
    assert fine.n_cells > coarse.n_cells
    cen, h = element_sizes(fine)
    d = np.hypot(cen[:, 0] - 100, cen[:, 1] - 40) - 10.0
    near, far = h[d < 1.0].mean(), h[d > 40.0].mean()
    assert near < 0.8 and far > 4.0  # asked: 0.5 at the hole, 6 far away
    # a point refinement (by name and by coordinates) puts small elements at that point
    p = Plate.rectangle(50.0, 50.0).add_point("tip", (25.0, 25.0))
    for at in ("tip", (25.0, 25.0)):
        cen, h = element_sizes(mesh(p, size=5.0, refine=Refine(at, size=0.3, growth=1.3)))
        assert h[np.hypot(cen[:, 0] - 25, cen[:, 1] - 25) < 1.0].mean() < 0.6


def test_size_function_is_followed_and_called_vectorized():
    calls = []

    def h(x, y):
        calls.append(np.size(x))
        return 0.5 + 0.05 * np.hypot(x - 100.0, y - 40.0)

    m = mesh(hole_plate(), size_function=h, order=2)
    assert len(calls) < 40 and max(calls) > 100  # a few vectorized calls, not one per point
    cen, size = element_sizes(m)
    d = np.hypot(cen[:, 0] - 100, cen[:, 1] - 40)
    for lo, hi in [(12.0, 15.0), (40.0, 50.0), (80.0, 100.0)]:
        band = (d > lo) & (d < hi)
        want = 0.5 + 0.05 * (lo + hi) / 2
        # gmsh meets a size field to within about 15 % on average (measured ratio 0.95 - 1.0)
        assert size[band].mean() == pytest.approx(want, rel=0.15)


def test_same_input_gives_same_mesh():
    p = hole_plate().with_region(Circle((100.0, 40.0), 18.0), name="boss").add_point("lp", (150, 60))
    kw = dict(size=3.0, order=2, refine=[Refine("bolt_hole", size=0.7)])
    a, b = mesh(p, **kw), mesh(p, **kw)
    assert np.array_equal(a.nodes, b.nodes)
    assert all(np.array_equal(a.cells[k], b.cells[k]) for k in a.cells)
    assert all(np.array_equal(a.edge_sets[k], b.edge_sets[k]) for k in a.edge_sets)
    c = mesh(p, seed=7, **kw)
    assert c.n_nodes > 0


def test_gmsh_state_does_not_leak():
    assert not gmsh.isInitialized()
    mesh(hole_plate(), size=10.0)
    hole_plate().names()
    assert not gmsh.isInitialized()
    with pytest.raises(GeometryError):
        Plate.rectangle(10.0, 10.0).difference(Rectangle(2.0, 20.0, corner=(4.0, -5.0))).names()
    assert not gmsh.isInitialized()  # also after an error


def test_works_inside_someone_elses_gmsh_session():
    gmsh.initialize(readConfigFiles=False, interruptible=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.model.add("theirs")
        gmsh.model.occ.addRectangle(0, 0, 0, 1, 1)
        gmsh.model.occ.synchronize()
        gmsh.option.setNumber("Mesh.MeshSizeMax", 0.25)
        m = mesh(hole_plate(), size=8.0)
        assert m.n_cells > 0
        assert gmsh.isInitialized()
        assert gmsh.model.getCurrent() == "theirs"
        assert gmsh.option.getNumber("Mesh.MeshSizeMax") == 0.25
        assert gmsh.model.getEntities(2) == [(2, 1)]
    finally:
        gmsh.finalize()


def test_mesh_from_a_worker_thread():
    out = {}

    def work():
        try:
            out["mesh"] = mesh(hole_plate(), size=8.0)
        except Exception as exc:  # pragma: no cover - reported below
            out["error"] = exc

    t = threading.Thread(target=work)
    t.start()
    t.join(60)
    assert "error" not in out, out.get("error")
    assert out["mesh"].n_cells > 0


def test_msh_round_trip_keeps_named_sets(tmp_path):
    p = hole_plate().with_region(Circle((100.0, 40.0), 18.0), name="boss").add_point("load_point", (180.0, 40.0))
    path = tmp_path / "plate.msh"
    m = mesh(p, size=5.0, order=2, save_msh=path)
    r = Mesh.read(path)
    assert r.names() == m.names()
    assert set(r.cells) == set(m.cells)

    def coords(mesh_, ids):
        return np.unique(np.round(mesh_.nodes[np.asarray(ids).ravel()], 9), axis=0)

    for nm in m.edge_sets:
        assert np.array_equal(coords(r, r.edge_sets[nm]), coords(m, m.edge_sets[nm]))
    assert np.allclose(r.nodes[r.node_sets["load_point"]], [[180.0, 40.0]])
    for nm in ("boss", "plate"):
        rc = r.region_cells(nm)["T6"]
        mc = m.region_cells(nm)["T6"]
        assert rc.size == mc.size
        assert np.array_equal(coords(r, r.cells["T6"][rc]), coords(m, m.cells["T6"][mc]))
    for lay in r.cells:  # the file holds counter-clockwise cells too
        assert corner_areas(r, lay).min() > 0


# ------------------------------------------------------------------------------------------ quads only, never tangled
def test_quads_around_a_slot_whose_straight_sides_are_one_element_long():
    # the slot's straight sides (7.2 - 5.96 = 1.24 long) are shorter than the size: one segment each,
    # which gmsh's full-quad recombination refused ("1D mesh cannot be divided by 2")
    from planar.core.assembly import prepare

    p = Plate.rectangle(20.0, 12.0).cut(Slot((10.0, 6.0), 7.2, 5.96))
    for order, lay in ((1, "Q4"), (2, "Q8")):
        m = mesh(p, 2.0, order=order, quads=True)
        assert set(m.cells) == {lay}
        prepare(m)  # raises for overlapping cells or bad Jacobians
    # quadratic sides of a slot of radius 2.98 at 12+ sides per turn: area to 1e-4 (measured 2e-6)
    assert mesh_area(m) == pytest.approx(p.area(), rel=1e-4)


def test_quads_near_a_slender_slot_and_an_edge_point_do_not_overlap():
    # gmsh's full-quad recombination left two triangles here that overlapped each other (and with
    # blossom or full-quad, triangles that covered part of a hole next to a named point)
    from planar.core.assembly import prepare

    p = (Plate.rectangle(71.467, 36.332, corner=(-35.875, 0.0))
         .cut(Slot((-18.008, 18.202), 16.412, 13.102, angle=2.584))
         .cut(Slot((17.725, 20.32), 11.911, 3.711))
         .add_point("load_point", (35.592, 18.166)))
    m = mesh(p, 7.1467, order=2, quads=True, seed=1)
    assert set(m.cells) == {"Q8"}
    prepare(m)
    assert cell_areas(m, "Q8").min() > 0
    # the sum of the cells is the plate, so none overlap and none cover a hole (Green's theorem,
    # 1e-4: the parabolic sides on arcs of 12+ sides per turn; measured 3e-5)
    assert mesh_area(m) == pytest.approx(p.area(), rel=1e-4)
    assert np.allclose(m.nodes[m.node_sets["load_point"]], [[35.592, 18.166]])


def _random_plate(rng):
    """A random valid plate: a rectangle with up to two holes (circle, ellipse or slot, some of them
    slender), maybe rounded corners, a notch or a region round a hole, named points on an edge and
    inside (some very close to an edge), a size from coarse to fine, maybe a refinement."""
    w = rng.uniform(20.0, 200.0)
    h = w * rng.uniform(0.25, 1.0)
    x0, y0 = rng.uniform(-50.0, 50.0, 2)
    p = Plate.rectangle(w, h, corner=(x0, y0))
    if rng.random() < 0.25:
        p = p.fillet("all", radius=min(w, h) * rng.uniform(0.03, 0.15))
    nh = int(rng.integers(0, 3))
    holes = []
    for k in range(nh):
        cw = w / nh
        room = 0.5 * min(cw, h)
        cx = x0 + cw * (k + 0.5) + rng.uniform(-0.2, 0.2) * room
        cy = y0 + h / 2 + rng.uniform(-0.2, 0.2) * room
        r = room * rng.uniform(0.2, 0.6)  # leaves >= 0.2 room to the edges and the next hole
        kind, angle, ratio = rng.choice(["circle", "ellipse", "slot"]), rng.uniform(-90, 90), rng.uniform(0.2, 0.95)
        name = f"hole_{k + 1}"
        p = p.cut(Circle((cx, cy), r, name=name) if kind == "circle"
                  else Ellipse((cx, cy), r, r * ratio, angle=angle, name=name) if kind == "ellipse"
                  else Slot((cx, cy), 2 * r, 2 * r * ratio, angle=angle, name=name))
        holes.append((cx, cy, r))
    if rng.random() < 0.2 and not holes:
        d = h * rng.uniform(0.05, 0.2)
        p = p.notch("top", at=x0 + w * rng.uniform(0.3, 0.7), depth=d, radius=d * rng.uniform(0.1, 0.5),
                    kind=str(rng.choice(["U", "V"])))
    if rng.random() < 0.2 and holes:
        p = p.with_region(Circle(holes[0][:2], 1.4 * holes[0][2]), name="boss")
    if rng.random() < 0.6:
        p = p.add_point("load_point", (x0 + w, y0 + h * rng.uniform(0.2, 0.8)))
    if rng.random() < 0.5:
        gap = rng.choice([0.005, 0.02, 0.1, 0.3])  # times the height, from an edge
        try:
            p = p.add_point("inner", (x0 + w * rng.uniform(0.3, 0.7), y0 + h * rng.choice([gap, 1 - gap])))
        except GeometryError:  # in the notch
            pass
    size = min(w, h) / rng.uniform(2.5, 12.0)
    if holes:
        size = min(size, 1.2 * min(r for _, _, r in holes))
    refine = [Refine("hole_1", size=size / rng.uniform(2, 6))] if holes and rng.random() < 0.2 else []
    return p, size, refine


@pytest.mark.slow
def test_random_plates_give_valid_meshes_that_cover_the_plate():
    # quads=True gives quadrilaterals only; no cells overlap or turn inside out (the core's check)
    # and the cells add up to the plate's exact area (OpenCASCADE), so none covers a hole
    from planar.core.assembly import prepare
    from planar.core.errors import PlanarWarning

    rng = np.random.default_rng(20240611)
    for case in range(120):
        p, size, refine = _random_plate(rng)
        quads = case % 4 != 0
        kw = dict(quads=True, quadratic=("Q8", "Q9")[case % 2]) if quads else {}
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", PlanarWarning)
            m = mesh(p, size, order=2, refine=refine, seed=1, **kw)
        what = f"case {case}: {p!r}, size {size:.4g}, {sorted(m.cells)}"
        assert set(m.cells) == ({kw["quadratic"]} if quads else {"T6"}), what
        prepare(m)
        # Green's theorem against the exact area: parabolic sides on arcs of 12 or more sides per
        # turn differ from the arcs by O(angle^4), 1e-4 (measured below 3e-5); a curved side put
        # back on its chord (with a warning) loses its circular segment, 1e-3 (measured 1.6e-4)
        tol = 1e-3 if any("straight chord" in str(w.message) for w in caught) else 1e-4
        assert mesh_area(m) == pytest.approx(p.area(), rel=tol), what
        for nm in p.names()["points"]:
            assert m.node_sets[nm].size == 1, what


def test_split_of_a_sliver_is_meshed_again_smaller_there(monkeypatch):
    # a region outline 0.1 from the plate's edge, with elements 75 times larger: the sliver triangle
    # between them, split into quadrilaterals, turns a cell inside out (its curved side nodes lie
    # beyond the sliver); the plate is meshed again with smaller elements there
    from planar.core.assembly import prepare
    from planar.geometry import meshing

    found = []
    check = meshing._tangled
    monkeypatch.setattr(meshing, "_tangled", lambda *a: found.append(check(*a)) or found[-1])
    p = Plate.rectangle(80.0, 50.0).cut(Circle((40.0, 21.0), 15.0)).with_region(Circle((40.0, 21.0), 20.9), name="boss")
    m = mesh(p, 7.65, order=2, quads=True)
    assert 2 <= len(found) <= 1 + meshing.RETRIES and found[0] is not None and found[-1] is None
    prepare(m)
    assert set(m.cells) == {"Q8"}
    assert mesh_area(m) == pytest.approx(p.area(), rel=1e-4)


@pytest.mark.parametrize("quads", [False, True])
def test_named_point_that_gmsh_leaves_out_is_meshed_again_smaller_there(quads, monkeypatch):
    # a named point 1.0 inside a region outline, elements 22 (45 for gmsh when quads are split):
    # gmsh's mesh of the region's surface leaves the point out; planar meshes again, smaller there
    from planar.core.assembly import prepare
    from planar.geometry import meshing

    found = []
    check = meshing._lost_point
    monkeypatch.setattr(meshing, "_lost_point", lambda *a: found.append(check(*a)) or found[-1])
    p = (Plate.rectangle(156.4, 152.0, corner=(3.8, -21.4)).fillet("all", radius=16.0)
         .cut(Circle((93.6, 49.9), 41.3)).with_region(Circle((93.6, 49.9), 57.8), name="boss")
         .add_point("inner", (89.6, 49.9 - 57.8 + 1.0)))
    m = mesh(p, 22.47, order=2, quads=quads)
    assert found[0][0] == "inner" and found[-1] is None
    assert np.allclose(m.nodes[m.node_sets["inner"]], [[89.6, -6.9]])
    prepare(m)
    # parabolic sides on arcs of 12 or more sides per turn: 1e-4 (measured 2e-5)
    assert mesh_area(m) == pytest.approx(p.area(), rel=1e-4)


@pytest.mark.slow
def test_tangled_mesh_is_made_again_or_refused_also_in_pieces(monkeypatch):
    from planar.core.assembly import prepare
    from planar.geometry import meshing

    monkeypatch.setitem(meshing.PIECE_ELEMENTS, "quads", 150)
    p = hole_plate().add_point("lp", (150.0, 60.0))
    calls = []
    check = meshing._tangled

    def first_fails(*a):
        calls.append(1)
        return (np.array([150.0, 60.0]), 6.0) if len(calls) == 1 else check(*a)

    monkeypatch.setattr(meshing, "_tangled", first_fails)
    m = mesh(p, 2.0, order=2, quads=True, fast=True)
    assert len(calls) == 2
    prepare(m)
    assert mesh_area(m) == pytest.approx(p.area(), rel=1e-5)
    # meshed again with elements 3 times smaller at the reported place
    cen = m.nodes[m.cells["Q8"][:, :4]].mean(axis=1)
    near = np.hypot(*(cen - [150.0, 60.0]).T) < 1.0
    assert near.any() and np.sqrt(np.abs(corner_areas(m, "Q8")[near])).max() < 1.5
    # a mesh that stays tangled is refused, naming the place
    monkeypatch.setattr(meshing, "_tangled", lambda *a: (np.array([150.0, 60.0]), 6.0))
    with pytest.raises(GeometryError, match=r"overlapping, inside-out or badly distorted cells near \(150, 60\)"):
        mesh(p, 2.0, quads=True)


def test_tangled_cells_are_found():
    from planar.geometry._build import _Built
    from planar.geometry.meshing import _Linear, _tangled

    # the unit square, its sides boundary curves 1-4; node 4 inside it
    built = _Built({"b": [1], "r": [2], "t": [3], "l": [4]}, {}, {"plate": [1]}, [1], 1.0, 1.0, (0, 0, 1, 1))
    segs = {1: np.array([[0, 1]]), 2: np.array([[1, 2]]), 3: np.array([[2, 3]]), 4: np.array([[3, 0]])}

    def tangled(cells, inner=(0.4, 0.5), corner=(0.0, 1.0)):
        xy = np.array([[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], corner, inner])
        return _tangled(built, _Linear(xy, [(1, "T3" if len(c) == 3 else "Q4", np.array([c])) for c in cells],
                                       segs, {}, {}))

    assert tangled([[0, 1, 2], [0, 2, 3]]) is None
    assert tangled([[0, 2, 1], [0, 3, 2]]) is None  # clockwise cells are turned round
    assert tangled([[0, 1, 2, 3]]) is None
    assert tangled([[0, 1, 4], [1, 2, 4], [2, 3, 4], [3, 0, 4]]) is None
    # a third cell on top of the others (a side of three cells), a fold (two cells on the same side
    # of a side), a cell missing (a side of one cell that is no boundary segment)
    assert tangled([[0, 1, 2], [0, 2, 3], [0, 1, 3]]) is not None
    assert tangled([[0, 1, 2], [0, 2, 3], [0, 4, 2], [0, 2, 4]]) is not None
    assert tangled([[0, 1, 2]]) is not None
    # two quadrilaterals through node 4, one with a reflex corner there: every side is walked once
    # each way, but the Jacobian of that one changes sign
    place, length = tangled([[0, 1, 2, 4], [0, 4, 2, 3]], inner=(0.6, 0.4))
    assert np.allclose(place, [0.65, 0.35]) and length == pytest.approx(math.sqrt(2))
    # a badly distorted quadrilateral: corner 3 at 1e-3 from corner 2, so the least corner cross
    # product is 1e-3 of the largest (the core refuses below 1e-3 of the Jacobian)
    assert tangled([[0, 1, 2, 3]], corner=(0.999, 1.0)) is not None
    assert tangled([[0, 1, 2, 3]], corner=(0.9, 1.0)) is None


# ------------------------------------------------------------------------------------------ refusals
@pytest.mark.parametrize(
    "make, error, words",
    [
        (lambda: hole_plate().cut(Circle((300, 40), 5)), GeometryError, "outside the plate"),
        (lambda: Plate.rectangle(200, 80).cut(Circle((195, 40), 10)), GeometryError, "crosses or touches the plate's edge"),
        (lambda: Plate.rectangle(200, 80).cut(Circle((190, 40), 10)), GeometryError, "touches the plate's edge"),
        (lambda: hole_plate().cut(Circle((115, 40), 8)), GeometryError, "overlaps or touches hole 'bolt_hole'"),
        (lambda: hole_plate().cut(Circle((100, 40), 3)), GeometryError, "overlaps"),
        (lambda: Polygon([(0, 0), (10, 10), (10, 0), (0, 10)]), GeometryError, "crosses itself"),
        (lambda: Polygon([(0, 0), (10, 0), (10, 0), (0, 10)]), GeometryError, "repeats a corner"),
        (lambda: Outline((0, 0)).line_to((10, 10)).line_to((10, 0)).line_to((0, 10)).close(), GeometryError, "crosses"),
        (lambda: Plate(Outline((0, 0)).line_to((1, 0)).line_to((1, 1))), GeometryError, "not closed"),
        (lambda: mesh(hole_plate(), size=0.0), InputError, "positive"),
        (lambda: mesh(hole_plate(), size=-2.0), InputError, "positive"),
        (lambda: mesh(hole_plate(), size=float("nan")), InputError, "positive"),
        (lambda: mesh(hole_plate()), InputError, "size"),
        (lambda: mesh(hole_plate(), size=1.0, order=3), InputError, "order"),
        (lambda: mesh(hole_plate(), size=10.0, seed=float("nan")), InputError,
         "seed must be a whole number from 0 to 2147483647 .* got nan"),
        (lambda: mesh(hole_plate(), size=10.0, seed=math.inf), InputError, "seed .* got inf"),
        (lambda: mesh(hole_plate(), size=10.0, seed="ten"), InputError, "seed .* got 'ten'"),
        (lambda: mesh(hole_plate(), size=10.0, seed=-1), InputError, "seed .* from 0"),
        (lambda: mesh(hole_plate(), size=10.0, seed=1.5), InputError, "seed .* got 1.5"),
        (lambda: mesh(hole_plate(), size=10.0, circle_elements=math.inf), InputError,
         "circle_elements must be a whole number from 0 to 100000 .* got inf"),
        (lambda: mesh(hole_plate(), size=10.0, circle_elements="12"), InputError, "circle_elements .* got '12'"),
        (lambda: mesh(hole_plate(), size=10.0, circle_elements=-1), InputError, "circle_elements .* got -1"),
        (lambda: mesh(hole_plate(), size=10.0, max_elements=float("nan")), InputError,
         "max_elements must be a whole number from 1 to .* got nan"),
        (lambda: mesh(hole_plate(), size=10.0, max_elements=0), InputError, "max_elements .* got 0"),
        (lambda: mesh(hole_plate(), size=10.0, max_elements=True), InputError, "max_elements .* got True"),
        (lambda: mesh(hole_plate(), size=1e-3), ResourceError, "max_elements"),
        (lambda: mesh(hole_plate(), size=5.0, refine=[Refine("hole", size=1)]), NameNotFoundError, "bolt_hole"),
        (lambda: mesh(hole_plate(), size_function=lambda x, y: 0 * x), InputError, "positive"),
        (lambda: mesh(hole_plate(), size_function=lambda x, y: float(x)), InputError, "numpy arrays"),
        (lambda: Refine("top", size=1.0, growth=1.0), InputError, "growth"),
        (lambda: Circle((0, 0), 0.0), InputError, "radius"),
        (lambda: Slot((0, 0), 5.0, 10.0), InputError, "exceed"),
        (lambda: hole_plate().add_point("p", (100, 40)), GeometryError, "outside the plate or in a hole"),
        (lambda: hole_plate().add_point("top", (100, 80)), InputError, "already names an edge"),
        (lambda: hole_plate().with_region(Circle((400, 40), 5), name="r"), GeometryError, "does not overlap"),
        (lambda: hole_plate().with_region(Circle((100, 40), 15), name="plate"), InputError, "'plate'"),
        (lambda: Plate.rectangle(200, 80).union(Circle((400, 40), 5)), GeometryError, "does not touch"),
        (lambda: Plate.rectangle(200, 80).notch("topp", at=100, depth=5, radius=1), NameNotFoundError, "'top'"),
        (lambda: Plate.rectangle(200, 80).notch("top", at=2, depth=10, radius=3), GeometryError, "does not fit"),
        (lambda: Plate.rectangle(200, 80).notch("top", at=100, depth=90, radius=3), GeometryError, "through the plate"),
        (lambda: Plate.rectangle(200, 80).fillet((0, 0), radius=100), GeometryError, "smaller radius"),
        (lambda: Plate.rectangle(200, 80).fillet((5, 5), radius=1), GeometryError, "no corner"),
        (lambda: Plate.rectangle(200, 80).difference(Rectangle(10, 100, corner=(95, -10))).names(),
         GeometryError, "separate pieces"),
    ],
)
def test_bad_input_is_refused_with_a_clear_message(make, error, words):
    with pytest.raises(error, match=words.replace("(", r"\(").replace(")", r"\)")):
        make()
    assert not gmsh.isInitialized()


def test_no_unnamed_curves_in_combined_geometry():
    p = (
        Plate.rectangle(300.0, 100.0)
        .fillet("all", radius=8.0)
        .notch("top", at=150.0, depth=12.0, radius=2.0, kind="V")
        .notch("bottom", at=60.0, depth=8.0, radius=2.0)
        .cut(Circle((60.0, 50.0), 10.0), Ellipse((150.0, 45.0), 15.0, 6.0), Slot((240.0, 50.0), 40.0, 10.0, angle=90))
        .union(Rectangle(30.0, 40.0, corner=(300.0, 30.0)), name="tab")
        .with_region(Circle((60.0, 50.0), 20.0), name="boss")
        .add_point("load", (330.0, 50.0))
    )
    names = p.names()
    assert "unnamed" not in names["edges"]
    assert names["points"] == ["load"] and names["regions"] == ["boss", "plate"]
    m = mesh(p, size=6.0, order=2, quads=True)
    assert set(m.cells) == {"Q8"}
    assert sorted(m.edge_sets) == names["edges"]


# ------------------------------------------------------------------------------------------ speed
@pytest.mark.slow
def test_a_million_unknowns_of_t6_in_a_few_seconds():
    # 400 x 160 plate with a hole at size 0.76: about 255 000 T6 and 10^6 unknowns; measured 1.8-2.1 s
    # (the fast way, one core); before: 10 s (gmsh's setOrder(2) and one smoothed surface)
    p = Plate.rectangle(400.0, 160.0).cut(Circle((200.0, 80.0), 20.0, name="hole"))
    t0 = time.perf_counter()
    m = mesh(p, size=0.76, order=2)
    dt = time.perf_counter() - t0
    print(f"\n{m.cells['T6'].shape[0]} T6, {m.n_dofs} unknowns in {dt:.2f} s")
    assert m.n_dofs > 1_000_000
    assert min_angles(m, "T6").min() > 25.0
    assert dt < 8.0  # generous: the machine may be busy


@pytest.mark.slow
def test_100k_quadratic_elements_in_a_few_seconds():
    t0 = time.perf_counter()
    m = mesh(hole_plate(), size=0.6, order=2)
    dt = time.perf_counter() - t0
    print(f"\n{m.cells['T6'].shape[0]} T6, {m.n_nodes} nodes in {dt:.2f} s")
    assert m.cells["T6"].shape[0] > 100_000
    assert dt < 10.0


@pytest.mark.slow
def test_meshing_leaves_broken_pipes_harmless(tmp_path):
    # gmsh's initialize resets SIGPIPE to its default (terminate); after meshing, a write to a closed
    # pipe must still raise BrokenPipeError as Python promises (common practice for CPython)
    import subprocess
    import sys

    script = (
        "import os\n"
        "from planar.geometry import Plate, mesh\n"
        "mesh(Plate.rectangle(10, 5), 2.0)\n"
        "r, w = os.pipe(); os.close(r)\n"
        "try:\n    os.write(w, b'x')\nexcept BrokenPipeError:\n    print('ok')\n"
    )
    out = subprocess.run([sys.executable, "-c", script], capture_output=True, text=True, timeout=120)
    assert out.returncode == 0 and out.stdout.strip() == "ok", (out.returncode, out.stderr)
