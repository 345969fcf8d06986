"""The fastener table as text and JSON: whole names, the compliance with its unit.

Sources:
- a table states the unit of every figure and names each item whole (common practice for stress
  reports: a checker must tell which plate and which spring a figure belongs to);
- the compliance is the spring's slip per unit force, length / force (H. Huth, ASTM STP 927, 1986,
  defines the fastener flexibility so; from memory).
"""
import json

import numpy as np

import planar

from _joint_strips import lap


def _joint(units="N, mm, MPa"):
    joint = lap(((0.0, 100.0), (50.0, 150.0)), 10.0, 2.0, 2.5, pull=50.0, units=units,
                names=("forward fitting strap", "aft lower skin panel"))
    joint.add_fasteners(planar.Fasteners([(60.0, 0.0), (90.0, 0.0)], layers=("forward fitting strap",
                                                                              "aft lower skin panel"),
                                         diameter=5.0, flexibility=3e-5, name="splice row forward"))
    return planar.solve(joint)["pull"]


def test_text_table_names_layers_and_groups_whole_and_states_the_compliance_unit():
    res = _joint()
    text = res.table()
    hole_lines = [ln for ln in text.splitlines() if ln.startswith("splice row forward") and "fitting strap " in ln]
    assert len(hole_lines) == 2  # the hole lines of the strap, its name whole
    assert "forward fitting strap-aft lower skin panel" in text
    assert "compliance [mm/N]" in text
    pair_lines = [ln for ln in text.splitlines() if "forward fitting strap-aft lower skin panel" in ln
                  and ln.startswith("splice row forward")]
    assert [float(ln.split()[-1]) for ln in pair_lines[:2]] == [3e-5, 3e-5]
    header = next(ln for ln in text.splitlines() if ln.startswith("group") and "bearing P" in ln)
    assert all(len(ln) == len(header) for ln in hole_lines)  # the columns line up under their headers


def test_json_summary_states_the_compliance_unit():
    res = _joint()
    data = json.loads(json.dumps(res.as_dict()))
    assert data["compliance_unit"] == "mm/N"
    assert np.allclose([p["compliance"] for p in data["fasteners"]], 3e-5)
    plain = _joint(units=None)
    assert plain.as_dict()["compliance_unit"] == ""
