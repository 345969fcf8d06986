"""Unit systems: consistency of each known system, checked names, labels, and the units of a result
file read back by ``planar show``.

Sources: the conversion factors of NIST Special Publication 811 (2008 edition), B. N. Taylor and
A. Thompson, "Guide for the Use of the International System of Units (SI)", Appendix B.8 and B.9
(factors given to 7 significant digits; the inch, 0.0254 m, the foot, 0.3048 m, and the standard
acceleration of gravity, 9.80665 m/s^2, exact); SI prefixes from the SI Brochure (BIPM, 9th ed.,
2019, table 7); the density of carbon steel, 7850 kg/m^3 (common practice).
"""
import math
import warnings

import meshio
import numpy as np
import pytest

import planar
from planar.core.errors import InputError
from planar.core.units import (NOT_STATED, bare_unit, field_unit, figure_units, systems, unit_system)

G0 = 9.80665  # m/s^2, standard acceleration of gravity (NIST SP 811, 2008, B.8: exact)
LBF = 4.448222  # N per pound-force (NIST SP 811, 2008, B.8)
SLUG = 14.59390  # kg per slug (NIST SP 811, 2008, B.8)
PSI = 6.894757e3  # Pa per lbf/in^2 (NIST SP 811, 2008, B.8)
KSI = 6.894757e6  # Pa per kip/in^2 (NIST SP 811, 2008, B.8)
PSF = 4.788026e1  # Pa per lbf/ft^2 (NIST SP 811, 2008, B.8)
KIP = 4.448222e3  # N per kip (NIST SP 811, 2008, B.8)
INCH, FOOT = 0.0254, 0.3048  # m (NIST SP 811, 2008, B.8: exact)

# system -> (force in N, length in m, stress in Pa, mass in kg), from the sources above: SI units and
# prefixes exactly (SI Brochure, table 7); US units from NIST SP 811 (the mass unit lbf s^2/in is the
# slug times 12 in/ft, exactly)
EXPECTED = {
    "N-mm-MPa": (1.0, 1e-3, 1e6, 1e3),
    "N-m-Pa": (1.0, 1.0, 1.0, 1.0),
    "kN-mm-GPa": (1e3, 1e-3, 1e9, 1e6),
    "kN-m-kPa": (1e3, 1.0, 1e3, 1e3),
    "MN-m-MPa": (1e6, 1.0, 1e6, 1e6),
    "lbf-in-psi": (LBF, INCH, PSI, 12 * SLUG),
    "kip-in-ksi": (KIP, INCH, KSI, 12e3 * SLUG),
    "lbf-ft-psf": (LBF, FOOT, PSF, SLUG),
    "kip-ft-ksf": (KIP, FOOT, 1e3 * PSF, 1e3 * SLUG),
}


def test_the_expected_systems_are_known():
    assert {s.name for s in systems()} == set(EXPECTED)


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_factors_match_nist_sp811(name):
    s = unit_system(name)
    force, length, stress, mass = EXPECTED[name]
    assert s.newtons == pytest.approx(force, rel=1e-6)
    assert s.metres == pytest.approx(length, rel=1e-12)
    assert s.to_mpa * 1e6 == pytest.approx(stress, rel=1e-6)
    assert s.kilograms == pytest.approx(mass, rel=1e-6)
    assert s.g * s.metres == pytest.approx(G0, rel=1e-12)


@pytest.mark.parametrize("s", systems(), ids=lambda s: s.name)
def test_each_system_is_consistent(s):
    # force = stress x length^2 and force = mass x length / s^2 (Newton's second law), in SI terms
    assert s.newtons == pytest.approx(s.to_mpa * 1e6 * s.metres ** 2, rel=1e-12)
    assert s.newtons == pytest.approx(s.kilograms * s.metres, rel=1e-12)
    # the labels say the same: stress = force/length^2 by the units' own names
    assert s.force and s.length and s.stress and s.mass and s.density.endswith(("^3", "^4"))
    assert s.unit_of("moment") == s.moment and s.unit_of("acceleration") == f"{s.length}/s^2"


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_a_litre_of_steel_weighs_the_same_in_every_system(name):
    # 1 L of steel at 7850 kg/m^3 (common practice) weighs 7.85 kg x 9.80665 m/s^2 = 76.98 N
    s = unit_system(name)
    force, length, _, mass = EXPECTED[name]
    rho = 7850.0 * length ** 3 / mass           # density in the system's own unit (NIST factors)
    volume = 1e-3 / length ** 3                 # one litre in length^3
    weight = rho * volume * s.g                 # rho V g, in the system's force unit
    assert weight * force == pytest.approx(7.85 * G0, rel=2e-6)


