"""Element layouts come from the registered element types alone: the built-in tables are derived
and unchanged, and a plugin element with a node layout planar has never seen (the 10-node cubic
triangle) is read from a gmsh .msh file, solved, written to .vtu as VTK's Lagrange triangle and
drawn by ``planar show``, with nothing in planar naming it.

The plugin is installed for the test as a throwaway distribution with a ``planar.elements`` entry
point (``make_distribution`` in test_plugins.py), found like any other plugin.
"""
from __future__ import annotations

import numpy as np
import pytest

import planar
from planar.cli import main
from planar.core.layouts import layouts, vtk_cells
from planar.core.mesh import Mesh
from planar.core.registry import element_type, registry
from test_plugins import make_distribution, plugin_dirs  # noqa: F401  (plugin_dirs is a fixture)

# ---------------------------------------------------------------------------- the plugin
#: the 10-node cubic Lagrange triangle in gmsh's node order: corners, two nodes per side from the
#: side's first corner, sides (0-1), (1-2), (2-0), then the centroid (gmsh reference manual, "Node
#: ordering", triangle of order 3). Shape functions in area coordinates L (O. C. Zienkiewicz and
#: R. L. Taylor, The Finite Element Method, vol. 1, cubic triangle, from memory): corner
#: L (3L - 1)(3L - 2) / 2, side node next to corner i on side (i, j) 9/2 Li Lj (3Li - 1), centre 27 L1 L2 L3.
T10_SOURCE = '''
import numpy as np
from planar.core.elements import ElementType

# (area coordinate i, j) of each side node: 9/2 Li Lj (3 Li - 1)
_SIDE = np.array([[0, 1], [1, 0], [1, 2], [2, 1], [2, 0], [0, 2]])
_dL = np.array([[-1.0, -1.0], [1.0, 0.0], [0.0, 1.0]])  # dL/d(r, s)


def _area(xi):
    xi = np.atleast_2d(np.asarray(xi, dtype=float))
    r, s = xi[:, 0], xi[:, 1]
    return np.stack([1.0 - r - s, r, s], axis=1)  # (q, 3)


class T10(ElementType):
    """10-node cubic triangle (gmsh's node order)."""

    name = "T10"
    cell = "triangle"
    degree = 3  # n_nodes, reversed_order and the full rule (degree 4) are derived by planar
    ref_nodes = np.array([[0, 0], [1, 0], [0, 1], [1 / 3, 0], [2 / 3, 0], [2 / 3, 1 / 3], [1 / 3, 2 / 3],
                          [0, 2 / 3], [0, 1 / 3], [1 / 3, 1 / 3]])
    edges = np.array([[0, 1], [1, 2], [2, 0]])
    meshio_type = "triangle10"
    jacobian_degree = 4  # det J of a cubic map: products of two quadratics

    @classmethod
    def shape(cls, xi):
        L = _area(xi)
        corner = 0.5 * L * (3 * L - 1) * (3 * L - 2)
        a, b = L[:, _SIDE[:, 0]], L[:, _SIDE[:, 1]]
        side = 4.5 * a * b * (3 * a - 1)
        centre = 27.0 * L.prod(axis=1, keepdims=True)
        return np.hstack([corner, side, centre])

    @classmethod
    def shape_derivatives(cls, xi):
        L = _area(xi)
        q = L.shape[0]
        dN = np.zeros((q, 10, 3))  # dN/dL
        k = np.arange(3)
        dN[:, k, k] = 0.5 * (27 * L * L - 18 * L + 2)
        i, j = _SIDE[:, 0], _SIDE[:, 1]
        a, b = L[:, i], L[:, j]
        rows = 3 + np.arange(6)
        dN[:, rows, i] = 4.5 * b * (6 * a - 1)
        dN[:, rows, j] = 4.5 * a * (3 * a - 1)
        dN[:, 9, :] = 27.0 * np.stack([L[:, 1] * L[:, 2], L[:, 0] * L[:, 2], L[:, 0] * L[:, 1]], axis=1)
        return dN @ _dL
'''


