"""The lug: its geometry, the lug check's nominal stresses, the lug sample, and the pin's idealisations.

Sources: the nominal stresses of a lug, net-section tension P / ((W - D) t), bearing P / (D t) and
shear-out P / (2 (e - D/2) t) (E. F. Bruhn, Analysis and Design of Flight Vehicle Structures, 1973,
sec. D1; common practice, from memory); the margin of safety allowable / (FS x stress) - 1 (common
practice); statics of a cut through the net section (the stresses across it carry the pin load:
common practice); areas of rectangles and circles (closed form). The lug chart's curve is checked
against the values printed with it (W. D. Pilkey and D. F. Pilkey, Peterson's Stress Concentration
Factors, 3rd ed., 2008, pin-loaded lug chart; from memory).
"""
from __future__ import annotations

import math
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import planar
from planar.core.errors import InputError
from planar.core.pins import TIES, Pin, PinLoad
from planar.core.registry import registry
from planar.geometry import Refine, lug, mesh
from planar.post import cut_resultant
from planar.post.lugs import (bearing_stress, kt_pin_loaded_lug, lug_check, net_section_stress,
                              shear_out_stress)

SAMPLES = Path(__file__).resolve().parents[1] / "samples"
W, D, E_DIST, T, P = 40.0, 16.0, 40.0, 5.0, 10e3
HAS_BEARING = "pin-bearing" in registry().names("load")
HAS_CONTACT = "contact" in TIES


# ------------------------------------------------------------------ geometry
def test_lug_edges_are_named_and_its_area_is_the_strip_less_the_hole():
    for end, e in (("square", 40.0), ("round", 20.0), ("round", 30.0)):
        plate = lug(W, D, e, end=end, length=60.0)
        assert sorted(plate.names()["edges"]) == ["base", "end", "hole", "sides"]
        # closed form: strip up to the end's centre, half disc of radius W/2 for a round end, less the hole
        strip = W * (60.0 + e) if end == "square" else W * (60.0 + e - W / 2) + math.pi * (W / 2) ** 2 / 2
        assert plate.area() == pytest.approx(strip - math.pi * (D / 2) ** 2, rel=1e-9)


def test_lug_meshes_with_the_hole_where_it_was_asked():
    m = mesh(lug(W, D, E_DIST, centre=(5.0, -3.0)), size=5.0, element="T6")
    assert set(m.edge_sets) >= {"hole", "end", "sides", "base"}
    hole = m.nodes[np.unique(m.edge("hole"))]
    assert np.hypot(hole[:, 0] - 5.0, hole[:, 1] + 3.0) == pytest.approx(D / 2, rel=1e-9)
    end = m.nodes[np.unique(m.edge("end"))]
    assert end[:, 1] == pytest.approx(-3.0 + E_DIST)


@pytest.mark.parametrize("kw, words", [
    (dict(width=40.0, hole_diameter=40.0, edge_distance=40.0), "less than its width"),
    (dict(width=40.0, hole_diameter=16.0, edge_distance=8.0), "must exceed the hole radius"),
    (dict(width=40.0, hole_diameter=16.0, edge_distance=15.0, end="round"), "at least half its width"),
    (dict(width=40.0, hole_diameter=16.0, edge_distance=40.0, end="pointed"), "end must be one of"),
    (dict(width=-1.0, hole_diameter=16.0, edge_distance=40.0), "positive"),
    (dict(width="wide", hole_diameter=16.0, edge_distance=40.0), "a length"),
])
def test_lug_refuses_bad_dimensions_by_name(kw, words):
    with pytest.raises(InputError, match=words):
        lug(**kw)


# ------------------------------------------------------------------ nominal stresses
def test_nominal_stresses_of_a_lug_by_hand():
    # Bruhn D1 (common practice): P = 20 kN, W = 50, D = 20, e = 40, t = 8 mm
    assert net_section_stress(20e3, 50.0, 20.0, 8.0) == pytest.approx(20e3 / (30.0 * 8.0))
    assert bearing_stress(20e3, 20.0, 8.0) == pytest.approx(125.0)
    assert shear_out_stress(20e3, 40.0, 20.0, 8.0) == pytest.approx(20e3 / (2 * 30.0 * 8.0))
    with pytest.raises(InputError, match="hole radius"):
        shear_out_stress(20e3, 9.0, 20.0, 8.0)
    with pytest.raises(InputError, match="less than the width"):
        net_section_stress(20e3, 50.0, 50.0, 8.0)


def test_lug_chart_curve_and_its_range():
    # the curve's own values (Peterson's pin-loaded lug chart, from memory): 2.51 at d/W = 0.5, rising to ~6.8 at 0.15
    assert kt_pin_loaded_lug(0.5) == pytest.approx(2.507, abs=1e-3)
    assert kt_pin_loaded_lug(0.15) == pytest.approx(6.82, abs=0.01)
    k = kt_pin_loaded_lug(np.linspace(0.15, 0.75, 13))
    assert np.all(np.diff(k) < 0)  # the chart falls over its whole range
    with pytest.raises(InputError, match="covers d/W"):
        kt_pin_loaded_lug(0.9)


