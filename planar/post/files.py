"""Atomic file writing: a temporary file in the same folder, then a rename over the target."""
from __future__ import annotations

import errno
import os
import tempfile
from contextlib import contextmanager
from pathlib import Path

from ..core.errors import OutputError

__all__ = ["atomic_path", "atomic_write_text", "atomic_write_bytes"]


@contextmanager
def atomic_path(path: str | os.PathLike):
    """Yield a temporary path beside ``path`` (same suffix); rename it over ``path`` on success.

    If the body raises (or the process dies), the previous file at ``path`` stays as it was and the
    temporary file is removed (when the process lives to do it). The temporary file is hidden
    (``.NAME.PID.XXXX.partSUFFIX``); one left behind by a process that was killed is removed by the
    next write of the same file.

    Raises
    ------
    OutputError
        If the folder cannot be made or written to, or the disk is full; the message names the file.
    """
    path = Path(path)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        _remove_stale(path)
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.{os.getpid()}.", suffix=_PART + path.suffix,
                                   dir=path.parent)
        os.close(fd)
    except OSError as exc:
        raise _output_error(path, exc) from None
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp, 0o666 & ~umask)  # mkstemp makes 0600; results are meant to be shared
    try:
        yield Path(tmp)
        with open(tmp, "rb+") as fh:
            os.fsync(fh.fileno())
        os.replace(tmp, path)
        _sync_folder(path.parent)
    except BaseException as exc:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        if isinstance(exc, OSError):
            raise _output_error(path, exc) from None
        raise


def atomic_write_bytes(path, data: bytes) -> Path:
    with atomic_path(path) as tmp:
        Path(tmp).write_bytes(data)
    return Path(path)


def atomic_write_text(path, text: str, encoding: str = "utf-8") -> Path:
    return atomic_write_bytes(path, text.encode(encoding))


_PART = ".part"


def _output_error(path: Path, exc: OSError) -> OutputError:
    why = exc.strerror or str(exc) or type(exc).__name__
    hint = {
        "ENOSPC": "free some disk space",
        "EACCES": "pick a folder you may write to",
        "EROFS": "pick a folder on a writable disk",
        "EISDIR": "give a file name, not a folder",
        "ENOTDIR": "a part of the folder path is a file; give another folder",
        "EEXIST": "a part of the folder path is a file; give another folder",
        "ENOENT": "give a folder that exists",
    }.get(errno.errorcode.get(exc.errno or 0, ""), "check the folder and the disk")
    return OutputError(f"cannot write {str(path)!r}: {why}; {hint}")


def _pid_alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OSError):
        return True
    return True


def _remove_stale(path: Path) -> None:
    """Remove temporary files of ``path`` left by writers that no longer run (killed mid-write)."""
    prefix = f".{path.name}."
    try:
        names = os.listdir(path.parent)
    except OSError:
        return
    for name in names:
        if not (name.startswith(prefix) and name.endswith(_PART + path.suffix)):
            continue
        pid = name[len(prefix):].split(".", 1)[0]
        if not pid.isdigit() or int(pid) == os.getpid() or _pid_alive(int(pid)):
            continue
        try:
            os.unlink(path.parent / name)
        except OSError:
            pass


def _sync_folder(folder: Path) -> None:
    """Make the rename itself durable (POSIX); a no-op where folders cannot be opened."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)
