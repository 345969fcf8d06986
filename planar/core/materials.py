"""Linear elastic materials: isotropic and orthotropic, in plane stress or plane strain.

Units are the user's and must be consistent (for example N, mm, MPa: E in MPa, lengths in mm,
forces in N).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .values import number
from .errors import InputError, MaterialError

__all__ = ["Isotropic", "Orthotropic", "Material", "ANALYSES", "check_analysis"]

ANALYSES = ("plane stress", "plane strain")


def check_analysis(analysis: str) -> str:
    a = str(analysis).replace("_", " ").replace("-", " ").strip().lower()
    if a not in ANALYSES:
        raise InputError(f"unknown analysis {analysis!r}; pick one of 'plane stress', 'plane strain'")
    return a


def _positive(name: str, value) -> float:
    return number(value, name, positive=True, error=MaterialError)


def _finite(name: str, value) -> float:
    return number(value, name, error=MaterialError)


def _not_negative(name: str, value) -> float:
    return number(value, name, nonnegative=True, error=MaterialError)


@dataclass(frozen=True)
class Isotropic:
    """Isotropic linear elastic material.

    Parameters
    ----------
    E : float
        Young's modulus (> 0).
    nu : float
        Poisson's ratio, -1 < nu < 0.5 (nu = 0.5 is allowed in plane stress only).
    alpha : float, optional
        Coefficient of thermal expansion (per degree), for temperature loads.
    density : float, optional
        Mass per unit volume, for gravity-type body forces.
    name : str, optional
        A label shown in reports.

    Raises
    ------
    MaterialError
        If E <= 0 or nu is outside (-1, 0.5].
    """

    E: float
    nu: float
    alpha: float = 0.0
    density: float = 0.0
    name: str = "isotropic"

    def __post_init__(self) -> None:
        _positive("Young's modulus E", self.E)
        try:
            nu = float(self.nu)
        except (TypeError, ValueError):
            raise MaterialError(f"Poisson's ratio nu must be a number, got {self.nu!r}") from None
        if not (-1.0 < nu <= 0.5) or not math.isfinite(nu):
            raise MaterialError(
                f"Poisson's ratio nu = {self.nu!r} is outside -1 < nu <= 0.5, where an isotropic "
                "solid is stable; metals are near 0.3"
            )
        _finite("thermal expansion alpha", self.alpha)
        _not_negative("density", self.density)

    @property
    def G(self) -> float:
        """Shear modulus E / (2 (1 + nu))."""
        return self.E / (2.0 * (1.0 + self.nu))

    def compliance3d(self) -> np.ndarray:
        """Compliance for (xx, yy, zz, xy-engineering) components, shape (4, 4)."""
        E, nu = float(self.E), float(self.nu)
        S = np.zeros((4, 4))
        S[:3, :3] = -nu / E
        np.fill_diagonal(S[:3, :3], 1.0 / E)
        S[3, 3] = 1.0 / self.G
        return S

    def thermal_strain(self) -> np.ndarray:
        """Free thermal strain per degree for (xx, yy, zz, xy)."""
        a = float(self.alpha)
        return np.array([a, a, a, 0.0])

    def D(self, analysis: str = "plane stress") -> np.ndarray:
        """Elasticity matrix relating (sigma_xx, sigma_yy, tau_xy) to (eps_xx, eps_yy, gamma_xy).

        Notes
        -----
        Plane stress: D = E / (1 - nu^2) [[1, nu, 0], [nu, 1, 0], [0, 0, (1 - nu) / 2]].
        Plane strain: D = E / ((1 + nu)(1 - 2 nu)) [[1 - nu, nu, 0], [nu, 1 - nu, 0], [0, 0, (1 - 2 nu) / 2]]
        (S. P. Timoshenko and J. N. Goodier, Theory of Elasticity, 3rd ed., 1970, articles 7-8).
        """
        analysis = check_analysis(analysis)
        E, nu = float(self.E), float(self.nu)
        if analysis == "plane stress":
            c = E / (1.0 - nu * nu)
            return c * np.array([[1.0, nu, 0.0], [nu, 1.0, 0.0], [0.0, 0.0, 0.5 * (1.0 - nu)]])
        if nu >= 0.5:
            raise MaterialError(
                "nu = 0.5 (incompressible) cannot be used in plane strain with displacement "
                "elements: D is infinite; use nu <= 0.499 or a plane-stress analysis"
            )
        c = E / ((1.0 + nu) * (1.0 - 2.0 * nu))
        return c * np.array([[1.0 - nu, nu, 0.0], [nu, 1.0 - nu, 0.0], [0.0, 0.0, 0.5 - nu]])

    def describe(self) -> str:
        return f"{self.name}: E = {self.E:g}, nu = {self.nu:g}" + (f", alpha = {self.alpha:g}" if self.alpha else "")


@dataclass(frozen=True)
class Orthotropic:
    """Orthotropic linear elastic material with principal axes at ``angle`` degrees from x.

    Parameters
    ----------
    E1, E2 : float
        Moduli along the material axes 1 and 2 (> 0).
    nu12 : float
        Major Poisson's ratio (strain in 2 from stress in 1); nu21 = nu12 E2 / E1.
    G12 : float
        In-plane shear modulus (> 0).
    angle : float
        Angle of axis 1 from the x axis, degrees, counter-clockwise.
    E3, nu13, nu23 : float, optional
        Out-of-plane constants, needed for plane strain only.
    alpha1, alpha2, alpha3 : float, optional
        Thermal expansion along the material axes.
    """

    E1: float
    E2: float
    nu12: float
    G12: float
    angle: float = 0.0
    E3: float | None = None
    nu13: float | None = None
    nu23: float | None = None
    alpha1: float = 0.0
    alpha2: float = 0.0
    alpha3: float = 0.0
    density: float = 0.0
    name: str = "orthotropic"

    def __post_init__(self) -> None:
        _positive("E1", self.E1)
        _positive("E2", self.E2)
        _positive("G12", self.G12)
        _finite("material angle", self.angle)
        nu12 = _finite("Poisson's ratio nu12", self.nu12)
        for name in ("nu13", "nu23"):
            if getattr(self, name) is not None:
                _finite(f"Poisson's ratio {name}", getattr(self, name))
        for name in ("alpha1", "alpha2", "alpha3"):
            _finite(f"thermal expansion {name}", getattr(self, name))
        _not_negative("density", self.density)
        if nu12 * nu12 >= self.E1 / self.E2:
            raise MaterialError(
                f"nu12 = {self.nu12!r} makes the material unstable: need nu12^2 < E1/E2 = "
                f"{self.E1 / self.E2:g}"
            )
        if self.E3 is not None:
            _positive("E3", self.E3)
            S = self._S3()
            if np.any(np.linalg.eigvalsh(S[:3, :3]) <= 0):
                raise MaterialError(
                    "the out-of-plane constants (E3, nu13, nu23) make the compliance indefinite; "
                    "check nu13 and nu23 against E1/E3 and E2/E3"
                )

    def _S3(self) -> np.ndarray:
        E1, E2, G = float(self.E1), float(self.E2), float(self.G12)
        nu12 = float(self.nu12)
        E3 = float(self.E3) if self.E3 is not None else max(E1, E2)
        nu13 = float(self.nu13) if self.nu13 is not None else 0.0
        nu23 = float(self.nu23) if self.nu23 is not None else 0.0
        S = np.array(
            [
                [1 / E1, -nu12 / E1, -nu13 / E1, 0.0],
                [-nu12 / E1, 1 / E2, -nu23 / E2, 0.0],
                [-nu13 / E1, -nu23 / E2, 1 / E3, 0.0],
                [0.0, 0.0, 0.0, 1 / G],
            ]
        )
        return S

    def _rotation(self) -> np.ndarray:
        """Strain transformation T_eps from material to global axes for (xx, yy, zz, xy-eng)."""
        t = math.radians(float(self.angle))
        c, s = math.cos(t), math.sin(t)
        # global strain = R @ material strain (engineering shear)
        return np.array(
            [
                [c * c, s * s, 0.0, -c * s],
                [s * s, c * c, 0.0, c * s],
                [0.0, 0.0, 1.0, 0.0],
                [2 * c * s, -2 * c * s, 0.0, c * c - s * s],
            ]
        )

    def compliance3d(self) -> np.ndarray:
        """Global compliance for (xx, yy, zz, xy-engineering), shape (4, 4)."""
        R = self._rotation()
        return R @ self._S3() @ R.T

    def thermal_strain(self) -> np.ndarray:
        R = self._rotation()
        return R @ np.array([self.alpha1, self.alpha2, self.alpha3, 0.0])

    def D(self, analysis: str = "plane stress") -> np.ndarray:
        """Elasticity matrix in global axes for (sigma_xx, sigma_yy, tau_xy).

        Notes
        -----
        Plane stress inverts the in-plane block of the compliance; plane strain condenses
        eps_zz = 0 out of the 3D compliance (R. M. Jones, Mechanics of Composite Materials, 2nd ed.,
        1999, sections 2.5 and 2.6).
        """
        analysis = check_analysis(analysis)
        S = self.compliance3d()
        if analysis == "plane stress":
            idx = [0, 1, 3]
            return np.linalg.inv(S[np.ix_(idx, idx)])
        if self.E3 is None or self.nu13 is None or self.nu23 is None:
            raise MaterialError(
                "an orthotropic material in plane strain needs its out-of-plane constants: "
                "give E3, nu13 and nu23"
            )
        C = np.linalg.inv(S)
        idx = [0, 1, 3]
        return C[np.ix_(idx, idx)]

    def describe(self) -> str:
        return (f"{self.name}: E1 = {self.E1:g}, E2 = {self.E2:g}, nu12 = {self.nu12:g}, "
                f"G12 = {self.G12:g}, angle = {self.angle:g} deg")


Material = Isotropic | Orthotropic


def sigma_zz(material: Material, analysis: str, stress: np.ndarray, eps0_zz: np.ndarray | float = 0.0) -> np.ndarray:
    """Out-of-plane stress: zero in plane stress; from eps_zz = 0 in plane strain.

    Parameters
    ----------
    stress : ndarray, shape (..., 3)
        (sigma_xx, sigma_yy, tau_xy).
    eps0_zz : ndarray or float
        Initial (e.g. thermal) out-of-plane strain.

    Notes
    -----
    eps_zz = S_zx sigma_xx + S_zy sigma_yy + S_zs tau_xy + sigma_zz S_zz + eps0_zz = 0; for an isotropic
    material sigma_zz = nu (sigma_xx + sigma_yy) - E eps0_zz.
    """
    analysis = check_analysis(analysis)
    stress = np.asarray(stress)
    if analysis == "plane stress":
        return np.zeros(stress.shape[:-1])
    S = material.compliance3d()
    return -(S[2, 0] * stress[..., 0] + S[2, 1] * stress[..., 1] + S[2, 3] * stress[..., 2] + eps0_zz) / S[2, 2]