def lug_model(how: str, clearance: float = 0.0, size: float = 5.0):
    """The lug W = 40, D = 16, e = 40, t = 5 mm, base fixed, pin pulled with 10 kN toward the end."""
    m = mesh(lug(W, D, E_DIST), size=size, element="T6", refine=[Refine("hole", size=0.8, growth=1.25)])
    model = planar.Model(m, planar.Isotropic(70e3, 0.33), thickness=T, units="N, mm, MPa")
    model.add_support(planar.Fixed("base"))
    if how == "bearing":
        model.add_load("pin-bearing", case="pull", where="hole", force=P, angle=90.0)
    else:
        kw = {"clearance": clearance} if how == "contact" else {}
        model.add_pin(Pin("hole", tie=how, hold=None, name="pin", **kw))
        model.add_load(PinLoad("pin", fy=P), case="pull")
    return model


@pytest.fixture(scope="module")
def lug_results():
    ways = ["rigid", "spreading"] + (["bearing"] if HAS_BEARING else []) + (["contact"] if HAS_CONTACT else [])
    return {w: planar.solve(lug_model(w))["pull"] for w in ways}


def test_lug_check_reads_the_hole_and_its_margins(lug_results):
    r = lug_results["spreading"]
    c = lug_check(r, P, W, D, T, edge_distance=E_DIST, tension_allowable=300.0, bearing_allowable=450.0,
                  peak_allowable=250.0, factor_of_safety=1.5)
    net, brg = P / ((W - D) * T), P / (D * T)
    assert (c.net_section, c.bearing) == pytest.approx((net, brg))
    assert c.shear_out == pytest.approx(P / (2 * (E_DIST - D / 2) * T))
    assert c.kt_net == pytest.approx(c.peak_hoop / net) and c.kt_bearing == pytest.approx(c.peak_hoop / brg)
    assert c.peak_hoop == pytest.approx(float(c.edge.sigma_t.max()))
    # the peak sits on the hole's edge, at the angle the table gives
    x, y = c.peak_point
    assert math.hypot(x, y) == pytest.approx(D / 2, rel=1e-6)
    assert math.degrees(math.atan2(y, x)) % 360 == pytest.approx(c.peak_angle % 360, abs=1e-6)
    assert c.margins["net_section"] == pytest.approx(300.0 / (1.5 * net) - 1)
    assert c.margins["bearing"] == pytest.approx(450.0 / (1.5 * brg) - 1)
    assert c.margins["peak"] == pytest.approx(250.0 / (1.5 * c.peak_hoop) - 1)
    text = c.table()
    assert "MPa" in text and "P = 10000 N" in text and "mm" in text and "nan" not in text.lower()
    assert c.as_dict()["units"]["stress"] == "MPa"
    with pytest.raises(InputError, match="edge_distance"):
        lug_check(r, P, W, D, T, shear_allowable=100.0)
    # read on a straight edge there is no angle: the table gives the point, never a NaN
    flat = lug_check(r, P, W, D, T, edge="end")
    assert math.isnan(flat.peak_angle) and "nan" not in flat.table().lower() and "at (" in flat.table()
    assert flat.as_dict()["peak_angle"] is None


@pytest.mark.parametrize("how, share", [("spreading", 0.5), ("bearing", 1.0), ("contact", 1.0)])
def test_the_net_section_carries_the_load_put_on_the_hole_beyond_it(lug_results, how, share):
    """Statics of the cut through the hole's centre (common practice): its two ligaments carry the
    load put on the hole's edge beyond the cut. A bearing pressure (cosine or contact) acts on the
    loaded half only: all of P. The spreading tie spreads P evenly round the edge: half of it beyond
    the cut (the nodes on the cut line take their share to either side, hence the looser tolerance).
    """
    if how not in lug_results:
        pytest.skip(f"{how} is not available in this installation")
    r = lug_results[how]
    left = cut_resultant(r, (-W / 2, 0.0), (-D / 2, 0.0))
    right = cut_resultant(r, (D / 2, 0.0), (W / 2, 0.0))
    assert abs(left.force[1] + right.force[1]) == pytest.approx(share * P, rel=2e-3 if share == 1.0 else 0.03)


def test_idealisations_of_the_pin_order_the_peak_on_the_hole(lug_results):
    """What we expect, and why.

    The rigid tie bonds the hole to the pin: the hole cannot ovalise and the pin pulls on the back
    of the hole as well as bearing on its front, so little of the load turns round the hole and the
    hoop peak is far below the net-section stress. The spreading tie spreads the load evenly over
    the whole edge, half of it pulling on the back of the hole: less load turns round the hole than
    with bearing. A bearing pressure (the cosine shape, or contact) puts the whole load on the front
    half and turns all of it round the hole: the highest peak, above the net-section stress (a lug's
    Kt_n is above 1 in every chart). Contact against the cosine shape depends on the clearance and the
    lug's shape, so their order is not asserted.
    """
    kt = {w: lug_check(r, P, W, D, T).kt_net for w, r in lug_results.items()}
    assert kt["rigid"] < 0.5 * kt["spreading"]
    for w in ("bearing", "contact"):
        if w in kt:
            assert kt[w] > 1.5 * kt["spreading"] and kt[w] > 1.5


