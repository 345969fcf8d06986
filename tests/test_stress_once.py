"""Stress recovery in the core: one module under two names, the public initial strains, and the one
function that gives the stress at a rule's points.

Sources: the constant-stress patch test (R. H. MacNeal and R. L. Harder, "A proposed standard set of
problems to test finite element accuracy", Finite Elements in Analysis and Design 1, 1985): a uniform
traction gives that stress exactly at any point of any element; linear superposition of initial
strains (common practice; S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., 1970).
"""
import numpy as np
import pytest

import planar
from planar.core.quadrature import rule_for
from planar.core.stress import stress_at


def _strip(element: str, *, heat: bool = False):
    mesh = planar.rectangle_mesh(40.0, 10.0, 8, 2, element)
    model = planar.Model(mesh, planar.Isotropic(70e3, 0.3, alpha=2e-5), thickness=2.0)
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=40.0), case="pull")
    if heat:
        model.add_load(planar.TemperatureChange(10.0), case="heat")
    return model


def test_the_old_path_is_the_core_module():
    import planar.core.recovery as core
    import planar.post.recovery as post

    assert post is core
    from planar.post.recovery import RecoveryOperator, prepare_recovery, recover

    assert (recover, prepare_recovery, RecoveryOperator) == (core.recover, core.prepare_recovery,
                                                             core.RecoveryOperator)


@pytest.mark.parametrize("element", ["T3", "T6", "Q4", "Q8", "Q9"])
def test_stress_at_any_rule_is_the_patch_stress(element):
    r = planar.solve(_strip(element))["pull"]
    b = r.assembly.blocks[0]
    for rule in (rule_for("triangle" if b.etype.cell == "triangle" else "quad", 3), b.rule):
        at = stress_at(b, r.mesh.nodes, r.u, rule, analysis=r.model.analysis, dvol=True)
        np.testing.assert_allclose(at.stress[..., 0], 40.0, rtol=1e-9)
        np.testing.assert_allclose(at.stress[..., 1:], 0.0, atol=1e-9)
        assert at.mech_strain is at.strain  # no initial strain: one array
        np.testing.assert_allclose(at.dvol.sum(), 40.0 * 10.0 * 2.0, rtol=1e-12)
    # the Gauss-point field of the result is the same function at the stress rule
    g = r.gauss[0]
    at = stress_at(b, r.mesh.nodes, r.u, g.rule, analysis=r.model.analysis)
    np.testing.assert_array_equal(g.stress, at.stress)


def test_initial_strains_are_public_and_combine_with_the_factors():
    res = planar.solve(_strip("Q8", heat=True))
    pull, heat = res["pull"].initial_strains, res["heat"].initial_strains
    assert all(e is None for e in pull)
    assert all(e is not None for e in heat)
    np.testing.assert_allclose(heat[0][..., 0], 2e-5 * 10.0)
    from planar.post.combine import combine

    mix = combine(res, {"pull": 1.0, "heat": 1.5}, name="mix").initial_strains
    np.testing.assert_allclose(mix[0], 1.5 * heat[0])
    # a free thermal expansion adds no stress: the combination's stress is the pull's
    np.testing.assert_allclose(combine(res, {"pull": 1.0, "heat": 1.5}).nodal_stress("spr")[0],
                               res["pull"].nodal_stress("spr")[0], atol=1e-8)
