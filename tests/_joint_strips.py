"""The strips the joint tests lap together (``from _joint_strips import strip, lap``; tests/ is on the path,
see conftest.py): a straight strip of structured elements as a planar Model, and two of them lapped in a
Joint, the first held at its left end and the second pulled at its right end.

It holds no check values: the tests that use it name their own sources. The strips' default material is a
typical aluminium (E = 71 GPa, nu = 0.33: common practice), a model input, not a value checked against."""
from __future__ import annotations

import planar

#: the strips' aluminium unless a test says otherwise
AL = planar.Isotropic(E=71e3, nu=0.33)


def strip(x0: float, x1: float, width: float, thickness: float, size: float, *, element: str = "Q8",
          material=AL, units: str = "N, mm, MPa", y0: float | None = None) -> planar.Model:
    """A strip from ``x = x0`` to ``x1``, ``width`` wide from ``y = y0`` (default: centred on ``y = 0``), of
    ``round(length / size)`` by ``round(width / size)`` structured elements."""
    y0 = -width / 2 if y0 is None else y0
    m = planar.rectangle_mesh(x1 - x0, width, int(round((x1 - x0) / size)), int(round(width / size)), element=element,
                              origin=(x0, y0))
    return planar.Model(m, material, thickness=thickness, units=units)


def lap(spans, width: float, thickness, size: float, *, names=("top", "bottom"), pull: float | None = None,
        case: str = "pull", **strip_options) -> planar.Joint:
    """Two strips lapped (no fasteners yet): ``spans`` ((x0, x1), (x0, x1)), ``thickness`` one or a pair; the
    first held at its left end (``Fixed("left")``), the second pulled at its right end by the traction
    ``tx = pull`` (stress) in ``case`` when ``pull`` is given."""
    ts = thickness if isinstance(thickness, (tuple, list)) else (thickness, thickness)
    first, second = (strip(x0, x1, width, t, size, **strip_options) for (x0, x1), t in zip(spans, ts))
    first.add_support(planar.Fixed("left"))
    if pull is not None:
        second.add_load(planar.Traction("right", tx=pull), case=case)
    return planar.Joint(dict(zip(names, (first, second))))
