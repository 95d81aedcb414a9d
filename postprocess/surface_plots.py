"""The picture of a conductor's surface power density along its outline."""

from __future__ import annotations

import numpy as np


def plot_surface_power(sp, path, unit: str, unit_m: float, title: str, dpi=120):
    """Power density (W/cm^2, the unit of practice tables) against the position along the
    outline (``unit``), with the peak marked. ``sp`` is a
    :class:`~whorl.postprocess.surface.SurfacePower`."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(8, 3.6))
    ax = fig.subplots()
    s = sp.s_m / unit_m
    w_cm2 = sp.density_w_per_m2 / 1e4
    ax.plot(s, w_cm2, color="#b2182b", lw=1.2)
    k = int(np.argmax(w_cm2))
    ax.plot([s[k]], [w_cm2[k]], "o", color="black", ms=4)
    ax.annotate(f"peak {w_cm2[k]:.3g} W/cm²", (s[k], w_cm2[k]), textcoords="offset points",
                xytext=(6, -12), fontsize=8)
    ax.set_xlabel(f"position along the outline [{unit}]")
    ax.set_ylabel("power entering [W/cm²]")
    ax.set_title(title, fontsize=10)
    ax.grid(alpha=0.3)
    fig.tight_layout()
    fig.savefig(path, dpi=dpi)
    return path
