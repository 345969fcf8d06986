"""The ``"units"`` check: displacements, strains and moduli that point to mixed units."""
from __future__ import annotations

import numpy as np

from .errors import fmt_point
from .kinematics import _corner_count
from .units import systems, unit_system

__all__ = ["DISPLACEMENT_FRACTION", "STRAIN_LIMIT", "STRAIN_SAMPLE", "STRAIN_QUANTILE", "TINY_STRAIN", "MODULUS_LIMIT",
           "MODULUS_LIMIT_MPA"]

#: largest displacement, as a fraction of the part's size, that small-displacement theory covers
#: (common practice: geometric nonlinearity is felt beyond a few per cent)
DISPLACEMENT_FRACTION = 0.05
#: largest mechanical strain of a linear-elastic structural answer: no structural metal stays elastic
#: beyond about 1e-2 (yield over modulus: maraging steel 2000 / 200e3 MPa = 1e-2, Ti-6Al-4V 880 /
#: 114e3 = 7.7e-3, 7075-T6 aluminium 500 / 71e3 = 7e-3; from memory), so twice that is "far beyond";
#: a unit mix-up is off by a factor of 1e3 or 1e6
STRAIN_LIMIT = 2e-2
#: a largest strain below one microstrain (the resolution of a strain gauge; common practice) with a
#: modulus of 1e9 or more and a part 10 or more long, in a model without declared units, looks like
#: E in Pa with lengths in mm
TINY_STRAIN = 1e-6
#: largest Young's modulus of any solid (diamond, about 1.05e6 MPa; from memory) with margin, in MPa;
#: in a model's own stress unit it is this over the system's ``to_mpa`` (:mod:`planar.core.units`)
MODULUS_LIMIT_MPA = 1.2e6
#: the same limit per stress unit of the known systems (kept for code that reads it by unit name)
MODULUS_LIMIT = {**{s.stress: MODULUS_LIMIT_MPA / s.to_mpa for s in systems()},
                 "N/mm2": MODULUS_LIMIT_MPA, "N/mm^2": MODULUS_LIMIT_MPA}
#: cells sampled per solve for the strain level (a strided sample, spread over the whole mesh)
STRAIN_SAMPLE = 20000
#: the strain level is this quantile of the sampled cells' strains weighted by their areas: a unit
#: mix-up scales the whole field, while a point force, a re-entrant corner or a thin ligament makes a
#: small area's strains as large as one likes, however many cells a graded mesh puts there
STRAIN_QUANTILE = 0.99


def _strain_scale(r) -> float:
    """Largest sampled mechanical strain of a result (cached on it)."""
    cached = getattr(r, "_advice_strain", None)
    if cached is None:
        cached = _strain_level(r)[1]
        r._advice_strain = cached
    return cached