@pytest.fixture
def t10(plugin_dirs, tmp_path):  # noqa: F811  (the fixture imported above)
    site = make_distribution(tmp_path / "site", "planar-cubic-triangle", "0.1.0",
                             {"planar.elements": {"T10": "planar_cubic_triangle:T10"}},
                             {"planar_cubic_triangle.py": T10_SOURCE})
    reg = plugin_dirs(site)
    assert [p for p in reg.problems if p.name == "T10"] == []
    t10 = element_type("T10")
    # derived by planar: the mirror about the diagonal through node 0 swaps the side nodes
    assert t10.n_nodes == 10 and t10.reversed_order.tolist() == [0, 2, 1, 8, 7, 6, 5, 4, 3, 9]
    assert t10.default_rule().degree >= 4  # B^T D B of a straight-sided cubic triangle: degree 4
    return t10


# ---------------------------------------------------------------------------- built-in tables
def test_builtin_tables_are_derived_and_unchanged():
    from planar.core.mesh import LAYOUT_TO_MESHIO, MESHIO_TO_LAYOUT
    from planar.post.vtk import CELL_TYPES

    today = {"triangle": "T3", "triangle6": "T6", "quad": "Q4", "quad8": "Q8", "quad9": "Q9"}
    assert {k: v for k, v in MESHIO_TO_LAYOUT.items() if v in today.values()} == today
    assert {k: LAYOUT_TO_MESHIO[k] for k in today.values()} == {v: k for k, v in today.items()}
    assert {k: CELL_TYPES[k] for k in today.values()} == {v: k for k, v in today.items()}
    # VTK file format documentation: triangle 5, quad 9, quadratic triangle 22, quadratic quad 23,
    # biquadratic quad 28; planar's node order is VTK's for all five
    for name, vtk in {"triangle": 5, "quad": 9, "triangle6": 22, "quad8": 23, "quad9": 28}.items():
        k = layouts()[today[name]].n_nodes
        conn = np.arange(2 * k).reshape(2, k)
        t, meshio_name, out = vtk_cells(name, conn)
        assert (t, meshio_name) == (vtk, name) and np.array_equal(out, conn)


def test_gmsh_numbers_of_the_layouts(t10):
    # gmsh reference manual, "MSH file format": 2 triangle, 3 quadrangle, 9 6-node triangle,
    # 16 8-node quadrangle, 10 9-node quadrangle, 21 10-node triangle
    from planar.core.errors import InputError
    from planar.core.layouts import gmsh_type

    assert {k: gmsh_type(k) for k in ("T3", "Q4", "T6", "Q8", "Q9", "T10")} == \
        {"T3": 2, "Q4": 3, "T6": 9, "Q8": 16, "Q9": 10, "T10": 21}
    with pytest.raises(InputError, match="no element type defines it"):
        gmsh_type("T99")


def test_a_plugin_sharing_a_builtin_meshio_name_does_not_take_it():
    # e.g. the example plugin's incompatible-modes quadrilateral, also a meshio "quad": files read as Q4
    from planar.core.mesh import MESHIO_TO_LAYOUT

    others = [n for n in registry().names("element")
              if n != "Q4" and element_type(n).meshio_type == "quad"]
    if not others:
        pytest.skip("no plugin element of meshio type 'quad' is installed (the example plugins)")
    assert MESHIO_TO_LAYOUT["quad"] == "Q4"
    assert all(layouts()[n].vtk_type == 9 for n in others)  # and writes VTK's quad, as Q4 does


