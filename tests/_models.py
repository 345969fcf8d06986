"""Small models that several test files share."""
import numpy as np

from planar import Isotropic, Model, Roller, Traction, rectangle_mesh
from planar.core.mesh import Mesh


def stepped_strip(region: str, E: float, nu: float) -> Model:
    """A 40 x 10 Q4 strip whose left half is the region ``region`` at twice the thickness, pulled by
    5 N/mm on its right end (case "a"): sigma_xx = 5 / t in each half (statics, common practice)."""
    mesh = rectangle_mesh(40.0, 10.0, 8, 2, "Q4")
    cen = mesh.nodes[mesh.cells["Q4"]].mean(axis=1)
    m2 = Mesh(mesh.nodes, mesh.cells, mesh.edge_sets, mesh.node_sets,
              regions={region: {"Q4": np.flatnonzero(cen[:, 0] < 20)}})
    model = Model(m2, Isotropic(E, nu), thickness=1.0)
    model.assign(region, thickness=2.0)
    model.add_support(Roller("left", fixed="x"))
    model.add_support(Roller("corner_00", fixed="y"))
    model.add_load(Traction("right", tx=5.0), case="a")
    return model
