"""One running sweep per folder: an advisory lock on ``sweep/.lock``.

The operating system drops the lock when its process ends, however it ends,
so a killed sweep never leaves a stale lock behind.
"""

from __future__ import annotations

import os
import time
from pathlib import Path

from whorl.cases.errors import CaseError

try:
    import fcntl
except ImportError:  # not POSIX: no locking
    fcntl = None


class SweepLock:
    """Context manager holding the lock of a sweep folder.

    Raises :class:`CaseError` when another process holds it (after ``wait``
    seconds of trying).
    """

    NAME = ".lock"

    def __init__(self, folder, wait: float = 3.0):
        self.path = Path(folder) / self.NAME
        self.wait = wait
        self.fd = None

    def __enter__(self):
        self.fd = os.open(self.path, os.O_RDWR | os.O_CREAT, 0o644)
        if fcntl is None:
            return self
        end = time.monotonic() + self.wait
        while True:
            try:
                fcntl.flock(self.fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                break
            except BlockingIOError:
                if time.monotonic() > end:
                    holder = os.pread(self.fd, 64, 0).decode(errors="replace").strip()
                    os.close(self.fd)
                    raise CaseError("sweep", f"another whorl sweep (process {holder or '?'}) "
                                             f"is running in {self.path.parent}; wait for it, "
                                             "or stop it first") from None
                time.sleep(0.1)
        os.ftruncate(self.fd, 0)
        os.pwrite(self.fd, str(os.getpid()).encode(), 0)
        return self

    def __exit__(self, *exc) -> None:
        if self.fd is not None:
            if fcntl is not None:
                fcntl.flock(self.fd, fcntl.LOCK_UN)
            os.close(self.fd)
            self.fd = None


def is_running(folder) -> bool:
    """True when a sweep process holds the lock of ``folder``."""
    path = Path(folder) / SweepLock.NAME
    if fcntl is None or not path.exists():
        return False
    fd = os.open(path, os.O_RDONLY)
    try:
        fcntl.flock(fd, fcntl.LOCK_SH | fcntl.LOCK_NB)
    except BlockingIOError:
        return True
    finally:
        os.close(fd)  # closing drops a lock we took
    return False

