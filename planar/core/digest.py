"""A digest in every result file planar writes, so a reader can tell when the file changed since.

planar's .vtu files carry the attribute ``planar_digest="sha256:HEX"`` on their ``<VTKFile>``
element: the SHA-256 of the whole file as written, with the 64 hex digits of the digest itself
read as zeros. Everything is covered: the XML (array names, types, offsets, component counts, the
name table of the regions) and every byte of the arrays. VTK and meshio ignore an attribute they do
not know, so the files read everywhere as before.

A reader (:func:`check_digest`) recomputes the digest and compares. A file without the attribute
(written by another program, or saved again by a viewer) reads as before; a planar file whose bytes
changed is refused by default: the change may sit in any number of the file and nothing tells which
one, so a picture or a peak drawn from it could look right and be wrong.

SHA-256 runs at about 1.7 GB/s here (hashlib with the processor's SHA instructions, measured;
blake2b 1.0 GB/s, md5 0.7 GB/s), so the 10^6-unknown result file of about 100 MB costs about 0.06 s
to sign and as much to check.
"""
from __future__ import annotations

import hashlib
import mmap
import os
from pathlib import Path

from .errors import InputError, MeshError, PlanarWarning

__all__ = ["ATTRIBUTE", "placeholder", "digest_of", "sign_text", "sign_file", "check_digest",
           "find_digest"]

#: the attribute of ``<VTKFile>`` that holds the digest
ATTRIBUTE = "planar_digest"
_ALGORITHM = "sha256"
_HEX = 64
#: how far into a file the ``<VTKFile>`` start tag is looked for
_HEAD = 65536


def placeholder() -> str:
    """The attribute as written before the digest is known (same length as the final one)."""
    return f' {ATTRIBUTE}="{_ALGORITHM}:{"0" * _HEX}"'


def _value_span(head: bytes) -> tuple[int, int] | None:
    """Byte span of the hex digits of the digest inside the ``<VTKFile>`` start tag, if present."""
    start = head.find(b"<VTKFile")
    if start < 0:
        return None
    end = head.find(b">", start)
    if end < 0:
        return None
    key = f' {ATTRIBUTE}="{_ALGORITHM}:'.encode()
    at = head.find(key, start, end)
    if at < 0:
        return None
    lo = at + len(key)
    hi = lo + _HEX
    if hi >= len(head) or head[hi:hi + 1] != b'"':
        return (lo, lo)  # the attribute is there but its value is damaged
    return (lo, hi)


def digest_of(chunks) -> str:
    """SHA-256 hex digest over an iterable of byte buffers (bytes, memoryview, contiguous arrays)."""
    h = hashlib.new(_ALGORITHM)
    for c in chunks:
        h.update(c)
    return h.hexdigest()


def sign_text(head: str) -> tuple[str, int]:
    """Put the placeholder attribute into the ``<VTKFile ...>`` start tag of ``head``.

    Returns
    -------
    (str, int)
        The head with the attribute, and the byte offset of its hex digits (to write the digest
        there once the rest of the file is hashed).
    """
    start = head.find("<VTKFile")
    end = head.find(">", start)
    if start < 0 or end < 0:  # pragma: no cover - every writer here makes one
        raise MeshError("cannot sign the result file: no <VTKFile> element")
    at = end - 1 if head[end - 1] == "/" else end
    head = head[:at] + placeholder() + head[at:]
    return head, _value_span(head.encode("utf-8"))[0]


def sign_file(path: str | os.PathLike) -> str:
    """Add the digest attribute to a finished .vtu file (written by another writer, e.g. meshio).

    Returns
    -------
    str
        The digest.
    """
    path = Path(path)
    data = path.read_bytes()
    end = data.find(b">", data.find(b"<VTKFile")) + 1
    if end <= 0:
        raise MeshError(f"cannot sign {str(path)!r}: no <VTKFile> element")
    signed, lo = sign_text(data[:end].decode("utf-8"))
    new = signed.encode("utf-8") + data[end:]
    value = digest_of([new])
    path.write_bytes(new[:lo] + value.encode() + new[lo + _HEX:])
    return value


def find_digest(path: str | os.PathLike) -> str | None:
    """The digest a file says it has (hex), or None for a file without one."""
    with open(path, "rb") as fh:
        head = fh.read(_HEAD)
    span = _value_span(head)
    if span is None:
        return None
    return head[span[0]:span[1]].decode("ascii", errors="replace")


def check_digest(path: str | os.PathLike, *, what: str = "result file", changed: str = "error") -> str:
    """Compare a file with the digest planar wrote into it.

    Parameters
    ----------
    path : path
    what : str
        Name of the file's role for messages.
    changed : {"error", "warn"}
        What to do when the file changed since planar wrote it: raise a MeshError (default), or warn
        with a :class:`~planar.core.errors.PlanarWarning` of code ``"changed-file"`` and go on.

    Returns
    -------
    str
        ``"none"`` for a file without a digest (from elsewhere: nothing to check), ``"ok"`` when it
        matches, ``"changed"`` when it does not and ``changed="warn"``.

    Raises
    ------
    MeshError
        The file changed or was damaged since planar wrote it (``changed="error"``).
    """
    if changed not in ("error", "warn"):
        raise InputError(f"changed= must be 'error' or 'warn', got {changed!r}")
    path = os.fspath(path)
    try:
        status = _compare(path)
    except OSError as exc:
        raise MeshError(f"cannot read {what} {path!r}: {exc.strerror or exc}; check the file and its "
                        "permissions") from None
    if status is None:
        return "none"
    if status:
        return "ok"
    msg = (f"{what} {path!r} was changed or damaged after planar wrote it: its bytes no longer match the "
           f"SHA-256 digest planar stored in it ({ATTRIBUTE}), so any number in it may be wrong. Write "
           "it again from the model")
    if changed == "error":
        raise MeshError(msg + " (to look at it anyway: planar show --allow-changed, or "
                        "planar.post.files.read_result_file(path, changed='warn'))")
    import warnings

    warnings.warn(PlanarWarning(msg + "; shown anyway as asked", "changed-file"), stacklevel=2)
    return "changed"


def _compare(path: str) -> bool | None:
    """None: no digest in the file; True: it matches; False: it does not."""
    with open(path, "rb") as fh:
        size = os.fstat(fh.fileno()).st_size
        head = fh.read(_HEAD)
        span = _value_span(head)
        if span is None:
            return None
        lo, hi = span
        stored = head[lo:hi]
        h = hashlib.new(_ALGORITHM)
        h.update(head[:lo])
        h.update(b"0" * _HEX)
        if size > hi:
            with mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ) as mm:
                view = memoryview(mm)
                try:
                    h.update(view[hi if hi > lo else lo + _HEX:])
                finally:
                    view.release()
    return hi > lo and h.hexdigest().encode() == stored
