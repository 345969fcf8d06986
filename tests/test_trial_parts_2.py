"""Defects found by using planar on parts of one's own (brackets, notched straps, webs, meshes from
files, broken inputs), each with the check that would have caught it."""
from __future__ import annotations

import numpy as np
import pytest

import planar

# a 10 x 2 strip of two linear triangles in gmsh's version 2.2 ASCII format, with named physical
# groups: the left and right ends (lines) and the plate (surface)
MSH22 = """$MeshFormat
2.2 0 8
$EndMeshFormat
$PhysicalNames
3
1 1 "left"
1 2 "right"
2 3 "strip"
$EndPhysicalNames
$Nodes
4
1 0 0 0
2 10 0 0
3 10 2 0
4 0 2 0
$EndNodes
$Elements
4
1 1 2 1 1 4 1
2 1 2 2 2 2 3
3 2 2 3 1 1 2 3
4 2 2 3 1 1 3 4
$EndElements
"""


def test_gmsh_version_2_file_keeps_its_physical_names(tmp_path):
    # a version 2 .msh names its physical groups in $PhysicalNames; they were dropped (meshio gives
    # them as field data, not cell sets), so every edge name was "not found" with "(none defined)"
    path = tmp_path / "strip22.msh"
    path.write_text(MSH22)
    m = planar.Mesh.read(path)
    assert sorted(m.edge_sets) == ["left", "right"]
    assert sorted(m.region_names()) == ["strip"]
    model = planar.Model(m, planar.Isotropic(E=1000.0, nu=0.0), thickness=1.0)
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller((0.0, 0.0), fixed="y"))
    model.add_load(planar.Traction("right", tx=5.0), case="pull")
    r = planar.solve(model)["pull"]
    # a bar in tension, nu = 0: end displacement sigma L / E = 5 x 10 / 1000 (elementary
    # strength of materials, Hooke's law)
    assert r.u[:, 0].max() == pytest.approx(0.05, rel=1e-9)


@pytest.mark.slow
def test_thin_ligament_finely_meshed_is_not_called_a_unit_mix_up():
    # a 20 mm hole 0.1 mm from the edge of an aluminium strap at 60 MPa: the ligament truly strains
    # beyond 2e-2 (a linear-elastic answer of some 5000 MPa), but over a tiny area. The strain level
    # was the 99th percentile by cell count, so refining the ligament (most cells sit there) turned
    # it into a "units" warning blaming mixed units; a unit mix-up scales the whole field, so the
    # level is now taken by area (common practice: read a field's level over the part, not the mesh)
    from planar.geometry import Circle, Plate, Refine, mesh

    plate = Plate.rectangle(100.0, 40.0, centre=(0, 0)).cut(Circle((0.0, 20.0 - 10.1), 10.0, name="hole"))
    m = mesh(plate, size=8.0, refine=[Refine("hole", size=0.05, growth=1.5)])
    model = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=3.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller((-50.0, 0.0), fixed="y"))
    model.add_load(planar.Traction("right", tx=60.0), case="pull")
    r = planar.solve(model)["pull"]
    assert r.max("von_mises").value > 0.02 * 71e3    # the ligament does strain beyond the limit
    assert "units" not in [w.code for w in r.warnings]
    # the same part with E given in GPa (71 for 71e3 MPa) is a unit mix-up and still warns
    model.assign("plate", planar.Isotropic(E=71.0, nu=0.33), 3.0)
    with pytest.warns(planar.DiscretisationWarning, match="beyond elastic"):
        planar.solve(model)


@pytest.mark.parametrize("units,g_bad", [("N, mm, MPa", 9.81), ("N, m, Pa", 9806.65), ("lbf, in, psi", 32.174)])
def test_gravity_given_in_another_length_unit_is_refused(units, g_bad):
    # Gravity(gy=-9.81) in an N, mm, MPa model is g in m/s^2 where mm/s^2 is meant: the weight came
    # out 1000 times too small with no word. Standard g is 9.80665 m/s^2 = 9806.65 mm/s^2 =
    # 386.09 in/s^2 = 32.174 ft/s^2 (the standard gravity, exact by definition)
    mesh = planar.rectangle_mesh(50.0, 1000.0, 2, 20, "Q8")
    model = planar.Model(mesh, planar.Isotropic(E=210e3, nu=0.3, density=7.85e-9), thickness=10.0, units=units)
    model.add_support(planar.Fixed("top"))
    model.add_load(planar.Gravity(gy=-g_bad), case="g")
    with pytest.raises(planar.InputError, match="standard g in"):
        planar.solve(model)


