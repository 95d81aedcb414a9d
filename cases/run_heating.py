"""The heating branch of a run: couple field and temperature, record, write its files."""

from __future__ import annotations

import time
from pathlib import Path

from whorl.postprocess.heating import (
    FieldEvaluation,
    case_depth,
    heating_record,
    line_temperatures,
)
from whorl.postprocess.heating_plots import plot_heating_curves, plot_temperature_map
from whorl.postprocess.tables import write_csv
from whorl.solver.heating import HeatingStudy, run_heating

HARDENING_NOTE = ("Hardened depth: the depth to which the peak temperature exceeded the "
                  "hardening temperature, a common-practice estimate of the case the heat "
                  "could harden; it ignores transformation kinetics (time at temperature, "
                  "prior structure, quench severity). Confirm by sectioning and hardness tests.")


def heating_study(case) -> HeatingStudy:
    """The solver's study from the case (temperatures in K)."""
    spec = case.study.heating
    return HeatingStudy(frequency_hz=case.study.frequencies[0], end_s=case.study.end_s,
                        step_s=case.study.step_s, initial_k=spec.initial_k,
                        heated=spec.heated, field_update_k=spec.field_update_k,
                        surfaces=tuple(case.surfaces), supplies=dict(case.supplies),
                        unheated_k=case.temperature_k, scheme=case.study.scheme)


def solve_heating(case, problem, say):
    """Run the coupled study; returns (heating record, history, info)."""
    t0 = time.perf_counter()
    evaluation = FieldEvaluation()
    history = run_heating(problem, heating_study(case), evaluation.terminals,
                          evaluation.loss_density, evaluation.region_losses,
                          backend=case.solver, progress=say)
    elapsed = time.perf_counter() - t0
    points = {p.name: (p.at[0] * case.unit_m, p.at[1] * case.unit_m) for p in case.points}
    spec = case.study.heating
    record = heating_record(history, points, spec.temperatures_k)
    record["timing_s"] = {"field_solutions": history.field_seconds,
                          "heat_steps": history.heat_seconds}
    if spec.hardening_k is not None:
        record["hardening_temperature_c"] = spec.hardening_k - 273.15
        record["hardened_depth"] = {}
        record["hardened_depth_note"] = HARDENING_NOTE
    lines = {}
    for line in case.lines:
        header, rows = line_temperatures(history, [v * case.unit_m for v in line.start],
                                         [v * case.unit_m for v in line.end], line.samples,
                                         case.unit_m, case.length_unit)
        lines[line.name] = (header, rows)
        if spec.hardening_k is not None:
            peak = [float("nan") if r[5] is None else r[5] + 273.15 for r in rows]
            depth = case_depth([r[0] for r in rows], peak, spec.hardening_k)
            record["hardened_depth"][line.name] = {
                f"depth_{case.length_unit}": depth}
    solved = [history.last_solution] if history.last_solution is not None else []
    info = {"history": history, "lines": lines, "solutions": solved,
            "solve_s": elapsed, "system": solved[-1].system if solved else None}
    return record, info


def write_heating_files(case, results, info, folder: Path) -> tuple[list, dict, dict]:
    """Line tables, field file, pictures; returns (files, report images, report tables)."""
    from whorl.postprocess.vtu import write_fields_vtu

    files, images, tables = [], {}, {}
    history, record = info["history"], results["heating"]
    for name, (header, rows) in info["lines"].items():
        files.append(write_csv(folder / f"line_{name}.csv", header, rows))
    t = record["time_s"]
    rows = []
    for name, rec in record["regions"].items():
        for k in range(len(t)):
            rows.append([t[k], name, *[rec.get(key, [None] * len(t))[k] for key in
                                       ("loss_w", "min_temperature_c", "mean_temperature_c",
                                        "max_temperature_c")]])
    files.append(write_csv(folder / "heating_regions.csv",
                           ["time_s", "region", "loss_w", "min_temperature_c",
                            "mean_temperature_c", "max_temperature_c"], rows))
    rows = [[t[k], name, rec["current_a"][k], rec["voltage_v"][k], rec["power_w"][k],
             rec["resistance_ohm"][k], rec["reactance_ohm"][k]]
            for name, rec in record["sources"].items() for k in range(len(t))]
    files.append(write_csv(folder / "heating_sources.csv",
                           ["time_s", "source", "current_a", "voltage_v", "power_w",
                            "resistance_ohm", "reactance_ohm"], rows))
    last = info["solutions"][-1] if info["solutions"] else None
    if case.output.fields and last is not None:
        files.append(write_fields_vtu(last, folder / "fields.vtu", _temperatures(history)))
    if case.output.plots and last is not None:
        maps = (("temperature_end", "Temperature at the end", history.temperature_k[-1]),
                ("temperature_end_of_heating", "Temperature at the end of heating "
                 f"({history.end_of_heating_s:g} s)", history.temperature_at_end_of_heating),
                ("temperature_peak", "Highest temperature reached", history.peak_k))
        for stem, title, values in maps:
            files.append(plot_temperature_map(last, history.domain, values,
                                              folder / f"{stem}.png", title))
            images[title] = files[-1]
        files.append(plot_heating_curves(record, folder / "heating_curves.png", case.title))
        images["temperature, source power and impedance against time"] = files[-1]
    tables["Heating"] = heating_table(record)
    if "hardened_depth" in record:
        tables["Hardened depth (" + HARDENING_NOTE + ")"] = (
            ["line", f"depth [{case.length_unit}]"],
            [[n, d[f"depth_{case.length_unit}"]] for n, d in record["hardened_depth"].items()])
    return files, images, tables


def heating_table(record) -> tuple[list, list]:
    """Report rows: final and peak temperatures, time to each reported temperature."""
    rows = []
    for name, rec in record["points"].items():
        if not rec.get("inside_heated"):
            continue
        reach = "; ".join(f"{k} degC: {'not reached' if v is None else f'{v:.3g} s'}"
                          for k, v in rec.get("time_to_temperature_s", {}).items())
        rows.append([f"point {name}", rec["temperature_c"][-1], rec["peak_temperature_c"], reach])
    for name, rec in record["regions"].items():
        if "max_temperature_c" in rec:
            rows.append([f"region {name} (max)", rec["max_temperature_c"][-1],
                         rec["peak_temperature_c"], ""])
    e = record["energy"]
    rows.append(["energy: induced / stored / surface loss [J]",
                 f"{e['induced_j']:.4g} / {e['stored_j']:.4g} / {e['surface_loss_j']:.4g}",
                 f"balance {e['balance']:.2e}", f"{record['field_solutions']} field solutions"])
    return ["what", "final temperature [degC]", "peak temperature [degC]",
            "time to temperature"], rows


def _temperatures(history) -> dict:
    """Final and peak temperature per mesh element (degrees C; NaN outside heated regions)."""
    import numpy as np

    domain = history.domain
    n_el = domain.basis.mesh.t.shape[1]
    out = {}
    for name, values in (("temperature_C", history.temperature_k[-1]),
                         ("peak_temperature_C", history.peak_k)):
        full = np.full(n_el, np.nan)
        full[domain.elements] = domain.element_temperature(values) - 273.15
        out[name] = full
    return out
