"""Figures: subdivision of quadratic cells, units, deformation scale, colour maps, files.

Sources: isoparametric interpolation reproduces any field in the span of the element's shape
functions exactly (Zienkiewicz, Taylor and Zhu, The Finite Element Method: Its Basis and
Fundamentals, 7th ed., 2013, ch. 5); a quadratic edge through three points of a circle deviates
from the arc by O(h^3) (common practice); uniform tension sigma_xx = P/A (common practice).
"""
import math

import matplotlib.image as mpimg
import numpy as np
import pytest

import planar
from _models import solved_strip
from planar.core.errors import InputError, NameNotFoundError
from planar.post import plots
from planar.post.plots import (deformation_scale, field_label, field_unit, length_unit, plot_along,
                               plot_field, plot_nodal_field, plot_vtu, stress_unit, subdivide)

LAYOUTS = ["T3", "T6", "Q4", "Q8", "Q9"]


def _strip(el="Q8", nx=8, ny=2, load=60.0):
    return solved_strip(80.0, 20.0, nx, ny, el, units="N, mm, MPa", case="pull",
                        loads={"pull": planar.Traction("right", tx=load, ty=-0.1 * load)})


def _hole_mesh():
    from planar.geometry import Circle, Plate, Refine, mesh

    plate = Plate.rectangle(80.0, 40.0, centre=(0.0, 0.0)).cut(Circle((0.0, 0.0), 8.0, name="bolt_hole"))
    return mesh(plate, size=8.0, order=2, seed=1, refine=[Refine("bolt_hole", size=3.0)])


def _distinct_colours(png):
    img = mpimg.imread(png)[..., :3]
    q = np.round(img.reshape(-1, 3) * 255).astype(np.int64)
    return np.unique(q[:, 0] * 65536 + q[:, 1] * 256 + q[:, 2]).size


# ---------------------------------------------------------------------------------------- units
def test_units_parsed_from_free_text():
    assert stress_unit("N, mm, MPa") == "MPa"
    assert length_unit("N, mm, MPa") == "mm"
    assert stress_unit("kN; m; kPa") == "kPa"
    assert stress_unit("consistent units") == "" and length_unit("consistent units") == ""
    assert stress_unit("") == "" and stress_unit(None) == ""
    assert field_unit("von_mises", "N, mm, MPa") == "MPa"
    assert field_unit("ux", "N, mm, MPa") == "mm"
    assert field_unit("eps_xx", "N, mm, MPa") == ""
    assert field_label("von_mises", "MPa") == "von Mises stress [MPa]"


# ---------------------------------------------------------------------------------------- subdivision
@pytest.mark.parametrize("el", LAYOUTS)
def test_subdivision_reproduces_fields_in_the_element_span(el):
    # distorted straight-sided mesh: move interior nodes, keep mid-side nodes on straight sides
    mesh = planar.rectangle_mesh(4.0, 3.0, 2, 2, el)
    x, y = mesh.nodes[:, 0], mesh.nodes[:, 1]
    quadratic = el in ("T6", "Q8", "Q9")
    f = (lambda x, y: 1.0 + 2.0 * x - 3.0 * y + 0.5 * x * x - 0.25 * x * y + 0.75 * y * y) if quadratic \
        else (lambda x, y: 1.0 + 2.0 * x - 3.0 * y)
    pts, tris, vals, _ = subdivide(mesh.nodes, mesh.cells, f(x, y))
    np.testing.assert_allclose(vals, f(pts[:, 0], pts[:, 1]), atol=1e-12)
    # small triangles per cell: n^2 on triangles, 2 n^2 on quadrilaterals, n = 4 (quadratic), 2 (Q4), 1 (T3)
    n = {"T3": 1, "T6": 4, "Q4": 2, "Q8": 4, "Q9": 4}[el]
    per = n * n if el.startswith("T") else 2 * n * n
    assert tris.shape == (mesh.n_cells * per, 3)
    # the small triangles tile the cells: their areas add up to the plate's
    a = pts[tris]
    area = 0.5 * np.abs((a[:, 1, 0] - a[:, 0, 0]) * (a[:, 2, 1] - a[:, 0, 1])
                        - (a[:, 2, 0] - a[:, 0, 0]) * (a[:, 1, 1] - a[:, 0, 1]))
    assert area.sum() == pytest.approx(12.0, rel=1e-12)


def test_curved_edges_follow_the_hole():
    m = _hole_mesh()
    r = 8.0
    segs = plots._outline_segments(m.nodes, m.cells)
    rad = np.hypot(segs[..., 0], segs[..., 1])
    on_hole = np.all(np.abs(rad[:, [0, -1]] - r) < 1e-6, axis=1)
    assert on_hole.sum() >= 12
    # mid-points of straight chords would sit r (1 - cos(theta/2)) inside; the quadratic edges stay
    # on the arc to O(h^3)
    chord = np.linalg.norm(segs[on_hole, -1] - segs[on_hole, 0], axis=1)
    sag = r - np.sqrt(r * r - (chord / 2) ** 2)
    dev = np.abs(rad[on_hole] - r).max(axis=1)
    assert np.all(dev < 0.1 * sag)
    # each shared element side is drawn once: sides = unique corner pairs
    ed = set()
    for c in m.cells["T6"]:
        for a, b in ((0, 1), (1, 2), (2, 0)):
            ed.add((min(c[a], c[b]), max(c[a], c[b])))
    assert segs.shape[0] == len(ed)


