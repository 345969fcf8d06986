"""Stage timing, and the progress lines of a solve on the terminal.

A :class:`Timer` records the wall time of each named stage of a solve (checks, element matrices,
COO to CSR, factorization, solve, solution check, ...). Its lines go through the one progress
printer, :class:`planar.core.progress.Progress`:

- ``verbose=True``: every stage's time is printed as it ends;
- ``verbose=False``: nothing is printed;
- ``verbose=None`` (automatic): on a terminal (or with ``PLANAR_PROGRESS=1``), a stage that took over
  a second prints its time as it ends, and on a large model (``PLANAR_PROGRESS_MIN_UNKNOWNS``,
  default 200,000 unknowns) the long stages announce themselves before they start
  (``factorizing 2,000,000 unknowns...``); quiet otherwise.

Examples
--------
>>> import io
>>> out = io.StringIO()
>>> t = Timer(True, stream=out)
>>> t.size(10); t.start("factorizing"); _ = t.lap("factorization")
>>> print(out.getvalue().split()[:3])
['planar:', 'factorizing', '10']
"""
from __future__ import annotations

import sys
import time

from .progress import Progress, min_seconds, min_unknowns

__all__ = ["Timer"]


class Timer:
    """Collects the wall time of named stages; reports them on the terminal.

    Parameters
    ----------
    verbose : bool or None
        True: print every stage as it ends; False: print nothing; None: automatic (see the module
        notes: only long stages, on a terminal or with ``PLANAR_PROGRESS=1``).
    stream : file, optional
        Where the lines go (default ``sys.stderr``).
    """

    def __init__(self, verbose: bool | None = False, stream=None):
        self.stages: dict[str, float] = {}
        self.verbose = verbose
        self.stream = stream or sys.stderr
        self._say = Progress(None if verbose is None else bool(verbose), "planar", stream=self.stream,
                             clock=False)
        self.unknowns = 0
        self._t = time.perf_counter()
        self._t0 = self._t

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state["stream"] = None  # a stream does not pickle (the progress line keeps its own state)
        return state

    def __setstate__(self, state: dict) -> None:
        self.__dict__.update(state)
        self.stream = sys.stderr

    @property
    def large(self) -> bool:
        """True when the model's size makes its stages worth announcing before they start."""
        return self.unknowns >= min_unknowns()

    def size(self, unknowns: int) -> None:
        """Tell the timer how many unknowns the model has (for the announcements of long stages)."""
        self.unknowns = int(unknowns)

    def start(self, what: str) -> None:
        """Announce a stage before it starts (``factorizing 2,000,000 unknowns...``): always when
        verbose, on large models in the automatic mode."""
        if self._say and (self.verbose or self.large):
            self._say(f"{what} {self.unknowns:,} unknowns..." if self.unknowns else f"{what}...")

    def lap(self, name: str) -> float:
        """End the stage ``name``; returns its wall time (added to ``stages[name]``)."""
        now = time.perf_counter()
        dt = now - self._t
        self.stages[name] = self.stages.get(name, 0.0) + dt
        self._t = now
        if self._say and (self.verbose or dt >= min_seconds()):
            self._say(f"  {name:<22s} {dt:8.3f} s")
        return dt

    def total(self) -> float:
        """Seconds since the timer was made."""
        return time.perf_counter() - self._t0
