"""Run a sweep: points in, point folders, store, summary and morning view out.

What a run does
---------------
1. Load the case (every sweep value checked) and expand ``[sweep]`` into points.
2. Take the sweep folder's lock (one runner per folder), open the store and
   compare the case's fingerprint with the one the sweep started with: a
   changed case is refused unless ``restart``.
   A damaged store is set aside and rebuilt from the finished point folders
   (:mod:`.recover`).
3. Resume: points already in the store keep their number and results; points
   left ``running`` by a stopped run become pending again (failed ones too
   with ``retry_failed``); leftover temporary folders are removed.
4. Build every point's case and group them (see :mod:`.points`); each group's
   pending points form one task. A task whose mesh is being built by another
   task waits for it, so each sized geometry is meshed once.
5. Run the tasks (:mod:`.local` or :mod:`.cluster`); write each finished
   point's folder to a temporary name, rename it, and only then mark the point
   done in the store.
6. Regenerate ``summary.csv``, the plots and ``report.html`` from the store.
"""

from __future__ import annotations

import json
import logging
import os
import shutil
import time
from dataclasses import dataclass, field
from pathlib import Path

from whorl.cases.errors import CaseError
from whorl.cases.limits import check_mesh_estimate
from whorl.cases.loader import load_case
from whorl.cases.output import (
    MARKER,
    is_whorl_folder,
    output_key,
    output_root,
    write_marker,
)
from whorl.cases.parameters import resolve
from whorl.cases.spec import SweepSpec
from whorl.cases.sweep.engine import run_tasks
from whorl.cases.sweep.lock import SweepLock
from whorl.cases.sweep.meshcache import MeshCache
from whorl.cases.sweep.morning import write_morning
from whorl.cases.sweep.points import (
    DEFAULT_MAX_POINTS,
    check_count,
    expand,
    group_points,
    point_case,
)
from whorl.cases.sweep.recover import adopt_points, set_aside, store_damage
from whorl.cases.sweep.store import STORE_NAME, SweepStore, case_fingerprint
from whorl.cases.sweep.summary import case_units, write_summary

log = logging.getLogger(__name__)


class SweepConflict(CaseError):
    """The case changed since the sweep in this folder started."""


@dataclass
class SweepOutcome:
    """What a sweep run did: ``counts`` by status over all points, ``ran`` and
    ``failed`` in this run, ``meshed`` meshes built in this run, ``timing_s``
    (``plan``: building and grouping the point cases; ``run``: the points;
    ``morning``: summary, plots and report)."""

    folder: Path
    counts: dict
    ran: int = 0
    failed: int = 0
    meshed: int = 0
    files: list = field(default_factory=list)
    timing_s: dict = field(default_factory=dict)
    repaired: str | None = None  # what was wrong with a damaged store, and what was done


def sweep_folder(case, out=None) -> Path:
    """``OUTPUT/CASE_NAME/sweep``."""
    return output_root(case, out) / case.name / "sweep"


def load_sweep(path, overrides=None, max_points: int = DEFAULT_MAX_POINTS, vary=None,
               out=None, resume: bool = True):
    """The case and its points (list of override dicts), checked. ``vary`` (from
    ``--vary NAME=V1,V2``: name -> list of values) replaces the case's ``[sweep]``
    table by a grid over those values. Without ``vary`` (and with ``resume``), a sweep
    folder (under ``out``) whose sweep was started with ``--vary`` resumes with the values
    it recorded; ``resume=False`` (``--restart``) takes the case's own table."""
    overrides = dict(overrides or {})
    case = load_case(path, overrides, max_points)
    if not vary and resume:
        vary = recorded_vary(sweep_folder(case, out))
        if vary:
            log.info("resuming the sweep started with %s (recorded in its store)",
                     " ".join(f"--vary {k}={','.join(v)}" for k, v in vary.items()))
    if vary:
        case.sweep = vary_sweep(case, vary, overrides)
    if case.sweep is None:
        raise CaseError("sweep", "the case has no [sweep] table: add one, e.g. "
                                 "[sweep] freq = [\"1 kHz\", \"3 kHz\"]")
    for name in overrides:
        if name in case.sweep.axes:
            raise CaseError(f"--set {name}", f"{name} is swept by the [sweep] table; "
                                             "remove it from --set or from the sweep")
    specs = expand(case.sweep)
    check_count(len(specs), max_points)
    return case, specs


