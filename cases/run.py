"""Run one case: mesh, solve, postprocess, write the results folder.

The only layer that decides where files go. Everything a run writes lands in
``OUTPUT/CASE_NAME/`` at once (see :mod:`.output`).
"""

from __future__ import annotations

import json
import logging
import platform
import time
from dataclasses import dataclass, field
from pathlib import Path

from whorl import __version__
from whorl.cases import model
from whorl.cases.meshing import DEFAULT_MESH_TIME_LIMIT, mesh_with_limit
from whorl.cases.output import staged_folder
from whorl.cases.run_heating import solve_heating, write_heating_files
from whorl.cases.run_transient import series_tables, solve_transient
from whorl.postprocess.frequency_response import (
    plot_frequency_response,
    resonance,
    response_table,
)
from whorl.postprocess.plots import (
    PLOTS,
    frequency_text,
    plot_field,
    plot_frequency_curves,
    plot_line,
)
from whorl.postprocess.records import solution_record
from whorl.postprocess.report import write_report
from whorl.postprocess.series_plots import plot_series
from whorl.postprocess.surface import cached_surface_power, heated_regions, surface_rows
from whorl.postprocess.surface_plots import plot_surface_power
from whorl.postprocess.tables import line_rows, region_table, write_csv
from whorl.postprocess.vtu import write_fields_vtu
from whorl.solver.harmonic import solve_harmonic

log = logging.getLogger(__name__)

CAUTION = (
    "Results are estimates from an idealised model (2D geometry; steel by a single-valued "
    "B-H curve without hysteresis, or by a fixed permeability). "
    "Confirm them by measurement before relying on them. Induction equipment works at "
    "high voltage and current, heats parts to dangerous temperatures and produces "
    "fields to which exposure limits apply: follow local codes, the equipment maker's "
    "instructions and licensed practice."
)


@dataclass
class RunOutcome:
    """What a run produced: the results record and the folder it was written to."""

    results: dict
    folder: Path
    files: list[Path] = field(default_factory=list)
    solutions: list = field(default_factory=list)


def loop_description(loop, unit_m) -> dict:
    """A LoopSpec in metres, as postprocess.records expects it."""
    out = {"name": loop.name, "turns": loop.turns}
    if loop.at is not None:
        out["at"] = (loop.at[0] * unit_m, loop.at[1] * unit_m)
    else:
        out["start"] = (loop.start[0] * unit_m, loop.start[1] * unit_m)
        out["end"] = (loop.end[0] * unit_m, loop.end[1] * unit_m)
    if getattr(loop, "velocity", None) is not None:
        out["velocity"] = tuple(loop.velocity)
    return out


SATURATION_T = 2.2
"""T: about the most flux density any steel carries before it is saturated (common
practice; pure iron saturates near 2.15 T)."""


def saturation_warnings(case, records) -> list[str]:
    """Linear magnetic materials (mu_r > 1) carrying more than ``SATURATION_T``."""
    out = []
    for rec in records:
        for name, r in rec["regions"].items():
            material = case.materials.get(case.region_material.get(name, ""))
            if material is None or material.bh_curve is not None:
                continue
            peak = r.get("peak_flux_density_t", 0.0)
            if material.relative_permeability > 1 and peak > SATURATION_T:
                out.append(f"at {rec['frequency_hz']:g} Hz region {name!r} (linear material "
                           f"{material.name!r}, mu_r {material.relative_permeability:g}) "
                           f"carries a peak flux density of {peak:.3g} T, beyond the about "
                           f"{SATURATION_T:g} T at which any steel saturates (common practice): "
                           "its permeability, skin depth and loss are not to be trusted; give "
                           "the material a bh_curve")
    return out


def model_warnings(case, mesh, records) -> list[str]:
    """What the user should know about the model's validity, in words."""
    out = []
    if mesh.kelvin is not None and not case.axisymmetric:
        for rec in records:
            currents = [complex(*r["current_a"]) for r in rec["regions"].values()]
            net = abs(sum(currents))
            if net > 1e-6 * max([abs(c) for c in currents] + [1e-300]):
                out.append(f"at {rec['frequency_hz']:g} Hz the model carries a net current of "
                           f"{net:.4g} A: in a planar model with an open boundary the field of a "
                           "net current never decays, so inductances and fluxes depend on the "
                           "exterior mesh; add the return conductor")
    out += saturation_warnings(case, records)
    for rec in records:
        balance = rec["totals"]["power_balance"]
        if balance["applies"] and balance["relative_mismatch"] > balance["tolerance"]:
            out.append(f"at {rec['frequency_hz']:g} Hz the terminal power and the field power "
                       f"differ by {balance['relative_mismatch']:.2e} (relative): do not trust "
                       "the impedance")
    return out