def test_gravity_in_the_models_own_units_hangs_the_weight_on_the_support():
    # a steel bar 1000 x 50 x 10 mm hanging from its top: the support carries its weight rho g L W t
    # (statics), and 3 g given as a vector is not refused
    mesh = planar.rectangle_mesh(50.0, 1000.0, 2, 20, "Q8")
    model = planar.Model(mesh, planar.Isotropic(E=210e3, nu=0.3, density=7.85e-9), thickness=10.0,
                         units="N, mm, MPa")
    model.add_support(planar.Fixed("top"))
    model.add_load(planar.Gravity(gy=-9806.65), case="1g")
    model.add_load(planar.Gravity(gy=-3 * 9806.65), case="3g")
    res = planar.solve(model)
    weight = 7.85e-9 * 9806.65 * 1000.0 * 50.0 * 10.0
    assert res["1g"].support_reactions()[0].force[1] == pytest.approx(weight, rel=1e-9)
    assert res["3g"].support_reactions()[0].force[1] == pytest.approx(3 * weight, rel=1e-9)


def test_materials_or_thicknesses_per_region_as_a_dict_point_to_assign():
    # Model(mesh, {"steel": ..., "alu": ...}) said only "must be Isotropic or Orthotropic" and printed
    # the dict; the fix (model.assign per region) is now named
    mesh = planar.rectangle_mesh(10.0, 2.0, 2, 1, "Q4")
    steel = planar.Isotropic(E=210e3, nu=0.3)
    with pytest.raises(planar.InputError, match=r"model\.assign"):
        planar.Model(mesh, {"steel": steel})
    with pytest.raises(planar.InputError, match=r"model\.assign"):
        planar.Model(mesh, steel, thickness={"plate": 2.0})


def test_a_cut_leaving_the_plate_names_its_points_plainly():
    # the message printed numpy reprs, "(np.float64(100.0), np.float64(-1.0))", for a path given with
    # floats; a cut across a 10 x 2 strip from below it must say "(5, -1)"
    from planar.post import cut_resultant

    m = planar.rectangle_mesh(10.0, 2.0, 4, 2, "Q4")
    model = planar.Model(m, planar.Isotropic(E=1e3, nu=0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1.0), case="pull")
    r = planar.solve(model)["pull"]
    with pytest.raises(planar.InputError) as info:
        cut_resultant(r, (5.0, -1.0), (5.0, 3.0))
    assert "np." not in str(info.value) and "(5, -1)" in str(info.value)
    # the cut inside the strip carries the end load: 1 x 2 x thickness 1 (statics)
    assert cut_resultant(r, (5.0, 0.0), (5.0, 2.0)).force[0] == pytest.approx(2.0, rel=1e-6)


def _l_bracket(element, size, fillet=None):
    """An L bracket (mm), legs 20 wide, clamped at the top of its upright, its arm bent by 100 N."""
    from planar.geometry import Plate, Polygon, Refine, mesh

    poly = Polygon([(0, 0), (120, 0), (120, 20), (20, 20), (20, 100), (0, 100)],
                   names=["bottom", "tip", "arm_top", "inner", "top", "back"])
    plate = Plate(poly)
    if fillet:
        plate = plate.fillet((20, 20), radius=fillet, name="fillet")
        m = mesh(plate, size=size, element=element)
    else:
        m = mesh(plate.add_point("corner", (20, 20)), size=size, element=element, refine=[Refine("corner", size=1.0)])
    model = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33), thickness=5.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("top"))
    model.add_load(planar.Traction("tip", ty=-100.0 / (20 * 5.0)), case="tip")
    return model


