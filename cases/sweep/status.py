"""Progress of a sweep, read from its store without starting anything."""

from __future__ import annotations

import time

from whorl.cases.sweep.driver import load_sweep, sweep_folder
from whorl.cases.sweep.lock import is_running
from whorl.cases.sweep.recover import finished_folders, store_damage
from whorl.cases.sweep.store import STORE_NAME, SweepStore, case_fingerprint


def sweep_status(path, overrides=None, out=None, max_points: int = 0, vary=None) -> dict:
    """What the store of the case's sweep says.

    Returns
    -------
    dict
        ``folder``; ``started`` (False when no sweep ran yet); ``running`` (a
        sweep process holds the folder's lock); ``counts`` by status (of the
        points in the store; ``expected`` points in the case's sweep);
        ``case_changed``; ``rate_per_hour`` and ``eta_s`` from the latest run;
        ``failures`` (point, error) of failed points; for a damaged store only
        ``damaged`` (what is wrong) and ``finished_folders`` (points a resume
        will adopt at most).
    """
    overrides = dict(overrides or {})
    case, specs = load_sweep(path, overrides, max_points, vary, out)
    folder = sweep_folder(case, out)
    info = {"folder": folder, "expected": len(specs), "started": False,
            "running": is_running(folder)}
    if not (folder / STORE_NAME).exists():
        return info
    damage = store_damage(folder / STORE_NAME)
    if damage:
        info.update(started=True, damaged=damage,
                    finished_folders=len(finished_folders(folder)))
        return info
    store = SweepStore(folder / STORE_NAME, readonly=True)
    try:
        points = store.points()
        counts = store.counts()
        runs = store.runs()
        fingerprint = store.get("fingerprint")
    finally:
        store.close()
    info.update(started=True, counts=counts,
                case_changed=fingerprint != case_fingerprint(case, overrides),
                failures=[(p["point"], p["error"]) for p in points if p["status"] == "failed"])
    info["rate_per_hour"], info["eta_s"] = None, None
    if runs:
        since = runs[-1]["started"]
        until = runs[-1]["finished"] or time.time()
        finished = [p for p in points if p["finished"] and p["finished"] >= since]
        if finished and until > since:
            rate = len(finished) / (until - since)
            info["rate_per_hour"] = rate * 3600
            left = counts["pending"] + counts["running"]
            info["eta_s"] = left / rate if info["running"] else None
        info["last_run"] = runs[-1]
    return info
