"""Where scripts write their files: :func:`output_dir` and the ``PLANAR_OUT`` variable of ``planar run``.

A library module (it imports only the errors), so that :mod:`planar` can offer ``planar.output_dir()``
without importing the demo or the command line.
"""
from __future__ import annotations

import os
from pathlib import Path

from .core.errors import InputError

__all__ = ["output_dir", "OUT_ENV", "DEFAULT_OUT"]

#: environment variable holding the output folder of ``planar run`` (and read by output_dir())
OUT_ENV = "PLANAR_OUT"
DEFAULT_OUT = "planar-out"


def output_dir(default: str | os.PathLike = DEFAULT_OUT) -> Path:
    """The folder a script should write its files into; created if missing.

    Under ``planar run SCRIPT.py --out DIR`` this is DIR (the command sets the environment variable
    ``PLANAR_OUT`` and the script's global ``OUTPUT_DIR``). A script run with plain ``python`` gets
    ``$PLANAR_OUT`` if set, else ``default`` (``./planar-out``).

    Examples
    --------
    >>> import os, tempfile
    >>> from planar.demo import output_dir
    >>> os.environ["PLANAR_OUT"] = tempfile.mkdtemp()
    >>> output_dir().is_dir()
    True
    >>> del os.environ["PLANAR_OUT"]
    """
    p = Path(os.environ.get(OUT_ENV) or default)
    try:
        p.mkdir(parents=True, exist_ok=True)
    except (FileExistsError, NotADirectoryError):
        raise InputError(f"cannot create the output folder {str(p)!r}: a file of that name (or of a folder above it) "
                         "is in the way; give the path of a folder (a new one is made), e.g. --out results") from None
    except OSError as exc:
        raise InputError(f"cannot create the output folder {str(p)!r}: {exc.strerror}; give a folder you can write "
                         "to (--out, or the PLANAR_OUT environment variable)") from None
    return p