def solve_case(case, progress=None, mesh=None, folder: Path | None = None,
               mesh_time_limit: float | None = DEFAULT_MESH_TIME_LIMIT):
    """Mesh (unless ``mesh`` is given) and solve ``case``; returns (results, solutions, mesh).

    Meshing is stopped after ``mesh_time_limit`` seconds (see :mod:`.meshing`).

    A transient study returns no solutions but a ``series`` block in the results;
    its field snapshots are written into ``folder`` (when given) as it marches.
    """
    say = progress or (lambda message: None)
    timing = {}
    t0 = time.perf_counter()
    if mesh is None:
        say("meshing")
        mesh = mesh_with_limit(model.sized_geometry(case), say, mesh_time_limit)
    timing["mesh"] = time.perf_counter() - t0
    problem = model.problem(case, mesh)
    loops = [loop_description(loop, case.unit_m) for loop in case.loops]
    overlaps = model.overlap_warnings(case, mesh.info.get("covered", ()))
    for text in overlaps:
        log.warning(text)
    body = {}
    heating_info = None
    if case.study.kind == "heating":
        body["heating"], heating_info = solve_heating(case, problem, say)
        solutions, system = [], heating_info["system"]
        info = {"assemble_s": 0.0, "solve_s": heating_info["solve_s"],
                "backend": heating_info_backend(case), "unknowns": 0}
        if system is not None:
            info["unknowns"] = int(system.size - system.fixed.size)
        timing["postprocess"] = 0.0
        body["warnings"] = heating_warnings(body["heating"])
    elif case.study.kind == "transient":
        series, files, info = solve_transient(case, problem, loops, say, folder)
        solutions, system = [], info["system"]
        body["series"] = series
        if files:
            body["snapshots"] = [str(Path(f).relative_to(folder)) for f in files]
        timing["postprocess"] = 0.0
    else:
        solutions, info = solve_harmonic(problem, list(case.study.frequencies),
                                         backend=case.solver, progress=say,
                                         reduced=case.study.reduced,
                                         tolerance=case.study.reduced_tolerance)
        system = solutions[0].system
        say("postprocessing")
        t1 = time.perf_counter()
        points = {p.name: (p.at[0] * case.unit_m, p.at[1] * case.unit_m) for p in case.points}
        body["solutions"] = [solution_record(s, points, loops) for s in solutions]
        timing["postprocess"] = time.perf_counter() - t1
        if "reduced" in info:
            body["frequency_sweep"] = info["reduced"]
        if case.study.tank_capacitance is not None:
            body["resonance"] = resonance(body["solutions"], case.study.tank_capacitance,
                                          case.study.tank_connection)
            for name, res in body["resonance"].items():
                log.info("source %s: %s", name, res["note"])
        body["warnings"] = model_warnings(case, mesh, body["solutions"])
        for text in body["warnings"]:
            log.warning(text)
    body["warnings"] = overlaps + body.get("warnings", [])
    timing["assemble"] = info["assemble_s"]
    timing["solve"] = info["solve_s"]
    timing["total"] = timing["solved"] = time.perf_counter() - t0
    results = {
        "format": 1,
        "whorl_version": __version__,
        "case": {"name": case.name, "title": case.title, "notes": case.notes,
                 "geometry": case.geometry_kind,
                 "depth_m": None if case.axisymmetric else case.depth_m,
                 "length_unit": case.length_unit, "study": case.study.kind},
        "parameters": dict(case.parameters),
        "mesh": {"nodes": int(mesh.mesh.p.shape[1]), "elements": int(mesh.mesh.t.shape[1]),
                 "dofs": int(system.size) if system is not None else 0, "order": case.order,
                 "quality_min": mesh.info.get("quality_min")},
        "timing_s": timing,
        "solver": {"backend": info["backend"], "unknowns": info["unknowns"],
                   "machine": platform.machine(), "python": platform.python_version()},
        **body,
        "caution": CAUTION,
    }
    if heating_info is not None:
        results["caution"] = CAUTION + " " + HEATING_CAUTION
        results["_heating"] = heating_info  # taken out (not written) by write_results
    return results, solutions, mesh


HEATING_CAUTION = (
    "A heating run predicts temperatures of hot parts: parts, fixtures and quench "
    "water stay hot long after the power stops, quench spray can scald, and the supply "
    "carries high current. Temperatures depend on material data given as typical values."
)


def heating_info_backend(case) -> str:
    from whorl.solver import linalg

    return linalg.choose(case.solver)[0]


