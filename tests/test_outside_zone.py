"""``Outside(point, r)``: a peak read clear of one point (planar.core.zones), e.g. clear of the point where an
interface between regions meets a free edge, whose stress is singular (D. B. Bogy, J. Appl. Mech., 1971) and
draws the ``interface-edge`` warning.

Outside sources: away from the ends of a bonded band across a strip in tension, the stress along the strip
is the force over the section, F / (w t) (equilibrium of a cut; common practice); the band's ends, where
its interfaces meet the free edges, are singular (Bogy 1971), and the stress a few elements away from them
(St Venant's principle; common practice) is what a check reads.
"""
from __future__ import annotations

import warnings

import numpy as np
import pytest

import planar
from planar.core.errors import InputError, NameNotFoundError, PlanarWarning
from planar.geometry import Plate, Rectangle, Refine, mesh as gmsh_mesh

S = 10.0  # remote traction, MPa


def _band(size: float):
    """A 100 x 40 aluminium strip, 3 thick, with a steel band across it at x = 30..70, clamped at x = 0 and
    pulled at x = 100, refined to ``size`` at the four ends of the band's interfaces."""
    plate = Plate.rectangle(100.0, 40.0).with_region(Rectangle(40.0, 40.0, corner=(30.0, 0.0)), name="band")
    ends = [(30.0, 0.0), (30.0, 40.0), (70.0, 0.0), (70.0, 40.0)]
    m = gmsh_mesh(plate, 5.0, element="T6", refine=[Refine(p, size=size, growth=1.2) for p in ends])
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), 3.0, units="N, mm, MPa")
    model.assign("band", material=planar.Isotropic(210e3, 0.3))
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", tx=S), case="pull")
    return planar.solve(model)["pull"], ends


def _told(rec, code="interface-edge"):
    return [w.message for w in rec if isinstance(w.message, PlanarWarning) and w.message.code == code]


def test_outside_leaves_the_singular_points_out_and_reads_a_stress_that_converges():
    # the peak at a band's end grows without limit as the mesh is refined (Bogy 1971: lambda = 0.933 for steel
    # in aluminium, some 5 % per halving of the elements); read 3 mm clear of the four ends (6 and 24 elements
    # at h = 0.5 and 0.125; St Venant's principle, common practice) it settles to the same value on both meshes
    at, away = {}, {}
    for h in (0.5, 0.125):
        r, ends = _band(h)
        with warnings.catch_warnings(record=True) as rec:
            warnings.simplefilter("always")
            at[h] = r.max("sigma_xx", where="band")
        assert _told(rec) and min(np.hypot(*(np.asarray(ends) - at[h].location).T)) < 1.0  # at a band's end
        zone = planar.InRegion("band")
        for p in ends:
            zone = zone & planar.Outside(p, 3.0)
        with warnings.catch_warnings(record=True) as rec:
            warnings.simplefilter("always")
            away[h] = r.max("sigma_xx", where=zone)
        assert not _told(rec)
        assert np.hypot(*(np.asarray(ends) - away[h].location).T).min() > 3.0
        assert away[h].where == "in region 'band' and " + " and ".join(
            f"farther than 3 from ({p[0]:g}, {p[1]:g})" for p in ends)
        # a section of the band carries S w t (equilibrium), so its largest stress is at least S
        assert S < away[h].value < at[h].value
    assert at[0.125].value > 1.05 * at[0.5].value                          # singular: grows with refinement
    assert away[0.125].value == pytest.approx(away[0.5].value, rel=0.015)  # clear of the point: converged


def test_outside_is_the_complement_of_near_and_refuses_bad_input():
    m = planar.rectangle_mesh(10.0, 2.0, 10, 2, "Q8")
    for point in ((3.0, 1.0), "corner_00"):
        near, out = planar.Near(point, 2.5), planar.Outside(point, 2.5)
        assert np.array_equal(out.mask(m), ~near.mask(m)) and out.mask(m).any() and near.mask(m).any()
    assert repr(planar.Outside("corner_00", 2.0)) == "Outside('corner_00', 2)"
    with pytest.raises(InputError, match="positive length"):
        planar.Outside((0.0, 0.0), 0.0)
    with pytest.raises(InputError, match="finite numbers"):
        planar.Outside((0.0, float("nan")), 1.0)
    with pytest.raises(NameNotFoundError):
        planar.Outside("no_such_point", 1.0).mask(m)


def test_the_warning_names_the_zone_that_leaves_its_point_out():
    # the interface-edge advice is runnable: the Outside(...) it names, read with the band, no longer
    # sits at that point (Bogy 1971 for the singular point; St Venant's principle, common practice)
    import re

    r, ends = _band(0.5)
    with warnings.catch_warnings(record=True) as rec:
        warnings.simplefilter("always")
        first = r.max("sigma_xx", where="band")
    text = str(_told(rec)[0])
    zone_src = re.search(r"where=(planar\.Outside\(\([^)]*\), [0-9.e+-]+\))", text).group(1)
    zone = eval(zone_src, {"planar": planar})  # noqa: S307 - the message's own advice, run as a user would
    again = r.max("sigma_xx", where=planar.InRegion("band") & zone)
    gap = np.hypot(*(np.asarray(again.location, float) - np.asarray(zone.point, float)))
    assert gap >= zone.radius - 1e-9 and np.hypot(*np.subtract(again.location, first.location)) > 1.0
