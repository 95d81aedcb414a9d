"""Hand tasks to a runner and record what comes back.

The runner-independent loop: submit tasks while the runner has room, collect
outcomes, write point folders, update the store, report progress. A task
whose mesh another task is building waits for that one (then gets the mesh
from the cache), so every sized geometry is meshed once per sweep; if the
builder fails, the next task builds it.
"""

from __future__ import annotations

import os
import shutil
from pathlib import Path

from whorl.cases.output import staged_folder
from whorl.cases.sweep.points import subgroup


def _runner(workers, scheduler, runner, tasks):
    if runner is not None:
        return runner
    if scheduler is not None:
        from whorl.cases.sweep.cluster import DaskRunner
        return DaskRunner(scheduler)
    from whorl.cases.sweep.local import LocalRunner
    return LocalRunner(min(workers or os.cpu_count() or 1, len(tasks)))


def run_tasks(tasks, cases, text, store, folder, workers, scheduler, point_timeout, progress,
              runner, cache) -> dict:
    """Run ``tasks`` (list of (Group, point numbers)) and record their points.

    Returns ``{"ran": points run, "failed": failed, "meshed": meshes built}``.
    """
    total = sum(len(numbers) for _, numbers in tasks)
    report = {"ran": 0, "failed": 0, "meshed": 0, "total": total, "done": 0}
    say = progress or (lambda event: None)
    say(dict(report))
    if not tasks:
        return report
    runner = _runner(workers, scheduler, runner, tasks)
    run_id = store.start_run(runner.name, getattr(runner, "size", 0))
    queue = list(tasks)
    running: dict[int, tuple] = {}
    building: set[str] = set()
    next_id = 0
    outcome_text = "interrupted"
    try:
        while queue or running:
            while queue and runner.free():
                pick = next((t for t in queue if t[0].mesh_key not in building
                             or t[0].mesh_key in cache), None)
                if pick is None:
                    break
                queue.remove(pick)
                group, numbers = pick
                mesh = cache.load(group.mesh_key)
                if mesh is None:
                    building.add(group.mesh_key)
                payload = {"points": {n: cases[n] for n in numbers},
                           "case": subgroup(group, numbers, cases), "geometry": group.geometry,
                           "mesh": mesh, "mesh_key": group.mesh_key}
                limit = None if point_timeout is None else point_timeout * len(numbers)
                next_id += 1
                worker = runner.submit(next_id, payload, limit)
                running[next_id] = (group, numbers, mesh is not None)
                store.mark_running(numbers, worker)
            for tag, outcome in runner.wait(0.5):
                group, numbers, cached = running.pop(tag)
                building.discard(group.mesh_key)
                if outcome.get("mesh") is not None:
                    cache.save(group.mesh_key, outcome["mesh"])
                    report["meshed"] += 1
                _record(store, folder, text, numbers, outcome, cached, report)
                say(dict(report))
        outcome_text = "finished"
    finally:
        runner.close()
        store.requeue(retry_failed=False)  # points this run left running are pending again
        store.end_run(run_id, outcome_text)
    return report


def _record(store, folder, text, numbers, outcome, cached, report) -> None:
    worker = outcome.get("worker", "")
    seconds = outcome.get("seconds")
    if outcome.get("ok"):
        for i, n in enumerate(numbers):
            point = outcome["points"][n]
            write_point(folder, n, point["files"], text)
            source = "cache" if cached else ("built" if i == 0 else "group")
            store.mark_done(n, point["rows"], seconds, worker,
                            meshed=bool(outcome.get("meshed")) and i == 0, mesh_source=source)
            report["done"] += 1
    else:
        for n in numbers:
            shutil.rmtree(point_folder(folder, n), ignore_errors=True)
            store.mark_failed(n, outcome.get("error", "unknown error"),
                              outcome.get("detail", ""), seconds, worker)
            report["failed"] += 1
    report["ran"] += len(numbers)


def point_folder(folder: Path, number: int) -> Path:
    """``sweep/points/0007``."""
    return folder / "points" / f"{number:04d}"


def write_point(folder: Path, number: int, files: dict, case_text: str) -> Path:
    """Write a point's files (name -> bytes) to its folder, all at once."""
    final = point_folder(folder, number)
    with staged_folder(final, "sweep", "point", owned=True) as tmp:  # points/ is the sweep's
        for name, data in files.items():
            target = tmp / name
            target.parent.mkdir(parents=True, exist_ok=True)
            target.write_bytes(data)
        (tmp / "case.toml").write_text(case_text, encoding="utf-8")
    return final
