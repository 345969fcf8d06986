"""The ``interface-edge`` warning: a peak where an interface between regions meets a free edge.

The exponent lambda (stress ~ r^(lambda - 1)) of bonded wedges with free outer faces is checked against
outside results: M. L. Williams (J. Appl. Mech. 19, 1952) for one material (a straight edge is not
singular; 270 degrees gives 0.5445) and for a wedge with one face clamped; D. B. Bogy's equation for two
bonded quarter-planes (J. Appl. Mech. 35, 1968, "Edge-bonded dissimilar orthogonal elastic wedges under
normal and shear loading", recalled from memory) and J. Dundurs' condition for a singularity there,
alpha (alpha - 2 beta) > 0 (from memory); the oscillating exponent of a crack between two materials
(M. L. Williams, Bull. Seismol. Soc. Am. 49, 1959; J. R. Rice and G. C. Sih, J. Appl. Mech. 32, 1965).
Then the finite element peak at such a point is refined and its growth read against 1 - lambda.
"""
from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy.optimize import brentq

import planar
from planar.core._advice_interface import (WEAK_STRENGTH, dundurs, interface_edge_near, singularity_exponent,
                                           wedge_determinant)
from planar.core.errors import PlanarWarning
from planar.geometry import Plate, Rectangle, Refine, mesh as gmsh_mesh


def _stress(E, nu, t=1.0):
    """(mu t, kappa) in plane stress."""
    return E / (2.0 * (1.0 + nu)) * t, (3.0 - nu) / (1.0 + nu)


def _strain(E, nu, t=1.0):
    return E / (2.0 * (1.0 + nu)) * t, 3.0 - 4.0 * nu


def _real_roots(f, lo=0.01, hi=0.9999, n=4000):
    x = np.linspace(lo, hi, n)
    d = np.array([f(v) for v in x])
    return [brentq(f, x[i], x[i + 1], xtol=1e-13) for i in np.flatnonzero(np.sign(d[:-1]) != np.sign(d[1:]))]


# ---------------------------------------------------------------------------- the exponent alone
def test_one_material_is_williams_wedge():
    # Williams 1952: a free-free wedge of 270 degrees, sin(lambda g) = -lambda sin(g), lambda = 0.5445;
    # one material split into two wedges of 135 degrees is the same wedge
    assert singularity_exponent([1.5 * math.pi], [1.0], [1.8]).real == pytest.approx(0.5445, abs=5e-5)
    assert singularity_exponent([0.75 * math.pi] * 2, [3.0, 3.0], [1.8, 1.8]).real == pytest.approx(0.5445, abs=5e-5)
    # a straight edge of one material (any split) has no singularity (Williams 1952: lambda = 1)
    for split in (math.pi / 2, math.pi / 3, 0.9 * math.pi):
        assert singularity_exponent([split, math.pi - split], [2.0, 2.0], [2.0, 2.0]) is None


def test_identical_materials_alpha_beta_zero_give_none():
    # alpha = beta = 0 only when the two materials act alike (Dundurs 1969): no singularity on a straight edge
    a, b = dundurs(*_stress(70e3, 0.33), *_stress(70e3, 0.33))
    assert (a, b) == (0.0, 0.0)
    assert singularity_exponent([math.pi / 2] * 2, [1.0, 1.0], [2.0, 2.0]) is None


def _bogy_90_90(lam, a, b):
    """Bogy's characteristic function of two bonded quarter-planes (1968; recalled from memory)."""
    s = math.sin(lam * math.pi / 2.0) ** 2 - lam ** 2
    return (s * s * b * b + 2.0 * lam ** 2 * s * a * b + lam ** 2 * (lam ** 2 - 1.0) * a * a
            + math.sin(lam * math.pi) ** 2 / 4)


@pytest.mark.parametrize("m1, k1, m2, k2", [(3.0, 1.8, 1.0, 2.2), (1.0, 2.077, 3.0, 2.008), (10.0, 1.4, 1.0, 2.6),
                                            (1.0, 1.0, 5.0, 3.0), (2.0, 1.9, 1.0, 1.2), (1.0, 2.0, 1.5, 2.0)])