# ---------------------------------------------------------------------------- the plugin element
def test_t10_interpolates_cubics_exactly(t10):
    # a complete cubic is reproduced from its nodal values (completeness of the cubic Lagrange
    # triangle; common practice), with the derivatives too
    rng = np.random.default_rng(7)
    c = rng.normal(size=10)

    def f(r, s):
        return (c[0] + c[1] * r + c[2] * s + c[3] * r * r + c[4] * r * s + c[5] * s * s
                + c[6] * r ** 3 + c[7] * r * r * s + c[8] * r * s * s + c[9] * s ** 3)

    def grad(r, s):
        return np.stack([c[1] + 2 * c[3] * r + c[4] * s + 3 * c[6] * r * r + 2 * c[7] * r * s + c[8] * s * s,
                         c[2] + c[4] * r + 2 * c[5] * s + c[7] * r * r + 2 * c[8] * r * s + 3 * c[9] * s * s], -1)

    pts = rng.dirichlet([1, 1, 1], size=20)[:, 1:]
    nodal = f(*t10.ref_nodes.T)
    assert np.allclose(t10.shape(pts) @ nodal, f(*pts.T), atol=1e-12)
    assert np.allclose(np.einsum("qkd,k->qd", t10.shape_derivatives(pts), nodal), grad(*pts.T), atol=1e-11)


def _gmsh_plate(path, size=0.05):
    """A 0.24 x 0.12 plate of cubic triangles written by gmsh (Mesh.ElementOrder 3, complete)."""
    import gmsh

    from planar.geometry._session import _Session

    with _Session() as s:
        g = s.gmsh
        g.model.add("plate")
        g.model.occ.addRectangle(0, 0, 0, 0.24, 0.12)
        g.model.occ.synchronize()
        g.model.addPhysicalGroup(2, [1], name="plate")
        g.model.addPhysicalGroup(1, [c for _, c in g.model.getEntities(1)], name="boundary")
        s.set("Mesh.MeshSizeMax", size)
        s.set("Mesh.ElementOrder", 3)
        s.set("Mesh.SecondOrderIncomplete", 0)
        s.set("Mesh.MshFileVersion", 4.1)
        g.model.mesh.generate(2)
        g.write(str(path))
    assert gmsh is not None


