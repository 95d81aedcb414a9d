"""The morning view of a sweep: plots of the main numbers and an HTML report.

Plots: one PNG per main number (total loss, each conducting region's loss,
each source's resistance and inductance, each loop's EMF magnitude), with one
panel per swept parameter: the number against that parameter, one curve per
value of a second swept parameter; any further swept parameters are held at
their first value (named in the panel title). Zip sweeps are one path through
the parameters, so each panel has one curve. The report (``report.html``)
is one self-contained file: inline CSS, the plots as base64 PNG.
"""

from __future__ import annotations

import base64
import html
import math
import os
from pathlib import Path

from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from whorl.cases.parameters import resolve, si_unit
from whorl.cases.run import CAUTION
from whorl.cases.sweep.summary import case_units, summary_rows

PLOTTED = ("total_loss_w", ".loss_w", ".resistance_ohm", ".inductance_h", ".emf_rms_v",
           ".current_rms_a", ".voltage_rms_v", ".power_w", ".torque_nm", ".mechanical_power_w",
           ".force_x_n", ".force_y_n")
TABLE_ROWS = 500


def main_quantities(rows: list[dict]) -> list[str]:
    """Names of the numbers worth a plot (regions without loss left out)."""
    names: list[str] = []
    for row in rows:
        for name, value in row.items():
            if name not in names and name.endswith(PLOTTED) and isinstance(value, float):
                names.append(name)
    names = [n for n in names if not (n.startswith("region.") and n.endswith(".current_rms_a"))]
    return [n for n in names if any(abs(r.get(n) or 0.0) > 0 for r in rows)]


def _records(points: list[dict]) -> list[dict]:
    out = []
    for p in points:
        if p["status"] == "done":
            si = p.get("params_si") or {}
            out += [{**si, **row} for row in p.get("rows") or []]
    return out


def _fmt(value) -> str:
    return f"{value:.4g}" if isinstance(value, float | int) else str(value)


def _order(value):
    """Sort numbers by value, anything else after them by text."""
    number = isinstance(value, float | int)
    return (0, value, "") if number else (1, 0, str(value))


def plot_quantity(records: list[dict], quantity: str, axes: list[str], mode: str, path,
                  dpi: int = 110, units: dict | None = None) -> Path:
    """PNG of ``quantity`` against each parameter in ``axes`` (one panel each); ``units``
    names the SI unit of each parameter for the axis labels."""
    fig = Figure(figsize=(5.2 * len(axes), 3.8), layout="constrained")
    FigureCanvasAgg(fig)
    panels = fig.subplots(1, len(axes), squeeze=False)[0]
    first = records[0]
    for ax, x in zip(panels, axes, strict=True):
        others = [a for a in axes if a != x and len({r.get(a) for r in records}) > 1]
        series = others[0] if others and mode == "grid" else None
        fixed = others[1:] if mode == "grid" else []
        chosen = [r for r in records if all(r.get(a) == first.get(a) for a in fixed)]
        keys = sorted({r.get(series) for r in chosen}, key=_order) if series else [None]
        for key in keys:
            pts = sorted((r[x], r[quantity]) for r in chosen
                         if (series is None or r.get(series) == key)
                         and r.get(x) is not None and r.get(quantity) is not None)
            if pts:
                unit = (units or {}).get(series, "")
                label = None if series is None else f"{series} = {_fmt(key)} {unit}".rstrip()
                ax.plot([p[0] for p in pts], [p[1] for p in pts], marker="o", label=label)
        xs = [r[x] for r in chosen if isinstance(r.get(x), float | int)]
        if xs and min(xs) > 0 and max(xs) / min(xs) > 20:
            ax.set_xscale("log")
        unit = (units or {}).get(x, "")
        ax.set_xlabel(f"{x} [{unit}]" if unit else x)
        ax.set_ylabel(quantity)
        ax.grid(True, alpha=0.3)
        if fixed:
            ax.set_title(", ".join(f"{a} = {_fmt(first.get(a))}" for a in fixed), fontsize=9)
        if series is not None:
            ax.legend(fontsize=8)
    fig.suptitle(quantity)
    path = Path(path)
    tmp = path.with_name(f".{path.stem}.{os.getpid()}.tmp{path.suffix}")
    try:
        fig.savefig(tmp, dpi=dpi)
        os.replace(tmp, path)  # a stopped sweep leaves the old picture or the new one
    finally:
        tmp.unlink(missing_ok=True)
    return path