def test_bonded_quarter_planes_match_bogy_and_dundurs_condition(m1, k1, m2, k2):
    a, b = dundurs(m1, k1, m2, k2)
    want = _real_roots(lambda x: _bogy_90_90(x, a, b))
    got = singularity_exponent([math.pi / 2] * 2, [m1, m2], [k1, k2])
    # Dundurs: singular exactly when alpha (alpha - 2 beta) > 0 (from memory)
    assert (got is not None) == (a * (a - 2.0 * b) > 0) == bool(want)
    if got is not None:
        assert got.imag == 0.0 and got.real == pytest.approx(min(want), abs=1e-8)


@pytest.mark.parametrize("kappa", [1.8, 2.077, 2.6])
def test_rigid_neighbour_is_clamped_free_wedge(kappa):
    # a rigid material 2 (alpha -> 1) clamps wedge 1's interface face: Williams' clamped-free wedge of
    # angle g, kappa sin^2(lambda g) = (1 + kappa)^2 / 4 - lambda^2 sin^2 g (from memory; at g = pi it gives the
    # crack on a rigid base, cosh(pi eps) = (1 + kappa) / (2 sqrt(kappa)))
    g = math.pi / 2
    want = brentq(lambda x: kappa * math.sin(x * g) ** 2 - (1 + kappa) ** 2 / 4 + x * x * math.sin(g) ** 2, 0.3, 0.99)
    got = singularity_exponent([g, g], [1.0, 1e9], [kappa, 1.8])
    assert got.real == pytest.approx(want, abs=1e-6)


@pytest.mark.parametrize("m1, k1, m2, k2", [(10.0, 1.8, 1.0, 2.2), (1.0, 2.0, 4.0, 1.4)])
def test_crack_between_two_materials_oscillates(m1, k1, m2, k2):
    # two half-planes bonded along a crack's line: lambda = 1/2 +- i eps, eps = ln((1 - beta) / (1 + beta)) / (2 pi)
    # (Williams 1959; Rice and Sih 1965; from memory)
    _, b = dundurs(m1, k1, m2, k2)
    got = singularity_exponent([math.pi, math.pi], [m1, m2], [k1, k2])
    assert got.real == pytest.approx(0.5, abs=1e-8)
    assert got.imag == pytest.approx(abs(math.log((1 - b) / (1 + b))) / (2 * math.pi), rel=1e-6)


def test_determinant_is_real_on_the_real_axis_and_refuses_bad_input():
    d = wedge_determinant(np.array([0.3 + 0.2j, 0.3 - 0.2j]), [1.0, 2.0], [1.0, 3.0], [1.8, 2.0])
    assert d[0] == pytest.approx(np.conj(d[1]), rel=1e-12)  # analytic with real coefficients
    with pytest.raises(planar.InputError, match="one shear modulus and one kappa per wedge"):
        wedge_determinant(0.5, [1.0, 2.0], [1.0], [1.8, 2.0])


def test_thickness_step_is_a_stiffness_step():
    # plane stress: the membrane force t sigma is what balances, so a thickness step of one material acts as a
    # modulus step in the same ratio (same nu); alpha = (t1 - t2) / (t1 + t2) (Dundurs' alpha in plane stress
    # is (E1 - E2) / (E1 + E2), from memory)
    a, _ = dundurs(*_stress(70e3, 0.33, 0.5), *_stress(70e3, 0.33, 0.25))
    assert a == pytest.approx(1.0 / 3.0, rel=1e-12)
    by_t = singularity_exponent([math.pi / 2] * 2, [_stress(1.0, 0.33, 2.0)[0], _stress(1.0, 0.33)[0]],
                                [_stress(1.0, 0.33)[1]] * 2)
    by_E = singularity_exponent([math.pi / 2] * 2, [_stress(2.0, 0.33)[0], _stress(1.0, 0.33)[0]],
                                [_stress(1.0, 0.33)[1]] * 2)
    assert by_t == by_E and 0.0 < 1.0 - by_t.real