@pytest.mark.slow
def test_t10_from_msh_to_solve_to_vtu_to_show(t10, tmp_path):
    import meshio

    msh = tmp_path / "plate.msh"
    _gmsh_plate(msh)
    assert any(b.type == "triangle10" for b in meshio.read(msh).cells)
    mesh = Mesh.read(msh)
    assert list(mesh.cells) == ["T10"] and mesh.cells["T10"].shape[1] == 10
    # the physical line of 4-node sides becomes a node set: all boundary nodes
    b = mesh.nodes_of("boundary")
    x, y = mesh.nodes[:, 0], mesh.nodes[:, 1]
    on_edge = np.isclose(x, 0) | np.isclose(x, 0.24) | np.isclose(y, 0) | np.isclose(y, 0.12)
    assert np.array_equal(np.sort(b), np.flatnonzero(on_edge))
    # move the inner nodes a little (seeded): curved, distorted cells for the patch test
    rng = np.random.default_rng(3)
    nodes = mesh.nodes.copy()
    inner = ~on_edge
    nodes[inner] += rng.uniform(-0.0005, 0.0005, size=(inner.sum(), 2))
    mesh = Mesh(nodes, mesh.cells, node_sets=mesh.node_sets)

    # constant-strain membrane patch test (MacNeal and Harder 1985; common practice): a linear field
    # on the boundary gives it everywhere, stress D eps at every point to round-off
    model = planar.Model(mesh, planar.Isotropic(1.0e6, 0.25), thickness=0.001)
    model.add_support(planar.Prescribed("boundary", ux=lambda x, y: 1e-3 * (x + y / 2),
                                        uy=lambda x, y: 1e-3 * (y + x / 2)))
    model.add_case("patch")
    r = planar.solve(model)["patch"]
    exact_u = 1e-3 * np.column_stack([nodes[:, 0] + nodes[:, 1] / 2, nodes[:, 1] + nodes[:, 0] / 2])
    assert np.abs(r.u - exact_u).max() < 1e-12 * 1e-3 * 0.24 * 1e3
    s = np.concatenate([g.stress.reshape(-1, 3) for g in r.gauss])
    exact = np.array([1333.3333333333333, 1333.3333333333333, 400.0])  # E/(1-nu^2) (1 + nu) 1e-3, G 1e-3
    assert np.abs(s - exact).max() < 1e-8 * 1333.3
    nodal, _ = r.nodal_stress("spr")
    assert np.abs(nodal - exact).max() < 1e-7 * 1333.3

    # .vtu: VTK's Lagrange triangle (type 69), VTK's node order for degree 3 (corners, then each
    # side's two nodes from its first corner, sides (0-1), (1-2), (2-0), then the interior node;
    # VTK's vtkHigherOrderTriangle), read back by meshio
    vtu = planar.write_vtu(tmp_path / "plate.vtu", r)
    m = meshio.read(vtu)
    blocks = [c for c in m.cells if c.data.shape[1] == 10]
    assert [c.type for c in blocks] == ["VTK_LAGRANGE_TRIANGLE"]
    conn = blocks[0].data
    p = m.points[conn][..., :2]  # (e, 10, 2) with the original, undisturbed corners of the gmsh mesh
    c0, c1, c2 = p[:, 0], p[:, 1], p[:, 2]
    for k, (a, bb) in enumerate([(c0, c1), (c1, c2), (c2, c0)]):
        # straight boundary sides: the side nodes at 1/3 and 2/3 from the first corner
        straight = np.all(on_edge[conn[:, [0, 1, 2]]][:, [k, (k + 1) % 3]], axis=1) & \
            np.all(on_edge[conn[:, [3 + 2 * k, 4 + 2 * k]]], axis=1)
        if straight.any():
            assert np.allclose(p[straight, 3 + 2 * k], (2 * a + bb)[straight] / 3, atol=1e-12)
            assert np.allclose(p[straight, 4 + 2 * k], (a + 2 * bb)[straight] / 3, atol=1e-12)
    assert np.array_equal(conn, mesh.cells["T10"])
    from meshio._vtk_common import meshio_to_vtk_type

    assert meshio_to_vtk_type["VTK_LAGRANGE_TRIANGLE"] == 69
    assert np.allclose(m.point_data["sigma_xx"], exact[0], rtol=1e-7)
    back = Mesh.read(vtu)  # planar reads its own file back as T10 cells
    assert np.array_equal(back.cells["T10"], mesh.cells["T10"])
    packed = planar.write_vtu(tmp_path / "packed.vtu", r, compression="zlib")  # written through meshio
    assert [c.type for c in meshio.read(packed).cells] == ["VTK_LAGRANGE_TRIANGLE"]
    assert np.array_equal(Mesh.read(packed).cells["T10"], mesh.cells["T10"])

    # drawn by the command line, from the file alone
    png = tmp_path / "plate.png"
    assert main(["show", str(vtu), "--field", "sigma_xx", "--png", str(png)]) == 0
    from matplotlib.image import imread

    img = imread(png)
    assert img.shape[0] > 100 and np.unique(img.reshape(-1, img.shape[-1]), axis=0).shape[0] > 20


def test_t10_mesh_validity(t10):
    # the declared jacobian_degree 4 holds (validity confirms it on distorted elements) and a sound
    # element passes; one turned inside out by a misplaced side node is refused (det J < 0 inside)
    from planar.core.assembly import prepare
    from planar.core.errors import ElementError

    def model(nodes):
        return Mesh(nodes, {"T10": np.arange(10)[None, :]})

    prepare(model(t10.ref_nodes))
    bad = t10.ref_nodes.copy()
    bad[3] = [0.9, -0.2]  # the side node next to corner 0 pulled past the one next to corner 1
    with pytest.raises(ElementError, match="T10"):
        prepare(model(bad))