def write_morning(case, points: list[dict], axes: list[str], folder) -> list[Path]:
    """Write ``plots/*.png`` and ``report.html`` into the sweep ``folder``."""
    folder = Path(folder)
    records = _records(points)
    axes = list(axes)
    if len({r.get("frequency_hz") for r in records}) > 1 and "frequency_hz" not in axes:
        per_point = any(len(p.get("rows") or []) > 1 for p in points)
        if per_point:
            axes.append("frequency_hz")
    images: list[tuple[str, Path]] = []
    units = {name: si_unit(v) for name, v in resolve(case.document.get("parameters", {})).items()}
    units["frequency_hz"] = "Hz"
    # axes in the case's own units: 2 mm, not 0.002 m
    for name, (label, factor) in case_units(case).items():
        if name in axes:
            units[name] = label
            for r in records:
                if isinstance(r.get(name), float):
                    r[name] = r[name] / factor
    if records:
        (folder / "plots").mkdir(exist_ok=True)
        for q in main_quantities(records):
            name = "".join(c if c.isalnum() or c in "-_." else "_" for c in q)
            path = folder / "plots" / f"{name}.png"
            plot_quantity(records, q, axes, case.sweep.mode, path, units=units)
            images.append((q, path))
    report = write_report(case, points, list(case.sweep.axes), images, folder / "report.html")
    return [p for _, p in images] + [report]


STYLE = """body{font-family:system-ui,sans-serif;margin:2em;color:#222;max-width:75em}
h1{font-size:1.5em}h2{font-size:1.2em;margin-top:1.5em}
table{border-collapse:collapse;font-size:.85em}td,th{border:1px solid #ccc;padding:.2em .5em}
th{background:#f0f0f0}td.num{text-align:right;font-variant-numeric:tabular-nums}
.failed{color:#a00}.caution{border:2px solid #c60;background:#fff6e8;padding:.8em}
img{max-width:100%;border:1px solid #ddd;margin:.5em 0}"""


def _cell(value) -> str:
    if isinstance(value, float):
        return f'<td class="num">{value:.5g}</td>' if math.isfinite(value) else "<td>-</td>"
    if isinstance(value, int):
        return f'<td class="num">{value}</td>'
    return f"<td>{html.escape('' if value is None else str(value))}</td>"


def write_report(case, points: list[dict], axes: list[str], images, path) -> Path:
    """The self-contained HTML sweep report."""
    counts = {s: sum(p["status"] == s for p in points)
              for s in ("done", "failed", "pending", "running")}
    e = html.escape
    parts = [f"<!DOCTYPE html><html><head><meta charset='utf-8'><title>Sweep: {e(case.name)}"
             f"</title><style>{STYLE}</style></head><body>",
             f"<h1>Sweep of {e(case.name)}</h1><p>{e(case.title or '')}</p>",
             f"<p>{case.sweep.mode} sweep over {e(', '.join(axes))}: {len(points)} points; "
             + ", ".join(f"{n} {s}" for s, n in counts.items() if n) + ".</p>",
             f'<p class="caution"><strong>Caution.</strong> {e(CAUTION)}</p>']
    failed = [p for p in points if p["status"] == "failed"]
    if failed:
        parts.append("<h2>Failed points</h2><table><tr><th>point</th><th>values</th>"
                     "<th>error</th></tr>")
        for p in failed:
            values = ", ".join(f"{k} = {v}" for k, v in (p.get("overrides") or {}).items())
            parts.append(f'<tr class="failed"><td>{p["point"]}</td><td>{e(values)}</td>'
                         f"<td>{e(p['error'] or '')}</td></tr>")
        parts.append("</table>")
    for quantity, image in images:
        data = base64.b64encode(Path(image).read_bytes()).decode("ascii")
        parts.append(f"<h2>{e(quantity)}</h2><img alt='{e(quantity)}' "
                     f"src='data:image/png;base64,{data}'>")
    header, rows = summary_rows(points, axes)
    keep = [h for h in header if h in ("point", "status", *axes, "frequency_hz")
            or h.endswith(PLOTTED)]
    parts.append("<h2>Points</h2><table><tr>" + "".join(f"<th>{e(h)}</th>" for h in keep)
                 + "</tr>")
    for row in rows[:TABLE_ROWS]:
        parts.append("<tr>" + "".join(_cell(row.get(h)) for h in keep) + "</tr>")
    parts.append("</table>")
    if len(rows) > TABLE_ROWS:
        parts.append(f"<p>First {TABLE_ROWS} of {len(rows)} rows: see summary.csv.</p>")
    parts.append("</body></html>")
    path = Path(path)
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    try:
        tmp.write_text("\n".join(parts), encoding="utf-8")
        os.replace(tmp, path)  # a stopped sweep leaves the old report or the new one
    finally:
        tmp.unlink(missing_ok=True)
    return path
