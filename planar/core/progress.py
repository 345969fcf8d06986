"""Progress lines on the terminal: the one printer of every long step (demo, adaptivity, sweeps, verify, timing).

Quiet in scripts and tests: by default a :class:`Progress` speaks only when its stream is a
terminal; ``enabled=True`` forces it on, ``False`` off. The environment variable
``PLANAR_PROGRESS`` overrides the terminal test for every default printer: ``0`` (or ``off``)
keeps them quiet, ``1`` (or ``on``) makes them speak on any stream.

Long steps of a solve (see :class:`planar.core.timing.Timer`) report on their own when a stage
takes over ``PLANAR_PROGRESS_MIN_SECONDS`` (default 1 s), and announce themselves before they
start on models of at least ``PLANAR_PROGRESS_MIN_UNKNOWNS`` unknowns (default 200,000); both
thresholds may be lowered, e.g. to see the lines on a small model in a test.

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

import os
import sys
import time
from contextlib import contextmanager
from typing import Iterator, TextIO

__all__ = ["Progress", "is_terminal", "env_choice", "min_seconds", "min_unknowns", "step", "ENV"]

#: the environment variable that forces progress on (``1``) or off (``0``)
ENV = "PLANAR_PROGRESS"
_ON = {"1", "on", "yes", "true"}
_OFF = {"0", "off", "no", "false"}


def is_terminal(stream) -> bool:
    """True when ``stream`` is an interactive terminal."""
    try:
        return bool(getattr(stream, "isatty", lambda: False)())
    except (ValueError, OSError):  # a closed stream
        return False


def env_choice() -> bool | None:
    """``PLANAR_PROGRESS`` read as True (``1``/``on``), False (``0``/``off``), or None (unset, other).

    Examples
    --------
    >>> import os
    >>> old = os.environ.pop("PLANAR_PROGRESS", None)
    >>> env_choice() is None
    True
    >>> os.environ["PLANAR_PROGRESS"] = "0"; env_choice()
    False
    >>> _ = os.environ.pop("PLANAR_PROGRESS") if old is None else os.environ.update(PLANAR_PROGRESS=old)
    """
    v = os.environ.get(ENV, "").strip().lower()
    return True if v in _ON else False if v in _OFF else None


def _env_number(name: str, default: float) -> float:
    try:
        v = float(os.environ.get(name, ""))
    except ValueError:
        return default
    return v if v >= 0 else default


def min_seconds() -> float:
    """A stage that took at least this long prints its line (``PLANAR_PROGRESS_MIN_SECONDS``, default 1)."""
    return _env_number("PLANAR_PROGRESS_MIN_SECONDS", 1.0)


def min_unknowns() -> int:
    """Models of at least this many unknowns announce each long stage before it starts
    (``PLANAR_PROGRESS_MIN_UNKNOWNS``, default 200,000)."""
    return int(_env_number("PLANAR_PROGRESS_MIN_UNKNOWNS", 200_000))


class Progress:
    """Prints progress lines on a stream (stderr by default) when enabled.

    Parameters
    ----------
    enabled : bool, optional
        None (default): as ``PLANAR_PROGRESS`` says when it is set, else on when the stream is a
        terminal.
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
        if enabled is None:
            enabled = env_choice()
        self.enabled = self.tty if enabled is None else bool(enabled)
        self.prefix = prefix
        self.clock = clock
        self.t0 = time.perf_counter()
        self._last = 0.0
        self._said = ""

    def __bool__(self) -> bool:
        return self.enabled

    def __getstate__(self) -> dict:
        # a stream does not pickle: a copied or unpickled result (its timer) says nothing more
        state = dict(self.__dict__)
        state["stream"], state["tty"], state["enabled"] = None, False, False
        return state

    def __setstate__(self, state: dict) -> None:
        self.__dict__.update(state)
        self.stream = sys.stderr

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


@contextmanager
def step(what: str, unknowns: int = 0, *, about: bool = False, stream: TextIO | None = None) -> Iterator[None]:
    """One long step of a job (meshing, output) on the terminal, like the stages of a solve.

    Announces ``what...`` before it starts when ``unknowns`` reaches :func:`min_unknowns`, and
    prints its time when it ends after :func:`min_seconds` or more; quiet when the stream (stderr)
    is not a terminal, unless ``PLANAR_PROGRESS=1``. ``about=True`` marks ``unknowns`` as an estimate.

    Examples
    --------
    >>> import io
    >>> out = io.StringIO()
    >>> with step("writing out.vtu", 10**7, stream=out): pass
    >>> out.getvalue()          # not a terminal: quiet
    ''
    """
    say = Progress(None, "planar", stream=stream, clock=False)
    if say and unknowns and unknowns >= min_unknowns():
        say(f"{what} ({'about ' if about else ''}{unknowns:,} unknowns)...")
    t0 = time.perf_counter()
    yield
    dt = time.perf_counter() - t0
    if say and dt >= min_seconds():
        say(f"  {what:<22s} {dt:8.3f} s")
