"""Where results go, written so that nothing is ever half-written.

A run writes into a hidden sibling folder and renames it into place only
when everything is written; a failed run leaves the previous results as they
were.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from contextlib import contextmanager
from pathlib import Path


def output_root(case, override=None) -> Path:
    """The output folder: ``--out`` if given, else ``[output] folder`` relative to the
    case file's folder (or the working folder for a case given as text)."""
    if override is not None:
        return Path(override).expanduser().resolve()
    folder = Path(case.output.folder).expanduser()
    if folder.is_absolute():
        return folder
    base = case.path.parent if case.path is not None else Path.cwd()
    return (base / folder).resolve()


@contextmanager
def staged_folder(final: Path):
    """Yield a temporary folder beside ``final``; on success it replaces ``final``."""
    final = Path(final)
    final.parent.mkdir(parents=True, exist_ok=True)
    tmp = Path(tempfile.mkdtemp(prefix=f".{final.name}.partial-", dir=final.parent))
    try:
        yield tmp
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    old = None
    if final.exists():
        old = final.parent / f".{final.name}.old-{os.getpid()}"
        final.rename(old)
    tmp.rename(final)
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)
