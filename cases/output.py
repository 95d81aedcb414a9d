"""Where results go, written so that nothing is ever half-written or destroyed.

A run writes into a hidden sibling folder (``.NAME.partial-PID-*``) and renames
it into place only when everything is written; a failed run leaves the
previous results as they were.

whorl replaces only a folder it wrote itself: every folder it writes holds a
small marker file (:data:`MARKER`). An existing folder without the marker (a
user's own folder), a file, or a folder holding a sweep (``NAME/sweep/``) is
never replaced: the run is refused with :class:`CaseError` (exit 2) before
anything is solved. Staging folders of runs whose process is gone are removed
at the next run of the same name.
"""

from __future__ import annotations

import json
import os
import shutil
import tempfile
from contextlib import contextmanager
from pathlib import Path

from whorl.cases.errors import CaseError

MARKER = ".whorl-folder"
SWEEP_SUBFOLDER = "sweep"


def output_root(case, override=None) -> Path:
    """The output folder: ``--out`` if given, else ``[output] folder`` relative to the
    case file's folder (or the working folder for a case given as text)."""
    key = output_key(override)
    try:
        if override is not None:
            return Path(override).expanduser().resolve()
        folder = Path(case.output.folder).expanduser()
        if folder.is_absolute():
            return folder
        base = case.path.parent if case.path is not None else Path.cwd()
        return (base / folder).resolve()
    except (OSError, ValueError, RuntimeError) as exc:
        raise CaseError(key, f"cannot use this output folder: {_reason(exc)}") from None


def output_key(override=None) -> str:
    """The key a problem with the output place is reported under."""
    return "--out" if override is not None else "output.folder"


def _reason(exc: BaseException) -> str:
    """The operating system's reason, without Python's decoration."""
    if isinstance(exc, OSError) and exc.strerror:
        return exc.strerror
    return str(exc) or type(exc).__name__


def is_whorl_folder(folder: Path) -> bool:
    """True when ``folder`` holds whorl's marker file (whorl wrote it)."""
    return (Path(folder) / MARKER).is_file()


def check_replaceable(final: Path, key: str = "output.folder", owned: bool = False) -> None:
    """Refuse (:class:`CaseError`) unless ``final`` is absent or a folder whorl wrote,
    holding no sweep (``owned``: the place is whorl's own, such as a sweep's point
    folders, so a folder there needs no marker)."""
    final = Path(final)
    hint = ("choose another [output] folder or [case] name (or --out), or move the "
            "existing one away")
    try:
        if not final.exists() and not final.is_symlink():
            return
        if final.is_symlink() or not final.is_dir():
            raise CaseError(key, f"{final} exists and is not a folder (output.folder / "
                                 f"case.name point at it): whorl will not replace it; {hint}")
        if (final / SWEEP_SUBFOLDER).exists():
            raise CaseError(key, f"{final} holds the sweep of this case ({SWEEP_SUBFOLDER}/): "
                                 "a single run or mesh would replace it, so whorl refuses; "
                                 f"{hint}")
        if not owned and not is_whorl_folder(final):
            older = ((final / "results.json").exists() or (final / "mesh.msh").exists())
            why = (" (it looks like the results of an earlier whorl, from before results "
                   "folders were marked: remove it yourself if you no longer need it)"
                   if older else "")
            raise CaseError(key, f"{final} exists and was not written by whorl (it has no "
                                 f"{MARKER} marker; output.folder / case.name point at it): "
                                 f"whorl replaces only folders it wrote itself{why}; {hint}")
    except OSError as exc:
        raise CaseError(key, f"cannot inspect {final}: {_reason(exc)}") from None


def _pid_alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OverflowError, ValueError):
        return True
    except OSError:
        return True
    return True


def remove_stale_staging(final: Path) -> list[Path]:
    """Remove ``.NAME.partial-PID-*`` and ``.NAME.old-PID`` folders beside ``final``
    whose process is gone; returns what was removed."""
    final = Path(final)
    removed = []
    try:
        entries = list(final.parent.glob(f".{final.name}.*"))
    except OSError:
        return removed
    for entry in entries:
        rest = entry.name[len(final.name) + 2:]
        kind, _, tail = rest.partition("-")
        if kind not in ("partial", "old"):
            continue
        pid_text = tail.split("-", 1)[0]
        if not pid_text.isdigit() or _pid_alive(int(pid_text)) or not entry.is_dir():
            continue
        shutil.rmtree(entry, ignore_errors=True)
        removed.append(entry)
    return removed


def write_marker(folder: Path, kind: str) -> None:
    """Mark ``folder`` as written by whorl (``kind``: run, mesh, point, sweep)."""
    from whorl import __version__

    (Path(folder) / MARKER).write_text(
        json.dumps({"written_by": "whorl", "kind": kind, "whorl_version": __version__}) + "\n",
        encoding="utf-8")


@contextmanager
def staged_folder(final: Path, key: str = "output.folder", kind: str = "run",
                  owned: bool = False):
    """Yield a temporary folder beside ``final``; on success it replaces ``final``.

    ``final`` is checked with :func:`check_replaceable` before and again at the
    end (``owned``: see :func:`check_replaceable`); a problem with the place (a
    file in the way, no permission, a name the system refuses) is a
    :class:`CaseError` under ``key`` naming the system's reason.
    """
    final = Path(final)
    check_replaceable(final, key, owned)
    try:
        final.parent.mkdir(parents=True, exist_ok=True)
        remove_stale_staging(final)
        tmp = Path(tempfile.mkdtemp(prefix=f".{final.name}.partial-{os.getpid()}-",
                                    dir=final.parent))
    except (OSError, ValueError) as exc:
        raise CaseError(key, f"cannot write the results folder {final}: {_reason(exc)}") \
            from None
    try:
        yield tmp
        write_marker(tmp, kind)
        check_replaceable(final, key, owned)
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
