"""Set-ups that several test files share beside the models of ``_models``: the heated aluminium and
steel strips joined by two fasteners, and a probe of the contact solve's flexibility columns
(``from _test_setups import ...``; tests/ is on the path, see conftest.py)."""
from __future__ import annotations

import numpy as np

import planar


def heated_pair():
    """An aluminium strip 120 x 10, 2 thick, and a steel one, 1 thick (Q8 of 1.25), joined by two 5 mm
    fasteners at x = 10 and 110 and heated by 80 degrees; the aluminium held statically determinately
    (fixed at (0, -5), a roller in x at (0, 5)). Returns the solved joint's case ``"hot"``."""
    def strip(t, E, alpha):
        m = planar.rectangle_mesh(120.0, 10.0, 96, 8, element="Q8", origin=(0.0, -5.0))
        return planar.Model(m, planar.Isotropic(E=E, nu=0.3, alpha=alpha), thickness=t, units="N, mm, MPa")

    al, st = strip(2.0, 71e3, 23e-6), strip(1.0, 205e3, 12e-6)
    al.add_support(planar.Fixed((0.0, -5.0)))
    al.add_support(planar.Roller((0.0, 5.0), fixed="x"))
    for m in (al, st):
        m.add_load(planar.TemperatureChange(80.0), case="hot")
    joint = planar.Joint({"al": al, "steel": st})
    joint.add_fasteners(planar.Fasteners([(10.0, 0.0), (110.0, 0.0)], layers=("al", "steel"), diameter=5.0,
                                         flexibility=3e-5, name="pair"))
    return planar.solve(joint)["hot"]


def flexibility_columns(monkeypatch, all_nodes: bool) -> list[int]:
    """Count the columns of the contact flexibility each solve asks for (the list returned fills as the
    model solves); with ``all_nodes`` every live node's column is solved instead, the reference answer
    over every node a candidate set must reproduce."""
    import planar.core.contact as contact

    orig = getattr(contact.ContactSet.flexibility, "__wrapped__", contact.ContactSet.flexibility)
    seen: list[int] = []

    def flex(self, fac, rows):
        if all_nodes:
            rows = np.flatnonzero(self.live)
        seen.append(rows.size)
        return orig(self, fac, rows)

    flex.__wrapped__ = orig
    monkeypatch.setattr(contact.ContactSet, "flexibility", flex)
    return seen
