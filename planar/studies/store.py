"""The point store (one JSON file per point) and the claims by which runs sharing a store split the points."""
from __future__ import annotations

import json
import math
import os
import socket
import time
from pathlib import Path

from ..core.errors import InputError
from ..post.files import atomic_write_text, json_safe as _jsonable


_STATUS = ("done", "failed")


# ============================================================================ store
class _Store:
    """One JSON file per point, written atomically: DIR/<key>.json."""

    def __init__(self, directory):
        self.dir = Path(directory)
        try:
            self.dir.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise InputError(f"cannot create the sweep store {str(self.dir)!r}: {exc.strerror}") from None

    def path(self, key: str) -> Path:
        return self.dir / f"{key}.json"

    def load(self, key: str) -> dict | None:
        p = self.path(key)
        try:
            rec = json.loads(p.read_text(encoding="utf-8"))
        except (FileNotFoundError, json.JSONDecodeError, UnicodeDecodeError):
            return None
        return rec if isinstance(rec, dict) and rec.get("key") == key else None

    def save(self, record: dict) -> None:
        atomic_write_text(self.path(record["key"]), json.dumps(_jsonable(record), indent=1, sort_keys=True))


def _reusable(rec: dict | None, function_id: str, specs: dict[str, str], retry_failed: bool,
              source: str | None = None) -> bool:
    """Whether a stored point serves this run: same function, made by the same version of it, same outputs.

    ``source`` is the function's fingerprint (:func:`planar.studies.compute.function_digest`); a point
    made by another version of the function (or stored before the fingerprint was kept) is computed again.
    """
    if rec is None or rec.get("function") != function_id or rec.get("status") not in _STATUS:
        return False
    if source is not None and rec.get("source") != source:
        return False
    if rec["status"] == "failed":
        return not retry_failed
    stored = rec.get("output_specs", {})
    return all(stored.get(n) == d for n, d in specs.items())


# ============================================================================ claims: runs sharing a store
#: Default seconds after which a claim whose heartbeat stopped is taken over by another run.
CLAIM_TIMEOUT = 60.0
_POLL = 0.25  # seconds between looks at the store while this run waits for points other runs hold


def _pid_alive(pid: int) -> bool:
    """Whether process ``pid`` of this host still runs (a zombie counts as ended).

    Only on POSIX; elsewhere this answers True and a claim goes stale by its heartbeat alone
    (``os.kill(pid, 0)`` would end the process on Windows).
    """
    if os.name != "posix":
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # alive, owned by another user
        return True
    except OSError:
        return True
    try:  # Linux: an ended process that nobody has reaped yet is a zombie ("Z") or dead ("X")
        with open(f"/proc/{pid}/stat", "rb") as f:
            state = f.read().rsplit(b")", 1)[1].split()[0]
        return state not in (b"Z", b"X")
    except (OSError, IndexError):
        return True


