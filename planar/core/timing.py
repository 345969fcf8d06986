"""Stage timing and optional terminal progress."""
from __future__ import annotations

import sys
import time

from .progress import Progress


class Timer:
    """Collects the wall time of named stages; prints them as they end when ``verbose``."""

    def __init__(self, verbose: bool = False, stream=None):
        self.stages: dict[str, float] = {}
        self.verbose = verbose
        self.stream = stream or sys.stderr
        self._say = Progress(bool(verbose), stream=self.stream, clock=False)
        self._t = time.perf_counter()
        self._t0 = self._t

    def lap(self, name: str) -> float:
        now = time.perf_counter()
        dt = now - self._t
        self.stages[name] = self.stages.get(name, 0.0) + dt
        self._t = now
        self._say(f"  {name:<22s} {dt:8.3f} s")
        return dt

    def total(self) -> float:
        return time.perf_counter() - self._t0
