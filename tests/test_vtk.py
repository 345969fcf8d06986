"""VTK output read back through meshio (a reference library): cell types and fields.

Source of the expected values: uniform tension of a strip, sigma_xx = P / A everywhere (common
practice).
"""
import meshio
import numpy as np
import pytest

from _models import solved_strip
from planar import Isotropic, Model, Roller, Traction, rectangle_mesh, solve, write_vtu
from planar.core.errors import InputError

TYPES = {"T3": "triangle", "T6": "triangle6", "Q4": "quad", "Q8": "quad8", "Q9": "quad9"}


def _strip(el, nx=3, ny=2):
    """A strip in uniform tension, 120 MPa (common practice: sigma_xx = P / A)."""
    r = solved_strip(30.0, 10.0, nx, ny, el, material=Isotropic(210e3, 0.3), thickness=4.0, hold="roller",
                     case="pull", loads={"pull": Traction("right", tx=120.0)})
    return r.model.mesh, r


@pytest.mark.parametrize("el", list(TYPES))
def test_vtu_round_trip(tmp_path, el):
    mesh, r = _strip(el)
    path = write_vtu(tmp_path / "out.vtu", r)
    m = meshio.read(path)
    assert [c.type for c in m.cells] == [TYPES[el]]
    np.testing.assert_array_equal(m.cells[0].data, mesh.cells[el])
    np.testing.assert_allclose(m.points[:, :2], mesh.nodes)
    np.testing.assert_allclose(m.point_data["displacement"][:, :2], r.u)
    np.testing.assert_allclose(m.point_data["sigma_xx"], 120.0, rtol=1e-9)
    np.testing.assert_allclose(m.point_data["von_mises"], 120.0, rtol=1e-9)
    np.testing.assert_allclose(m.cell_data["element_sigma_xx"][0], 120.0, rtol=1e-9)
    assert "region_id" in m.cell_data
    # no temporary files left behind
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.vtu"]


def test_vtu_write_keeps_old_file_on_failure(tmp_path):
    mesh = rectangle_mesh(30.0, 10.0, 3, 2, "Q4")
    model = Model(mesh, Isotropic(210e3, 0.3))
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(Traction("right", tx=1.0), case="a")
    r = solve(model)["a"]
    target = tmp_path / "keep.vtu"
    target.write_text("previous result")
    with pytest.raises(InputError):
        write_vtu(target, r, cell_fields={"bad": np.zeros(5)})
    assert target.read_text() == "previous result"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["keep.vtu"]
    with pytest.raises(InputError, match=".vtu"):
        write_vtu(tmp_path / "x.txt", r)


def test_region_names_travel_with_region_ids(tmp_path):
    # the region_id cell data is explained by a name table in the file's field data
    from _models import stepped_strip

    path = write_vtu(tmp_path / "r.vtu", solve(stepped_strip("doubler", 70e3, 0.33))["a"])
    m = meshio.read(path)
    names = {k: int(np.ravel(v)[0]) for k, v in m.field_data.items() if not k.startswith("planar_")}  # the units and load case are not regions
    assert set(names) == {"doubler", "plate"}
    rid = m.cell_data["region_id"][0]
    assert set(np.unique(rid)) == set(names.values())


def test_raw_and_compressed_files_hold_the_same_arrays(tmp_path):
    """The default file (raw appended binary) and a zlib one read back equal through meshio."""
    _, r = _strip("T6", 6, 2)
    raw = write_vtu(tmp_path / "raw.vtu", r)
    packed = write_vtu(tmp_path / "z.vtu", r, compression="zlib")
    head = raw.read_bytes()[:4000]
    assert b'encoding="raw"' in head and b'header_type="UInt64"' in head
    a, b = meshio.read(raw), meshio.read(packed)
    np.testing.assert_array_equal(a.points, b.points)
    np.testing.assert_array_equal(a.cells[0].data, b.cells[0].data)
    assert a.cells[0].type == b.cells[0].type == "triangle6"
    assert set(a.point_data) == set(b.point_data) and set(a.cell_data) == set(b.cell_data)
    for k in a.point_data:
        np.testing.assert_array_equal(a.point_data[k], b.point_data[k])
    for k in a.cell_data:
        np.testing.assert_array_equal(a.cell_data[k][0], b.cell_data[k][0])
    np.testing.assert_allclose(a.point_data["sigma_xx"], 120.0, rtol=1e-9)
