"""Linear elastic materials: isotropic and orthotropic, in plane stress or plane strain.

Units are the user's and must be consistent (for example N, mm, MPa: E in MPa, lengths in mm,
forces in N).
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .values import number
from .errors import InputError, MaterialError, PlanarError

__all__ = ["Isotropic", "Orthotropic", "Material", "ANALYSES", "check_analysis", "check_material",
           "SYMMETRY_TOLERANCE", "DEFINITENESS_TOLERANCE"]

ANALYSES = ("plane stress", "plane strain")


def check_analysis(analysis: str) -> str:
    a = str(analysis).replace("_", " ").replace("-", " ").strip().lower()
    if a not in ANALYSES:
        raise InputError(f"unknown analysis {analysis!r}; pick one of 'plane stress', 'plane strain'")
    return a


def _constant(name: str, value, **rule) -> float:
    try:
        return number(value, name, error=MaterialError, **rule)
    except MaterialError as exc:
        if isinstance(value, (str, bytes)):
            raise MaterialError(f"{exc}: text that is not one number; give a plain number in the model's "
                                "consistent units, e.g. 70e3 (no unit names, no thousands separators)") from None
        raise


def _positive(name: str, value) -> float:
    return _constant(name, value, positive=True)


def _finite(name: str, value) -> float:
    return _constant(name, value)


def _not_negative(name: str, value) -> float:
    return _constant(name, value, nonnegative=True)


def _store(obj, field: str, value: float | None) -> None:
    """Keep a checked constant as a plain float on a frozen material (``"70e3"`` becomes 70000.0).

    A number given as text is accepted when it reads as one finite number (the rule of
    :func:`planar.core.values.number`, also used for thickness); anything else is refused there.
    """
    object.__setattr__(obj, field, value)


#: relative asymmetry max|D - D^T| / max|D| accepted as round-off. D from a compliance inverted in
#: double precision carries an asymmetry of about (machine epsilon) x (condition number); 1e-8 admits
#: condition numbers up to about 1e7 (moduli ratios far beyond any real material) and refuses every
#: asymmetry a typing or formula mistake makes.
SYMMETRY_TOLERANCE = 1e-8
#: smallest eigenvalue of D relative to its largest below which D is not positive definite in double
#: precision (the matrix cannot be told from a singular one: the stiffness would have a mode with no
#: energy). Plane strain at nu = 0.5 - 1e-11 still passes (ratio about 1e-11).
DEFINITENESS_TOLERANCE = 1e-12


def _material_name(material) -> str:
    name = getattr(material, "name", None)
    label = f" {name!r}" if isinstance(name, str) and name else ""
    return f"material{label} ({type(material).__name__})"


def _kind(raw) -> str:
    """What a D method returned, for messages: "an array of complex128", "a list", ..."""
    try:
        return f"an array of {np.asarray(raw).dtype}"
    except (TypeError, ValueError):
        return f"a {type(raw).__name__} that is no array"


def check_material(material, analysis: str = "plane stress") -> np.ndarray:
    """Check a material's elasticity matrix and return it as a (3, 3) float array.

    Any object with a method ``D(analysis)`` may be a material. Its matrix must be a 3 x 3 array of
    finite numbers, symmetric to round-off (:data:`SYMMETRY_TOLERANCE`) and positive definite
    (:data:`DEFINITENESS_TOLERANCE`): an elastic solid stores energy under every strain, and the
    stiffness assembled from an unsymmetric D would be symmetrised silently by the solver (which
    reads one triangle), so such a D is refused rather than changed.

    Parameters
    ----------
    material : Isotropic, Orthotropic or any object with ``D(analysis)``
    analysis : {"plane stress", "plane strain"}

    Returns
    -------
    ndarray, shape (3, 3)

    Raises
    ------
    MaterialError
        Naming the material and what is wrong with its D, and the fix.

    Examples
    --------
    >>> check_material(Isotropic(70e3, 0.3)).shape
    (3, 3)
    """
    analysis = check_analysis(analysis)
    what = _material_name(material)
    method = getattr(material, "D", None)
    if not callable(method):
        raise MaterialError(
            f"{what} has no method D(analysis); a material must be Isotropic, Orthotropic, or provide "
            "D(analysis) returning the 3 x 3 elasticity matrix for (sigma_xx, sigma_yy, tau_xy)"
        )
    try:
        raw = method(analysis)
    except PlanarError:
        raise
    except Exception as exc:  # the user's own code
        raise MaterialError(
            f"{what}: D({analysis!r}) failed with {type(exc).__name__}: {exc}; D(analysis) must take "
            "the analysis name and return the 3 x 3 elasticity matrix"
        ) from None
    try:
        arr = np.asarray(raw)
        if arr.dtype.kind not in "iufO":  # complex, text, booleans: not a stiffness
            raise TypeError(arr.dtype)
        D = np.array(arr, dtype=float)  # objects (e.g. Fractions) only if each one is a real number
    except (TypeError, ValueError, OverflowError):
        raise MaterialError(
            f"{what}: D({analysis!r}) returned {_kind(raw)}, not a 3 x 3 array of real numbers; "
            "return the elasticity matrix for (sigma_xx, sigma_yy, tau_xy) as numbers"
        ) from None
    if D.shape != (3, 3):
        raise MaterialError(
            f"{what}: D({analysis!r}) has shape {D.shape}, but a plane elasticity matrix is 3 x 3 "
            "(sigma_xx, sigma_yy, tau_xy against eps_xx, eps_yy, gamma_xy); return that block only"
        )
    bad = ~np.isfinite(D)
    if bad.any():
        i, j = np.argwhere(bad)[0]
        raise MaterialError(
            f"{what}: D({analysis!r}) has {int(bad.sum())} entries that are not finite numbers "
            f"(first D[{i}, {j}] = {D[i, j]!r}); check the constants it is computed from"
        )
    scale = float(np.abs(D).max())
    if scale == 0.0:
        raise MaterialError(f"{what}: D({analysis!r}) is all zeros; give the material's stiffness")
    asym = np.abs(D - D.T)
    if asym.max() > SYMMETRY_TOLERANCE * scale:
        i, j = np.unravel_index(int(np.argmax(asym)), asym.shape)
        raise MaterialError(
            f"{what}: D({analysis!r}) is not symmetric: D[{i}, {j}] = {D[i, j]:.6g} but D[{j}, {i}] = "
            f"{D[j, i]:.6g} (relative difference {asym.max() / scale:.2g}, allowed {SYMMETRY_TOLERANCE:g} "
            "for round-off); an elastic material has a symmetric D (it stores energy). Fix the "
            "matrix: planar does not symmetrise it for you"
        )
    ev = np.linalg.eigvalsh(0.5 * (D + D.T))
    if ev[0] <= DEFINITENESS_TOLERANCE * ev[-1]:
        raise MaterialError(
            f"{what}: D({analysis!r}) is not positive definite (eigenvalues {', '.join(f'{v:.4g}' for v in ev)}): "
            "some strain would store no or negative energy. Check the constants: moduli > 0 and "
            "Poisson's ratios inside the stable range"
        )
    return D


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
        _store(self, "E", _positive("Young's modulus E", self.E))
        nu = _finite("Poisson's ratio nu", self.nu)
        if not (-1.0 < nu <= 0.5):
            raise MaterialError(
                f"Poisson's ratio nu = {self.nu!r} is outside -1 < nu <= 0.5, where an isotropic "
                "solid is stable; metals are near 0.3"
            )
        _store(self, "nu", nu)
        _store(self, "alpha", _finite("thermal expansion alpha", self.alpha))
        _store(self, "density", _not_negative("density", self.density))

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
        for name in ("E1", "E2", "G12"):
            _store(self, name, _positive(name, getattr(self, name)))
        _store(self, "angle", _finite("material angle", self.angle))
        nu12 = _finite("Poisson's ratio nu12", self.nu12)
        for name in ("nu13", "nu23"):
            if getattr(self, name) is not None:
                _store(self, name, _finite(f"Poisson's ratio {name}", getattr(self, name)))
        for name in ("alpha1", "alpha2", "alpha3"):
            _store(self, name, _finite(f"thermal expansion {name}", getattr(self, name)))
        _store(self, "density", _not_negative("density", self.density))
        if nu12 * nu12 >= self.E1 / self.E2:
            raise MaterialError(
                f"nu12 = {self.nu12!r} makes the material unstable: need nu12^2 < E1/E2 = "
                f"{self.E1 / self.E2:g}"
            )
        _store(self, "nu12", nu12)
        if self.E3 is not None:
            _store(self, "E3", _positive("E3", self.E3))
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