@pytest.mark.parametrize("text,name", [
    ("N, mm, MPa", "N-mm-MPa"), ("N; mm; MPa", "N-mm-MPa"), ("n,mm,mpa", "N-mm-MPa"), ("N mm MPa", "N-mm-MPa"),
    ("N-mm-MPa", "N-mm-MPa"), ("(N, mm, N/mm^2)", "N-mm-MPa"), ("t, mm, s", "N-mm-MPa"),
    ("N, m, Pa", "N-m-Pa"), ("SI", "N-m-Pa"), ("kN; m; kPa", "kN-m-kPa"), ("kN, mm, GPa", "kN-mm-GPa"),
    ("MN, m, MPa", "MN-m-MPa"), ("lbf, in, psi", "lbf-in-psi"), ("lb; in; psi", "lbf-in-psi"),
    ("kip, in, ksi", "kip-in-ksi"), ("lbf, ft, psf", "lbf-ft-psf"), ("kip-ft-ksf", "kip-ft-ksf"),
    ("consistent units", "not stated"), ("", "not stated"), (None, "not stated"),
])
def test_spellings_in_use_are_accepted(text, name):
    assert unit_system(text).name == name


def test_readme_spelling_keeps_working_without_a_warning():
    m = planar.rectangle_mesh(10.0, 2.0, 2, 1)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=2.0, units="N, mm, MPa")
    assert model.units == "N, mm, MPa" and model.unit_system.name == "N-mm-MPa"
    assert planar.Model(m, planar.Isotropic(70e3, 0.33), units="n;mm;mpa").units == "N, mm, MPa"
    default = planar.Model(m, planar.Isotropic(70e3, 0.33))
    assert default.units == "consistent units" and default.unit_system is NOT_STATED
    assert default.describe()["units"] == "consistent units"


@pytest.mark.parametrize("text", ["pounds and furlongs", "N, mm", "N, m, MPa", "MPa", "N, mm, MPa, kip"])
def test_unknown_or_inconsistent_systems_are_refused_with_the_list(text):
    m = planar.rectangle_mesh(10.0, 2.0, 2, 1)
    with pytest.raises(InputError) as exc:
        planar.Model(m, planar.Isotropic(70e3, 0.33), units=text)
    msg = str(exc.value)
    assert repr(text) in msg and "consistent units" in msg
    for s in systems():
        assert s.name in msg
    with pytest.raises(InputError, match="unit system"):
        unit_system(42)
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), units="N, mm, MPa")
    with pytest.raises(InputError):
        model.units = text


def test_not_stated_is_said_honestly(solved_strip):
    assert NOT_STATED.describe() == "units not stated (consistent)" and NOT_STATED.label == "consistent units"
    assert NOT_STATED.unit_of("stress") == "" and field_unit("sigma_xx", None) == ""
    from planar.post.plots import plot_field

    r = solved_strip(20.0, 5.0, 4, 1, "Q8", case="pull", loads={"pull": planar.Traction("right", tx=10.0)})
    fig = plot_field(r, "von_mises")
    assert "units not stated (consistent)" in " ".join(t.get_text() for t in fig.axes[0].texts)
    from planar.post.report import describe_model_rows

    assert ("units", "units not stated (consistent)") in describe_model_rows(r.model)


def test_labels_come_from_the_system(solved_strip):
    assert field_unit("sigma_xx", "kip-in-ksi") == "ksi" and field_unit("uy", "lbf-ft-psf") == "ft"
    assert field_unit("element_von_mises", "N-m-Pa") == "Pa" and field_unit("eps_xx", "N-m-Pa") == ""
    assert unit_system("kN-m-kPa").unit_of("force per length") == "kN/m"
    assert figure_units("sigma_xx", "N/mm^2", unit_system("N-mm-MPa"))[:2] == ("N/mm^2", "mm")
    assert bare_unit("psi") == "psi"
    with pytest.raises(InputError, match="unknown unit 'furlong'"):
        bare_unit("furlong")
    from planar.post.plots import plot_along, plot_field
    from planar.post.report import describe_model_rows, equilibrium_table

    r = solved_strip(20.0, 5.0, 4, 1, "Q8", case="pull", units="lbf, in, psi",
                     loads={"pull": planar.Traction("right", tx=10.0)})
    assert r.unit_system.name == "lbf-in-psi" and r.units == "lbf, in, psi"
    fig = plot_field(r, "sigma_xx")
    assert fig.axes[1].get_xlabel().endswith("[psi]") and fig.axes[0].get_xlabel() == "x [in]"
    fig = plot_along(r, (1.0, 2.5), (19.0, 2.5), "ux")
    assert fig.axes[0].get_ylabel().endswith("[in]") and fig.axes[0].get_xlabel().endswith("[in]")
    rows = dict(describe_model_rows(r.model))
    assert rows["units"].startswith("lbf, in, psi (lbf-in-psi") and "386.0886 in/s^2" in rows["units"]
    assert "[lbf]" in equilibrium_table(r).rows[0][0]


