"""A fastener's inputs: its fit in a modelled hole, its tie, its kind (Huth's bolted graphite/epoxy).

Sources:
- a fastener fits its hole (common practice): a clearance hole is larger than the fastener, an
  interference fit a little smaller (of the order of 1 %), never by millimetres;
- H. Huth, Influence of fastener flexibility on the prediction of load transfer and fatigue life for
  multiple-row joints, ASTM STP 927, 1986: C = ((t1 + t2)/(2 d))^a (b/n) (1/(t1 E1) + 1/(n t2 E2)
  + 1/(2 t1 Ef) + 1/(2 n t2 Ef)), bolted graphite/epoxy a = 2/3, b = 4.2 (formula and constants from
  memory).
"""
import numpy as np
import pytest

import planar
from planar.core.errors import InputError


def test_a_contact_tie_is_refused_naming_the_fastener_ties():
    with pytest.raises(InputError, match=r"tie='spreading' or tie='rigid'.*planar\.Pin"):
        planar.Fasteners([(0.0, 0.0)], layers=("a", "b"), diameter=5.0, flexibility=3e-5, tie="contact")
    with pytest.raises(InputError, match="spreading"):
        planar.Fasteners([(0.0, 0.0)], layers=("a", "b"), diameter=5.0, flexibility=3e-5, tie="glued")
