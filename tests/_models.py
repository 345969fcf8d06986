"""Small models that several test files share (``from _models import ...``; tests/ is on the path,
see conftest.py)."""
from __future__ import annotations

from collections.abc import Iterable, Mapping

import numpy as np

from planar import Fixed, Isotropic, Model, Roller, Traction, rectangle_mesh, solve
from planar.core.mesh import Mesh

#: the supports a strip can get at its left end
HOLDS = ("fixed", "roller", None)


def strip_model(length: float = 100.0, width: float = 20.0, nx: int = 8, ny: int = 2, element: str = "Q8", *,
                material=None, thickness: float = 2.0, hold: str | None = "fixed",
                loads: Mapping[str, object] | None = None, mesh: Mesh | None = None, **model_kw) -> Model:
    """A ``length`` x ``width`` strip of ``nx`` x ``ny`` cells of ``element`` (``rectangle_mesh``),
    held at its left end and loaded per case.

    Parameters
    ----------
    material
        Default ``Isotropic(70e3, 0.33)`` (aluminium in N, mm, MPa).
    hold : {"fixed", "roller", None}
        ``"fixed"``: ``Fixed("left")``; ``"roller"``: ``Roller("left", fixed="x")`` and
        ``Roller("corner_00", fixed="y")`` (free to contract, so a pull gives uniform stress);
        ``None``: no support.
    loads : mapping
        Case name -> a load or a list of loads, added in the order given.
    mesh : Mesh, optional
        Used instead of the rectangle mesh (for strips with regions or changed cells).
    **model_kw
        Passed to :class:`planar.Model` (``units=``, ``analysis=``, ``quadrature=``, ...).
    """
    if hold not in HOLDS:
        raise ValueError(f"hold must be one of {HOLDS}, got {hold!r}")
    if mesh is None:
        mesh = rectangle_mesh(length, width, nx, ny, element)
    model = Model(mesh, material if material is not None else Isotropic(70e3, 0.33), thickness=thickness,
                  **model_kw)
    if hold == "fixed":
        model.add_support(Fixed("left"))
    elif hold == "roller":
        model.add_support(Roller("left", fixed="x"))
        model.add_support(Roller("corner_00", fixed="y"))
    for case, case_loads in (loads or {}).items():
        for load in (case_loads if isinstance(case_loads, Iterable) else [case_loads]):
            model.add_load(load, case=case)
    return model


def solved_strip(*args, case: str, **kw):
    """The result of ``case`` of :func:`strip_model` (same arguments)."""
    return solve(strip_model(*args, **kw))[case]


def stepped_strip(region: str, E: float, nu: float) -> Model:
    """A 40 x 10 Q4 strip whose left half is the region ``region`` at twice the thickness, pulled by
    5 N/mm on its right end (case "a"): sigma_xx = 5 / t in each half (statics, common practice)."""
    mesh = rectangle_mesh(40.0, 10.0, 8, 2, "Q4")
    cen = mesh.nodes[mesh.cells["Q4"]].mean(axis=1)
    m2 = Mesh(mesh.nodes, mesh.cells, mesh.edge_sets, mesh.node_sets,
              regions={region: {"Q4": np.flatnonzero(cen[:, 0] < 20)}})
    model = strip_model(mesh=m2, material=Isotropic(E, nu), thickness=1.0, hold="roller",
                        loads={"a": Traction("right", tx=5.0)})
    model.assign(region, thickness=2.0)
    return model
