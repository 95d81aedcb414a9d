"""A frequency response from the ``solutions`` records of a harmonic run: a table, the
frequency of resonance with a tank capacitor, and a figure.

Quantities per source (RMS phasors, Z = V / I): resistance R = Re Z (ohm), inductance
L = Im Z / omega (H), power factor P / |S|, and the capacitance that resonates with the
source at each frequency, in series (C_s = 1 / (omega X)) and across its terminals
(C_p = X / (omega |Z|^2)). Per run: the heating efficiency (loss in conductors outside any
source over all losses) and the loss of every region (W).

Resonance with a given tank capacitor C (common practice for induction tank circuits):
in series the frequency where omega X(omega) = 1 / (omega C), i.e. C_s(f) = C; in parallel
the frequency where the parallel circuit's admittance is real, C_p(f) = C (the load's R and
L taken at that frequency). Found by linear interpolation of log C_x(f) - log C in log f
between the two requested frequencies that bracket it, so it is only as fine as the
frequency list.
"""

from __future__ import annotations

import math
import os

import numpy as np

from whorl.postprocess.meshplot import PALETTE
from whorl.postprocess.plots import LINE_COLOUR, frequency_text

CONNECTIONS = {"series": "tuning_capacitance_series_f",
               "parallel": "tuning_capacitance_parallel_f"}


def _num(value):
    return math.nan if value is None else float(value)


def response_table(records, sweep: dict | None = None) -> tuple[list[str], list[list]]:
    """Header and rows (one per frequency, ascending) of the frequency response.

    ``sweep`` is the ``frequency_sweep`` record of a reduced run: its estimated errors
    and full-solve frequencies (matched by frequency) become two columns.
    """
    order = sorted(range(len(records)), key=lambda i: records[i]["frequency_hz"])
    sources = list(dict.fromkeys(n for r in records for n in r["sources"]))
    regions = list(dict.fromkeys(n for r in records for n, v in r["regions"].items()
                                 if v["loss_w"] > 0))
    header = ["frequency_hz"]
    for s in sources:
        header += [f"{s}_resistance_ohm", f"{s}_inductance_h", f"{s}_power_factor",
                   f"{s}_tuning_capacitance_series_f", f"{s}_tuning_capacitance_parallel_f"]
    header += ["heating_efficiency", "total_loss_w", *[f"{r}_loss_w" for r in regions]]
    if sweep:
        header += ["estimated_error", "full_solve"]
        full = set(sweep.get("full_solve_frequencies_hz", ()))
        estimate = dict(zip(sweep.get("frequencies_hz", ()), sweep["estimated_error"],
                            strict=True))
    rows = []
    for i in order:
        rec = records[i]
        row = [rec["frequency_hz"]]
        for s in sources:
            src = rec["sources"].get(s, {})
            row += [_num(src.get("resistance_ohm")), _num(src.get("inductance_h")),
                    _num(src.get("power_factor")),
                    _num(src.get("tuning_capacitance_series_f")),
                    _num(src.get("tuning_capacitance_parallel_f"))]
        row += [_num(rec.get("derived", {}).get("heating_efficiency")),
                rec["totals"]["loss_w"],
                *[_num(rec["regions"].get(r, {}).get("loss_w")) for r in regions]]
        if sweep:
            row += [_num(estimate.get(rec["frequency_hz"])), int(rec["frequency_hz"] in full)]
        rows.append(row)
    return header, rows


def restrict_sweep(sweep: dict, frequencies) -> dict:
    """The ``frequency_sweep`` record of a run cut down to ``frequencies`` (Hz), for one
    point of a parameter sweep whose group was solved as one frequency list: its own
    frequencies, their estimated errors and which of them were full solves. The basis
    (``expansion_frequencies_hz``, ``basis_size``) stays the group's, which it shares."""
    wanted = {float(f) for f in frequencies}
    keep = [k for k, f in enumerate(sweep["frequencies_hz"]) if float(f) in wanted]
    out = dict(sweep)
    out["frequencies_hz"] = [sweep["frequencies_hz"][k] for k in keep]
    out["estimated_error"] = [sweep["estimated_error"][k] for k in keep]
    out["full_solve_frequencies_hz"] = [f for f in sweep["full_solve_frequencies_hz"]
                                        if float(f) in wanted]
    return out