@pytest.mark.parametrize("element", ["T3", "T6", "Q4", "Q8"])
def test_peak_at_a_sharp_re_entrant_corner_warns_that_it_is_set_by_the_mesh(element):
    # the stress at a sharp 270-degree corner is singular, r^(lambda - 1) with lambda = 0.544
    # (M. L. Williams, J. Appl. Mech. 19, 1952), so its peak grows without bound as the mesh is refined;
    # it was read and ranked like any converged peak, with no word
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r = planar.solve(_l_bracket(element, 5.0))["tip"]
        peak = r.max("von_mises")
    assert np.hypot(peak.location[0] - 20.0, peak.location[1] - 20.0) < 5.0  # the peak is at the corner
    assert "sharp-corner" in [w.code for w in r.warnings]   # (linear elements also draw "linear-peak")
    # the hot spots say so too
    from planar.post import hot_spots

    r.warnings.clear()
    with pytest.warns(planar.DiscretisationWarning, match="sharp re-entrant corner at \\(20, 20\\)"):
        hot_spots(r, top=2)


@pytest.mark.parametrize("element,size", [("T3", 8.0), ("T6", 8.0), ("Q8", 8.0), ("T6", 2.0)])
def test_peak_at_a_fillet_is_not_called_a_sharp_corner(element, size):
    # the same bracket with a 6 mm fillet: the stress there is finite (no false alarm), even when
    # the fillet is spanned by one or two element sides
    import warnings

    from planar.post import hot_spots

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r = planar.solve(_l_bracket(element, size, fillet=6.0))["tip"]
        r.max("von_mises")
        r.min("sigma_xx")
        hot_spots(r, top=3)
    assert "sharp-corner" not in [w.code for w in r.warnings]


def test_verify_lists_its_cases_without_running_them(capsys):
    # "planar verify --list" was refused with the top-level usage; the case names could be learnt only
    # from the error of a wrong --case. Every registered case is listed with what it checks
    from planar.cli import main
    from planar.verify import cases

    assert main(["verify", "--list"]) == 0
    out = capsys.readouterr().out
    for name in cases():
        assert name in out
    assert "checks passed" not in out      # nothing was run


def test_figure_label_of_a_peak_on_the_axis_prints_0_not_minus_0():
    # the peak of a strap with a central hole sits at x = 0 to round-off; the figure labelled it
    # "at (-0.0, 8.0) mm"
    from planar.post.plots import _fmt_point

    nodes = np.array([[-60.0, -25.0], [60.0, 25.0]])
    assert _fmt_point((-3e-12, 8.0), nodes) == "(0.0, 8.0)"
    assert _fmt_point((-0.04, -8.0), nodes) == "(0.0, -8.0)"
    assert _fmt_point((-0.06, 8.0), nodes) == "(-0.1, 8.0)"


def test_convergence_study_of_meshes_refined_at_the_feature_takes_local_sizes():
    # a notch refined from 2 to 1 to 0.5 mm in a coarse strap adds few unknowns, so sizes taken from
    # the unknowns of the whole mesh gave ratios of about 1.15 and an "observed order" of 20 with
    # the advice "refine further". A series h^2 (quadratic elements; Roache, Verification and
    # Validation in Computational Science and Engineering, 1998) with local sizes halving:
    import warnings

    from planar.post import convergence_study, grid_convergence

    values = [3.0 + 0.4 * h**2 for h in (0.5, 1.0, 2.0)]
    with pytest.warns(planar.DiscretisationWarning, match="sizes="):
        g = grid_convergence(values, dofs=[2344, 1714, 1326], degree=2)   # ratios 1.17, 1.14
    assert any("1.3" in n for n in g.notes)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        g = grid_convergence(values, sizes=[0.5, 1.0, 2.0], degree=2)
    assert g.order == pytest.approx(2.0, rel=1e-9)

    # convergence_study passes sizes= through, in the order of its meshes
    meshes = [planar.rectangle_mesh(10.0, 2.0, n, 2, "Q8") for n in (4, 8, 16)]

    def build(m):
        model = planar.Model(m, planar.Isotropic(E=1e3, nu=0.0))
        model.add_support(planar.Roller("left", fixed="x"))
        model.add_support(planar.Roller("corner_00", fixed="y"))
        model.add_load(planar.Traction("right", tx=1.0), case="pull")
        return model

    study = convergence_study(build, meshes, lambda r: float(r.u[:, 0].max()), sizes=[2.5, 1.25, 0.625])
    assert list(study.sizes) == [0.625, 1.25, 2.5]
    with pytest.raises(planar.InputError, match="one element size per mesh"):
        convergence_study(build, meshes, lambda r: 1.0, sizes=[1.0, 0.5])