class _Claims:
    """Claims of the points this run computes: ``DIR/<key>.claim`` beside the point files.

    A claim is created atomically (``O_CREAT | O_EXCL``: of two runs asking at once exactly one
    gets it) and holds the pid, host, run token and start time of its run. While the run holds it, a
    heartbeat thread refreshes the file's modification time every ``timeout / 6`` seconds (at most
    5 s). A claim is stale when its heartbeat is older than ``timeout`` seconds (the hosts' clocks must
    agree to well within it), or at once when it was made on this host by a process that has ended.
    A stale claim is taken over under a second exclusive file, ``DIR/<key>.takeover``, so that of two
    runs taking it over at the same moment only one succeeds.
    """

    def __init__(self, directory: Path, timeout: float = CLAIM_TIMEOUT):
        import threading

        self.dir = Path(directory)
        self.timeout = float(timeout)
        self.interval = min(5.0, self.timeout / 6.0)
        self.host = socket.gethostname()
        self.pid = os.getpid()
        self.token = os.urandom(8).hex()
        self.held: set[str] = set()
        self._lock = threading.Lock()
        self._stop = threading.Event()
        self._thread = None

    def path(self, key: str) -> Path:
        return self.dir / f"{key}.claim"

    def _text(self) -> str:
        return json.dumps({"pid": self.pid, "host": self.host, "run": self.token, "started": time.time()})

    def claim(self, key: str) -> bool:
        """Claim a point for this run; False if another run holds it."""
        try:
            fd = os.open(self.path(key), os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o644)
        except FileExistsError:
            return False
        except OSError as exc:
            raise InputError(f"cannot write in the sweep store {str(self.dir)!r} ({exc.strerror}); give a store "
                             "folder this process may write to") from None
        with os.fdopen(fd, "w", encoding="utf-8") as f:
            f.write(self._text())
        with self._lock:
            self.held.add(key)
        self._beat()
        return True

    def holder(self, key: str) -> dict:
        """What the claim file says ({} while it is being written or when unreadable)."""
        try:
            info = json.loads(self.path(key).read_text(encoding="utf-8"))
        except (OSError, ValueError):
            return {}
        return info if isinstance(info, dict) else {}

    def is_stale(self, key: str) -> bool:
        """Whether a claim exists and its run is gone (dead pid on this host, or no heartbeat)."""
        try:
            age = time.time() - os.stat(self.path(key)).st_mtime
        except FileNotFoundError:
            return False
        if age > self.timeout:
            return True
        info = self.holder(key)
        pid = info.get("pid")
        if info.get("host") == self.host and isinstance(pid, int) and not isinstance(pid, bool):
            return not _pid_alive(pid)
        return False

    def take_over(self, key: str) -> bool:
        """Replace a stale claim by this run's; False if it is not stale or another run was faster."""
        lock = self.dir / f"{key}.takeover"
        try:
            fd = os.open(lock, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o644)
        except FileExistsError:
            try:  # left by a run that ended in the middle of a takeover
                if time.time() - os.stat(lock).st_mtime > self.timeout:
                    os.unlink(lock)
            except OSError:
                pass
            return False
        try:
            os.write(fd, self._text().encode())
            os.close(fd)
            if not self.is_stale(key):  # freed meanwhile (then claim it), or taken by a live run
                return self.claim(key)
            try:
                os.unlink(self.path(key))
            except FileNotFoundError:
                pass
            return self.claim(key)
        finally:
            try:
                os.unlink(lock)
            except OSError:
                pass

    def release(self, key: str) -> None:
        """Give a point up (after its record is stored, or when the run stops)."""
        with self._lock:
            if key not in self.held:
                return
            self.held.discard(key)
        if self.holder(key).get("run") == self.token:  # not if another run took it over meanwhile
            try:
                os.unlink(self.path(key))
            except OSError:
                pass

    def _beat(self) -> None:
        import threading

        if self._thread is None:
            self._thread = threading.Thread(target=self._heartbeat, name="planar-sweep-heartbeat", daemon=True)
            self._thread.start()

    def _heartbeat(self) -> None:
        while not self._stop.wait(self.interval):
            with self._lock:
                keys = list(self.held)
            for key in keys:
                try:
                    os.utime(self.path(key))
                except OSError:
                    pass

    def close(self) -> None:
        """Stop the heartbeat and release every claim still held."""
        self._stop.set()
        with self._lock:
            keys = list(self.held)
        for key in keys:
            self.release(key)


class _Feed:
    """Hands out the points this run is to compute, one at a time, sharing them with other runs.

    Without claims (no store) it simply hands out the points in order. With claims a point is handed
    out only once this run holds its claim; a point another live run holds waits, and is looked at
    again every ``_POLL`` seconds when this run has nothing else to do: its record (once the other run
    stored it) is taken as it is, and a claim that went stale is taken over.
    """

    def __init__(self, tasks, store: _Store | None, claims: _Claims | None, accept, on_done):
        from collections import deque

        self.queue = deque(tasks)
        self.ready = deque()
        self.waiting: dict[str, dict] = {}
        self.store, self.claims, self.accept, self.on_done = store, claims, accept, on_done
        self._polled = -math.inf

    @property
    def exhausted(self) -> bool:
        """Nothing left to hand out or to wait for."""
        return not (self.queue or self.ready or self.waiting)

    @property
    def remaining(self) -> int:
        return len(self.queue) + len(self.ready) + len(self.waiting)

    def next(self):
        """The next point ``(key, params)`` this run is to compute, or None for now."""
        if self.ready:
            return self.ready.popleft()
        while self.queue:
            key, params = self.queue.popleft()
            if self.claims is None or self._take(key, params):
                return key, params
        if self.waiting and time.monotonic() - self._polled >= _POLL:
            self.poll()
            if self.ready:
                return self.ready.popleft()
        return None

    def _take(self, key: str, params: dict) -> bool:
        c = self.claims
        if not (c.claim(key) or (c.is_stale(key) and c.take_over(key))):
            self.waiting[key] = params  # another live run computes it
            return False
        rec = self.store.load(key)
        if self.accept(rec):  # another run finished it before this run claimed it
            c.release(key)
            self.on_done(rec, False)
            return False
        return True

    def poll(self) -> None:
        """Look at the points other runs hold: take their records, take over stale claims."""
        self._polled = time.monotonic()
        try:
            names = {e.name for e in os.scandir(self.store.dir)}
        except OSError:
            names = None
        for key, params in list(self.waiting.items()):
            if names is None or f"{key}.json" in names:
                rec = self.store.load(key)
                if self.accept(rec):
                    del self.waiting[key]
                    self.on_done(rec, False)
                    continue
            if names is not None and f"{key}.claim" in names and not self.claims.is_stale(key):
                continue
            del self.waiting[key]
            if self._take(key, params):
                self.ready.append((key, params))

    def pause(self, deadline: float | None) -> None:
        """Nothing of this run's to compute: wait a moment for the other runs."""
        t = _POLL if deadline is None else min(_POLL, deadline - time.monotonic())
        if t <= 0:
            raise TimeoutError
        time.sleep(t)
