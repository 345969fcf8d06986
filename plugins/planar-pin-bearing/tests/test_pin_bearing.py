"""Tests of the pin-bearing load-kind plugin."""
from __future__ import annotations

import importlib.metadata as md
import math

import numpy as np
import pytest
from scipy.spatial import cKDTree

import planar
from planar.core.errors import InputError
from planar.core.mesh import Mesh
from planar.core.registry import load_kind, registry
from planar.geometry.structured import mapped_mesh

from planar_pin_bearing import PinBearing, fit_circle

COSINE = ("cosine bearing pressure p0 cos(theta - theta_F) over the loaded half, resultant "
          "p0 R t pi / 2, so p0 = 2 F / (pi R t) (common practice for pin-loaded lugs)")


def plate_with_hole(radius=0.5, half_width=2.0, n_around=32, n_radial=8, layout="Q4", theta0=0.0,
                    warp=0.0):
    """Square plate 2 half_width wide with a central round hole, as a mapped ring.

    s runs clockwise round the hole (so cells are counter-clockwise), t from the hole ("hole") out to
    the square ("outer", of which the side x = -half_width is also named "left"); the seam where
    s = 0 meets s = 1 is merged. ``warp`` (< 0.15) spaces the nodes round the hole unevenly.
    """
    def mapping(s, t):
        th = theta0 - 2 * np.pi * (s + warp * np.sin(2 * np.pi * s))
        c, sn = np.cos(th), np.sin(th)
        rho = half_width / np.maximum(np.abs(c), np.abs(sn))
        r = radius + t**1.3 * (rho - radius)
        return r * c, r * sn

    m = mapped_mesh(mapping, n_around, n_radial, layout, side_names=("hole", "seam_end", "outer", "seam_start"))
    parent = np.arange(m.n_nodes)
    for i, j in sorted(cKDTree(m.nodes).query_pairs(1e-9 * m.size())):
        parent[max(i, j)] = parent[min(i, j)]
    keep = np.flatnonzero(parent == np.arange(m.n_nodes))
    renum = np.full(m.n_nodes, -1)
    renum[keep] = np.arange(keep.size)
    new = renum[parent]
    nodes = m.nodes[keep]
    outer = new[m.edge_sets["outer"]]
    left = outer[np.all(np.isclose(nodes[outer, 0], -half_width), axis=1)]
    return Mesh(nodes, {k: new[v] for k, v in m.cells.items()},
                edge_sets={"hole": new[m.edge_sets["hole"]], "outer": outer, "left": left})


def lug(layout="Q4", angle=0.0, force=1000.0, thickness=0.2, **kw):
    mesh = plate_with_hole(layout=layout, **kw)
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), thickness)
    model.add_support(planar.Fixed("left"))
    load = model.add_load("pin-bearing", case="pin", where="hole", force=force, angle=angle)
    return mesh, model, load


def test_found_through_its_entry_point():
    eps = [ep for ep in md.entry_points(group="planar.loads") if ep.name == "pin-bearing"]
    assert len(eps) == 1 and eps[0].dist.name == "planar-pin-bearing"
    assert load_kind("pin-bearing") is PinBearing
    assert registry().entry("load", "pin-bearing").distribution == "planar-pin-bearing"