def test_a_hole_named_like_a_side_of_the_plate_is_refused():
    # Circle(..., name="top") in a rectangle joined the hole's edge to the plate's top side: a
    # Traction("top", ty=10) on a 50 x 20 x 1 plate then pulled with 626 N instead of 10 x 50 = 500 N
    # (statics). Edges of one kind may still share a name
    from planar.geometry import Circle, Plate

    with pytest.raises(planar.GeometryError, match="give the hole a name of its own"):
        Plate.rectangle(50.0, 20.0).cut(Circle((10.0, 10.0), 2.0, name="top"))
    with pytest.raises(planar.GeometryError, match="give the notch a name of its own"):
        Plate.rectangle(50.0, 20.0).notch("top", at=25.0, depth=5.0, radius=2.0, name="top")
    with pytest.raises(planar.GeometryError, match="give the fillet a name of its own"):
        Plate.rectangle(50.0, 20.0).fillet(("top", "right"), radius=3.0, name="left")
    p = (Plate.rectangle(50.0, 20.0).cut(Circle((10.0, 10.0), 2.0, name="rivet"), Circle((40.0, 10.0), 2.0, name="rivet"))
         .fillet("all", radius=1.0, name="round"))
    assert sorted(p.names()["edges"]) == ["bottom", "left", "right", "rivet", "round", "top"]


def test_a_hole_tangent_to_the_edge_is_refused_and_a_thin_ligament_is_not():
    # a 10 mm hole centred 5 mm below the top of a 50 x 20 plate touches the edge at one point
    # (geometry); the sampled check missed it between samples and meshed a part pinched to a point
    from planar.geometry import Circle, Plate

    with pytest.raises(planar.GeometryError, match="touches the plate's edge"):
        Plate.rectangle(50.0, 20.0).cut(Circle((25.0, 15.0), 5.0, name="h"))
    with pytest.raises(planar.GeometryError, match="touches hole"):
        Plate.rectangle(100.0, 40.0).cut(Circle((30.0, 20.0), 5.0, name="a"), Circle((40.0, 20.0), 5.0, name="b"))
    # a ligament of 0.05 mm (well above the geometric tolerance) is a part, not an error
    Plate.rectangle(50.0, 20.0).cut(Circle((25.0, 14.95), 5.0, name="h"))


def test_temperature_change_on_a_material_without_expansion_is_refused():
    # alpha defaults to 0: TemperatureChange(50) then made no strain and the case solved to zero with no
    # word. With alpha a free bar heated by dT grows by alpha dT L (elementary thermoelasticity)
    mesh = planar.rectangle_mesh(100.0, 10.0, 10, 2, "Q8")
    for alpha in (0.0, 23e-6):
        model = planar.Model(mesh, planar.Isotropic(E=70e3, nu=0.3, alpha=alpha), thickness=1.0, units="N, mm, MPa")
        model.add_support(planar.Roller("left", fixed="x"))
        model.add_support(planar.Roller("corner_00", fixed="y"))
        model.add_load(planar.TemperatureChange(50.0), case="hot")
        if alpha == 0.0:
            with pytest.raises(planar.InputError, match="no thermal expansion"):
                planar.solve(model)
        else:
            r = planar.solve(model)["hot"]
            assert r.u[:, 0].max() == pytest.approx(23e-6 * 50.0 * 100.0, rel=1e-9)
            assert r.max("von_mises").value < 1e-6 * 70e3 * 23e-6 * 50.0   # free expansion: no stress