def test_modulus_check_reads_the_stress_unit_of_the_system():
    # diamond, about 1.05e6 MPa (from memory), is the stiffest solid: the limit 1.2e6 MPa in any unit
    from planar.core.advice import MODULUS_LIMIT

    assert MODULUS_LIMIT["MPa"] == 1.2e6 and MODULUS_LIMIT["GPa"] == pytest.approx(1.2e3)
    assert MODULUS_LIMIT["psi"] == pytest.approx(1.2e6 / 6.894757e-3, rel=1e-6)  # NIST SP 811: psi in Pa
    m = planar.rectangle_mesh(10.0, 2.0, 4, 1, "Q8")

    def codes(E, units):
        model = planar.Model(m, planar.Isotropic(E, 0.33), thickness=0.1, units=units)
        model.add_support(planar.Fixed("left"))
        model.add_load(planar.Traction("right", tx=100.0), case="pull")
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            r = planar.solve(model)["pull"]
        return [w for w in r.warnings if w.code == "units"]

    assert codes(10.3e6, "lbf-in-psi") == []        # aluminium, about 10.3e6 psi (from memory): quiet
    found = codes(70e9, "lbf-in-psi")               # the same metal given in Pa in a psi model
    assert found and "psi" in found[0].message and "7e+10 psi" in found[0].message


def _write_kip_result(tmp_path, compression=None):
    m = planar.rectangle_mesh(20.0, 4.0, 6, 2, "Q8")
    model = planar.Model(m, planar.Isotropic(10.3e3, 0.33), thickness=0.25, units="kip, in, ksi")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=5.0), case="pull")
    return planar.write_vtu(tmp_path / f"kip{compression or ''}.vtu", planar.solve(model)["pull"],
                            compression=compression)


@pytest.mark.parametrize("compression", [None, "zlib"])
def test_units_travel_in_the_result_file(tmp_path, compression):
    from planar.core.digest import check_digest
    from planar.post.files import file_units, read_result_file

    path = _write_kip_result(tmp_path, compression)
    assert check_digest(path) == "ok"                       # the digest covers the units entry
    raw = meshio.read(path).field_data["planar_units"]      # meshio reads it as bytes
    assert bytes(np.asarray(raw, np.uint8)).decode() == "kip-in-ksi"
    assert file_units(read_result_file(path)).name == "kip-in-ksi"


def test_planar_show_labels_the_picture_from_the_file(tmp_path, monkeypatch, capsys):
    from planar.cli import main
    from planar.post import plots

    path = _write_kip_result(tmp_path)
    figures = []
    draw = plots.plot_vtu
    monkeypatch.setattr(plots, "plot_vtu", lambda *a, **k: figures.append(draw(*a, **k)) or figures[-1])
    assert main(["show", str(path), "--field", "sigma_xx", "--png", str(tmp_path / "s.png")]) == 0
    fig = figures[-1]
    assert fig.axes[1].get_ylabel() == r"$\sigma_{xx}$ [ksi]" or fig.axes[1].get_xlabel() == r"$\sigma_{xx}$ [ksi]"
    assert fig.axes[0].get_xlabel() == "x [in]" and fig.axes[0].get_ylabel() == "y [in]"
    assert (tmp_path / "s.png").read_bytes()[:4] == b"\x89PNG"
    # --units overrides: a whole system, or one bare unit for the field (lengths still from the file)
    assert main(["show", str(path), "--field", "ux", "--png", str(tmp_path / "u.png"), "--units", "N, mm, MPa"]) == 0
    assert figures[-1].axes[0].get_xlabel() == "x [mm]" and "[mm]" in figures[-1].axes[1].get_ylabel() + \
        figures[-1].axes[1].get_xlabel()
    assert main(["show", str(path), "--png", str(tmp_path / "v.png"), "--units", "psi"]) == 0
    assert figures[-1].axes[0].get_xlabel() == "x [in]"
    capsys.readouterr()
    assert main(["show", str(path), "--png", str(tmp_path / "w.png"), "--units", "pounds and furlongs"]) == 2
    err = capsys.readouterr().err
    assert "pounds and furlongs" in err and "kip-in-ksi" in err and "N-mm-MPa" in err
    assert not (tmp_path / "w.png").exists()
    assert main(["show", str(path), "--list"]) == 0
    assert "units:        kip, in, ksi (kip-in-ksi" in capsys.readouterr().out