@pytest.mark.parametrize("layout", ["T3", "Q4", "T6", "Q8", "Q9"])
@pytest.mark.parametrize("angle", [0.0, 37.0, -120.0])
def test_resultant_exact_and_reactions_balance(layout, angle):
    # statics: the nodal forces sum to the given force, and the support reactions balance them
    # (common practice). The mesh is turned by 0.3 rad and unevenly spaced round the hole, so it is
    # not symmetric about the force and the peak angle must be corrected to get the direction exact.
    F, t = 1000.0, 0.2
    mesh, model, load = lug(layout, angle, F, t, n_around=24, theta0=0.3, warp=0.04)
    r = planar.solve(model)["pin"]
    Fvec = F * np.array([math.cos(math.radians(angle)), math.sin(math.radians(angle))])
    assert np.max(np.abs(r.total_applied() - Fvec)) < 1e-10 * F
    assert np.max(np.abs(r.total_reaction() + Fvec)) < 1e-10 * F
    assert r.equilibrium_error() < 1e-10
    fit = load.bearing(r.assembly.context)
    assert np.max(np.abs(fit.resultant - Fvec)) < 1e-12 * F
    assert np.allclose(fit.centre, 0.0, atol=1e-12) and fit.radius == pytest.approx(0.5, rel=1e-12)
    # the peak stays at the force direction up to a discretization-sized shift
    assert abs(fit.peak_angle - angle) < 0.5
    # COSINE: p0 -> 2 F / (pi R t); chords (T3, Q4: 24 uneven sides) cut the circle, error of order
    # (pi/24)^2 / 6 = 3e-3; curved quadratic edges follow it to about 1e-4
    tol = 1e-2 if layout in ("T3", "Q4") else 5e-4
    assert fit.peak_pressure == pytest.approx(2 * F / (math.pi * 0.5 * t), rel=tol)


def test_pressure_is_radial_cosine_on_the_loaded_half():
    # the nodal forces of the unloaded half are zero; on the loaded half they push the hole wall
    # away from the centre (COSINE), with the small tangential part that consistent nodal forces of
    # a varying pressure on a curved edge carry; the mesh is symmetric about the force, so are they
    mesh, model, load = lug("Q8", angle=0.0)
    ctx = planar.core.assembly.Assembly(model).context
    fit = load.bearing(ctx)
    ids = np.unique(mesh.edge("hole"))
    x = mesh.nodes[ids]
    f = fit.forces[ids]
    back = x[:, 0] < -1e-9
    assert np.max(np.abs(f[back])) == 0.0
    front = x[:, 0] > 1e-9
    rad = np.linalg.norm(x[front], axis=1)
    radial = np.sum(f[front] * x[front], axis=1) / rad
    tangential = (x[front, 0] * f[front, 1] - x[front, 1] * f[front, 0]) / rad
    assert np.all(radial > 0) and np.max(np.abs(tangential)) < 0.01 * np.max(radial)
    mirror = cKDTree(x).query(x * [1.0, -1.0])[1]
    assert np.allclose(f[mirror], f * [1.0, -1.0], rtol=0, atol=1e-12 * np.abs(f).max())


def test_direction_as_vector_equals_angle():
    _, m1, l1 = lug("Q4", angle=45.0)
    mesh, m2, _ = lug("Q4", angle=0.0)
    l2 = m2.add_load("pin-bearing", case="vector", where="hole", force=1000.0, direction=(2.0, 2.0))
    r1, r2 = planar.solve(m1)["pin"], planar.solve(m2, ["vector"])["vector"]
    assert np.allclose(r1.applied, r2.applied, rtol=0, atol=1e-12 * 1000.0)


def test_lug_on_a_gmsh_mesh():
    # the same checks on a plate with an off-centre hole meshed by the gmsh geometry layer
    geo = pytest.importorskip("planar.geometry")
    plate = geo.Plate.rectangle(80.0, 40.0).cut(geo.Circle((60.0, 20.0), 8.0, name="pin_hole"))
    mesh = geo.mesh(plate, size=4.0, order=2)
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.33), 5.0)
    model.add_support(planar.Fixed("left"))
    load = model.add_load("pin-bearing", case="pin", where="pin_hole", force=20e3, angle=10.0)
    r = planar.solve(model)["pin"]
    Fvec = 20e3 * np.array([math.cos(math.radians(10.0)), math.sin(math.radians(10.0))])
    assert np.max(np.abs(r.total_applied() - Fvec)) < 1e-10 * 20e3
    assert np.max(np.abs(r.total_reaction() + Fvec)) < 1e-10 * 20e3
    fit = load.bearing(r.assembly.context)
    assert np.allclose(fit.centre, (60.0, 20.0), atol=1e-6) and fit.radius == pytest.approx(8.0, rel=1e-6)


