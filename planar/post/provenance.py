"""What ties a report to the run that made it: versions, the script and its digest, the date.

:func:`versions` reads the versions of planar, gmsh, numpy, scipy and matplotlib from the installed
packages (gmsh is not imported: the geometry layer is its only door) and the solver back end of a
result. :func:`script_identity` names the script that is running (``__main__.__file__``, else
``sys.argv[0]``) and gives the SHA-256 digest of its bytes, so a reader can tell whether the
script at hand is the one that made the report.

Examples
--------
>>> v = versions()
>>> sorted(v)[:3]
['gmsh', 'matplotlib', 'numpy']
>>> import hashlib, tempfile, pathlib
>>> p = pathlib.Path(tempfile.mkdtemp()) / "check.py"
>>> _ = p.write_text("print('x')\\n")
>>> script_identity(p)[1] == hashlib.sha256(b"print('x')\\n").hexdigest()
True
"""
from __future__ import annotations

import datetime as _dt
import hashlib
import os
import sys
from importlib import metadata
from pathlib import Path

__all__ = ["versions", "script_identity", "provenance_rows"]


def _version(dist: str) -> str:
    try:
        return metadata.version(dist)
    except metadata.PackageNotFoundError:
        return "not installed"


def versions(result=None) -> dict[str, str]:
    """Versions of planar and the libraries its figures depend on, and the result's solver back end."""
    from .. import __version__

    out = {"planar": __version__, "gmsh": _version("gmsh"), "numpy": _version("numpy"),
           "scipy": _version("scipy"), "matplotlib": _version("matplotlib")}
    if result is not None:
        solver = str(getattr(result, "solver", "") or "") or "not recorded"
        if "pardiso" in solver.lower():
            solver += f" (pypardiso {_version('pypardiso')})"
        out["solver back end"] = solver
    return out


def script_identity(path: str | os.PathLike | None = None) -> tuple[str, str]:
    """(the script's path, the SHA-256 hex digest of its bytes) of the running script, or of ``path``.

    The digest is ``"-"`` with the reason when there is no script file (an interactive session).
    """
    if path is None:
        main = sys.modules.get("__main__")
        path = getattr(main, "__file__", None) or (sys.argv[0] if sys.argv and sys.argv[0] else None)
    if not path or str(path) in ("-c", "-m"):
        return "an interactive session (no script file)", "-"
    p = Path(path)
    try:
        data = p.read_bytes()
    except OSError as exc:
        return str(p), f"- (the file cannot be read: {exc.strerror or exc})"
    return str(p.resolve()), hashlib.sha256(data).hexdigest()


def provenance_rows(result=None, script: str | os.PathLike | None = None) -> list[tuple[str, str]]:
    """Label/value rows for a report: the date, the script and its digest, the versions."""
    now = _dt.datetime.now().astimezone()
    name, digest = script_identity(script)
    rows = [("date written", now.strftime("%Y-%m-%d %H:%M %Z").strip()), ("script", name),
            ("SHA-256 of the script", digest)]
    v = versions(result)
    rows.append(("versions", ", ".join(f"{k} {val}" for k, val in v.items() if k != "solver back end")))
    if "solver back end" in v:
        rows.append(("solver back end", v["solver back end"]))
    return rows
