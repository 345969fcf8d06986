"""Result files: atomic writing (a temporary file in the same folder, then a rename over the target),
and reading back a .vtu result with its digest compared and its numbers checked.
"""
from __future__ import annotations

import errno
import math
import os
import tempfile
from contextlib import contextmanager
from pathlib import Path

import numpy as np

from ..core.digest import check_digest
from ..core.errors import MeshError, OutputError, PlanarWarning, fmt_point

__all__ = ["atomic_path", "atomic_write_text", "atomic_write_bytes", "read_result_file", "check_digest",
           "non_finite_fields", "json_safe", "file_units", "UNITS_FIELD", "file_case", "CASE_FIELD"]

#: name of the field-data array of a .vtu file that holds the unit system's name (UTF-8 bytes)
UNITS_FIELD = "planar_units"
#: name of the field-data array of a .vtu file that holds the load case's (or combination's) name (UTF-8 bytes)
CASE_FIELD = "planar_case"


def json_safe(obj):
    """``obj`` with every NaN or infinite float (at any depth of dicts, lists, tuples) made None.

    JSON has no NaN or infinity; a study that cannot extrapolate, say, writes null there.

    Examples
    --------
    >>> json_safe({"a": [1.0, float("nan")], "b": (float("inf"), "x")})
    {'a': [1.0, None], 'b': [None, 'x']}
    """
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {k: json_safe(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_safe(v) for v in obj]
    return obj


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


# ---------------------------------------------------------------------------------------- reading
def file_units(m, path=None):
    """The unit system a result file states (its ``planar_units`` field data), or None if it states none.

    Parameters
    ----------
    m : meshio.Mesh
        The file as read (:func:`read_result_file`).
    path : path, optional
        For messages.

    Returns
    -------
    UnitSystem or None
        None for a file without the entry (older, or from another program); a name this version
        does not know gives None and a warning of code ``"unknown-units"``.
    """
    from ..core.units import unit_system

    raw = getattr(m, "field_data", {}).get(UNITS_FIELD)
    if raw is None:
        return None
    try:
        name = bytes(np.asarray(raw).astype(np.uint8).ravel()).decode("utf-8")
        return unit_system(name)
    except (ValueError, TypeError, OverflowError) as exc:  # InputError is a ValueError
        import warnings

        warnings.warn(PlanarWarning(
            f"result file {os.fspath(path) if path is not None else ''!r} names a unit system planar does not "
            f"know ({str(exc).split(';')[0]}); its figures carry no units: give them with --units "
            "(planar show) or units= (plot_vtu)", "unknown-units"), stacklevel=2)
        return None


def file_case(m) -> str | None:
    """The load case (or combination) a result file states (its ``planar_case`` field data), or None.

    Parameters
    ----------
    m : meshio.Mesh
        The file as read (:func:`read_result_file`).

    Returns
    -------
    str or None
        None for a file without the entry (older, or from another program).
    """
    raw = getattr(m, "field_data", {}).get(CASE_FIELD)
    if raw is None:
        return None
    try:
        return bytes(np.asarray(raw).astype(np.uint8).ravel()).decode("utf-8")
    except (ValueError, TypeError, OverflowError):
        return None


def non_finite_fields(m) -> dict[str, tuple[int, int]]:
    """Point and cell fields of a ``meshio.Mesh`` that hold NaN or infinite values.

    Returns
    -------
    dict of str to (int, int)
        Field name -> (number of non-finite values, number of values), only for fields that have any.
    """
    out: dict[str, tuple[int, int]] = {}
    for name, v in m.point_data.items():
        a = np.asarray(v)
        if a.dtype.kind in "fc":
            bad = int(np.count_nonzero(~np.isfinite(a)))
            if bad:
                out[name] = (bad, a.size)
    for name, blocks in m.cell_data.items():
        arrays = [np.asarray(b) for b in blocks]
        arrays = [a for a in arrays if a.dtype.kind in "fc"]
        bad = sum(int(np.count_nonzero(~np.isfinite(a))) for a in arrays)
        if bad:
            out[name] = (bad, sum(a.size for a in arrays))
    return out


def read_result_file(path: str | os.PathLike, *, changed: str = "error"):
    """Read a .vtu result file (with meshio) and check that its numbers can be used.

    A file planar wrote is first compared with the digest it carries; a file from elsewhere (no
    digest) is read as it is. Points must have finite coordinates. Fields holding NaN or infinite
    values are reported (a :class:`~planar.core.errors.PlanarWarning` of code ``"non-finite-values"``
    naming each field and its count); drawing such a field is refused by :func:`planar.post.plots.plot_vtu`.

    Parameters
    ----------
    path : path
    changed : {"error", "warn"}
        A planar file whose bytes changed since it was written: refuse it (default), or read it with
        a warning of code ``"changed-file"``.

    Returns
    -------
    meshio.Mesh

    Raises
    ------
    MeshError
        The file is missing, unreadable, truncated, changed since planar wrote it, or has points with
        NaN or infinite coordinates.
    """
    from ..core.mesh import read_meshio

    m = read_meshio(path, "result file", changed=changed)
    pts = np.asarray(m.points, dtype=float)
    bad = ~np.all(np.isfinite(pts), axis=1)
    if bad.any():
        i = int(np.flatnonzero(bad)[0])
        raise MeshError(
            f"result file {os.fspath(path)!r} has {int(bad.sum())} of {pts.shape[0]} points with NaN or infinite "
            f"coordinates (first: point {i} at {fmt_point(pts[i])}); the file is damaged or was written from a "
            "failed computation: write it again"
        )
    fields = non_finite_fields(m)
    if fields:
        import warnings

        listed = "; ".join(f"{k}: {n} of {size} values" for k, (n, size) in fields.items())
        warnings.warn(PlanarWarning(
            f"result file {os.fspath(path)!r} has NaN or infinite values in {len(fields)} field(s) ({listed}); "
            "they cannot be drawn or trusted: write the file again from the model", "non-finite-values"),
            stacklevel=2)
    return m
