"""One unit of sweep work, run inside a worker (a local process or a Dask worker).

A task is some points of one frequency group (see :mod:`.points`): it meshes
the group's sized geometry (unless the mesh comes with the task, from the
cache), solves the points' frequencies as one frequency list (one assembly),
and returns each point's files as bytes with its main numbers. The worker
writes nothing where the sweep lives: the sweep's own process writes every
file, so remote workers need no shared disk.
"""

from __future__ import annotations

import os
import socket
import tempfile
import threading
import time
import traceback
from dataclasses import replace
from pathlib import Path

from whorl.cases.errors import CaseError
from whorl.cases.limits import check_shapes
from whorl.cases.meshing import DEFAULT_MESH_TIME_LIMIT, mesh_with_limit
from whorl.cases.run import solve_case, write_results
from whorl.cases.sweep.summary import heating_numbers, main_numbers
from whorl.meshes.build import build_mesh
from whorl.meshes.errors import MeshError
from whorl.postprocess.frequency_response import resonance, restrict_sweep
from whorl.solver.errors import SolveError

_MESH_LOCK = threading.Lock()  # gmsh is not thread-safe (Dask workers run threads)


def worker_name() -> str:
    return f"{socket.gethostname()}:{os.getpid()}"


def execute(payload: dict) -> dict:
    """Run a task.

    Parameters
    ----------
    payload : dict
        ``points`` (point number -> its Case), ``case`` (the Case to solve: the
        group's problem with these points' frequencies), ``geometry`` (the
        group's sized geometry), ``mesh`` (a TaggedMesh from the cache, or None).

    Returns
    -------
    dict
        ``ok``, ``points`` (number -> ``{"files": {name: bytes}, "rows": [...]}``),
        ``mesh`` (the mesh when this task built it, else None), ``meshed``,
        ``seconds``, ``worker``; on failure ``error`` and ``detail`` instead of
        ``points``.
    """
    start = time.perf_counter()
    log: list[str] = []

    def say(message: str) -> None:
        log.append(f"[{time.perf_counter() - start:8.2f} s] {message}")

    mesh, built = payload.get("mesh"), None
    out = {"worker": worker_name(), "meshed": False, "mesh": None}
    try:
        if mesh is None:
            try:  # what would hang or break the mesher, found before it starts
                check_shapes(payload["case"].document, payload["geometry"])
            except CaseError as exc:
                raise MeshError(f"found before meshing: {exc}") from None
            say("meshing")
            with _MESH_LOCK:
                if threading.current_thread() is threading.main_thread():
                    # a worker process of its own: mesh in a child under the time limit
                    mesh = built = mesh_with_limit(payload["geometry"], say,
                                                   DEFAULT_MESH_TIME_LIMIT)
                else:  # a thread of a cluster worker: no fork there
                    mesh = built = build_mesh(payload["geometry"], progress=say)
            out.update(meshed=True, mesh=built)
        else:
            say("mesh from the sweep's mesh cache")
        results, solutions, _ = solve_case(payload["case"], say, mesh=mesh)
        if built is not None:
            results["timing_s"]["mesh"] = built.info.get("time_s", 0.0)
        out["points"] = {n: _point_files(n, case, results, solutions, payload, log, built)
                         for n, case in payload["points"].items()}
        out["ok"] = True
    except Exception as exc:  # recorded as the point's error; the sweep goes on
        out.update(ok=False, error=describe(exc), detail=traceback.format_exc())
    out["seconds"] = time.perf_counter() - start
    return out


def describe(exc: BaseException) -> str:
    """A one-line error message for the store and summary.csv."""
    if isinstance(exc, MeshError):
        return f"meshing failed: {exc}"
    if isinstance(exc, SolveError):
        return f"solve failed: {exc}"
    if isinstance(exc, CaseError):
        return f"bad input: {exc}"
    if isinstance(exc, MemoryError):
        return "out of memory while solving this point"
    return f"{type(exc).__name__}: {exc}"


def _point_files(number, case, results, solutions, payload, log, built) -> dict:
    wanted = list(case.study.frequencies)
    picked = [i for i, s in enumerate(results.get("solutions", ())) if s["frequency_hz"] in wanted]
    record = dict(results)
    record["parameters"] = dict(case.parameters)
    if "solutions" in results:
        record["solutions"] = [results["solutions"][i] for i in picked]
    if "frequency_sweep" in results:  # the point's own frequencies, not the group's
        record["frequency_sweep"] = restrict_sweep(results["frequency_sweep"], wanted)
    if results.get("resonance") is not None and case.study.tank_capacitance is not None:
        record["resonance"] = resonance(record["solutions"], case.study.tank_capacitance,
                                        case.study.tank_connection)
    record["sweep"] = {
        "point": number,
        "points_solved_together": sorted(payload["points"]),
        "frequencies_solved_together_hz": list(payload["case"].study.frequencies),
        "mesh_key": payload.get("mesh_key"),
        "mesh": "built" if built is not None else "cache",
    }
    files = {}
    with tempfile.TemporaryDirectory(prefix="whorl-point-") as tmp:
        write_results(replace(case, path=None), record, [solutions[i] for i in picked],
                      Path(tmp))
        (Path(tmp) / "run.log").write_text("\n".join(log) + "\n", encoding="utf-8")
        for path in sorted(Path(tmp).rglob("*")):
            if path.is_file():
                files[str(path.relative_to(tmp))] = path.read_bytes()
    if "heating" in record:
        rows = [heating_numbers(record["heating"], case.length_unit)]
    else:
        rows = [main_numbers(r) for r in record["solutions"]]
    return {"files": files, "rows": rows}