# --------------------------------------------------------------------------- on a solved part
def _insert(E_insert, t_insert, *, size=None, analysis="plane stress", nu_insert=0.3):
    """A 100 x 40 aluminium plate, 3 thick, with a 40 mm band of another material across it at x = 30..70,
    clamped at x = 0 and pulled at x = 100; refined to ``size`` at the interface's end (30, 0)."""
    plate = Plate.rectangle(100.0, 40.0).with_region(Rectangle(40.0, 40.0, corner=(30.0, 0.0)), name="insert")
    refine = [Refine((30.0, 0.0), size=size, growth=1.2)] if size else []
    m = gmsh_mesh(plate, 5.0, element="T6", refine=refine)
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), 3.0, units="N, mm, MPa", analysis=analysis)
    model.assign("insert", material=planar.Isotropic(E_insert, nu_insert), thickness=t_insert)
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=10.0), case="pull")
    return planar.solve(model)["pull"]


def _at(r, xy):
    return int(np.argmin(np.hypot(*(r.mesh.nodes - np.asarray(xy)).T)))


@pytest.mark.parametrize("E_insert, t_insert", [(210e3, 3.0), (70.0, 30.0)])
def test_fe_peak_grows_at_the_rate_of_the_exponent(E_insert, t_insert):
    # steel in aluminium and a soft bonded band (E t ratio 1/100): the stress at the point read on meshes
    # refined fourfold twice grows as h^(lambda - 1) (Bogy 1971), the exponent read from the mesh's own wedges
    vals, lam = [], None
    for h in (0.5, 0.125, 0.03125):
        r = _insert(E_insert, t_insert, size=h)
        i = _at(r, (30.0, 0.0))
        vals.append(r.field("von_mises")[i])
        lam = interface_edge_near(r, i)["lam"]
    slope = math.log(vals[2] / vals[1]) / math.log(4.0)
    assert slope == pytest.approx(1.0 - lam.real, rel=0.1), (vals, lam)
    assert 1.0 - lam.real > WEAK_STRENGTH


def _interface_codes(rec):
    return [w.message for w in rec if isinstance(w.message, PlanarWarning) and w.message.code == "interface-edge"]


def test_steel_in_aluminium_peak_at_the_point_warns_and_away_is_quiet():
    # steel (210 GPa, nu 0.3) in aluminium (70 GPa, 0.33), plane stress: alpha = 0.5, beta = 0.164,
    # lambda = 0.933, not weak (a tenfold refinement raises the peak by 17 %); the solve itself stays quiet
    # (test_trust_warnings.test_moderate_contrast_is_quiet): the warning belongs to a peak read at the point
    r = _insert(210e3, 3.0, size=0.5)
    with pytest.warns(PlanarWarning) as rec:
        peak = r.max("sigma_xx", where="insert")
    ws = _interface_codes(rec)
    assert peak.location == pytest.approx((30.0, 0.0), abs=1.0)
    assert len(ws) == 1 and "lambda = 0.933" in ws[0].message and "not a converged stress" in ws[0].message
    assert "interface-edge" in [w.code for w in r.warnings]
    with warnings.catch_warnings(record=True) as rec:
        warnings.simplefilter("always")
        away = r.max("sigma_xx", where=planar.InBox((40.0, 5.0), (60.0, 35.0)))
    assert not _interface_codes(rec) and away.value > 0
    with pytest.warns(PlanarWarning) as rec:
        from planar.post import hot_spots
        hot_spots(r, "von_mises")
    assert _interface_codes(rec)


