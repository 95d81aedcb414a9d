"""Pictures of a heating run: temperature maps and curves against time (PNG)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from whorl.postprocess.plots import _View

KELVIN = 273.15


def plot_temperature_map(solution, domain, temperature_k, path, title: str, dpi: int = 120):
    """Map of a temperature field (degrees C) over the heated regions, per element mean."""
    view = _View(solution, title)
    view.ax.set_title(title)
    n_el = solution.problem.mesh.mesh.t.shape[1]
    values = np.full(n_el, np.nan)
    values[domain.elements] = domain.element_temperature(temperature_k) - KELVIN
    shown = values[view.vis.elements]
    view.cells(np.nan_to_num(shown), ~np.isfinite(shown), "inferno", "temperature [°C]")
    return view.save(path, dpi)


def plot_heating_curves(record: dict, path, title: str = "Heating", dpi: int = 120) -> Path:
    """Temperature at the points (or each heated region's max and mean) against time,
    and each source's power and impedance magnitude against time."""
    t = np.asarray(record["time_s"])
    fig = Figure(figsize=(7.5, 7.5), layout="constrained")
    FigureCanvasAgg(fig)
    axes = fig.subplots(3, 1, sharex=True)
    shown = False
    for name, rec in record["points"].items():
        if rec.get("inside_heated"):
            axes[0].plot(t, [np.nan if v is None else v for v in rec["temperature_c"]],
                         label=f"point {name}")
            shown = True
    if not shown:
        for name, rec in record["regions"].items():
            if "max_temperature_c" in rec:
                axes[0].plot(t, rec["max_temperature_c"], label=f"{name} max")
                axes[0].plot(t, rec["mean_temperature_c"], "--", label=f"{name} mean")
    axes[0].set_ylabel("temperature [°C]")
    axes[0].legend(loc="best", fontsize="small")
    for name, rec in record["sources"].items():
        axes[1].step(t, np.asarray(rec["power_w"]) / 1e3, where="pre", label=name)
        z = [np.hypot(r, x) if r is not None else np.nan
             for r, x in zip(rec["resistance_ohm"], rec["reactance_ohm"], strict=True)]
        axes[2].step(t, np.asarray(z) * 1e3, where="pre", label=name)
    axes[1].set_ylabel("source power [kW]")
    axes[2].set_ylabel("|impedance| [mΩ]")
    axes[2].set_xlabel("time [s]")
    if record["sources"]:
        axes[1].legend(loc="best", fontsize="small")
    for ax in axes:
        ax.grid(True, color="#dddddd", linewidth=0.6)
    axes[0].set_title(title)
    path = Path(path)
    fig.savefig(path, dpi=dpi)
    return path