def heating_warnings(record) -> list[str]:
    """What to know about a heating run: energy balance, supply limits."""
    out = []
    bal = record["energy"]["balance"]
    if abs(bal) > 0.01:
        out.append(f"the heating energy balance is off by {100 * bal:.2f} % (induced heat "
                   "against stored heat and surface loss): reduce step or field_update")
    for name, rec in record["sources"].items():
        lim = rec.get("supply_limit")
        if lim:
            out.append(f"source {name}: {lim['cap']} binds from {lim['from_s']:g} s; the "
                       f"power falls short by up to {lim['max_shortfall_w']:.4g} W")
    for text in out:
        log.warning(text)
    return out


def _suffix(solutions, k) -> str:
    """'' for one solution; else the frequency, ``_3kHz`` (``_static`` at 0 Hz)."""
    if len(solutions) == 1:
        return ""
    f = solutions[k].frequency_hz
    return "_static" if f == 0 else "_" + frequency_text(f).replace(" ", "")


def write_pictures(case, results, solutions, folder: Path, lines: dict) -> tuple[list, dict]:
    """Field files and plots as ``[output]`` asks; returns (files, report images)."""
    files, images = [], {}
    for k, sol in enumerate(solutions):
        tag = _suffix(solutions, k)
        at = frequency_text(sol.frequency_hz)
        if case.output.fields:
            files.append(write_fields_vtu(sol, folder / f"fields{tag}.vtu"))
        if case.output.plots:
            for kind in PLOTS:
                path = plot_field(kind, sol, folder / f"{kind}{tag}.png")
                files.append(path)
                images[f"{kind.replace('-', ' ')} at {at}"] = path
    if case.output.plots:
        for name, (header, rows) in lines.items():
            files.append(plot_line(header, rows, folder / f"line_{name}.png", title=name))
            images[f"line {name}"] = files[-1]
        if len(solutions) > 1:
            files.append(plot_frequency_curves(results["solutions"],
                                               folder / "frequency_curves.png"))
            images["against frequency"] = files[-1]
    if len(solutions) > 1 and "solutions" in results:  # the response: always, it is cheap
        tank = (case.study.tank_capacitance, case.study.tank_connection) \
            if case.study.tank_capacitance is not None else None
        files.append(plot_frequency_response(results["solutions"],
                                             folder / "frequency_response.png",
                                             case.title or case.name,
                                             results.get("frequency_sweep"), tank))
        images["frequency response"] = files[-1]
    return files, images


def write_surface_power(case, solutions, folder: Path) -> tuple[list, dict]:
    """``surface_NAME.csv`` (and its picture) for each conductor in no source; with
    several frequencies one file per frequency, named by it (``surface_NAME_3kHz.csv``)."""
    files, images = [], {}
    for sol in solutions:
        if sol.frequency_hz <= 0:
            continue
        at = frequency_text(sol.frequency_hz)
        tag = "" if len(solutions) == 1 else "_" + at.replace(" ", "")
        for name in heated_regions(sol.problem):
            sp = cached_surface_power(sol, name)
            files.append(write_csv(folder / f"surface_{name}{tag}.csv",
                                   *surface_rows(sp, case.axisymmetric)))
            if case.output.plots:
                files.append(plot_surface_power(
                    sp, folder / f"surface_{name}{tag}.png", case.length_unit, case.unit_m,
                    f"{name}: power entering through the surface at {at}"))
                images[f"surface power of {name} at {at}"] = files[-1]
    return files, images


