"""The sweep's results store: one SQLite file (standard library) in WAL mode.

Schema
------
``meta(key, value)``
    ``fingerprint`` (hash of the case without its ``[sweep]`` table, plus the
    ``--set`` overrides), ``case_name``, ``case_path``, ``axes`` (JSON list of
    swept names), ``created``, ``whorl_version``.
``points``
    One row per point: ``point`` (number, from 1), ``key`` (its swept values as
    canonical JSON, unique), ``overrides`` (JSON), ``params_si`` (JSON: every
    parameter of the point in SI, once its case was built), ``active`` (1 when
    in the current ``[sweep]`` table), ``status`` (pending, running, done,
    failed), ``error``, ``detail`` (traceback), ``attempts``, ``started``,
    ``finished`` (Unix time), ``seconds`` (time of the task that ran it),
    ``worker``, ``mesh_key``, ``meshed`` (1 when its task built the mesh),
    ``mesh_source`` (built, cache or group), ``rows`` (JSON: the main numbers,
    one dict per frequency).
``runs``
    One row per ``whorl sweep`` invocation: start, end, runner, workers.

Only the process that holds the sweep's lock writes; ``--status`` readers see a
consistent state at any time (WAL).
"""

from __future__ import annotations

import hashlib
import json
import sqlite3
import time
from pathlib import Path

SCHEMA = """
CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT);
CREATE TABLE IF NOT EXISTS points (
    point INTEGER PRIMARY KEY,
    key TEXT UNIQUE NOT NULL,
    overrides TEXT NOT NULL,
    params_si TEXT,
    active INTEGER NOT NULL DEFAULT 1,
    status TEXT NOT NULL DEFAULT 'pending'
        CHECK (status IN ('pending', 'running', 'done', 'failed')),
    error TEXT NOT NULL DEFAULT '',
    detail TEXT NOT NULL DEFAULT '',
    attempts INTEGER NOT NULL DEFAULT 0,
    started REAL, finished REAL, seconds REAL,
    worker TEXT, mesh_key TEXT, meshed INTEGER NOT NULL DEFAULT 0, mesh_source TEXT,
    rows TEXT
);
CREATE TABLE IF NOT EXISTS runs (
    run INTEGER PRIMARY KEY AUTOINCREMENT,
    started REAL, finished REAL, runner TEXT, workers INTEGER, outcome TEXT
);
"""

STORE_NAME = "sweep.sqlite"


def case_fingerprint(case, overrides: dict) -> str:
    """Hash of the case file's content without its ``[sweep]`` table, and of the
    ``--set`` overrides applied to every point.

    The parsed TOML is hashed, so comments and layout may change; any change of
    a value anywhere else in the case changes the fingerprint.
    """
    return document_hash(case.document, overrides)


def document_hash(document: dict, overrides: dict) -> str:
    """The fingerprint of a parsed case document (see :func:`case_fingerprint`)."""
    doc = {k: v for k, v in document.items() if k not in ("sweep", "_resolved")}
    text = json.dumps({"case": doc, "set": dict(overrides)}, sort_keys=True, default=str)
    return hashlib.sha256(text.encode()).hexdigest()


