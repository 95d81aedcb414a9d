"""The sweep's main numbers and ``summary.csv``, regenerated from the store.

Columns: ``point``, ``status``, ``error``, the point's parameters (SI; the
swept ones first, each followed by its value in the case's own unit, named
``NAME_UNIT`` such as ``gap_mm``), ``frequency_hz``, then the main numbers of each solution:
``total_loss_w``; per region (regions with nothing in them left out)
``region.NAME.loss_w`` and ``region.NAME.current_rms_a`` (moving regions also
``.force_x_n``, ``.force_y_n``, ``.mechanical_power_w``, ``.torque_nm``); per source
``source.NAME.current_rms_a``, ``.voltage_rms_v``, ``.power_w``,
``.power_factor``, ``.tuning_capacitance_parallel_f`` (empty where it means
nothing), ``.impedance_re_ohm``, ``.impedance_im_ohm``, ``.resistance_ohm``,
``.inductance_h``; per loop
``loop.NAME.emf_re_v``, ``.emf_im_v`` and ``.emf_rms_v`` (magnitude). A point
with a frequency list has one row per frequency; a failed point has one row
with its error and no numbers.
"""

from __future__ import annotations

import csv
import math
import os
from pathlib import Path

from whorl.cases.parameters import resolve
from whorl.cases.units import Quantity, to_si
from whorl.postprocess.tables import is_empty

FIXED = ("point", "status", "error")


def main_numbers(record: dict) -> dict:
    """The main numbers of one solution record of ``results.json`` (flat, SI)."""
    out = {"frequency_hz": record["frequency_hz"],
           "total_loss_w": record["totals"]["loss_w"]}
    for name, r in record.get("regions", {}).items():
        if is_empty(r):
            continue  # air with nothing in it
        out[f"region.{name}.loss_w"] = r["loss_w"]
        out[f"region.{name}.current_rms_a"] = r["current_rms_a"]
        for key in ("force_n", "mechanical_power_w", "torque_nm"):  # moving regions
            if key == "force_n" and "mechanical_power_w" in r:
                out[f"region.{name}.force_x_n"], out[f"region.{name}.force_y_n"] = r[key]
            elif key != "force_n" and key in r:
                out[f"region.{name}.{key}"] = r[key]
    for name, s in record.get("sources", {}).items():
        out[f"source.{name}.current_rms_a"] = math.hypot(*s["current_a"])
        out[f"source.{name}.voltage_rms_v"] = math.hypot(*s["voltage_v"])
        out[f"source.{name}.power_w"] = s["power_w"]
        out[f"source.{name}.power_factor"] = s.get("power_factor")
        out[f"source.{name}.tuning_capacitance_parallel_f"] = s.get(
            "tuning_capacitance_parallel_f")
        re, im = s["impedance_ohm"]
        out[f"source.{name}.impedance_re_ohm"] = re
        out[f"source.{name}.impedance_im_ohm"] = im
        out[f"source.{name}.resistance_ohm"] = s["resistance_ohm"]
        out[f"source.{name}.inductance_h"] = s["inductance_h"]
    for name, lp in record.get("loops", {}).items():
        re, im = lp["emf_v"]
        out[f"loop.{name}.emf_re_v"] = re
        out[f"loop.{name}.emf_im_v"] = im
        out[f"loop.{name}.emf_rms_v"] = math.hypot(re, im)
    return out


def heating_numbers(heating: dict, length_unit: str = "mm") -> dict:
    """The main numbers of a heating run (flat): per heated region the final and peak
    temperature (degC); per point the final and peak temperature and the time to each
    reported temperature; per line the hardened depth; the energy balance."""
    out = {"field_solutions": heating["field_solutions"],
           "induced_heat_j": heating["energy"]["induced_j"]}
    for name, r in heating["regions"].items():
        if "max_temperature_c" in r:
            out[f"region.{name}.final_max_temperature_c"] = r["max_temperature_c"][-1]
            out[f"region.{name}.final_mean_temperature_c"] = r["mean_temperature_c"][-1]
            out[f"region.{name}.peak_temperature_c"] = r["peak_temperature_c"]
    for name, p in heating["points"].items():
        if p.get("inside_heated"):
            out[f"point.{name}.final_temperature_c"] = p["temperature_c"][-1]
            out[f"point.{name}.peak_temperature_c"] = p["peak_temperature_c"]
            for t, s in p.get("time_to_temperature_s", {}).items():
                out[f"point.{name}.time_to_{t}_c_s"] = s
    for name, d in heating.get("hardened_depth", {}).items():
        out[f"line.{name}.hardened_depth_{length_unit}"] = d.get(f"depth_{length_unit}")
    return out


def case_units(case) -> dict:
    """Parameter name -> (unit label, metres/seconds/... per unit) for the parameters the
    case file writes with a unit (``"2 mm"`` -> ``("mm", 0.001)``)."""
    out = {}
    for name, value in resolve(case.document.get("parameters", {})).items():
        if isinstance(value, Quantity) and not value.dimensionless:
            label = f"{value.units:~}".replace(" ", "")
            out[name] = (label, to_si(Quantity(1.0, value.units)))
    return out


def unit_column(name: str, label: str) -> str:
    """``gap``, ``mm`` -> ``gap_mm``; ``/`` becomes ``_per_``, other signs go."""
    label = label.replace("/", "_per_").replace("**", "").replace("*", "")
    return f"{name}_" + "".join(c for c in label if c.isalnum() or c == "_")


def summary_rows(points: list[dict], axes: list[str],
                 units: dict | None = None) -> tuple[list[str], list[dict]]:
    """Header and rows (dicts) of the summary table from the store's points; ``units``
    (:func:`case_units`) adds each swept parameter in the case's unit beside it."""
    units = {n: u for n, u in (units or {}).items() if n in axes}
    params: list[str] = list(axes)
    numbers: list[str] = []
    for p in points:
        params += [n for n in (p.get("params_si") or {}) if n not in params]
        for sol in (p.get("rows") or []) if p["status"] == "done" else []:
            numbers += [n for n in sol if n != "frequency_hz" and n not in numbers]
    column = {n: f"parameter.{n}" if n in (*FIXED, "frequency_hz") else n for n in params}
    rows = []
    for p in points:
        si = p.get("params_si") or {}
        given = p.get("overrides") or {}
        base = {"point": p["point"], "status": p["status"], "error": p["error"] or ""}
        base.update({column[n]: si.get(n, given.get(n)) for n in params})
        for n, (label, factor) in units.items():
            value = si.get(n)
            base[unit_column(n, label)] = value / factor if isinstance(value, float) else None
        sols = p.get("rows") if p["status"] == "done" else None
        rows += [{**base, **sol} for sol in sols or [{}]]
    shown = []
    for n in params:
        shown.append(column[n])
        if n in units:
            shown.append(unit_column(n, units[n][0]))
    return [*FIXED, *shown, "frequency_hz", *numbers], rows


def write_summary(points: list[dict], axes: list[str], path, units: dict | None = None) -> Path:
    """Write ``summary.csv`` (atomically: a temporary name, then a rename)."""
    path = Path(path)
    header, rows = summary_rows(points, axes, units)
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    try:
        with open(tmp, "w", newline="", encoding="utf-8") as f:
            writer = csv.DictWriter(f, fieldnames=header, extrasaction="ignore")
            writer.writeheader()
            for row in rows:
                writer.writerow({k: _cell(v) for k, v in row.items()})
        os.replace(tmp, path)
    finally:
        tmp.unlink(missing_ok=True)
    return path


def _cell(value):
    if isinstance(value, float):
        return repr(value)
    return "" if value is None else value
