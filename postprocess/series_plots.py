"""Plots of a transient run's time series (PNG, matplotlib Agg, no global state)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure


def plot_series(series: dict, path, title: str = "Time series", dpi: int = 120) -> Path:
    """Source currents, total loss and stored energy against time (ms)."""
    t = np.asarray(series["time_s"]) * 1e3
    fig = Figure(figsize=(7.5, 7.5), layout="constrained")
    FigureCanvasAgg(fig)
    axes = fig.subplots(3, 1, sharex=True)
    for name, rec in series["sources"].items():
        axes[0].plot(t, rec["current_a"], label=f"{name} current")
    axes[0].set_ylabel("current [A]")
    if series["sources"]:
        axes[0].legend(loc="best", fontsize="small")
    axes[1].plot(t, series["totals"]["loss_w"], color="#b4522d")
    axes[1].set_ylabel("total loss [W]")
    axes[2].plot(t, series["totals"]["magnetic_energy_j"], color="#2d6a8c")
    axes[2].set_ylabel("stored energy [J]")
    axes[2].set_xlabel("time [ms]")
    for ax in axes:
        ax.grid(True, color="#dddddd", linewidth=0.6)
    axes[0].set_title(title)
    path = Path(path)
    fig.savefig(path, dpi=dpi)
    return path
