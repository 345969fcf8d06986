"""The table of a sweep: CSV, JSON and a plot against a parameter; read back with load_table."""
from __future__ import annotations

import csv
import io
import json
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Mapping, Sequence

import numpy as np

from ..core.errors import InputError, unknown_name
from ..post.files import atomic_write_text
from .parameters import _canonical
from .compute import _is_number
from .store import _jsonable


# ============================================================================ the table
@dataclass
class SweepTable:
    """The points of a sweep and their outputs, in the order the points were given.

    Attributes
    ----------
    function : str
        ``"module:function"`` of the user function.
    parameters : list of str
    outputs : list of str
    records : list of dict
        One per point: ``key``, ``params``, ``status`` ("done" or "failed"), ``outputs``, ``error``
        (type and message of a failure), ``seconds``, ``worker``.
    computed : int
        Points computed in this run.
    reused : int
        Points taken from the store.
    seconds : float
        Wall time of this run.
    stale : int
        Points the store held from another version of the function (its code, defaults or the
        module constants it reads changed), computed again.
    """

    function: str
    parameters: list[str]
    outputs: list[str]
    records: list[dict]
    computed: int = 0
    reused: int = 0
    seconds: float = 0.0
    stale: int = 0

    def __len__(self) -> int:
        return len(self.records)

    @property
    def failed(self) -> list[dict]:
        """Records of the points that failed."""
        return [r for r in self.records if r.get("status") != "done"]

    def column(self, name: str) -> np.ndarray:
        """A parameter or output over the points (NaN where a point failed or has no value).

        Returns
        -------
        ndarray, shape (points,)
            Float for numbers, object for text parameters.
        """
        if name in self.outputs:
            vals = [r.get("outputs", {}).get(name) for r in self.records]
            return np.array([np.nan if v is None else float(v) for v in vals])
        if name in self.parameters:
            vals = [r["params"].get(name) for r in self.records]
            if all(_is_number(v) or v is None for v in vals):
                return np.array([np.nan if v is None else float(v) for v in vals])
            return np.array(vals, dtype=object)
        raise unknown_name("column", name, self.parameters + self.outputs)

    def rows(self) -> list[dict[str, Any]]:
        """Flat rows: parameters, outputs, status, error, seconds, key."""
        out = []
        for r in self.records:
            err = r.get("error") or {}
            row = {p: r["params"].get(p) for p in self.parameters}
            row.update({o: r.get("outputs", {}).get(o) for o in self.outputs})
            row.update(status=r.get("status"), error=f"{err['type']}: {err['message']}" if err else "",
                       seconds=r.get("seconds"), key=r.get("key"))
            out.append(row)
        return out

    def to_csv(self, path: str | os.PathLike) -> Path:
        """Write the table as CSV (atomically)."""
        buf = io.StringIO()
        cols = self.parameters + self.outputs + ["status", "error", "seconds", "key"]
        w = csv.DictWriter(buf, fieldnames=cols, lineterminator="\n")
        w.writeheader()
        for row in self.rows():
            w.writerow({k: ("" if v is None else (repr(v) if isinstance(v, float) else v)) for k, v in row.items()})
        return atomic_write_text(path, buf.getvalue())

    def to_dict(self) -> dict[str, Any]:
        from .. import __version__

        return _jsonable({"function": self.function, "parameters": self.parameters, "outputs": self.outputs,
                          "points": len(self.records), "failed": len(self.failed), "computed": self.computed,
                          "reused": self.reused, "stale": self.stale, "seconds": self.seconds, "planar": __version__,
                          "records": self.records})

    def to_json(self, path: str | os.PathLike) -> Path:
        """Write the table, with every point's record, as JSON (atomically)."""
        return atomic_write_text(path, json.dumps(self.to_dict(), indent=1))

    def format(self, digits: int = 6) -> str:
        """The table as aligned text."""
        cols = self.parameters + self.outputs + ["status"]
        body = []
        for row in self.rows():
            cells = []
            for c in cols:
                v = row[c]
                cells.append(f"{v:.{digits}g}" if isinstance(v, float) else ("" if v is None else str(v)))
            if row["status"] != "done":
                cells[-1] += f" ({row['error']})"
            body.append(cells)
        units: dict[str, str] = {}
        for r in self.records:  # the units the points recorded (a peak's from its model's unit system)
            for k, u in (r.get("units") or {}).items():
                units.setdefault(k, u)
        head = [f"{c} [{units[c]}]" if units.get(c) else c for c in cols]
        widths = [max(len(c), *(len(b[i]) for b in body)) if body else len(c) for i, c in enumerate(head)]
        lines = ["  ".join(c.rjust(w) for c, w in zip(head, widths))]
        lines += ["  ".join(v.rjust(w) for v, w in zip(b, widths)) for b in body]
        for o in self.outputs:  # a peak next to an idealised support or load, as its record notes it
            noted = [r["notes"][o] for r in self.records if o in (r.get("notes") or {})]
            if noted:
                lines.append(f"note: {o} at {len(noted)} of {len(self.records)} points: the peak sits {noted[0]}")
        return "\n".join(lines)

    __str__ = format

    def plot(self, path: str | os.PathLike | None = None, *, x: str | None = None,
             y: Sequence[str] | str | None = None,
             reference: Mapping[str, tuple[str, Any]] | None = None, title: str | None = None,
             xlabel: str | None = None, ylabels: Mapping[str, str] | None = None,
             units: Mapping[str, str] | None = None, zero_lines: Sequence[str] | None = None):
        """Outputs against a parameter, one panel per output (PNG written atomically).

        A margin of safety (a :class:`~planar.studies.SafetyMargin` output, an output whose name has
        "margin" in it, or one named in ``zero_lines``)
        whose values change sign gets a zero line on its panel, gid ``"zero-line"``: the points on
        either side of it pass and fail.

        Parameters
        ----------
        path : path, optional
            Write the figure as PNG.
        x : str, optional
            The parameter on the horizontal axis; default the first numeric parameter that varies.
            Points that differ in other parameters are drawn as separate lines.
        y : str or sequence of str, optional
            Outputs to draw (default all).
        reference : mapping, optional
            Output name -> (label, curve) drawn beside it: ``curve`` is a function of x (called with an
            array) or a pair of arrays (x, y). For example a handbook curve.
        title, xlabel : str, optional
        ylabels : mapping of str to str, optional
            Axis label of each output (default its name).
        units : mapping of str to str, optional
            The unit of a parameter or output, e.g. ``{"width": "mm", "peak": "MPa"}``, written in its
            axis label as ``width [mm]`` (a margin or Kt has none). A peak or a value at a point carries
            the unit of its result's unit system without it (recorded with each point).
        zero_lines : sequence of str, optional
            Further outputs that get a zero line when they change sign.

        Returns
        -------
        matplotlib.figure.Figure
        """
        from matplotlib import colormaps
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure

        from ..post.plots import save_figure

        recorded: dict[str, str] = {}
        for r in self.records:  # the units the points recorded (a peak's from its model's unit system)
            for k, v in (r.get("units") or {}).items():
                recorded.setdefault(k, v)
        units = {**recorded, **dict(units or {})}
        varying = [p for p in self.parameters if len({_canonical(r["params"].get(p)) for r in self.records}) > 1]
        if x is None:
            numeric = [p for p in (varying or self.parameters) if self.column(p).dtype != object]
            if not numeric:
                raise InputError("no numeric parameter to put on the x axis; the table has "
                                 f"{', '.join(map(repr, self.parameters)) or 'no parameters'}")
            x = numeric[0]
        if x not in self.parameters:
            raise unknown_name("parameter", x, self.parameters)
        ys = [y] if isinstance(y, str) else list(y or self.outputs)
        for o in ys:
            if o not in self.outputs:
                raise unknown_name("output", o, self.outputs)
        if not ys:
            raise InputError("the table has no outputs to draw")
        X = self.column(x)
        if X.dtype == object:
            raise InputError(f"parameter {x!r} is not numeric, so it cannot be an axis")
        others = [p for p in varying if p != x]
        groups: dict[tuple, list[int]] = {}
        for i, r in enumerate(self.records):
            groups.setdefault(tuple(r["params"].get(p) for p in others), []).append(i)
        fig = Figure(figsize=(7.0, 2.2 + 2.6 * len(ys)), dpi=120, layout="constrained")
        FigureCanvasAgg(fig)
        axes = np.atleast_1d(fig.subplots(len(ys), 1, sharex=True, squeeze=False)[:, 0])
        cmap = colormaps["viridis"]
        failed = np.array([r.get("status") != "done" for r in self.records])
        for ax, o in zip(axes, ys):
            Y = self.column(o)
            for gi, (gkey, idx) in enumerate(groups.items()):
                idx = np.array(sorted(idx, key=lambda i: X[i]))
                colour = cmap(0.15 + 0.7 * gi / max(len(groups) - 1, 1)) if len(groups) > 1 else cmap(0.25)
                label = "computed" if not others else ", ".join(f"{p} = {v}" for p, v in zip(others, gkey))
                # a failed point is a gap in the line (NaN), not bridged as if its value lay between its neighbours'
                ax.plot(X[idx], np.where(failed[idx], np.nan, Y[idx]), "o-", color=colour, ms=5, lw=1.3, label=label)
            if np.any(failed):  # along the bottom of the axes, not at a value: a failed point has none
                ax.plot(X[failed], np.full(int(failed.sum()), 0.03), "x", color="0.35", ms=7, clip_on=False,
                        transform=ax.get_xaxis_transform(), label=f"failed ({int(failed.sum())}, no value)")
            if reference and o in reference:
                label, curve = reference[o]
                if callable(curve):
                    xs = np.linspace(np.nanmin(X), np.nanmax(X), 200)
                    ys_ = np.asarray(curve(xs), float)
                else:
                    xs, ys_ = (np.asarray(c, float) for c in curve)
                ax.plot(xs, ys_, "-", color=cmap(0.8), lw=1.8, label=label, zorder=1)
            unit = (units or {}).get(o)
            ax.set_ylabel((ylabels or {}).get(o, f"{o} [{unit}]" if unit else o))
            fin = Y[np.isfinite(Y)]
            spec = next((r.get("output_specs", {}).get(o, "") for r in self.records if r.get("output_specs")), "")
            margin = "margin" in o.lower() or spec.startswith("SafetyMargin(") or o in (zero_lines or ())
            if margin and fin.size and fin.min() < 0 <= fin.max():
                zero = ax.axhline(0.0, color="#b3261e", lw=1.1, ls="--", zorder=0.5, label="zero margin")
                zero.set_gid("zero-line")
            ax.grid(True, lw=0.4, alpha=0.5)
            for s in ("top", "right"):
                ax.spines[s].set_visible(False)
            ax.legend(fontsize=8, frameon=False)
        xunit = (units or {}).get(x)
        axes[-1].set_xlabel(xlabel or (f"{x} [{xunit}]" if xunit else x))
        if title:
            axes[0].set_title(title, fontsize=11, loc="left")
        if path is not None:
            save_figure(fig, path)
        return fig


def load_table(path: str | os.PathLike) -> SweepTable:
    """Read a table written by :meth:`SweepTable.to_json`."""
    try:
        d = json.loads(Path(path).read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(f"sweep table {str(path)!r} does not exist") from None
    except json.JSONDecodeError as exc:
        raise InputError(f"{str(path)!r} is not a sweep table (JSON error: {exc})") from None
    try:
        return SweepTable(d["function"], list(d["parameters"]), list(d["outputs"]), list(d["records"]),
                          int(d.get("computed", 0)), int(d.get("reused", 0)), float(d.get("seconds") or 0.0),
                          int(d.get("stale", 0)))
    except (KeyError, TypeError) as exc:
        raise InputError(f"{str(path)!r} is not a sweep table (missing {exc})") from None
