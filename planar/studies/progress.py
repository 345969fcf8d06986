"""Where a running sweep stands, and its progress lines on stderr."""
from __future__ import annotations

from dataclasses import dataclass

from ..core.progress import Progress


# ============================================================================ progress
@dataclass
class SweepProgress:
    """Where a running sweep stands (passed to ``on_point`` after every point).

    Attributes
    ----------
    total : int
        Points in the sweep.
    done : int
        Points finished (computed now or taken from the store), failed ones included.
    failed : int
    reused : int
        Points taken from the store.
    elapsed : float
        Seconds since the sweep started.
    """

    total: int
    done: int = 0
    failed: int = 0
    reused: int = 0
    elapsed: float = 0.0

    @property
    def remaining(self) -> int:
        return self.total - self.done

    @property
    def eta(self) -> float | None:
        """Estimated seconds left, from the rate of the points computed in this run."""
        computed = self.done - self.reused
        if computed <= 0 or self.remaining == 0:
            return None if self.remaining else 0.0
        return self.elapsed / computed * self.remaining

    def line(self) -> str:
        eta = self.eta
        left = "" if eta is None or self.remaining == 0 else f", about {_duration(eta)} left"
        store = f" ({self.reused} from the store)" if self.reused else ""
        return (f"sweep: {self.done}/{self.total} points done{store}, {self.failed} failed, "
                f"{self.remaining} remaining{left}")


def _duration(s: float) -> str:
    if s < 90:
        return f"{s:.0f} s"
    if s < 5400:
        return f"{s / 60:.0f} min"
    return f"{s / 3600:.1f} h"


class _Reporter:
    """The sweep's line on stderr, through the one progress printer (:class:`planar.core.progress.Progress`)."""

    def __init__(self, enabled: bool, stream=None):
        self._line = Progress(enabled, stream=stream, clock=False)

    def __call__(self, prog: SweepProgress, final: bool = False) -> None:
        self._line.update(prog.line(), final)