def resonance(records, capacitance: float, connection: str = "parallel") -> dict:
    """Frequency of resonance (Hz) of every source with a tank capacitor of ``capacitance``
    (F) in ``connection`` ("series" or "parallel"), from the requested frequencies.

    Returns source name -> {"frequency_hz": float or None, "note": str}; None when the
    tuning capacitance does not cross ``capacitance`` inside the frequency range.
    """
    key = CONNECTIONS[connection]
    recs = sorted(records, key=lambda r: r["frequency_hz"])
    sources = list(dict.fromkeys(n for r in recs for n in r["sources"]))
    out = {}
    for name in sources:
        pts = [(r["frequency_hz"], r["sources"][name].get(key)) for r in recs
               if name in r["sources"] and r["frequency_hz"] > 0]
        pts = [(f, c) for f, c in pts if c is not None and c > 0]
        found = None
        for (f0, c0), (f1, c1) in zip(pts, pts[1:], strict=False):
            g0, g1 = math.log(c0 / capacitance), math.log(c1 / capacitance)
            if g0 == 0:
                found = f0
                break
            if g0 * g1 < 0 or g1 == 0:
                t = g0 / (g0 - g1)
                found = math.exp(math.log(f0) + t * (math.log(f1) - math.log(f0)))
                break
        if found is not None:
            note = f"{connection} tank capacitor: resonance inside the frequency range"
        elif pts:
            lo, hi = min(c for _, c in pts), max(c for _, c in pts)
            note = (f"{connection} tank capacitor {capacitance:.4g} F is outside the tuning "
                    f"capacitances of the range ({lo:.4g} to {hi:.4g} F): widen the range")
        else:
            note = "the source is not inductive in the range"
        out[name] = {"frequency_hz": found, "capacitance_f": capacitance,
                     "connection": connection, "note": note}
    return out


def plot_frequency_response(records, path, title="Frequency response", sweep=None,
                            tank=None, dpi=120):
    """Six panels against frequency (log axis): each source's resistance, inductance,
    power factor and tuning capacitance (series solid, parallel dashed, the tank
    capacitor as a horizontal line), the heating efficiency and every region's loss.
    Full-solve frequencies of a reduced sweep are marked on the resistance curve.

    ``tank`` is ``(capacitance_f, connection)`` or None. Returns ``path``.
    """
    from matplotlib.figure import Figure

    header, rows = response_table(records, sweep)
    data = np.array(rows, dtype=float).reshape(len(rows), len(header))
    col = {h: k for k, h in enumerate(header)}
    f = data[:, 0]
    sources = [h[: -len("_resistance_ohm")] for h in header if h.endswith("_resistance_ohm")]
    regions = [h[: -len("_loss_w")] for h in header
               if h.endswith("_loss_w") and h != "total_loss_w"]
    fig = Figure(figsize=(10, 9))
    ax = fig.subplots(3, 2, sharex=True).ravel()
    style = "-" if f.size > 30 else "o-"
    for k, s in enumerate(sources):
        c = PALETTE[k % len(PALETTE)]
        ax[0].plot(f, data[:, col[f"{s}_resistance_ohm"]], style, color=c, label=s)
        ax[1].plot(f, data[:, col[f"{s}_inductance_h"]] * 1e6, style, color=c, label=s)
        ax[2].plot(f, data[:, col[f"{s}_power_factor"]], style, color=c, label=s)
        ax[3].plot(f, data[:, col[f"{s}_tuning_capacitance_series_f"]] * 1e6, "-", color=c,
                   label=f"{s} series")
        ax[3].plot(f, data[:, col[f"{s}_tuning_capacitance_parallel_f"]] * 1e6, "--", color=c,
                   label=f"{s} parallel")
        if sweep and "full_solve" in col:
            full = data[:, col["full_solve"]] > 0
            ax[0].plot(f[full], data[full, col[f"{s}_resistance_ohm"]], "s", color=c,
                       markerfacecolor="none", label="full solves" if k == 0 else None)
    if tank is not None:
        ax[3].axhline(tank[0] * 1e6, color="#555555", linewidth=0.8,
                      label=f"tank ({tank[1]})")
    ax[4].plot(f, 100 * data[:, col["heating_efficiency"]], style, color=LINE_COLOUR)
    for k, r in enumerate(regions):
        ax[5].plot(f, data[:, col[f"{r}_loss_w"]], style, color=PALETTE[k % len(PALETTE)],
                   label=r)
    labels = ["resistance [Ω]", "inductance [µH]", "power factor", "tuning capacitance [µF]",
              "heating efficiency [%]", "loss [W]"]
    for a, label in zip(ax, labels, strict=True):
        a.set_ylabel(label)
        if f.size and f.min() > 0:
            a.set_xscale("log")
        a.grid(True, which="both", color="#dddddd", linewidth=0.6)
    for a in (ax[0], ax[3], ax[5]):
        if a.get_legend_handles_labels()[0]:
            a.legend(fontsize="small", frameon=False)
    ax[3].set_yscale("log")
    ax[4].set_xlabel("frequency [Hz]")
    ax[5].set_xlabel("frequency [Hz]")
    span = f"{frequency_text(f.min())} to {frequency_text(f.max())}" if f.size else "no data"
    fig.suptitle(f"{title}, {span}")
    fig.tight_layout()
    fig.savefig(os.fspath(path), dpi=dpi)
    return path