def test_fit_circle():
    t = np.linspace(-1.0, 2.0, 9)
    c, r, dev = fit_circle(np.column_stack([3 + 2 * np.cos(t), -4 + 2 * np.sin(t)]))
    assert np.allclose(c, (3, -4), atol=1e-12) and r == pytest.approx(2.0, rel=1e-12) and dev < 1e-12
    with pytest.raises(InputError, match="straight line"):
        fit_circle([[0, 0], [1, 1], [2, 2], [3, 3]])
    with pytest.raises(InputError, match="three distinct"):
        fit_circle([[0, 0], [1, 1], [1, 1]])


def test_refuses_an_edge_that_is_not_round():
    mesh, model, _ = lug("Q4")
    model.add_load("pin-bearing", case="square", where="outer", force=10.0, angle=0.0)
    with pytest.raises(InputError, match="not close to a circular arc"):
        planar.solve(model, ["square"])
    model.add_load("pin-bearing", case="line", where="left", force=10.0, angle=0.0)
    with pytest.raises(InputError, match="straight line"):
        planar.solve(model, ["line"])


def test_refuses_a_round_outer_boundary():
    # a round plate: its edge is a circle, but the material is inside it
    def disc(s, t):
        th = 2 * np.pi * s
        return (0.2 + 0.8 * t) * np.cos(th), (0.2 + 0.8 * t) * np.sin(th)
    # the mapped mesh of a whole turn has its own copy of the nodes of the seam: join them
    m = mapped_mesh(disc, 24, 3, "Q4", side_names=("inner", "a", "rim", "b")).merge_duplicate_nodes()
    model = planar.Model(m, planar.Isotropic(1.0, 0.3))
    model.add_support(planar.Fixed("inner"))
    model.add_load("pin-bearing", case="c", where="rim", force=1.0, angle=0.0)
    with pytest.raises(InputError, match="not a hole"):
        planar.solve(model)


def test_refuses_an_arc_that_misses_the_loaded_half():
    # keep only the hole segments on the right half, load towards the left
    mesh = plate_with_hole()
    hole = mesh.edge_sets["hole"]
    right = hole[np.all(mesh.nodes[hole, 0] > -1e-9, axis=1)]
    mesh = Mesh(mesh.nodes, mesh.cells, edge_sets={**mesh.edge_sets, "right_arc": right})
    model = planar.Model(mesh, planar.Isotropic(1.0, 0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load("pin-bearing", case="c", where="right_arc", force=1.0, angle=150.0)
    with pytest.raises(InputError, match="does not cover the loaded half"):
        planar.solve(model)


@pytest.mark.parametrize("kw, words", [
    (dict(force=0.0, angle=0.0), "zero force"),
    (dict(force=-5.0, angle=0.0), "positive magnitude"),
    (dict(force=float("nan"), angle=0.0), "positive finite"),
    (dict(force="lots", angle=0.0), "must be a number"),
    (dict(force=1.0), "exactly one"),
    (dict(force=1.0, angle=0.0, direction=(1, 0)), "exactly one"),
    (dict(force=1.0, direction=(0.0, 0.0)), "non-zero vector"),
    (dict(force=1.0, angle=0.0, circle_tolerance=2.0), "circle_tolerance"),
])
def test_bad_parameters_refused(kw, words):
    with pytest.raises(InputError, match=words):
        PinBearing("hole", **kw)


def test_unknown_edge_names_the_edges():
    mesh, model, _ = lug("Q4")
    with pytest.raises(planar.NameNotFoundError, match="'hole'"):
        model.add_load("pin-bearing", where="bolt", force=1.0, angle=0.0)