def write_results(case, results, solutions, folder: Path, started: float | None = None
                  ) -> list[Path]:
    """Write results.json, regions.csv, line tables, fields, plots, the report and the
    case into ``folder``.

    ``timing_s`` gains ``outputs`` (the time spent here) and its ``total`` becomes
    the whole run: since ``started`` (a :func:`time.perf_counter` value, when the
    command began reading the case) when given, else ``solved`` plus ``outputs``.
    """
    begun = time.perf_counter()
    heating_info = results.pop("_heating", None)
    files = [folder / f for f in results.get("snapshots", ())]
    lines = {}
    path = folder / "results.json"
    files.append(path)  # written last, with the time all the other outputs took
    tables = None
    if "solutions" in results:
        files.append(write_csv(folder / "regions.csv",
                               *region_table(results["solutions"], case.axisymmetric)))
        if len(results["solutions"]) > 1:
            response = response_table(results["solutions"], results.get("frequency_sweep"))
            files.append(write_csv(folder / "frequency_response.csv", *response))
            tables = {"Frequency response": response}
            if results.get("resonance"):
                tables["Resonance with the tank capacitor"] = (
                    ["source", "connection", "capacitance_f", "frequency_hz", "note"],
                    [[n, r["connection"], r["capacitance_f"], r["frequency_hz"], r["note"]]
                     for n, r in results["resonance"].items()])
    for line in case.lines if "heating" not in results else ():
        header, rows = None, []
        for s in solutions:
            h, r = line_rows(s, [v * case.unit_m for v in line.start],
                             [v * case.unit_m for v in line.end], line.samples,
                             case.unit_m, case.length_unit)
            header = ["frequency_hz", *h]
            rows += [[s.frequency_hz, *row] for row in r]
        files.append(write_csv(folder / f"line_{line.name}.csv", header, rows))
        lines[line.name] = (header, rows)
    pictures, images = write_pictures(case, results, solutions, folder, lines)
    files += pictures
    surface, pictures = write_surface_power(case, solutions, folder)
    files += surface
    images.update(pictures)
    if "heating" in results:
        if heating_info is not None:
            more, shots, tables = write_heating_files(case, results, heating_info, folder)
            files += more
            images.update(shots)
    if "series" in results:
        files += series_tables(results["series"], folder)
        if case.output.plots:
            files.append(plot_series(results["series"], folder / "series.png", case.title))
            images["time series"] = files[-1]
        tables = transient_tables(results["series"])
    timing = results["timing_s"]
    timing.setdefault("solved", timing["total"])

    def clock():
        now = time.perf_counter()
        timing["outputs"] = now - begun
        timing["total"] = (now - started if started is not None
                           else timing["solved"] + timing["outputs"])

    clock()
    files.append(write_report(results, images, folder / "report.html", tables))
    if case.path is not None:
        # the text that was read and solved, not the file as it is now
        text = case.text if case.text is not None else Path(case.path).read_text(
            encoding="utf-8")
        files.append(folder / "case.toml")
        files[-1].write_text(text, encoding="utf-8")
    resolved = {"name": case.name, "parameters": case.parameters,
                "frequencies_hz": list(case.study.frequencies), "document": case.document}
    files.append(folder / "case.resolved.json")
    files[-1].write_text(json.dumps(resolved, indent=2, default=str), encoding="utf-8")
    clock()
    path.write_text(json.dumps(results, indent=2, allow_nan=True), encoding="utf-8")
    return files


def transient_tables(series: dict) -> dict:
    """Report tables of a transient run: peaks per source and region, energy balance."""
    t = series["time_s"]
    peaks = []
    for name, rec in series["sources"].items():
        k = max(range(len(t)), key=lambda i: abs(rec["current_a"][i]))
        peaks.append([f"source {name}", "current_a", rec["current_a"][k], t[k]])
    for name, rec in series["regions"].items():
        if max(rec["loss_w"]) > 0:
            k = max(range(len(t)), key=lambda i: rec["loss_w"][i])
            peaks.append([f"region {name}", "loss_w", rec["loss_w"][k], t[k]])
            k = max(range(len(t)), key=lambda i: abs(rec["force_n"][i][1]))
            peaks.append([f"region {name}", "force_y_n", rec["force_n"][k][1], t[k]])
    bal = series["energy_balance"]
    return {"Peaks": (["what", "quantity", "peak", "at time_s"], peaks),
            "Energy balance": (["delivered_j", "dissipated_j", "stored_j", "relative_mismatch"],
                               [[bal["delivered_j"], bal["dissipated_j"], bal["stored_j"],
                                 bal["relative_mismatch"]]])}


def run_case(case, root: Path, progress=None, key: str = "output.folder",
             mesh_time_limit: float | None = DEFAULT_MESH_TIME_LIMIT,
             started: float | None = None) -> RunOutcome:
    """Solve ``case`` and write ``root/CASE_NAME/``; returns what was written.

    The folder is checked before anything is solved: an existing folder is
    replaced only when whorl wrote it and it holds no sweep (else
    :class:`~whorl.cases.errors.CaseError` under ``key``; see :mod:`.output`).
    ``started`` (:func:`time.perf_counter` when the command began) makes the reported
    total the whole command's time.
    """
    started = time.perf_counter() if started is None else started
    final = Path(root) / case.name
    with staged_folder(final, key, "run") as tmp:
        handler = logging.FileHandler(tmp / "run.log", encoding="utf-8")
        handler.setFormatter(logging.Formatter("%(asctime)s %(levelname)s %(name)s: %(message)s"))
        whorl_log = logging.getLogger("whorl")
        whorl_log.addHandler(handler)
        old_level = whorl_log.level
        whorl_log.setLevel(logging.INFO)
        try:
            log.info("whorl %s: case %s (%s)", __version__, case.name, case.path)

            def say(message):
                log.info(message)
                if progress:
                    progress(message)

            results, solutions, _ = solve_case(case, say, folder=tmp,
                                               mesh_time_limit=mesh_time_limit)
            files = write_results(case, results, solutions, tmp, started)
            log.info("done in %.2f s", results["timing_s"]["total"])
        finally:
            whorl_log.removeHandler(handler)
            whorl_log.setLevel(old_level)
            handler.close()
    files = [final / f.relative_to(tmp) for f in files] + [final / "run.log"]
    return RunOutcome(results, final, files, solutions)
