"""The named fields of a result, in one table: name, kind, sign, unit and label.

Every module that lists, checks, labels or writes fields reads them here (the Result's field
names, the colour maps and labels of the figures, the point data of VTK files).

Examples
--------
>>> FIELD_TABLE["tau_xy"].signed, FIELD_TABLE["von_mises"].signed
(True, False)
>>> names(kind="strain")
('eps_xx', 'eps_yy', 'gamma_xy')
>>> names(unit="stress")
('sigma_xx', 'sigma_yy', 'tau_xy', 'sigma_zz', 'von_mises', 'tresca', 'sigma_1', 'sigma_2')
"""
from __future__ import annotations

from typing import NamedTuple

__all__ = ["FieldInfo", "FIELD_TABLE", "names"]


class FieldInfo(NamedTuple):
    """One named field.

    Attributes
    ----------
    name : str
    kind : {"displacement", "stress", "strain"}
        What it is computed from.
    signed : bool
        True when it takes both signs (drawn with a diverging colour map centred on zero).
    unit : {"length", "stress", "deg", ""}
        Which unit of the model it carries (``""``: dimensionless).
    label : str
        Axis or colour-bar label (matplotlib mathtext allowed).
    """

    name: str
    kind: str
    signed: bool
    unit: str
    label: str


_ROWS = (
    FieldInfo("ux", "displacement", True, "length", "displacement $u_x$"),
    FieldInfo("uy", "displacement", True, "length", "displacement $u_y$"),
    FieldInfo("displacement", "displacement", False, "length", "displacement magnitude"),
    FieldInfo("sigma_xx", "stress", True, "stress", r"$\sigma_{xx}$"),
    FieldInfo("sigma_yy", "stress", True, "stress", r"$\sigma_{yy}$"),
    FieldInfo("tau_xy", "stress", True, "stress", r"$\tau_{xy}$"),
    FieldInfo("sigma_zz", "stress", True, "stress", r"$\sigma_{zz}$"),
    FieldInfo("von_mises", "stress", False, "stress", "von Mises stress"),
    FieldInfo("tresca", "stress", False, "stress", "Tresca stress"),
    FieldInfo("sigma_1", "stress", True, "stress", r"major principal stress $\sigma_1$"),
    FieldInfo("sigma_2", "stress", True, "stress", r"minor principal stress $\sigma_2$"),
    FieldInfo("principal_angle", "stress", True, "deg", "angle of $\\sigma_1$ from x"),
    FieldInfo("eps_xx", "strain", True, "", r"strain $\varepsilon_{xx}$"),
    FieldInfo("eps_yy", "strain", True, "", r"strain $\varepsilon_{yy}$"),
    FieldInfo("gamma_xy", "strain", True, "", r"shear strain $\gamma_{xy}$"),
)

#: every named field, by name, in the order a user sees them
FIELD_TABLE: dict[str, FieldInfo] = {f.name: f for f in _ROWS}


def names(*, kind: str | None = None, unit: str | None = None, signed: bool | None = None) -> tuple[str, ...]:
    """Field names with the given kind, unit and sign (None: any), in table order."""
    return tuple(f.name for f in _ROWS if (kind is None or f.kind == kind) and (unit is None or f.unit == unit)
                 and (signed is None or f.signed == signed))
