"""A solve's results survive pickle and deepcopy (to hand them to another process, or keep a copy).

The check is of the answer itself: the copy's peak equals the original's (common practice: a copy is
the same answer), on the README's strap (uniform tension, sigma_xx = 80 MPa everywhere).
"""
import copy
import pickle

import numpy as np

import planar


def _strap():
    mesh = planar.rectangle_mesh(200.0, 40.0, 10, 2, "Q8")
    model = planar.Model(mesh, planar.Isotropic(E=70e3, nu=0.33), thickness=3.0, units="N, mm, MPa")
    model.add_support(planar.Roller("left", fixed="x"))
    model.add_support(planar.Roller("corner_00", fixed="y"))
    model.add_load(planar.Traction("right", tx=80.0), case="pull")
    return planar.solve(model)


def test_results_pickle_and_copy():
    results = _strap()
    for copied in (pickle.loads(pickle.dumps(results)), copy.deepcopy(results)):
        r, r0 = copied["pull"], results["pull"]
        assert np.isclose(r.max("sigma_xx")[0], 80.0, rtol=1e-9)  # uniform tension: P/A
        assert r.max("von_mises")[0] == r0.max("von_mises")[0]
        np.testing.assert_array_equal(r.u, r0.u)
