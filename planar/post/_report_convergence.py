"""The convergence evidence of the stress-check report: a grid-convergence study as a table and its
verdict, an adaptive run as its cycles and outcome, and a summary tile for each (used by
:func:`planar.post.report.stress_check_report`)."""
from __future__ import annotations

from ..core.errors import InputError
from ._blocks import Figure, KeyValues, Notice, Paragraph, Section, SignOff, Table, Tiles

__all__ = ["convergence_blocks", "convergence_tiles"]


def _v(v, spec: str = ".4g") -> str:
    """A number for the report; "-" for a missing or non-finite one (never a NaN in the text)."""
    import math

    return "-" if v is None or not math.isfinite(float(v)) else format(float(v), spec)


def _evidence(convergence) -> list:
    """The items of ``convergence=``: a study or an adaptive run alone, or a sequence of them and of blocks."""
    if convergence is None:
        return []
    if hasattr(convergence, "verdict") or hasattr(convergence, "cycles"):
        return [convergence]
    try:
        return list(convergence)
    except TypeError:
        raise InputError(f"convergence= takes convergence studies (planar.post.grid_convergence, convergence_study), "
                         f"adaptive runs (planar.post.adapt) or report blocks, got {convergence!r}") from None


def _run_blocks(run, unit: str) -> list:
    """An adaptive run: its cycles, whether it reached its target, and the study of its last three peaks."""
    u = f" [{unit}]" if unit else ""
    rows = [[str(c.index), str(c.dofs), str(c.n_elements), f"{100 * c.error:.3g}", _v(c.peak, ".6g")]
            for c in run.cycles]
    out: list = [Table(["cycle", "unknowns", "elements", "estimated error [%]", f"peak {run.field}{u}"], rows,
                       caption="Adaptive refinement driven by the Zienkiewicz-Zhu error estimate (energy norm), "
                               "each cycle remeshed from the last one's error.", numeric=[1, 2, 3, 4]),
                  KeyValues([("target of the estimated error", f"{100 * run.target:.3g} %"),
                             ("target reached", "yes" if run.converged else "no"), ("stopped", run.reason)],
                            caption="Outcome of the adaptive refinement")]
    if not run.converged:
        out.append(Notice([f"The adaptive refinement stopped before its target ({run.reason}): the estimated error "
                           f"of the final mesh is {100 * run.final.error:.3g} %, above the "
                           f"{100 * run.target:.3g} % asked for."], kind="caution"))
    if len(run.cycles) >= 3:
        import warnings

        with warnings.catch_warnings():  # its verdict is in the table below
            warnings.simplefilter("ignore")
            out += _convergence_blocks([run.convergence(unit=unit)])
    return out


def _convergence_blocks(convergence, unit: str = "") -> list:
    """Blocks of convergence evidence: given blocks as they are, a GridConvergence as a table with its verdict,
    an adaptive run as its cycles and outcome."""
    out = []
    for c in _evidence(convergence):
        if hasattr(c, "cycles") and hasattr(c, "converged"):
            out += _run_blocks(c, unit)
            continue
        if isinstance(c, Section):  # a section of the caller's: its blocks, under the convergence heading
            out += list(c.blocks)
            continue
        if not hasattr(c, "verdict"):
            if not isinstance(c, (Paragraph, Table, KeyValues, Figure, Notice, Tiles, SignOff)):
                raise InputError(f"convergence= takes convergence studies (planar.post.grid_convergence, "
                                 f"convergence_study) or report blocks, got {c!r}")
            out.append(c)
            continue
        u = f" {c.unit}" if c.unit else ""
        rows = [[str(i + 1), "-" if c.dofs is None else str(int(c.dofs[i])), f"{c.sizes[i] / c.sizes[0]:.4g}",
                 f"{c.values[i]:.6g}"] for i in range(len(c.values))]
        out.append(Table(["mesh", "unknowns", "size / finest size", f"{c.name}" + (f" [{c.unit}]" if c.unit else "")],
                         rows, caption=f"Convergence study of {c.name}, finest mesh first.", numeric=[1, 2, 3]))
        lo, hi = c.band()
        kv = [("behaviour", c.kind), ("observed order", f"{c.order:.3g}" if c.order == c.order else "-"),
              ("verdict", c.verdict)]
        if c.asymptotic:
            kv += [("Richardson extrapolation", f"{c.extrapolated:.6g}{u}"),
                   ("grid convergence index, finest mesh", f"{100 * c.gci_fine:.3g} %"),
                   ("band on the finest value", f"{lo:.6g} to {hi:.6g}{u}")]
        else:
            kv += [("grid convergence index", "none claimed: not in the asymptotic range"),
                   ("spread of the finest values", f"{c.uncertainty:.4g}{u}")]
        out.append(KeyValues(kv, caption="Convergence verdict (P. J. Roache, 1998; I. B. Celik et al., J. Fluids "
                                         "Eng. 130, 2008)"))
        if c.notes:
            out.append(Notice(list(c.notes), kind="note"))
    return out


def _convergence_tiles(convergence) -> list:
    """One summary tile per convergence study: its GCI, or that none is claimed (a study not converged)."""
    tiles = []
    for c in _evidence(convergence):
        if hasattr(c, "cycles") and hasattr(c, "converged"):
            err = f"estimated error {100 * c.final.error:.3g} %"
            tiles.append(("adaptive refinement", err, f"target {100 * c.target:.3g} %: " + (
                "reached" if c.converged else f"not reached ({c.reason})"), "pass" if c.converged else "fail"))
            continue
        if not hasattr(c, "verdict"):
            continue
        u = f" {c.unit}" if c.unit else ""
        if c.asymptotic:
            lo, hi = c.band()
            tiles.append((f"convergence, {c.name}", f"GCI {_v(100 * c.gci_fine, '.3g')} %",
                          f"band {_v(lo, '.6g')} to {_v(hi, '.6g')}{u} on the finest value", "pass"))
        else:
            tiles.append((f"convergence, {c.name}", "no GCI claimed",
                          f"{c.verdict}: the discretisation error of the figures is not known", "fail"))
    return tiles


convergence_blocks = _convergence_blocks
convergence_tiles = _convergence_tiles
