"""A compact plain-text table of a run's main numbers (the terminal summary)."""

from __future__ import annotations

import math


def _eng(value: float, unit: str) -> str:
    """Engineering notation: 1234.5, 'W' -> '1.23 kW'."""
    if value is None or not math.isfinite(value):
        return f"- {unit}"
    if value == 0:
        return f"0 {unit}"
    prefixes = {-12: "p", -9: "n", -6: "u", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}
    exp = int(math.floor(math.log10(abs(value)) / 3) * 3)
    exp = max(-12, min(9, exp))
    return f"{value / 10 ** exp:.4g} {prefixes[exp]}{unit}"


def summary_text(results: dict) -> str:
    """The main numbers of every solution of ``results`` (a results.json record)."""
    lines = []
    case = results["case"]
    depth = f", depth {case['depth_m']} m" if case.get("depth_m") else ""
    mesh = results["mesh"]
    lines.append(f"{case['name']}: {case['geometry']}{depth}; {mesh['elements']} elements, "
                 f"{mesh['dofs']} unknowns (P{mesh['order']}); solver {results['solver']['backend']}; "
                 f"{results['timing_s']['total']:.1f} s")
    for sol in results["solutions"]:
        lines.append("")
        lines.append(f"frequency {_eng(sol['frequency_hz'], 'Hz')}: total loss "
                     f"{_eng(sol['totals']['loss_w'], 'W')}, stored energy "
                     f"{_eng(sol['totals']['magnetic_energy_j'], 'J')}")
        rows = [(name, r) for name, r in sol["regions"].items()
                if r["loss_w"] > 0 or r["current_rms_a"] > 0]
        if rows:
            lines.append(f"  {'region':<20} {'loss':>12} {'current (RMS)':>16}")
            for name, r in rows:
                lines.append(f"  {name:<20} {_eng(r['loss_w'], 'W'):>12} "
                             f"{_eng(r['current_rms_a'], 'A'):>16}")
        for name, s in sol["sources"].items():
            z = complex(*s["impedance_ohm"])
            lines.append(f"  source {name}: |Z| {_eng(abs(z), 'ohm')}, R {_eng(s['resistance_ohm'], 'ohm')}, "
                         f"L {_eng(s['inductance_h'], 'H')}, P {_eng(s['power_w'], 'W')}, "
                         f"Q {_eng(s['reactive_power_var'], 'var')}")
        for name, p in sol["points"].items():
            b = [complex(*c) for c in p["flux_density_t"]]
            lines.append(f"  point {name}: |B| {_eng((abs(b[0]) ** 2 + abs(b[1]) ** 2) ** 0.5, 'T')}"
                         f" (RMS), loss density {_eng(p['loss_density_w_per_m3'], 'W/m3')}")
    return "\n".join(lines)
