"""Tables (CSV): regions per frequency, samples along lines.

Writers write to the path they are given and nothing else.
"""

from __future__ import annotations

import csv
from pathlib import Path

import numpy as np

from whorl.postprocess.probes import line_points, probe


def write_csv(path, header, rows) -> Path:
    """Write ``rows`` under ``header`` to ``path`` (UTF-8, comma separated)."""
    path = Path(path)
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(header)
        w.writerows(rows)
    return path


def is_empty(region: dict) -> bool:
    """A region with nothing in it (air in no source): no current, loss or force."""
    return (region["current_rms_a"] == 0 and region["loss_w"] == 0
            and not any(region.get("force_n") or ()))


def region_table(records, axisymmetric: bool = False) -> tuple[list[str], list[list]]:
    """Header and rows of regions.csv from ``solutions`` records of results.json: one row
    per region per frequency, leaving out regions with nothing in them at every
    frequency (:func:`is_empty`) and columns that are zero in every row. Stranded
    regions give the conductor current and, beside it, the ampere-turns."""
    fr, fz = ("force_r_n", "force_z_n") if axisymmetric else ("force_x_n", "force_y_n")
    columns = ["frequency_hz", "region", "current_re_a", "current_im_a", "current_rms_a",
               "ampere_turns_rms_a", "loss_w", "winding_loss_w", "magnetic_energy_j", fr, fz,
               "radial_load_n"]
    keep = {name for rec in records for name, r in rec["regions"].items() if not is_empty(r)}
    rows = []
    for rec in records:
        for name, r in rec["regions"].items():
            if name not in keep:
                continue
            at = r.get("ampere_turns_a")
            rows.append([rec["frequency_hz"], name, *r["current_a"], r["current_rms_a"],
                         float(np.hypot(*at)) if at else 0.0, r["loss_w"],
                         r.get("winding_loss_w", 0.0), r["magnetic_energy_j"], *r["force_n"],
                         r.get("radial_load_n") or 0.0])
    used = [k for k, c in enumerate(columns)
            if k < 2 or any(row[k] != 0 for row in rows)]
    return [columns[k] for k in used], [[row[k] for k in used] for row in rows]


def line_rows(solution, start_m, end_m, samples: int, unit_m: float, unit: str):
    """Header and rows of A, B, H, E, J and loss density along a straight line.

    Coordinates are written in the case's length unit; field values in SI.
    Complex values are written as _re and _im columns (RMS phasors).
    """
    pts = line_points(start_m, end_m, samples)
    p = probe(solution, pts)
    dist = np.hypot(pts[0] - pts[0, 0], pts[1] - pts[1, 0])
    comp = ("r", "z") if solution.problem.axisymmetric else ("x", "y")
    header = [f"{comp[0]}_{unit}", f"{comp[1]}_{unit}", f"distance_{unit}"]
    columns = [pts[0] / unit_m, pts[1] / unit_m, dist / unit_m]

    def add(name, values):
        header.extend([f"{name}_re", f"{name}_im"])
        columns.extend([values.real, values.imag])

    add("a_wb_per_m", p.a)
    add(f"b{comp[0]}_t", p.b[0])
    add(f"b{comp[1]}_t", p.b[1])
    header.append("b_rms_t")
    columns.append(np.sqrt(np.abs(p.b[0]) ** 2 + np.abs(p.b[1]) ** 2))
    add(f"h{comp[0]}_a_per_m", p.h[0])
    add(f"h{comp[1]}_a_per_m", p.h[1])
    add("e_v_per_m", p.e)
    add("j_a_per_m2", p.j)
    header.append("loss_density_w_per_m3")
    columns.append(p.loss)
    return header, np.array(columns).T.tolist()