def test_an_angle_is_not_set_against_an_allowable_or_a_nominal_stress():
    # principal_angle is derived from the stresses but measured in degrees; margin_of_safety, kt and
    # hot_spots took it as a stress ("principal_angle peak 89.9995 MPa", margin +1.78, Kt 9)
    from planar.post import hot_spots, kt, margin_of_safety

    m = planar.rectangle_mesh(100.0, 20.0, 10, 4, "Q8")
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=-1.0), case="bend")
    r = planar.solve(model)["bend"]
    with pytest.raises(planar.InputError, match="deg"):
        margin_of_safety(r, allowable=250.0, field="principal_angle")
    with pytest.raises(planar.InputError, match="deg"):
        kt(r, 10.0, field="principal_angle")
    with pytest.raises(planar.InputError, match="not a stress"):
        hot_spots(r, field="principal_angle", allowable=250.0)
    hot_spots(r, field="principal_angle")          # its spots alone are fine
    # a cantilever 100 x 20 x 2 with 40 N at its tip: root bending stress M c / I = 40 x 100 x 10 /
    # (2 x 20^3 / 12) = 30 (beam theory), so the margin against 250 is well positive
    assert margin_of_safety(r, allowable=250.0, field="sigma_xx", where=planar.Away()).margin > 5.0


def _plane_strain_strip(nu):
    m = planar.rectangle_mesh(100.0, 20.0, 10, 4, "Q8")
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=nu), thickness=1.0, units="N, mm, MPa",
                         analysis="plane strain")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=100.0), case="pull")
    return model


def test_nearly_incompressible_plane_strain_is_named_when_the_answer_is_doubted_or_refused():
    # nu within 1e-11 of 0.5 in plane strain: the refusal said "ill-conditioning of unclear origin:
    # check the units, the moduli and the supports"; the cause is the material (bulk over shear
    # stiffness 1 / (1 - 2 nu) = 5e10; plane-strain elasticity, Timoshenko and Goodier 1970)
    import warnings

    with pytest.raises(planar.SolverError, match="nearly incompressible material in plane strain"):
        planar.solve(_plane_strain_strip(0.49999999999))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r = planar.solve(_plane_strain_strip(0.49999999))["pull"]
    assert any("nearly incompressible" in w.message for w in r.warnings if w.code == "ill-conditioned")
    # the strip in uniaxial stress, free across: end displacement sigma L (1 - nu^2) / E (plane strain)
    assert r.u[:, 0].max() == pytest.approx(100.0 * 100.0 * (1 - 0.49999999**2) / 70e3, rel=1e-4)
    r = planar.solve(_plane_strain_strip(0.3))["pull"]           # an ordinary metal: nothing said
    assert not r.warnings


def test_a_node_in_no_cell_does_not_hide_a_displacement_beyond_small_displacement_theory():
    # a cantilever 100 x 5 bent 10 mm at its tip (delta = P L^3 / (3 E I), beam theory; strains
    # 3 delta c / L^2 = 0.0075, within elastic): the tip moves 10 % of the part. A stray node at
    # (1e5, 1e5), in no cell, set the "part's size" to 1.4e5 and the warning was lost
    import warnings

    m = planar.rectangle_mesh(100.0, 5.0, 20, 2, "Q8")
    nodes = np.vstack([m.nodes, [[1e5, 1e5]]])
    stray = planar.Mesh(nodes, m.cells, edge_sets=m.edge_sets, node_sets=m.node_sets)
    model = planar.Model(stray, planar.Isotropic(E=70e3, nu=0.3), thickness=1.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    P = 3 * 70e3 * (5.0**3 / 12) * 10.0 / 100.0**3
    model.add_load(planar.Traction("right", ty=-P / 5.0), case="tip")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r = planar.solve(model)["tip"]
    assert r.u[:, 1].min() == pytest.approx(-10.0, rel=0.03)
    msgs = [w.message for w in r.warnings if w.code == "units"]
    assert len(msgs) == 1 and "part's size 100" in msgs[0]


def test_units_warning_of_an_enormous_load_prints_numbers_not_inf():
    # a traction of 1e300 (a unit mix-up gone wild) gives displacements of 1.4e297, finite, but the
    # warning squared them and printed "inf at (5, 0) ... is inf % of the part's size"
    import warnings

    m = planar.rectangle_mesh(100.0, 20.0, 10, 4, "Q8")
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.3), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=1e300), case="wild")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r = planar.solve(model)["wild"]
    msgs = [w.message for w in r.warnings if w.code == "units"]
    assert any("displacements comparable" in s for s in msgs)
    assert not any("inf" in s.replace("info", "") for s in msgs)
    # linear: the end moves sigma L / E = 1e300 x 100 / 70e3 in x (within the clamp's Poisson effect)
    assert r.u[:, 0].max() == pytest.approx(1e300 * 100.0 / 70e3, rel=0.01)
