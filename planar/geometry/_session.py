"""A gmsh session that leaves no state behind.

If gmsh is not running, the session starts it (without reading the user's configuration files and
without installing a Ctrl-C handler, so it works in any thread) and stops it at the end. If someone
else already runs gmsh, the session works in a model of its own, restores every option it changed,
and gives the previous model back.
"""
from __future__ import annotations

import itertools
from contextlib import contextmanager

from ..core.errors import GeometryError, PlanarError

_counter = itertools.count(1)


def _ignore_broken_pipes() -> None:
    """Put SIGPIPE back to Python's own setting (ignored, so a closed pipe raises BrokenPipeError).

    gmsh's initialize resets it to the default action, which kills the whole process on the next
    write to a closed pipe or socket (a finished pager, a lost worker of a parallel sweep).
    """
    import signal

    if hasattr(signal, "SIGPIPE"):
        try:
            signal.signal(signal.SIGPIPE, signal.SIG_IGN)
        except ValueError:  # not the main thread: the C-level setting is process-wide anyway
            import ctypes
            import ctypes.util

            libc = ctypes.CDLL(ctypes.util.find_library("c"), use_errno=True)
            libc.signal(int(signal.SIGPIPE), ctypes.c_void_p(1))  # SIG_IGN


class _Session:
    def __init__(self, verbose: bool = False):
        self.verbose = bool(verbose)
        self._saved: dict[str, float] = {}

    def __enter__(self) -> "_Session":
        import gmsh

        self.gmsh = gmsh
        self.owner = not gmsh.isInitialized()
        if self.owner:
            try:
                gmsh.initialize(readConfigFiles=False, interruptible=False)
            except TypeError:  # older gmsh without these keywords
                gmsh.initialize()
            _ignore_broken_pipes()
            self._previous_model = None
        else:
            self._previous_model = gmsh.model.getCurrent()
        try:
            self.set("General.Terminal", 1 if self.verbose else 0)
            self.set("General.Verbosity", 5 if self.verbose else 2)
            self.set("General.NumThreads", 1)
            self.set("Mesh.MaxNumThreads2D", 1)
            self.model_name = f"planar_{next(_counter)}"
            gmsh.model.add(self.model_name)
            gmsh.logger.start()
        except BaseException:
            self._close()
            raise
        return self

    def set(self, option: str, value: float) -> None:
        g = self.gmsh
        if not self.owner and option not in self._saved:
            self._saved[option] = g.option.getNumber(option)
        g.option.setNumber(option, float(value))

    def errors(self) -> list[str]:
        """gmsh's error and warning messages so far."""
        try:
            msgs = self.gmsh.logger.get()
        except Exception:  # pragma: no cover - logger unavailable
            return []
        return [m for m in msgs if m.startswith(("Error", "Warning"))]

    def _close(self) -> None:
        g = self.gmsh
        if self.owner:
            if g.isInitialized():
                g.finalize()
            return
        try:
            g.logger.stop()
        except Exception:
            pass
        try:
            g.model.setCurrent(self.model_name)
            g.model.remove()
        except Exception:
            pass
        for k, v in self._saved.items():
            try:
                g.option.setNumber(k, v)
            except Exception:
                pass
        if self._previous_model:
            try:
                g.model.setCurrent(self._previous_model)
            except Exception:
                pass

    def __exit__(self, *exc) -> None:
        self._close()


@contextmanager
def _stage(what: str, session: _Session | None = None, hint: str = ""):
    """Turn a gmsh exception into a :class:`GeometryError` that says what was being done."""
    try:
        yield
    except PlanarError:
        raise
    except Exception as exc:
        detail = str(exc).strip() or type(exc).__name__
        msgs = session.errors()[-3:] if session is not None else []
        extra = ("; gmsh said: " + " | ".join(msgs)) if msgs and not any(detail in m for m in msgs) else ""
        raise GeometryError(
            f"gmsh could not {what}: {detail}{extra}." + (f" {hint}" if hint else "")
        ) from None
