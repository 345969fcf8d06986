"""Progress lines on the terminal: the one printer of every long step (demo, adaptivity, sweeps, verify, timing).

Quiet in scripts and tests: by default a :class:`Progress` speaks only when its stream is a
terminal; ``enabled=True`` forces it on, ``False`` off.

Examples
--------
>>> import io
>>> out = io.StringIO()
>>> say = Progress(True, "planar demo", stream=out, clock=False)
>>> say("meshing"); say.update("3/10 points"); say.update("3/10 points"); say.update("10/10 points", final=True)
>>> print(out.getvalue(), end="")
planar demo: meshing
planar demo: 3/10 points
planar demo: 10/10 points
>>> bool(Progress(stream=io.StringIO()))     # not a terminal: quiet
False
"""
from __future__ import annotations

import sys
import time
from typing import TextIO

__all__ = ["Progress", "is_terminal"]


def is_terminal(stream) -> bool:
    """True when ``stream`` is an interactive terminal."""
    return bool(getattr(stream, "isatty", lambda: False)())


class Progress:
    """Prints progress lines on a stream (stderr by default) when enabled.

    Parameters
    ----------
    enabled : bool, optional
        None (default): on when the stream is a terminal.
    prefix : str
        Put before every line (``"prefix: text"``).
    stream : file, optional
        Default ``sys.stderr`` (read when the object is made).
    clock : bool, default True
        Put the seconds since the start before the text (``[  12.3 s]``).

    Notes
    -----
    A call prints one line. :meth:`update` rewrites one line in place on a terminal (at most five
    times a second; ``final=True`` ends it), and elsewhere prints each new text once, so a log
    file gets no repeated lines.
    """

    def __init__(self, enabled: bool | None = None, prefix: str = "", *, stream: TextIO | None = None,
                 clock: bool = True):
        self.stream = stream if stream is not None else sys.stderr
        self.tty = is_terminal(self.stream)
        self.enabled = self.tty if enabled is None else bool(enabled)
        self.prefix = prefix
        self.clock = clock
        self.t0 = time.perf_counter()
        self._last = 0.0
        self._said = ""

    def __bool__(self) -> bool:
        return self.enabled

    def _text(self, text: str) -> str:
        head = f"{self.prefix}: " if self.prefix else ""
        stamp = f"[{time.perf_counter() - self.t0:6.1f} s] " if self.clock else ""
        return f"{head}{stamp}{text}"

    def __call__(self, text: str) -> None:
        if self.enabled:
            print(self._text(text), file=self.stream, flush=True)

    def update(self, text: str, final: bool = False) -> None:
        """A line that changes (a count of points): in place on a terminal, once per new text elsewhere."""
        if not self.enabled:
            return
        line = f"{self.prefix}: {text}" if self.prefix else text
        if self.tty:
            now = time.perf_counter()
            if final or now - self._last > 0.2:
                print("\r" + line.ljust(100), end="\n" if final else "", file=self.stream, flush=True)
                self._last = now
        elif text != self._said:
            print(line, file=self.stream, flush=True)
        self._said = text