def recorded_vary(folder: Path) -> dict | None:
    """The ``--vary`` values a sweep folder's store recorded (None: none, no store, or a
    store that cannot be read; a damaged store is dealt with when the sweep runs)."""
    path = folder / STORE_NAME
    if not path.is_file() or store_damage(path):
        return None
    store = SweepStore(path, readonly=True)
    try:
        text = store.get("vary")
    finally:
        store.close()
    return json.loads(text) if text else None


def vary_sweep(case, vary: dict, overrides: dict) -> SweepSpec:
    """A grid sweep from ``--vary`` values, each checked against its parameter."""
    params = case.document.get("parameters", {})
    for name, values in vary.items():
        if name not in params:
            known = ", ".join(params) or "none defined"
            raise CaseError(f"--vary {name}", f"no parameter {name!r} in [parameters] "
                                              f"(parameters: {known})")
        if name in overrides:
            raise CaseError(f"--vary {name}", f"{name} is also given by --set; give it once")
        for value in values:
            resolve(params, {name: value},
                    lambda n, overridden: (f"--vary {n}" if overridden
                                           else f"parameters.{n}", None))
    return SweepSpec("grid", dict(vary), from_command_line=True)


def run_sweep(path, overrides=None, out=None, workers: int | None = None, scheduler=None,
              point_timeout: float | None = None, retry_failed: bool = False,
              restart: bool = False, max_points: int = DEFAULT_MAX_POINTS, progress=None,
              runner=None, max_elements: int | None = None, vary=None) -> SweepOutcome:
    """Run (or resume) the sweep of the case file at ``path``.

    Parameters
    ----------
    path : str or Path
        The case file; it must have a ``[sweep]`` table.
    overrides : dict, optional
        ``--set`` values applied to every point.
    out : path, optional
        Output folder (``--out``); the sweep writes ``OUT/CASE_NAME/sweep``.
    workers : int, optional
        Local worker processes (default: all cores).
    scheduler : str or distributed.Client, optional
        Dask scheduler address: run the points on that cluster instead.
    point_timeout : float, optional
        Seconds a point may run (a task of k points: k times as long).
    retry_failed, restart : bool
        Run failed points again; discard the folder's sweep and start anew.
    max_points : int
        Refuse larger sweeps.
    progress : callable, optional
        ``progress(event)`` with a dict: ``total`` (points to run), ``done``,
        ``failed``.
    runner : object, optional
        A ready runner (``free``, ``busy``, ``submit``, ``wait``, ``close``).
    max_elements : int, optional
        A group of points whose mesh is estimated above this (default
        :data:`~whorl.meshes.estimate.DEFAULT_MAX_ELEMENTS`) fails as bad input
        without meshing.

    Returns
    -------
    SweepOutcome
    """
    overrides = dict(overrides or {})
    case, specs = load_sweep(path, overrides, max_points, vary, out, resume=not restart)
    folder = sweep_folder(case, out)
    make_sweep_folder(folder, output_key(out))
    with SweepLock(folder):
        if restart:
            _clear(folder)
            write_marker(folder, "sweep")
        damage = store_damage(folder / STORE_NAME)
        if damage:
            aside = set_aside(folder / STORE_NAME)
        store = SweepStore(folder / STORE_NAME)
        try:
            _check_fingerprint(store, case, overrides)
            # the --vary values (if any), so that a plain resume continues this sweep
            store.set(vary=json.dumps(case.sweep.axes) if case.sweep.from_command_line
                      else "")
            repaired = None
            if damage:
                adopted = _rebuild(store, case, specs, folder, overrides)
                repaired = (f"the sweep's store was damaged: {damage}. It was set aside as "
                            f"{aside.name} and rebuilt from the finished point folders "
                            f"({adopted} adopted); points without a folder run again")
                log.warning(repaired)
            outcome = _run(store, case, specs, folder, overrides, workers, scheduler,
                           point_timeout, retry_failed, progress, runner, max_elements)
            outcome.repaired = repaired
            return outcome
        finally:
            store.close()


def _rebuild(store, case, specs, folder, overrides) -> int:
    """Adopt the finished point folders into a new store (see :mod:`.recover`)."""
    params = []
    for spec in specs:
        try:
            params.append(point_case(case.text, case.path, {**overrides, **spec}).parameters)
        except CaseError:
            params.append(None)
    return adopt_points(store, folder, case_fingerprint(case, overrides), overrides, specs,
                        params)


