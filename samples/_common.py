"""Shared output handling for the sample scripts (not a sample itself)."""
from __future__ import annotations

import os
from pathlib import Path


def out_dir() -> Path:
    """The output folder: $PLANAR_OUT (set by `planar run --out DIR`) or ./planar-out."""
    path = Path(os.environ.get("PLANAR_OUT", "planar-out"))
    path.mkdir(parents=True, exist_ok=True)
    return path


def report_peak(result, label: str, unit: str = "MPa") -> None:
    """Print the SPR-recovered peak von Mises stress with its location."""
    peak, (x, y), _ = result.max("von_mises", recovery="spr")
    print(f"{label}: peak von Mises {peak:.1f} {unit} at ({x:.2f}, {y:.2f}) mm; "
          f"{result.n_dofs:,} unknowns; equilibrium error {result.equilibrium_error():.1e}")