class SweepStore:
    """The store of one sweep folder.

    Parameters
    ----------
    path : Path
        The SQLite file (created with its tables when missing, unless
        ``readonly``).
    """

    def __init__(self, path, readonly: bool = False):
        self.path = Path(path)
        if readonly:
            self.db = sqlite3.connect(f"file:{self.path}?mode=ro", uri=True, timeout=30)
        else:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            self.db = sqlite3.connect(self.path, timeout=30)
            self.db.execute("PRAGMA journal_mode=WAL")
            self.db.execute("PRAGMA synchronous=NORMAL")
            self.db.executescript(SCHEMA)
        self.db.row_factory = sqlite3.Row

    def close(self) -> None:
        self.db.close()

    # meta -----------------------------------------------------------------
    def get(self, key: str, default=None):
        row = self.db.execute("SELECT value FROM meta WHERE key = ?", (key,)).fetchone()
        return default if row is None else row[0]

    def set(self, **values) -> None:
        with self.db:
            self.db.executemany("INSERT OR REPLACE INTO meta VALUES (?, ?)",
                                [(k, str(v)) for k, v in values.items()])

    # points ---------------------------------------------------------------
    def sync_points(self, overrides_list: list[dict]) -> list[int]:
        """Make the store's active points those of ``overrides_list``.

        Points already in the store keep their number, status and results;
        new ones are appended (numbers after the highest so far); points no
        longer in the sweep stay but become inactive. Returns the point
        numbers in the order of ``overrides_list``.
        """
        from whorl.cases.sweep.points import point_key

        known = {r["key"]: r["point"] for r in self.db.execute("SELECT key, point FROM points")}
        top = max(known.values(), default=0)
        numbers = []
        with self.db:
            self.db.execute("UPDATE points SET active = 0")
            for overrides in overrides_list:
                key = point_key(overrides)
                if key in known:
                    number = known[key]
                    self.db.execute("UPDATE points SET active = 1 WHERE point = ?", (number,))
                else:
                    top += 1
                    number = known[key] = top
                    self.db.execute("INSERT INTO points (point, key, overrides) VALUES (?, ?, ?)",
                                    (number, key, json.dumps(overrides, default=str)))
                numbers.append(number)
        return numbers

    def requeue(self, retry_failed: bool) -> int:
        """Points left running by a process that stopped become pending again, and
        failed ones too with ``retry_failed``. Returns how many were requeued."""
        states = ("running", "failed") if retry_failed else ("running",)
        marks = ",".join("?" * len(states))
        with self.db:
            cur = self.db.execute(f"UPDATE points SET status = 'pending', error = '', "
                                  f"detail = '' WHERE status IN ({marks})", states)
        return cur.rowcount

    def set_params(self, number: int, params_si: dict, mesh_key: str | None) -> None:
        with self.db:
            self.db.execute("UPDATE points SET params_si = ?, mesh_key = ? WHERE point = ?",
                            (json.dumps(params_si), mesh_key, number))

    def mark_running(self, numbers, worker: str = "") -> None:
        now = time.time()
        with self.db:
            self.db.executemany("UPDATE points SET status = 'running', started = ?, worker = ?, "
                                "attempts = attempts + 1 WHERE point = ?",
                                [(now, worker, n) for n in numbers])

    def mark_done(self, number: int, rows: list[dict], seconds: float, worker: str = "",
                  meshed: bool = False, mesh_source: str = "") -> None:
        """Record a finished point: call only once its folder is in place."""
        with self.db:
            self.db.execute("UPDATE points SET status = 'done', error = '', detail = '', "
                            "finished = ?, seconds = ?, worker = ?, meshed = ?, "
                            "mesh_source = ?, rows = ? WHERE point = ?",
                            (time.time(), seconds, worker, int(meshed), mesh_source,
                             json.dumps(rows, allow_nan=True), number))

    def mark_failed(self, number: int, error: str, detail: str = "", seconds=None,
                    worker: str = "") -> None:
        with self.db:
            self.db.execute("UPDATE points SET status = 'failed', error = ?, detail = ?, "
                            "finished = ?, seconds = ?, worker = ?, rows = NULL "
                            "WHERE point = ?",
                            (error, detail, time.time(), seconds, worker, number))

    def points(self, active_only: bool = True) -> list[dict]:
        """Every (active) point as a dict, JSON columns decoded, by number."""
        where = "WHERE active = 1" if active_only else ""
        out = []
        for r in self.db.execute(f"SELECT * FROM points {where} ORDER BY point"):
            d = dict(r)
            for name in ("overrides", "params_si", "rows"):
                d[name] = json.loads(d[name]) if d[name] else None
            out.append(d)
        return out

    def counts(self) -> dict:
        """Active points by status (every status present, zero when none)."""
        out = dict.fromkeys(("pending", "running", "done", "failed"), 0)
        for status, n in self.db.execute("SELECT status, COUNT(*) FROM points WHERE active = 1 "
                                         "GROUP BY status"):
            out[status] = n
        out["total"] = sum(out.values())
        return out

    # runs -----------------------------------------------------------------
    def start_run(self, runner: str, workers: int) -> int:
        with self.db:
            cur = self.db.execute("INSERT INTO runs (started, runner, workers) VALUES (?, ?, ?)",
                                  (time.time(), runner, workers))
        return cur.lastrowid

    def end_run(self, run: int, outcome: str) -> None:
        with self.db:
            self.db.execute("UPDATE runs SET finished = ?, outcome = ? WHERE run = ?",
                            (time.time(), outcome, run))

    def runs(self) -> list[dict]:
        return [dict(r) for r in self.db.execute("SELECT * FROM runs ORDER BY run")]