def _check_fingerprint(store, case, overrides) -> None:
    fingerprint = case_fingerprint(case, overrides)
    old = store.get("fingerprint")
    if old is None:
        from whorl import __version__
        store.set(fingerprint=fingerprint, case_name=case.name, case_path=case.path,
                  axes=",".join(case.sweep.axes), whorl_version=__version__)
    elif old != fingerprint:
        done = store.counts()["done"]
        raise SweepConflict("case", f"the case (outside its [sweep] table) or the --set values "
                                    f"changed since this sweep started in {store.path.parent}, "
                                    f"so its {done} finished points would not match new ones; "
                                    "restore the case, or run again with --restart to discard "
                                    "them and start over")
    store.set(axes=",".join(case.sweep.axes))


def _run(store, case, specs, folder, overrides, workers, scheduler, point_timeout,
         retry_failed, progress, runner, max_elements=None) -> SweepOutcome:
    t0 = time.perf_counter()
    numbers = store.sync_points(specs)
    store.requeue(retry_failed)
    points_dir = folder / "points"
    points_dir.mkdir(exist_ok=True)
    for stale in points_dir.glob(".*"):
        shutil.rmtree(stale, ignore_errors=True)
    # temporary files of a summary, report or plot cut short (this process holds the lock)
    for stale in [*folder.glob(".*.tmp"), *folder.glob("plots/.*.tmp.png")]:
        stale.unlink(missing_ok=True)
    text = case.text  # the text that was read and checked, not the file as it is now
    status = {p["point"]: p["status"] for p in store.points()}
    cases = {}
    for number, spec in zip(numbers, specs, strict=True):
        try:
            cases[number] = point_case(text, case.path, {**overrides, **spec})
        except CaseError as exc:
            if status[number] == "pending":
                store.mark_failed(number, f"bad input: {exc}")
    groups = group_points(cases)
    tasks = []
    for group in groups:
        for n in group.numbers:
            store.set_params(n, cases[n].parameters, group.mesh_key)
        todo = [n for n in group.numbers if status[n] == "pending"]
        if todo:
            try:
                check_mesh_estimate(group.case, max_elements, group.geometry)
            except CaseError as exc:
                for n in todo:
                    store.mark_failed(n, f"bad input: {exc}")
                continue
            tasks.append((group, todo))
    t1 = time.perf_counter()
    report = run_tasks(tasks, cases, text, store, folder, workers, scheduler, point_timeout,
                       progress, runner, MeshCache(folder / "mesh-cache"))
    t2 = time.perf_counter()
    files = [write_summary(store.points(), list(case.sweep.axes), folder / "summary.csv",
                           case_units(case))]
    files += write_morning(case, store.points(), list(case.sweep.axes), folder)
    timing = {"plan": t1 - t0, "run": t2 - t1, "morning": time.perf_counter() - t2}
    return SweepOutcome(folder, store.counts(), report["ran"], report["failed"],
                        report["meshed"], files, timing)


def make_sweep_folder(folder: Path, key: str) -> None:
    """Create ``OUTPUT/NAME/sweep`` (marked as whorl's) or check the existing one; a
    place the system refuses is a :class:`CaseError` under ``key`` with its reason."""
    try:
        if folder.parent.exists() and not folder.parent.is_dir():
            raise CaseError(key, f"{folder.parent} exists and is not a folder (output.folder / "
                                 "case.name point at it): choose another [output] folder or "
                                 "[case] name")
        fresh = not folder.exists()
        folder.mkdir(parents=True, exist_ok=True)
        if fresh or (not is_whorl_folder(folder) and (folder / STORE_NAME).exists()):
            write_marker(folder, "sweep")
    except (OSError, ValueError) as exc:
        reason = exc.strerror if isinstance(exc, OSError) and exc.strerror else str(exc)
        raise CaseError(key, f"cannot write the sweep folder {folder}: {reason}") from None


def _clear(folder: Path) -> None:
    """Discard a sweep folder's results (``--restart``), keeping its lock file.

    Only a folder whorl wrote (its marker or its store) is cleared."""
    if not (is_whorl_folder(folder) or (folder / STORE_NAME).exists()):
        raise CaseError("--restart", f"{folder} was not written by whorl (no {MARKER} marker "
                                     "and no store): whorl will not clear it")
    for entry in folder.iterdir():
        if entry.name == SweepLock.NAME:
            continue
        if entry.is_dir():
            shutil.rmtree(entry)
        else:
            os.remove(entry)
