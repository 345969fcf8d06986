"""The named fields of a result, in one table: name, kind, sign, unit and label.

Every module that lists, checks, labels or writes fields reads them here (the Result's field
names, the colour maps and labels of the figures, the point data of VTK files).

Examples
--------
>>> FIELD_TABLE["tau_xy"].signed, FIELD_TABLE["von_mises"].signed
(True, False)
>>> names(kind="strain")
('eps_xx', 'eps_yy', 'gamma_xy')
>>> names(kind="stress")
('sigma_xx', 'sigma_yy', 'tau_xy', 'sigma_zz', 'von_mises', 'tresca', 'sigma_1', 'sigma_2', 'principal_angle')
>>> names(kind="polar")
('sigma_r', 'sigma_theta', 'tau_r_theta')
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np

__all__ = ["FieldInfo", "FIELD_TABLE", "names", "polar_stress", "as_centre"]


class FieldInfo(NamedTuple):
    """One named field.

    Attributes
    ----------
    name : str
    kind : {"displacement", "stress", "strain", "polar"}
        What it is computed from (``"polar"``: the stresses turned to polar axes about a centre the
        user gives, :func:`polar_stress`).
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
    FieldInfo("sigma_r", "polar", True, "stress", r"radial stress $\sigma_r$"),
    FieldInfo("sigma_theta", "polar", True, "stress", r"hoop stress $\sigma_\theta$"),
    FieldInfo("tau_r_theta", "polar", True, "stress", r"shear stress $\tau_{r\theta}$"),
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


def as_centre(centre, field: str = "a polar field") -> np.ndarray:
    """A centre of polar axes as an array (2,), refused with a message naming the fix otherwise.

    Examples
    --------
    >>> as_centre((0, 1.5)).tolist()
    [0.0, 1.5]
    """
    from .errors import InputError

    if centre is None:
        raise InputError(f"{field} is taken about a centre: give centre=(x, y), e.g. the centre of the hole "
                         "or pin, in the model's length unit")
    try:
        c = np.asarray(centre, dtype=float)
    except (TypeError, ValueError):
        c = np.zeros(0)
    if c.shape != (2,) or not np.all(np.isfinite(c)):
        raise InputError(f"centre must be a point (x, y) of two finite numbers, got {centre!r}"[:200])
    return c


def polar_stress(stress, points, centre) -> dict[str, np.ndarray]:
    """Stresses turned to polar axes about a centre: radial, hoop and shear.

    Parameters
    ----------
    stress : array_like, shape (..., 3)
        (sigma_xx, sigma_yy, tau_xy).
    points : array_like, shape (..., 2)
        Where the stresses act.
    centre : (float, float)
        Origin of the polar axes (r from the centre, theta counter-clockwise from +x).

    Returns
    -------
    dict
        ``sigma_r``, ``sigma_theta``, ``tau_r_theta`` (shape ``(...)``). At a point on the centre
        itself the radial direction is taken as +x.

    Notes
    -----
    The rotation of a plane stress tensor (e.g. S. P. Timoshenko and J. N. Goodier, Theory of
    Elasticity, 3rd ed., 1970, art. 26)::

        sigma_r      = sxx c^2 + syy s^2 + 2 txy s c
        sigma_theta  = sxx s^2 + syy c^2 - 2 txy s c
        tau_r_theta  = (syy - sxx) s c + txy (c^2 - s^2)

    with c = cos theta, s = sin theta.

    Examples
    --------
    >>> p = polar_stress([[1.0, 0.0, 0.0]], [[0.0, 2.0]], (0.0, 0.0))  # uniaxial x, on the y axis
    >>> [round(float(p[k][0]), 12) + 0.0 for k in ("sigma_r", "sigma_theta", "tau_r_theta")]
    [0.0, 1.0, 0.0]
    """
    s = np.asarray(stress, dtype=float)
    d = np.asarray(points, dtype=float) - np.asarray(centre, dtype=float)
    th = np.arctan2(d[..., 1], d[..., 0])
    c, sn = np.cos(th), np.sin(th)
    sxx, syy, txy = s[..., 0], s[..., 1], s[..., 2]
    return {"sigma_r": sxx * c * c + syy * sn * sn + 2.0 * txy * sn * c,
            "sigma_theta": sxx * sn * sn + syy * c * c - 2.0 * txy * sn * c,
            "tau_r_theta": (syy - sxx) * sn * c + txy * (c * c - sn * sn)}
