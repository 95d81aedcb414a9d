"""The transient branch of a run: march in time, record series, write snapshots."""

from __future__ import annotations

import time
from pathlib import Path

from whorl.postprocess.pvd import write_pvd
from whorl.postprocess.series import SeriesRecorder
from whorl.postprocess.tables import write_csv
from whorl.postprocess.vtu import write_fields_vtu
from whorl.solver import linalg
from whorl.solver.system import assemble
from whorl.solver.transient import march


def solve_transient(case, problem, loops, say, folder: Path | None):
    """March ``problem`` as ``case.study`` says; returns (series record, files, info).

    Field snapshots (every ``save_every`` steps, when ``[output] fields``) go to
    ``folder/snapshots/`` with a collection file ``snapshots.pvd``.
    """
    study = case.study
    t0 = time.perf_counter()
    system = assemble(problem, say)
    t_asm = time.perf_counter() - t0
    recorder = SeriesRecorder(loops)
    snapshots, files = [], []
    if folder is not None and case.output.fields:
        (folder / "snapshots").mkdir()
    t1 = time.perf_counter()
    backend = linalg.choose(case.solver)[0]
    reports = []
    for n, state in enumerate(march(system, study.end_s, study.step_s, study.scheme,
                                    backend=backend, progress=say)):
        recorder.add(state)
        if state.nonlinear is not None:
            reports.append(state.nonlinear)
        if folder is not None and case.output.fields and n % study.save_every == 0:
            path = write_fields_vtu(state, folder / "snapshots" / f"step_{n:06d}.vtu")
            snapshots.append((state.time_s, path))
    if snapshots:
        files = [p for _, p in snapshots] + [write_pvd(snapshots, folder / "snapshots.pvd")]
    info = {"assemble_s": t_asm, "solve_s": time.perf_counter() - t1, "system": system,
            "unknowns": int(system.size - system.fixed.size), "backend": backend}
    record = recorder.record()
    if reports:
        record["nonlinear"] = nonlinear_summary(reports)
    return record, files, info


def nonlinear_summary(reports: list[dict]) -> dict:
    """Newton's work over the steps of a transient run with saturable materials."""
    iterations = [r["iterations"] for r in reports]
    return {"steps": len(reports), "iterations": int(sum(iterations)),
            "max_iterations_per_step": int(max(iterations)),
            "converged": all(r["converged"] for r in reports),
            "residual": float(max(r["residual"] for r in reports))}


def series_tables(series: dict, folder: Path) -> list[Path]:
    """CSV time series: regions, sources, loops and totals."""
    t = series["time_s"]
    files = []
    rows = [[t[k], name, r["current_a"][k], r["loss_w"][k], *r["force_n"][k]]
            for name, r in series["regions"].items() for k in range(len(t))]
    files.append(write_csv(folder / "series_regions.csv",
                           ["time_s", "region", "current_a", "loss_w", "force_x_n", "force_y_n"],
                           rows))
    rows = [[t[k], name, s["current_a"][k], s["voltage_v"][k],
             s.get("capacitor_voltage_v", [""] * len(t))[k]]
            for name, s in series["sources"].items() for k in range(len(t))]
    files.append(write_csv(folder / "series_sources.csv",
                           ["time_s", "source", "current_a", "voltage_v", "capacitor_voltage_v"],
                           rows))
    if series["loops"]:
        rows = [[t[k], name, lp["flux_wb"][k], lp["flux_linkage_wb"][k], lp["emf_v"][k],
                 lp["emf_from_e_v"][k]]
                for name, lp in series["loops"].items() for k in range(len(t))]
        files.append(write_csv(folder / "series_loops.csv",
                               ["time_s", "loop", "flux_wb", "flux_linkage_wb", "emf_v",
                                "emf_from_e_v"], rows))
    tot = series["totals"]
    files.append(write_csv(folder / "series_totals.csv",
                           ["time_s", "loss_w", "magnetic_energy_j", "source_power_w"],
                           list(zip(t, tot["loss_w"], tot["magnetic_energy_j"],
                                    tot["source_power_w"], strict=True))))
    return files
