"""Checks that run after a solve and say when the discretisation or the inputs cannot be trusted.

:func:`advise` runs once per :func:`planar.solve` call, over every load case it solved, and raises
each concern once as a :class:`~planar.core.errors.DiscretisationWarning` with a short code, while
every :class:`~planar.core.result.Result` it concerns keeps it in ``result.warnings``. The checks
cost a few numpy passes over the cells of the linear blocks (none per element in Python), and
nothing at all for a one-region model in quadratic elements beyond one strain estimate per case.

Codes
-----
``"locking"``
    Linear elements that lock volumetrically in a nearly incompressible plane-strain material:
    T3 with any rule (unless the mesh is crossed, see :func:`singular_vertex_share`), Q4 with two or
    more points per direction, also with planar's ``"selective"`` rule, which reduces only the shear
    terms. Nearly incompressible: bulk-to-shear ratio 1 / (1 - 2 nu) >= 25, nu >= 0.48 for an
    isotropic material. Plane stress never locks (the thickness is free).
``"slender"``
    A slender part (length / depth > 2) in bending, meshed with too few linear elements through its
    depth: fewer than 6 T3 or 4 Q4 (full rule); an element free of shear locking bends right with one.
``"units"``
    Displacements above 5 % of the part's size, mechanical strains above 2e-2 in one cell in a
    hundred, a modulus beyond any solid in the declared units, or (units not declared) a modulus of
    1e9 or more on a part 10 or more long that strains less than 1e-6 anywhere: the typical cause is
    mixed units (E in Pa with lengths in mm, E in GPa with stresses in MPa).
``"contrast"``
    Neighbouring regions whose membrane stiffness E t differs by more than 1e6.
``"held-load"``
    A load case whose loads, or an edge or point load of a case, act only on unknowns the supports
    prescribe (in the supports' own directions): they pass straight into the reactions and the part
    carries no stress from them. Not judged for a case with a temperature change or a prescribed
    motion. Raised before the solve by :func:`planar.core._held_loads.held_load_check`, not by
    :func:`advise`.

``"linear-peak"``
    A stress peak read by linear elements (T3, Q4, any degree-1 type) at a stress raiser: on a
    concave boundary (hole, fillet, notch, re-entrant corner), 1.5 times the median of the field or
    more, and falling by a fifth or more across the cells around it. Raised by the peak queries
    through :func:`planar.core._advice_linear.linear_peak`, not by :func:`advise`. Linear peaks this
    rule misses (a thin ligament stressed evenly across) are ``"coarse-peak"``'s.
``"sharp-corner"``
    A stress peak at, or one node off, a sharp re-entrant corner of the boundary (more than 195 degrees
    of material between the tangents of its sides, no radius): singular, so set by the mesh. Raised by
    the peak queries and the hot spots through :func:`planar.core._advice_corner.sharp_corner_peak`.
``"interface-edge"``
    A stress peak within two element sizes of a point where an interface between regions of different
    stiffness (plane moduli or thickness) meets a free edge, or turns a corner inside the part (an insert's
    or a thicker pad's corner, three regions meeting; not a curved interface meshed with straight sides),
    whose singularity (Bogy's exponent lambda from
    the wedge angles and the Dundurs parameters) is not weak: 1 - lambda >= log10(1.05), so the peak there
    rises by 5 % or more per tenfold refinement. Raised by the peak queries and the hot spots through
    :func:`planar.core._advice_interface.interface_edge_peak`.
``"coarse-peak"``
    A stress peak that the mesh does not resolve where it sits: with quadratic (or higher) elements
    the cells round the peak node disagree with the recovered field by 12 % of the peak or more (a
    local recovery error indicator; on a pin-loaded hole with a dozen element sides, or one element
    across a thin ligament, the peak reads 25-40 % low); with linear elements (T3, Q4), at a concave
    stretch of the boundary (hole, fillet, notch, ligament), their stresses at their own stress points
    differ on average from the recovered field by 3 % of the peak or more, or the peak sits on a
    ligament crossed by fewer than 1.5 of them (measured 4-52 % low). Not judged
    at a sharp corner, an interface edge, next to an idealised support or load, nor where
    ``"linear-peak"`` already holds. Raised by
    the peak queries, the hot spots and the lug check through
    :func:`planar.core._advice_peak.coarse_peak`; the hot-spot and lug tables show it.

:mod:`planar.post.checks` adds ``"factor-of-safety"`` (a factor below 1 in a margin of safety) and
``"negative-nominal"`` (a compressive nominal stress in a Kt) to the result it checks.

Element types say what they are free of with a class attribute ``free_of_locking``, a tuple with
``"volumetric"`` and/or ``"shear"`` (the incompatible-mode QM6 declares both). Without it, elements
of degree 2 or more count as free of both, and linear ones as free of neither unless their rule has
one point (reduced integration; its zero-energy modes are another check's concern).

Each family of checks has its own module (``_advice_locking``, ``_advice_contrast``,
``_advice_slender``, ``_advice_units``); their names are importable from here as before.
"""
from __future__ import annotations

import warnings as _warnings

from ._advice_contrast import CONTRAST_LIMIT, _contrast  # noqa: F401
from ._advice_locking import (CROSSED_SHARE, LOCKING_RATIO, _locking, _nu_of, bulk_shear_ratio,  # noqa: F401
                              free_of_locking, singular_vertex_share)
from ._advice_slender import (MIN_THROUGH_DEPTH, SLENDER_RATIO, _WHY, _bending, _boundary_edges,  # noqa: F401
                              _boundary_tree, _cell_extent, _corners, _grow, _point, _slender, _slender_region,
                              _touches, _zone_shape, _zones)
from ._advice_units import (DISPLACEMENT_FRACTION, MODULUS_LIMIT, STRAIN_LIMIT, STRAIN_QUANTILE,  # noqa: F401
                            STRAIN_SAMPLE, TINY_STRAIN, _strain_level, _strain_scale, _stress_unit, _units)
from .errors import DiscretisationWarning, PlanarWarning

__all__ = ["advise", "free_of_locking", "bulk_shear_ratio", "singular_vertex_share", "LOCKING_RATIO",
           "CROSSED_SHARE", "SLENDER_RATIO", "MIN_THROUGH_DEPTH", "DISPLACEMENT_FRACTION", "STRAIN_LIMIT",
           "STRAIN_SAMPLE", "STRAIN_QUANTILE", "TINY_STRAIN", "CONTRAST_LIMIT", "MODULUS_LIMIT"]


def advise(results: dict, *, stacklevel: int = 3) -> list[PlanarWarning]:
    """Run the trust checks over the results of one solve; warn once, keep in every result concerned.

    Parameters
    ----------
    results : dict of str to Result
        The load cases of one solve (sharing one assembly).
    stacklevel : int
        Passed to :func:`warnings.warn` so the warning points at the user's call.

    Returns
    -------
    list of PlanarWarning
        The warnings raised (each also in the ``warnings`` list of the results it concerns).
    """
    if not results:
        return []
    res = list(results.values())
    asm = res[0].assembly
    found: list[tuple[str, str, list]] = []  # (code, message, results concerned)
    found += [(c, m, res) for c, m in _locking(asm)]
    found += [(c, m, res) for c, m in _contrast(asm)]
    found += _slender(asm, res)
    found += _units(asm, res)
    out = []
    for code, msg, concerned in found:
        w = DiscretisationWarning(msg, code)
        _warnings.warn(w, stacklevel=stacklevel)
        for r in concerned:
            if not any(o.code == w.code and o.message == w.message for o in r.warnings):
                r.warnings.append(w)
        out.append(w)
    return out