def test_a_file_without_units_says_so(tmp_path):
    from planar.post.plots import plot_vtu

    path = _write_kip_result(tmp_path)
    m = meshio.read(path)
    m.field_data = {}
    plain = tmp_path / "plain.vtu"
    meshio.write(plain, m)                                  # another program's file: no units, no digest
    fig = plot_vtu(plain, "sigma_xx")
    assert fig.axes[0].get_xlabel() == "x"
    assert "the file states no units" in " ".join(t.get_text() for t in fig.axes[0].texts)
    assert math.isfinite(fig.axes[1].get_xlim()[0])


@pytest.mark.parametrize("name", ["N-mm-MPa", "N-m-Pa", "lbf-in-psi", "kip-ft-ksf"])
def test_gravity_along_a_direction_takes_the_standard_g_of_the_system(name):
    # a 1 x 0.4 x 0.05 m steel plate (7850 kg/m^3, common practice) weighs 7850 x 0.02 x 9.80665 N,
    # stated in each system's own lengths and density (NIST SP 811 factors above)
    from planar.core.assembly import Assembly

    force, length, _, mass = EXPECTED[name]
    L, W, t = 1.0 / length, 0.4 / length, 0.05 / length
    rho = 7850.0 * length ** 3 / mass
    model = planar.Model(planar.rectangle_mesh(L, W, 4, 2, "Q8"), planar.Isotropic(1.0, 0.3, density=rho),
                         thickness=t, units=name)
    model.add_load(planar.Gravity(direction=(0.0, -3.0)), case="weight")
    total = Assembly(model).load_vector("weight")[0].reshape(-1, 2).sum(axis=0) * force  # in N
    np.testing.assert_allclose(total, [0.0, -7850.0 * 0.02 * G0], rtol=2e-6, atol=1e-9)


def test_gravity_along_a_direction_needs_stated_units():
    from planar.core.assembly import Assembly

    model = planar.Model(planar.rectangle_mesh(10.0, 4.0, 2, 1), planar.Isotropic(70e3, 0.3, density=2.7e-9))
    model.add_load(planar.Gravity(direction=(0, -1)), case="weight")
    with pytest.raises(InputError, match=r"states no units.*units='N, mm, MPa'.*Gravity\(gy=-9806.65\)"):
        Assembly(model).load_vector("weight")
    with pytest.raises(InputError, match="not both"):
        planar.Gravity(gy=-9806.65, direction=(0, -1))
    with pytest.raises(InputError, match="direction must be two finite numbers"):
        planar.Gravity(direction=(0, 0))
    assert repr(planar.Gravity(direction=(0, -2))) == "Gravity(direction=(0, -1), regions=None)"


def test_checks_and_result_summary_state_the_units(solved_strip):
    # a strip pulled by 10 psi: the peak, nominal and allowable are printed in the model's own units
    from planar.post.checks import kt, margin_of_safety

    r = solved_strip(20.0, 5.0, 4, 1, "Q8", case="pull", units="lbf, in, psi",
                     loads={"pull": planar.Traction("right", tx=10.0)})
    k = kt(r, 10.0, where=planar.Away())
    assert " psi at (" in k.summary() and ") in over nominal 10 psi" in k.summary()
    ms = margin_of_safety(r, 35e3, 1.5, where=planar.Away())
    assert "allowable 35000 psi" in ms.summary() and ms.units == "lbf, in, psi"
    assert "psi" not in margin_of_safety(12.0, 35e3).summary()   # a given peak: its units are not known
    assert r.summary()["units"]["name"] == "lbf-in-psi" and r.summary()["units"]["g"] == pytest.approx(G0 / INCH)


def test_path_and_cut_summaries_state_the_units(solved_strip):
    # a strip 4 m wide pulled by 1 kPa: the cut across it carries 4 kN per metre of thickness (statics)
    from planar.post.checks import cut_resultant, path_stresses

    r = solved_strip(10.0, 4.0, 4, 2, "Q8", case="pull", units="kN, m, kPa", thickness=1.0, hold="roller",
                     loads={"pull": planar.Traction("right", tx=1.0)})
    text = path_stresses(r, (5.0, 0.0), (5.0, 4.0), ("sigma_xx",)).summary()
    assert "-> (5.0, 4.0) m," in text and "sigma_xx: max |.| 1 kPa at distance" in text
    cut = cut_resultant(r, (5.0, 0.0), (5.0, 4.0))
    assert cut.normal_force == pytest.approx(4.0, rel=1e-9)
    assert "cut of length 4 m" in cut.summary() and "normal 4 kN" in cut.summary() and " kN m (" in cut.summary()
