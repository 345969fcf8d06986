"""A peak of round-off is not judged by the peak checks.

A load case whose loads are zero leaves a field of round-off (a contact pin's active set settles on
noise of 1e-15 MPa): its largest value's place is noise, so no check of the peak may speak of it
(common practice: a stress of a strain of 1e-12 is nothing).
"""
from __future__ import annotations

import warnings

import numpy as np

import planar
from planar.core._advice_node import round_off
from planar.core.errors import PlanarWarning
from planar.geometry import Circle, Plate, Refine, mesh


def _lug(fy):
    p = Plate.rectangle(40.0, 60.0, centre=(0.0, 0.0)).cut(Circle((0.0, 10.0), 6.0, name="hole"))
    m = mesh(p, 3.0, element="T6", refine=[Refine("hole", size=0.6)])
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.33), thickness=5.0, units="N, mm, MPa")
    model.add_pin(planar.Pin("hole", tie="contact", hold=None))
    model.add_support(planar.Fixed("bottom"))
    model.add_load(planar.PinLoad("hole", fx=0.0, fy=fy), case="c")
    return planar.solve(model)["c"]


def _peak_codes(r, field="von_mises"):
    with warnings.catch_warnings(record=True) as rec:
        warnings.simplefilter("always")
        pk = r.max(field)
    return pk, [w.message.code for w in rec if isinstance(w.message, PlanarWarning)]


def test_unloaded_contact_pin_field_is_round_off_and_quiet():
    r = _lug(0.0)
    pk, codes = _peak_codes(r)
    assert round_off(r, pk.value) and np.abs(r.field("von_mises")).max() < 1e-9
    assert codes == []


def test_loaded_lug_is_judged_as_before():
    r = _lug(1000.0)
    pk, _ = _peak_codes(r)
    assert not round_off(r, pk.value) and pk.value > 10.0