@pytest.mark.skipif(not HAS_CONTACT, reason="bearing contact is not in this planar")
def test_contact_on_the_lug_bears_on_the_loaded_half(lug_results):
    r = lug_results["contact"]
    st = r.contact_states["pin"]
    # symmetric lug, load along its axis: the arc is centred on the pull's direction (90 deg)
    assert (st.arc_start_deg + st.arc_end_deg) / 2 == pytest.approx(90.0, abs=2.0)
    assert 90.0 < st.arc_end_deg - st.arc_start_deg <= 200.0
    # frictionless radial pressure: P = integral of p sin(theta) R t d theta <= p_max D t (statics)
    assert st.peak_pressure >= bearing_stress(P, D, T)
    assert st.max_tension <= 1e-9 * st.peak_pressure


@pytest.mark.skipif(not HAS_CONTACT, reason="bearing contact is not in this planar")
def test_a_peak_on_a_hole_in_contact_is_the_parts_own_and_a_tied_holes_is_the_idealisations(lug_results):
    # a tie forces the hole's motion (rigid) or its load's shape (spreading): the peak there is the tie's;
    # contact lets the hole bear only where it touches, so its peak is the lug's own (no caution)
    assert lug_check(lug_results["contact"], P, W, D, T).concentration.note == ""
    for tie in ("rigid", "spreading"):
        assert "idealisation" in lug_check(lug_results[tie], P, W, D, T).concentration.note


@pytest.mark.skipif(not HAS_CONTACT, reason="bearing contact is not in this planar")
def test_contact_with_clearance_narrows_the_arc_and_raises_the_peak_pressure(lug_results):
    loose = planar.solve(lug_model("contact", clearance=0.05))["pull"].contact_states["pin"]
    tight = lug_results["contact"].contact_states["pin"]
    assert loose.arc_end_deg - loose.arc_start_deg < tight.arc_end_deg - tight.arc_start_deg
    assert loose.peak_pressure > tight.peak_pressure


# ------------------------------------------------------------------ the sample
@pytest.mark.slow
def test_lug_sample_writes_its_table_and_plot(tmp_path):
    env = dict(os.environ, PLANAR_OUT=str(tmp_path), MPLBACKEND="Agg")
    proc = subprocess.run([sys.executable, str(SAMPLES / "lug_check.py")], cwd=SAMPLES, env=env,
                          capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    text = (tmp_path / "lug_check.txt").read_text()
    assert "net-section tension" in text and "bearing" in text and "MPa" in text and "nan" not in text.lower()
    for way in ("rigid tie", "spreading tie", "prescribed bearing", "contact"):
        assert way in text
        available = {"contact": HAS_CONTACT, "prescribed bearing": HAS_BEARING}.get(way, True)
        assert (f"{way:<20s} left out" in text) != available
    png = (tmp_path / "lug_check.png").read_bytes()
    assert png[:8] == b"\x89PNG\r\n\x1a\n" and len(png) > 10_000
    assert (tmp_path / "lug_check.vtu").exists()
    assert "peak von Mises" in proc.stdout


# ------------------------------------------------------------------ the lug-kt benchmark
@pytest.mark.skipif(not (HAS_CONTACT or HAS_BEARING), reason="neither bearing contact nor the pin-bearing plugin")
def test_lug_benchmark_kt_does_not_depend_on_the_load():
    """With zero clearance, frictionless contact (or a prescribed pressure) is linear in the load: the
    contact conditions (no gap, no tension, one of them zero at each point) hold for a solution times
    any positive factor, so the contact set does not change with the load's size and Kt_n is the same
    at P and 10 P (closed form: the conditions are positively homogeneous)."""
    from planar.verify.lug_cases import lug_model

    kts = []
    for scale in (1.0, 10.0):
        model = lug_model(0.5, hole_cells=48)
        for loads in model.cases.values():
            for i, load in enumerate(loads):
                if isinstance(load, PinLoad):
                    loads[i] = PinLoad(load.pin, fy=load.fy * scale)
                elif hasattr(load, "force"):
                    load.force *= scale
        r = planar.solve(model)["pull"]
        kts.append(lug_check(r, 1000.0 * scale, 50.0, 25.0, 1.0).kt_net)
    assert kts[1] == pytest.approx(kts[0], rel=1e-9)
    assert 1.5 < kts[0] < 4.0  # a lug's Kt_n at d/W = 0.5 (the chart: about 2.5)


@pytest.mark.slow
def test_lug_kt_case_records_the_chart_and_the_idealisation():
    from planar.verify import run
    from planar.verify.lug_cases import LUG_RATIOS, idealisation

    recs = run(case_names=["lug-kt"])
    assert [r.reference for r in recs] == pytest.approx([kt_pin_loaded_lug(x) for x in LUG_RATIOS])
    assert all(math.isfinite(r.computed) and r.computed > 1.0 for r in recs)
    assert all("Frocht" in r.source and "from memory" in r.note for r in recs)
    assert all(idealisation() in r.quantity for r in recs)