# ---------------------------------------------------------------------------------------- scale
def test_deformation_scale_is_round_and_a_few_percent_of_the_size():
    nodes = np.array([[0.0, 0.0], [200.0, 0.0], [200.0, 50.0]])
    for umax in (1e-4, 3.7e-3, 0.146, 2.0, 55.0):
        u = np.array([[0.0, 0.0], [umax, 0.0], [0.0, 0.0]])
        s = deformation_scale(nodes, u)
        frac = s * umax / 200.0
        assert 0.024 - 1e-12 <= frac <= 0.06 + 1e-12
        mant = s / 10 ** math.floor(math.log10(s))
        assert round(mant, 9) in (1.0, 2.0, 5.0)
    assert deformation_scale(nodes, np.zeros((3, 2))) == 0.0


# ---------------------------------------------------------------------------------------- figures
def test_plot_field_von_mises_png(tmp_path):
    r = _strip()
    out = tmp_path / "vm.png"
    fig = plot_field(r, "von_mises", path=out, mesh_lines=True)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["vm.png"]   # atomic: no temporary left
    assert out.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    ax, cax = fig.axes[0], fig.axes[1]
    assert cax.get_xlabel() + cax.get_ylabel() == "von Mises stress [MPa]"
    texts = " ".join(t.get_text() for t in ax.texts)
    scale = deformation_scale(r.mesh.nodes, r.u)
    assert f"magnified {scale:g} times" in texts
    art = [c for c in ax.collections if c.get_array() is not None][0]
    assert art.get_cmap().name == "viridis"
    peak = r.max("von_mises")[0]
    assert any(f"max {plots._fmt(peak)} MPa" in t.get_text() for t in ax.texts)
    assert any(type(c).__name__ == "LineCollection" for c in ax.collections)
    assert _distinct_colours(out) > 200


def test_signed_field_uses_diverging_map_centred_on_zero(tmp_path):
    r = _strip()
    fig = plot_field(r, "tau_xy", path=tmp_path / "txy.png", recovery="spr")
    art = [c for c in fig.axes[0].collections if c.get_array() is not None][0]
    assert art.get_cmap().name == "RdBu_r"
    assert art.norm.vmin == pytest.approx(-art.norm.vmax)
    v = r.field("tau_xy", method="spr")
    assert art.norm.vmax == pytest.approx(np.abs(v).max(), rel=1e-9)


def test_bands_and_explicit_units_and_no_deformation(tmp_path):
    r = _strip("T6")
    fig = plot_field(r, "sigma_xx", levels=10, scale=None, units="N/mm^2", path=tmp_path / "b.png")
    assert "N/mm^2" in fig.axes[1].get_xlabel()
    assert "undeformed shape" in " ".join(t.get_text() for t in fig.axes[0].texts)
    with pytest.raises(InputError):
        plot_field(r, "sigma_xx", scale=-2.0)
    with pytest.raises(InputError, match="png"):
        plot_field(r, "sigma_xx", path=tmp_path / "b.jpg")


def test_plot_into_caller_axes():
    from matplotlib.figure import Figure

    r = _strip("Q9")
    fig = Figure()
    ax = fig.add_subplot()
    assert plot_field(r, "displacement", ax=ax) is fig


def test_plot_along_path(tmp_path):
    r = _strip("Q8", load=50.0)
    fig = plot_along(r, (40.0, 0.0), (40.0, 20.0), "sigma_xx", n_points=41, path=tmp_path / "p.png",
                     lines={"nominal stress": 50.0})
    line = fig.axes[0].lines[0]
    assert line.get_xdata().size == 41 and line.get_xdata()[-1] == pytest.approx(20.0)
    # mid-length of a strip in tension with a small end shear: sigma_xx close to P/A (common practice)
    assert np.mean(line.get_ydata()) == pytest.approx(50.0, rel=0.05)
    assert "[MPa]" in fig.axes[0].get_ylabel()


def test_plot_vtu_point_and_cell_fields(tmp_path):
    r = _strip("Q8")
    vtu = planar.write_vtu(tmp_path / "r.vtu", r)
    fig = plot_vtu(vtu, "von_mises", png=tmp_path / "a.png", units="MPa", length="mm", mesh_lines=True)
    assert fig.axes[1].get_xlabel() == "von Mises stress [MPa]"
    plot_vtu(vtu, "element_von_mises", png=tmp_path / "b.png")
    plot_vtu(vtu, "ux", png=tmp_path / "c.png", deformed=False)
    assert _distinct_colours(tmp_path / "a.png") > 200
    with pytest.raises(NameNotFoundError, match="von_mises"):
        plot_vtu(vtu, "stress_of_doom")
    bad = tmp_path / "bad.vtu"
    bad.write_text("not a vtu")
    with pytest.raises(planar.MeshError, match="bad.vtu"):
        plot_vtu(bad)


def test_plot_nodal_field_needs_values():
    m = planar.rectangle_mesh(2.0, 1.0, 2, 1, "T6")
    with pytest.raises(InputError):
        plot_nodal_field(m.nodes, m.cells)


def test_quadratic_hole_contour_smooth(tmp_path):
    """A hole plate drawn with subdivided T6 cells: many colours, curved hole edge."""
    m = _hole_mesh()
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=10.0), case="pull")
    r = planar.solve(model)["pull"]
    plot_field(r, "von_mises", path=tmp_path / "h.png", recovery="spr")
    assert _distinct_colours(tmp_path / "h.png") > 500
