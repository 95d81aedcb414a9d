"""A damaged sweep store: say what is wrong, and rebuild it from the finished point folders.

The store (``sweep.sqlite``) can be damaged from outside: a disk that filled
up, a copy cut short, a file overwritten by mistake, a zero-length file. The
finished points are safe in their folders (``points/0007/results.json``, each
written whole before the store marked it done), so a damaged store costs
nothing: :func:`store_damage` finds the damage, :func:`set_aside` moves the
damaged file beside (``sweep.sqlite.damaged-TIME``; nothing is deleted), and
:func:`adopt_points` puts every finished point folder whose case matches the
sweep back into a new store under its own number. Points without a folder run
again.
"""

from __future__ import annotations

import json
import logging
import sqlite3
import time
import tomllib
from pathlib import Path

from whorl.cases.sweep.summary import main_numbers

log = logging.getLogger(__name__)

_NEEDED = ("meta", "points", "runs")


def store_damage(path) -> str | None:
    """What is wrong with the store at ``path``, or None (also when there is none yet)."""
    path = Path(path)
    if not path.exists():
        return None
    try:
        if path.stat().st_size == 0:
            return "the store file is empty (zero length)"
        db = sqlite3.connect(f"file:{path}?mode=ro", uri=True, timeout=30)
        try:
            check = db.execute("PRAGMA quick_check").fetchone()
            if check is None or check[0] != "ok":
                return f"the database fails its integrity check ({check[0] if check else '?'})"
            tables = {r[0] for r in db.execute("SELECT name FROM sqlite_master "
                                               "WHERE type = 'table'")}
            missing = [t for t in _NEEDED if t not in tables]
            if missing:
                return f"the store has no {', '.join(missing)} table"
            db.execute("SELECT point, key, status, rows FROM points").fetchall()
            db.execute("SELECT key, value FROM meta").fetchall()
        finally:
            db.close()
    except sqlite3.DatabaseError as exc:
        return f"the store cannot be read ({exc})"
    except OSError as exc:
        return f"the store cannot be read ({exc.strerror or exc})"
    return None


def set_aside(path) -> Path:
    """Move the damaged store (and its journal files) to ``NAME.damaged-TIME``."""
    path = Path(path)
    stamp = time.strftime("%Y%m%d-%H%M%S")
    target = path.with_name(f"{path.name}.damaged-{stamp}")
    n = 1
    while target.exists():
        n += 1
        target = path.with_name(f"{path.name}.damaged-{stamp}-{n}")
    path.rename(target)
    for suffix in ("-wal", "-shm"):
        extra = path.with_name(path.name + suffix)
        if extra.exists():
            extra.rename(target.with_name(target.name + suffix))
    return target


def document_fingerprint(text: str, overrides: dict) -> str | None:
    """The sweep fingerprint of a case file's text (None if it does not parse)."""
    from whorl.cases.sweep.store import document_hash

    try:
        doc = tomllib.loads(text)
    except (tomllib.TOMLDecodeError, RecursionError, ValueError):
        return None
    return document_hash(doc, overrides)


def finished_folders(folder) -> list[tuple[int, dict, str]]:
    """``(number, results, case text)`` of every readable finished point folder."""
    out = []
    points = Path(folder) / "points"
    if not points.is_dir():
        return out
    for entry in sorted(points.iterdir()):
        if not entry.name.isdigit() or not entry.is_dir():
            continue
        try:
            results = json.loads((entry / "results.json").read_text(encoding="utf-8"))
            text = (entry / "case.toml").read_text(encoding="utf-8")
        except (OSError, ValueError):
            continue
        number = results.get("sweep", {}).get("point") if isinstance(results, dict) else None
        if number != int(entry.name) or not isinstance(results.get("parameters"), dict):
            continue
        out.append((number, results, text))
    return out


def _params_key(params: dict) -> str:
    return json.dumps(params, sort_keys=True)


def adopt_points(store, folder, fingerprint: str, overrides: dict, specs: list[dict],
                 spec_params: list[dict | None]) -> int:
    """Put the finished point folders of ``folder`` into a fresh ``store``.

    A folder is adopted when its ``case.toml`` has the sweep's fingerprint and its
    parameters (SI) equal those of one of ``specs`` (``spec_params``: each spec's
    parameters in SI, None when its case is bad input). Returns how many were
    adopted; the caller then syncs the store with ``specs`` as usual.
    """
    from whorl.cases.sweep.points import point_key

    wanted = {}
    for spec, params in zip(specs, spec_params, strict=True):
        if params is not None:
            wanted.setdefault(_params_key(params), spec)
    prints: dict[str, str | None] = {}
    taken, adopted = set(), 0
    with store.db:
        for number, results, text in finished_folders(folder):
            if text not in prints:
                prints[text] = document_fingerprint(text, overrides)
            if prints[text] != fingerprint:
                continue
            spec = wanted.get(_params_key(results["parameters"]))
            if spec is None or point_key(spec) in taken:
                continue
            taken.add(point_key(spec))
            rows = [main_numbers(r) for r in results.get("solutions", [])]
            store.db.execute(
                "INSERT INTO points (point, key, overrides, params_si, status, finished, rows, "
                "mesh_source) VALUES (?, ?, ?, ?, 'done', ?, ?, 'rebuilt')",
                (number, point_key(spec), json.dumps(spec, default=str),
                 json.dumps(results["parameters"]), time.time(),
                 json.dumps(rows, allow_nan=True)))
            adopted += 1
    return adopted
