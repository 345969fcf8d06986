"""Stress recovery on a strip of linear quadrilaterals one element thick.

The centres of such a strip's Q4 (their superconvergent points) lie on one line, so a patch fit of
them cannot tell how the stress varies across the strip: a fit of lower degree read the bending
stress as zero at every node. The nodes there now take the elements' own Gauss stresses,
extrapolated. Reference: Euler-Bernoulli beam theory, sigma = M c / I (S. P. Timoshenko and J. M.
Gere, Mechanics of Materials, 1972, the flexure formula), for a cantilever with an end shear load.
"""
from __future__ import annotations

import numpy as np
import pytest

import planar
from planar.post.recovery import recover


def _cantilever(nx, ny, element):
    L, H, t = 100.0, 20.0, 2.0
    m = planar.rectangle_mesh(L, H, nx, ny, element)
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.33), thickness=t, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=1.0), case="c")  # end shear P = 1 * H * t
    return planar.solve(model)["c"], (L, H, t)


def _at(r, xy):
    return int(np.argmin(np.hypot(*(r.mesh.nodes - np.asarray(xy, dtype=float)).T)))


@pytest.mark.parametrize("recovery", ["spr", "average"])
def test_one_q4_through_the_depth_reads_the_bending_stress(recovery):
    r, (L, H, t) = _cantilever(40, 1, "Q4")
    s = recover(r, recovery)
    x = 5.0
    want = (H * t) * (L - x) * (H / 2) / (t * H ** 3 / 12)  # M c / I
    top, bottom = s[_at(r, (x, H)), 0], s[_at(r, (x, 0.0)), 0]
    assert abs(top) == pytest.approx(want, rel=0.03) and top == pytest.approx(-bottom, rel=1e-6)
    assert np.all(np.isfinite(s))


def test_deeper_meshes_keep_their_patch_fit():
    # two elements through the depth: the patches see the gradient; the values are SPR's own (not averaged)
    r, _ = _cantilever(40, 2, "Q4")
    assert not np.allclose(recover(r, "spr"), recover(r, "average"))


def test_a_higher_degree_asked_for_keeps_a_fit_of_the_elements_own_degree():
    # T3 one element thick, degree=2 asked for: the patches fit a linear field (the elements' own
    # degree), which reads the bending stress; only a fit below that takes the elements' own stresses
    r, (L, H, t) = _cantilever(40, 1, "T3")
    s = recover(r, "spr", degree=2)
    x = 25.0
    want = (H * t) * (L - x) * (H / 2) / (t * H ** 3 / 12)  # M c / I
    assert abs(s[_at(r, (x, H)), 0]) == pytest.approx(want, rel=0.03)