def test_plane_strain_exponent_is_read_from_the_model():
    # the same band in plane strain: kappa = 3 - 4 nu; Dundurs alpha = 0.492, beta = 0.117, lambda = 0.909
    r = _insert(210e3, 3.0, analysis="plane strain")
    got = interface_edge_near(r, _at(r, (30.0, 0.0)))
    want = singularity_exponent([math.pi / 2] * 2, [_strain(210e3, 0.3)[0], _strain(70e3, 0.33)[0]],
                                [_strain(210e3, 0.3)[1], _strain(70e3, 0.33)[1]])
    assert got["lam"] == pytest.approx(want, abs=1e-9)
    assert sorted(got["angles"]) == pytest.approx([90.0, 90.0], abs=1e-6)


def test_weak_thickness_step_is_quiet():
    # a step from 3 to 4.5 thick (ratio 1.5), one material: lambda = 0.989, 1 - lambda below the limit (a
    # tenfold refinement raises the peak by 2.5 %): no warning at the point
    r = _insert(70e3, 4.5, size=0.5, nu_insert=0.33)
    i = _at(r, (30.0, 0.0))
    lam = singularity_exponent([math.pi / 2] * 2, [_stress(70e3, 0.33, 4.5)[0], _stress(70e3, 0.33, 3.0)[0]],
                               [_stress(70e3, 0.33)[1]] * 2)
    assert 0.0 < 1.0 - lam.real < WEAK_STRENGTH
    assert interface_edge_near(r, i) is None
    with warnings.catch_warnings(record=True) as rec:
        warnings.simplefilter("always")
        r.max("von_mises", where="insert")
    assert not _interface_codes(rec)


def test_equal_regions_and_held_points_are_quiet():
    # two regions of one material and thickness are no interface; a point held by a support is no free edge
    r = _insert(70e3, 3.0, nu_insert=0.33)
    assert interface_edge_near(r, _at(r, (30.0, 0.0))) is None
    plate = Plate.rectangle(100.0, 40.0).with_region(Rectangle(40.0, 40.0, corner=(30.0, 0.0)), name="insert")
    m = gmsh_mesh(plate, 5.0, element="T6")
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), 3.0, units="N, mm, MPa")
    model.assign("insert", material=planar.Isotropic(210e3, 0.3))
    model.add_support(planar.Symmetry("bottom"))
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_load(planar.Traction("right", tx=10.0), case="pull")
    r = planar.solve(model)["pull"]
    assert interface_edge_near(r, _at(r, (30.0, 0.0))) is None          # on the symmetry plane
    assert interface_edge_near(r, _at(r, (30.0, 40.0))) is not None     # on the free top edge


def test_orthotropic_region_is_not_assessed():
    # Dundurs' parameters are for isotropic materials: a fibre-reinforced band is left alone (no false alarm)
    plate = Plate.rectangle(100.0, 40.0).with_region(Rectangle(40.0, 40.0, corner=(30.0, 0.0)), name="insert")
    m = gmsh_mesh(plate, 5.0, element="T6")
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), 3.0, units="N, mm, MPa")
    model.assign("insert", material=planar.Orthotropic(E1=140e3, E2=10e3, G12=5e3, nu12=0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=10.0), case="pull")
    r = planar.solve(model)["pull"]
    assert interface_edge_near(r, _at(r, (30.0, 0.0))) is None


# ------------------------------------------------------------- an interface's corner inside the part
@pytest.mark.parametrize("kappa", [1.8, 2.0, 2.6])
def test_rigid_square_insert_corner_is_clamped_clamped_wedge(kappa):
    # a rigid insert's 90 degree corner clamps both faces of the 270 degree wedge of matrix round it:
    # Williams' clamped-clamped wedge of angle g, kappa sin(lambda g) = +- lambda sin g (1952; from memory:
    # at g = 2 pi it gives the rigid line's 1/2, at g = pi no singularity)
    g = 1.5 * math.pi
    want = min(_real_roots(lambda x: kappa * math.sin(x * g) - x * math.sin(g))
               + _real_roots(lambda x: kappa * math.sin(x * g) + x * math.sin(g)))
    got = singularity_exponent([g, 2 * math.pi - g], [1.0, 1e9], [kappa, 1.8], closed=True)
    assert got.imag == 0.0 and got.real == pytest.approx(want, abs=1e-6)