def _strain_level(r) -> tuple[float, float, np.ndarray]:
    """(quantile, largest, where the largest is) of |strain| over a strided sample of the cells.

    Each sampled cell's strain is the constant strain of its first three corners (exact for T3, the
    mean over that corner triangle otherwise), less the cell's mean initial strain; its size is the
    largest principal value. About 2 ms whatever the mesh size.
    """
    nodes, u = r.mesh.nodes, r.u
    blocks = r.assembly.blocks
    total = sum(b.n for b in blocks)
    stride = max(1, total // STRAIN_SAMPLE)
    e0s = getattr(r, "_e0", None) or [None] * len(blocks)
    mags, cents, areas = [], [], []
    for b, e0 in zip(blocks, e0s):
        sel = np.arange(0, b.n, stride)
        c = b.conn[sel]
        p0, p1, p2 = nodes[c[:, 0]], nodes[c[:, 1]], nodes[c[:, 2]]
        q0 = u[c[:, 0]]
        x1, x2 = p1 - p0, p2 - p0
        u1, u2 = u[c[:, 1]] - q0, u[c[:, 2]] - q0
        det = x1[:, 0] * x2[:, 1] - x1[:, 1] * x2[:, 0]
        # displacement gradient G = [u1 u2] [x1 x2]^-1, times det
        gxx = u1[:, 0] * x2[:, 1] - u2[:, 0] * x1[:, 1]
        gxy = u2[:, 0] * x1[:, 0] - u1[:, 0] * x2[:, 0]
        gyx = u1[:, 1] * x2[:, 1] - u2[:, 1] * x1[:, 1]
        gyy = u2[:, 1] * x1[:, 0] - u1[:, 1] * x2[:, 0]
        with np.errstate(invalid="ignore", divide="ignore"):
            inv = 1.0 / det
            exx, eyy, exy = gxx * inv, gyy * inv, 0.5 * (gxy + gyx) * inv
        if e0 is not None:
            m0 = e0[sel].mean(axis=1)
            exx, eyy, exy = exx - m0[:, 0], eyy - m0[:, 1], exy - 0.5 * m0[:, 3]
        mag = np.abs(0.5 * (exx + eyy)) + np.hypot(0.5 * (exx - eyy), exy)
        mag[~np.isfinite(mag)] = 0.0
        mags.append(mag)
        cents.append((p0 + p1 + p2) / 3.0)
        # the cell's area: its corner triangle's, times the corner triangles a polygon of its corners makes
        corners = _corner_count(b.layout, b.conn.shape[1])
        areas.append(np.abs(np.where(np.isfinite(det), det, 0.0)) * 0.5 * max(corners - 2, 1))
    mag = np.concatenate(mags) if mags else np.zeros(0)
    if mag.size == 0:
        return 0.0, 0.0, np.zeros(2)
    i = int(np.argmax(mag))
    q = _weighted_quantile(mag, np.concatenate(areas), STRAIN_QUANTILE)
    return q, float(mag[i]), np.concatenate(cents)[i]


def _weighted_quantile(values: np.ndarray, weights: np.ndarray, q: float) -> float:
    """The value below which the fraction ``q`` of the total weight lies (the plain quantile if no weight)."""
    total = float(weights.sum())
    if not total > 0.0:
        return float(np.quantile(values, q))
    order = np.argsort(values, kind="stable")
    cum = np.cumsum(weights[order])
    k = min(int(np.searchsorted(cum, q * cum[-1], side="left")), values.size - 1)
    return float(values[order][k])


def _stress_unit(units) -> str | None:
    """The stress unit of a model's unit system (or its name), None when not stated."""
    return unit_system(units or None).stress or None


def _units(asm, res) -> list[tuple[str, str, list]]:
    out = []
    used = asm.mesh.used_nodes()  # the part's size: a node in no cell (a stray point) is no part of it
    x, y = asm.mesh.nodes[used, 0], asm.mesh.nodes[used, 1]  # column reductions: far faster than axis=0
    size = float(max(x.max() - x.min(), y.max() - y.min(), 1e-300))
    system = unit_system(getattr(asm.model, "unit_system", None) or getattr(asm.model, "units", None))
    unit = system.stress or None
    if unit is not None:
        lim = MODULUS_LIMIT_MPA / system.to_mpa
        seen = set()
        for b in asm.blocks:
            E = getattr(b.material, "E", None)
            E = float(E) if E is not None else float(np.max(np.abs(b.D)))
            if E > lim and b.region not in seen:
                seen.add(b.region)
                out.append(("units",
                            f"units: region {b.region!r} has a modulus of {E:.4g} {unit}, beyond any solid (diamond "
                            f"is about {lim / 1.15:.3g} {unit}); it looks given in other units (e.g. E in Pa in an "
                            f"N, mm, MPa model), which makes every displacement and strain far too small; give "
                            f"E in {unit} (aluminium about {70e3 / system.to_mpa:.3g} {unit}, steel about "
                            f"{210e3 / system.to_mpa:.3g} {unit})", res))
    small = []
    big_u, big_e = [], []
    for r in res:
        disp2 = np.einsum("ij,ij->i", r.u, r.u)
        k = int(np.argmax(disp2)) if disp2.size else 0
        if disp2.size and disp2[k] > (DISPLACEMENT_FRACTION * size) ** 2:
            big_u.append((r, float(np.hypot(*r.u[k])), asm.mesh.nodes[k]))  # hypot: no overflow of the square
        q, e, where = _strain_level(r)
        r._advice_strain = e
        if q > STRAIN_LIMIT:
            big_e.append((r, q, e, where))
        if 0 < e < TINY_STRAIN:
            small.append((r, e))
    if unit is None and small and size >= 10.0:  # no declared units: lengths of 10 and more look like mm
        moduli = [float(getattr(b.material, "E", 0.0) or 0.0) for b in asm.blocks]
        E = max(moduli, default=0.0)
        if E >= 1e9 and len(small) == len(res):
            r, e = max(small, key=lambda t: t[1])
            out.append(("units",
                        f"units: E = {E:.4g} looks given in Pa while the part, {size:.4g} long, looks measured in "
                        f"mm, and the largest strain is only {e:.2g} (load case {r.case!r}), below one microstrain, "
                        "the resolution of a strain gauge; with lengths in mm give E in MPa (aluminium about "
                        "70e3, steel about 210e3) and loads in N, or use N, m, Pa throughout (and say so with "
                        "units='N, mm, MPa' on the Model)", res))
    if big_u:
        r, d, p = max(big_u, key=lambda t: t[1])
        names = ", ".join(repr(x[0].case) for x in big_u)
        out.append(("units",
                    f"displacements comparable to the part: {d:.4g} at {fmt_point(p)} in load case {r.case!r} is "
                    f"{100 * d / size:.3g} % of the part's size {size:.4g} (limit {100 * DISPLACEMENT_FRACTION:g} %; "
                    f"load case(s) {names}); small-displacement theory no longer holds and the answer is not "
                    "physical; the usual cause is mixed units (e.g. E in MPa or GPa with loads in N and lengths "
                    "in m, or E in GPa with stresses in MPa): check that E, the loads and the lengths use one "
                    "consistent set (N, mm, MPa or N, m, Pa)", [x[0] for x in big_u]))
    if big_e:
        r, q, e, p = max(big_e, key=lambda t: t[1])
        names = ", ".join(repr(x[0].case) for x in big_e)
        out.append(("units",
                    f"strains far beyond elastic: in load case {r.case!r} one per cent of the part's area strains more than "
                    f"{q:.3g} (up to {e:.3g} near {fmt_point(p)}; limit {STRAIN_LIMIT:g}, twice what any structural "
                    f"metal reaches elastically; load case(s) {names}); "
                    "the usual cause is mixed units (e.g. E in GPa with stresses in MPa, or E in MPa with "
                    "loads in Pa): check that E, the loads and the lengths use one consistent set", [x[0] for x in big_e]))
    return out
