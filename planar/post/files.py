"""Atomic file writing: a temporary file in the same folder, then a rename over the target."""
from __future__ import annotations

import os
import tempfile
from contextlib import contextmanager
from pathlib import Path

__all__ = ["atomic_path", "atomic_write_text", "atomic_write_bytes"]


@contextmanager
def atomic_path(path: str | os.PathLike):
    """Yield a temporary path beside ``path`` (same suffix); rename it over ``path`` on success.

    If the body raises (or the process dies), the previous file at ``path`` stays as it was and the
    temporary file is removed (when the process lives to do it).
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.stem}.", suffix=f".part{path.suffix}", dir=path.parent)
    os.close(fd)
    try:
        yield Path(tmp)
        with open(tmp, "rb+") as fh:
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise


def atomic_write_bytes(path, data: bytes) -> Path:
    with atomic_path(path) as tmp:
        Path(tmp).write_bytes(data)
    return Path(path)


def atomic_write_text(path, text: str, encoding: str = "utf-8") -> Path:
    return atomic_write_bytes(path, text.encode(encoding))
