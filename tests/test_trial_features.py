"""Defects found by trying the feature-check tools (zones, hot spots, edge stresses, units) on parts
of one's own, each with the check that would have caught it."""
from __future__ import annotations

import math

import numpy as np
import pytest

import planar
from planar.geometry import Circle, Ellipse, Plate


def test_round_bounding_box_is_exact_so_a_ring_can_be_quartered():
    # a thick ring (Lame's cylinder) quartered about its centre: the box of a circle is its centre
    # plus and minus the radius (geometry, from memory); a sampled box was short by the chord sag on
    # one side and put the default symmetry line off the centre, refusing a symmetric part
    assert Circle((1.0, 2.0), 3.0).bounding_box() == pytest.approx((-2.0, -1.0, 4.0, 5.0), abs=1e-12)
    assert Circle((0.0, 0.0), 40.0).bounding_box() == pytest.approx((-40.0, -40.0, 40.0, 40.0), abs=1e-12)
    # a rotated ellipse's box: half-widths sqrt(a^2 cos^2 + b^2 sin^2) and sqrt(a^2 sin^2 + b^2 cos^2)
    # (analytic geometry, from memory); angle in degrees
    hx, hy = math.sqrt((100.0 + 25.0) / 2), math.sqrt((100.0 + 25.0) / 2)
    assert Ellipse((0.0, 0.0), 10.0, 5.0, angle=45.0).bounding_box() == pytest.approx((-hx, -hy, hx, hy), rel=1e-9)
    ring = Plate(Circle((0.0, 0.0), 40.0, name="outer")).cut(Circle((0.0, 0.0), 20.0, name="bore")).quarter()
    assert sorted(ring.names()["edges"]) == ["bore", "outer", "symmetry_x", "symmetry_y"]