def test_ring_of_one_material_or_a_straight_interface_is_not_singular():
    # the whole plane of one material has only integer exponents; two half-planes bonded along a straight
    # line have none in (0, 1) either (Williams 1959 for the uncracked interface; from memory)
    assert singularity_exponent([math.pi / 2] * 4, [1.0] * 4, [2.0] * 4, closed=True) is None
    assert singularity_exponent([1.0, 2 * math.pi - 1.0], [1.0, 1.0], [2.0, 2.0], closed=True) is None
    assert singularity_exponent([math.pi, math.pi], [1.0, 3.0], [2.0, 1.8], closed=True) is None


def _pad(shape, element, size=None, E=210e3):
    """A 100 x 40 aluminium plate, 3 thick, with a steel insert inside it (a 20 x 10 rectangle with a corner at
    (40, 15), or a circle of radius 6), clamped at x = 0 and pulled at x = 100."""
    ins = Rectangle(20.0, 10.0, corner=(40.0, 15.0)) if shape == "square" else planar.geometry.Circle((50.0, 20.0), 6.0)
    plate = Plate.rectangle(100.0, 40.0).with_region(ins, name="insert")
    refine = [Refine((40.0, 15.0), size=size, growth=1.2)] if size else []
    m = gmsh_mesh(plate, 4.0, element=element, refine=refine)
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), 3.0, units="N, mm, MPa")
    model.assign("insert", material=planar.Isotropic(E, 0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=10.0), case="pull")
    return planar.solve(model)["pull"]


def test_insert_corner_inside_the_part_warns_and_grows():
    # steel square in aluminium, plane stress: the ring's exponents are 0.866 and 0.948 (Bogy and Wang 1971's
    # problem); the corner's peak read on meshes refined fourfold twice grows between the two rates, without limit
    vals = []
    for h in (0.5, 0.125, 0.03125):
        r = _pad("square", "T6", size=h)
        i = _at(r, (40.0, 15.0))
        vals.append(r.field("von_mises")[i])
        got = interface_edge_near(r, i)
        assert got["inside"] and sorted(got["angles"]) == pytest.approx([90.0, 270.0], abs=1e-6)
    lam = got["lam"].real
    second = [x for x in _real_roots(lambda x: wedge_determinant([x], [1.5 * math.pi, 0.5 * math.pi],
                                                                 [_stress(70e3, 0.33)[0], _stress(210e3, 0.3)[0]],
                                                                 [_stress(70e3, 0.33)[1], _stress(210e3, 0.3)[1]],
                                                                 closed=True)[0].real) if x > lam + 1e-6][0]
    for a, b in zip(vals[:-1], vals[1:]):
        assert 0.8 * (1.0 - second) < math.log(b / a) / math.log(4.0) < 1.05 * (1.0 - lam), vals
    with pytest.warns(PlanarWarning) as rec:
        r.max("von_mises")
    ws = _interface_codes(rec)
    assert len(ws) == 1 and "turns a corner inside the part" in ws[0].message and "planar.Outside" in ws[0].message


def test_insert_corner_warns_on_a_plain_mesh():
    r = _pad("square", "Q8")
    with pytest.warns(PlanarWarning) as rec:
        peak = r.max("von_mises")
    ws = _interface_codes(rec)
    assert ws and "turns a corner inside the part" in ws[0].message
    assert min(np.hypot(*(np.array([[40, 15], [60, 15], [40, 25], [60, 25]]) - peak.location).T)) < 4.0


@pytest.mark.parametrize("element", ["T3", "Q4", "T6", "Q8"])
def test_round_insert_is_quiet(element):
    # a circular insert is not singular (Goodier 1933's inclusion): its polygon of straight sides turns by
    # the same small angle at every node, so no corner is taken from it (no false alarm)
    r = _pad("circle", element)
    with warnings.catch_warnings(record=True) as rec:
        warnings.simplefilter("always")
        r.max("von_mises")
        r.max("sigma_xx", where="insert")
    assert not _interface_codes(rec)
