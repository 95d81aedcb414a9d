"""A compact plain-text table of a run's main numbers (the terminal summary)."""

from __future__ import annotations

import math

from whorl.postprocess.loops import EMF_SIGN

NOISE = 1e-9  # region currents below this fraction of the largest are round-off: shown as 0
NEGATIVE_R = ("R < 0: this source takes in power from the others through their mutual "
              "inductance; only the sum over all sources is a loss, and it is positive")


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


def series_summary(series: dict) -> list[str]:
    """Peaks of a transient run and its energy bookkeeping."""
    t = series["time_s"]
    out = ["", f"transient: {len(t) - 1} steps to {_eng(t[-1], 's')}"]
    for name, rec in series["sources"].items():
        k = max(range(len(t)), key=lambda i: abs(rec["current_a"][i]))
        out.append(f"  source {name}: peak current {_eng(rec['current_a'][k], 'A')} at "
                   f"{_eng(t[k], 's')}")
        if "capacitor_voltage_v" in rec:
            out.append(f"  source {name}: capacitor voltage at the end "
                       f"{_eng(rec['capacitor_voltage_v'][-1], 'V')}")
    for name, rec in series["regions"].items():
        forces = [f[1] for f in rec["force_n"]]
        if max(rec["loss_w"]) > 0:
            k = max(range(len(t)), key=lambda i: abs(forces[i]))
            out.append(f"  region {name}: peak loss {_eng(max(rec['loss_w']), 'W')}, peak axial/y "
                       f"force {_eng(forces[k], 'N')} at {_eng(t[k], 's')}")
            if "mean_radial_pressure_pa" in rec:
                p = rec["mean_radial_pressure_pa"]
                k = max(range(len(t)), key=lambda i: abs(p[i]))
                out.append(f"  region {name}: peak mean radial pressure {_eng(p[k], 'Pa')} "
                           f"({'outwards' if p[k] > 0 else 'inwards'}) at {_eng(t[k], 's')}")
    for name, rec in series.get("loops", {}).items():
        k = max(range(len(t)), key=lambda i: abs(rec["emf_v"][i]))
        out.append(f"  loop {name}: peak EMF {_eng(rec['emf_v'][k], 'V')} at {_eng(t[k], 's')}, "
                   f"flux per turn at the end {_eng(rec['flux_wb'][-1], 'Wb')}")
    if series.get("loops"):
        out.append(f"  ({EMF_SIGN})")
    bal = series["energy_balance"]
    out.append(f"  energy: delivered {_eng(bal['delivered_j'], 'J')}, dissipated "
               f"{_eng(bal['dissipated_j'], 'J')}, stored at the end {_eng(bal['stored_j'], 'J')} "
               f"(balance off by {100 * bal['relative_mismatch']:.3f} %)")
    return out


LONG_LIST = 12  # more solutions than this: details at the ends and the middle only


def response_summary(results: dict) -> list[str]:
    """The reduced sweep's bookkeeping, each source's range of R, L and power factor over
    a frequency list, and the resonance with the tank capacitor."""
    out = []
    sols = sorted(results.get("solutions", []), key=lambda r: r["frequency_hz"])
    sweep = results.get("frequency_sweep")
    if sweep:
        out.append(f"reduced frequency sweep: {len(sweep['frequencies_hz'])} frequencies from "
                   f"{len(sweep['full_solve_frequencies_hz'])} full solves (basis "
                   f"{sweep['basis_size']}), largest estimated error "
                   f"{max(sweep['estimated_error'], default=0.0):.1e} (tolerance "
                   f"{sweep['tolerance']:g})")
    if len(sols) > 1:
        lo, hi = sols[0], sols[-1]
        for name in lo["sources"]:
            if name not in hi["sources"]:
                continue
            a, b = lo["sources"][name], hi["sources"][name]
            pf = [s["sources"][name].get("power_factor") for s in sols
                  if name in s["sources"]]
            pf = [p for p in pf if p is not None]
            out.append(f"source {name} from {_eng(lo['frequency_hz'], 'Hz')} to "
                       f"{_eng(hi['frequency_hz'], 'Hz')}: R {_eng(a['resistance_ohm'], 'ohm')}"
                       f" to {_eng(b['resistance_ohm'], 'ohm')}, L {_eng(a['inductance_h'], 'H')}"
                       f" to {_eng(b['inductance_h'], 'H')}"
                       + (f", power factor {min(pf):.3f} to {max(pf):.3f}" if pf else ""))
    for name, res in (results.get("resonance") or {}).items():
        f = res["frequency_hz"]
        out.append(f"source {name}: " + (f"resonance with the {res['connection']} tank "
                                         f"capacitor {_eng(res['capacitance_f'], 'F')} at "
                                         f"{_eng(f, 'Hz')}" if f is not None else res["note"]))
    return out


def heating_summary(h: dict) -> list[str]:
    """Final and peak temperatures, time to temperature, hardened depth, energy."""
    t = h["time_s"]
    out = ["", f"heating: {len(t) - 1} steps to {_eng(t[-1], 's')}, "
               f"{h['field_solutions']} field solutions"]
    for name, r in h["regions"].items():
        if "max_temperature_c" in r:
            out.append(f"  region {name}: at the end {r['min_temperature_c'][-1]:.0f} to "
                       f"{r['max_temperature_c'][-1]:.0f} degC (mean "
                       f"{r['mean_temperature_c'][-1]:.0f}), peak {r['peak_temperature_c']:.0f} "
                       "degC")
    for name, p in h["points"].items():
        if p.get("inside_heated"):
            reach = ", ".join(f"{k} degC at {'-' if v is None else f'{v:.3g} s'}"
                              for k, v in p.get("time_to_temperature_s", {}).items())
            out.append(f"  point {name}: {p['temperature_c'][-1]:.0f} degC at the end, peak "
                       f"{p['peak_temperature_c']:.0f} degC" + (f"; reaches {reach}" if reach
                                                                 else ""))
    for name, d in h.get("hardened_depth", {}).items():
        for key, v in d.items():
            unit = key.removeprefix("depth_")
            out.append(f"  line {name}: hardened depth "
                       f"{'none' if v is None else f'{v:.3g} {unit}'} (estimate, no kinetics)")
    for name, s in h["sources"].items():
        on = [k for k, p in enumerate(s["power_w"]) if p > 0]
        if on:
            out.append(f"  source {name}: power {_eng(s['power_w'][on[0]], 'W')} at the start, "
                       f"{_eng(s['power_w'][on[-1]], 'W')} at the end of heating; current "
                       f"{_eng(s['current_a'][on[0]], 'A')} to {_eng(s['current_a'][on[-1]], 'A')}")
    e = h["energy"]
    out.append(f"  energy: induced {_eng(e['induced_j'], 'J')}, stored "
               f"{_eng(e['stored_j'], 'J')}, lost at surfaces {_eng(e['surface_loss_j'], 'J')} "
               f"(balance off by {100 * e['balance']:.3f} %)")
    return out


def summary_text(results: dict) -> str:
    """The main numbers of every solution of ``results`` (a results.json record)."""
    lines = []
    case = results["case"]
    depth = f", depth {case['depth_m']} m" if case.get("depth_m") else ""
    mesh = results["mesh"]
    lines.append(f"{case['name']}: {case['geometry']}{depth}; {mesh['elements']} elements, "
                 f"{mesh['dofs']} unknowns (P{mesh['order']}); "
                 f"solver {results['solver']['backend']}; "
                 f"{results['timing_s']['total']:.1f} s")
    if "series" in results:
        lines += series_summary(results["series"])
    if "heating" in results:
        lines += heating_summary(results["heating"])
    lines += response_summary(results)
    solutions = results.get("solutions", [])
    if len(solutions) > LONG_LIST:  # a frequency response: its ends and middle in detail
        keep = sorted({0, len(solutions) // 2, len(solutions) - 1})
        lines.append(f"details at {len(keep)} of {len(solutions)} frequencies; every "
                     "frequency is in frequency_response.csv and results.json")
        solutions = [solutions[k] for k in keep]
    for sol in solutions:
        lines.append("")
        totals = sol["totals"]
        winding = totals.get("winding_loss_w") or 0.0
        of_which = f" (winding copper loss {_eng(winding, 'W')})" if winding > 0 else ""
        lines.append(f"frequency {_eng(sol['frequency_hz'], 'Hz')}: total loss "
                     f"{_eng(totals['loss_w'], 'W')}{of_which}, stored energy "
                     f"{_eng(totals['magnetic_energy_j'], 'J')}")
        nl = sol.get("nonlinear")
        if nl:
            what = ("harmonic solutions (effective permeability)" if sol["frequency_hz"] > 0
                    else "Newton steps")
            lines.append(f"  saturable steel: {nl['iterations']} {what}, "
                         f"{'converged' if nl['converged'] else 'NOT converged'} "
                         f"(residual {nl['residual']:.1e})")
        if sol["sources"]:
            delivered = sum(s["power_w"] for s in sol["sources"].values())
            lines.append(f"  power at the terminals {_eng(delivered, 'W')}")
        eff = sol.get("derived", {}).get("heating_efficiency")
        if eff is not None and sol["sources"]:
            lines.append(f"  heating efficiency (loss in conductors outside any source / all "
                         f"losses): {100 * eff:.1f} %")
        # currents below NOISE x the largest are round-off (a plate at zero net current)
        noise = NOISE * max((r["current_rms_a"] for r in sol["regions"].values()), default=0)
        rows = [(name, r) for name, r in sol["regions"].items()
                if r["loss_w"] > 0 or r["current_rms_a"] > 0]
        wound = any("ampere_turns_a" in r for _, r in rows)
        if rows:
            lines.append(f"  {'region':<20} {'loss':>12} {'current (RMS)':>16}"
                         + (f" {'ampere-turns (RMS)':>19}" if wound else ""))
            for name, r in rows:
                at = r.get("ampere_turns_a")
                current = r["current_rms_a"] if r["current_rms_a"] > noise else 0.0
                lines.append(f"  {name:<20} {_eng(r['loss_w'], 'W'):>12} "
                             f"{_eng(current, 'A'):>16}"
                             + (f" {_eng(abs(complex(*at)), 'A'):>19}" if at else ""))
        for name, r in sol["regions"].items():
            if r.get("peak_surface_power_density_w_per_m2") is not None:
                at = r["peak_surface_power_at_m"]
                lines.append(f"  {name}: peak surface power density "
                             f"{r['peak_surface_power_density_w_per_m2'] / 1e4:.4g} W/cm2 at "
                             f"({at[0]:.4g}, {at[1]:.4g}) m")
        for name, s in sol["sources"].items():
            z = complex(*s["impedance_ohm"])
            lines.append(f"  source {name}: I {_eng(abs(complex(*s['current_a'])), 'A')}, "
                         f"V {_eng(abs(complex(*s['voltage_v'])), 'V')} (RMS at the terminals), "
                         f"|Z| {_eng(abs(z), 'ohm')}, "
                         f"R {_eng(s['resistance_ohm'], 'ohm')}, "
                         f"L {_eng(s['inductance_h'], 'H')}, P {_eng(s['power_w'], 'W')}, "
                         f"Q {_eng(s['reactive_power_var'], 'var')}")
            extra = []
            if s.get("power_factor") is not None and s["power_w"] >= 0:
                q = s["reactive_power_var"]
                extra.append(f"power factor {s['power_factor']:.3f}"
                             + (" lagging" if q > 0 else " leading" if q < 0 else ""))
            if s["power_w"] < 0:
                lines.append(f"    {NEGATIVE_R}")
            if s.get("tuning_capacitance_parallel_f"):
                extra.append(f"tuning capacitor {_eng(s['tuning_capacitance_parallel_f'], 'F')} "
                             "across the terminals or "
                             f"{_eng(s['tuning_capacitance_series_f'], 'F')} "
                             "in series")
            if extra:
                lines.append("    " + ", ".join(extra))
        for name, r in sol["regions"].items():
            if "mechanical_power_w" in r:  # a moving region
                torque = (f", torque {_eng(r['torque_nm'], 'N m')}" if "torque_nm" in r
                          else "")
                lines.append(f"  moving {name}: force ({_eng(r['force_n'][0], 'N')}, "
                             f"{_eng(r['force_n'][1], 'N')}){torque}, mechanical power "
                             f"{_eng(r['mechanical_power_w'], 'W')} (what the drive supplies; "
                             "< 0: the field drives the body)")
        for name, lp in sol.get("loops", {}).items():
            flux, emf = abs(complex(*lp["flux_wb"])), abs(complex(*lp["emf_v"]))
            link = lp.get("turns", 1.0) * flux
            lines.append(f"  loop {name}: flux per turn {_eng(flux, 'Wb')}, flux linkage "
                         f"{_eng(link, 'Wb')} ({lp['turns']:g} turns), EMF {_eng(emf, 'V')} (RMS)")
        if sol.get("loops"):
            lines.append(f"  ({EMF_SIGN})")
        for name, p in sol["points"].items():
            b = [complex(*c) for c in p["flux_density_t"]]
            b_rms = (abs(b[0]) ** 2 + abs(b[1]) ** 2) ** 0.5
            lines.append(f"  point {name}: |B| {_eng(b_rms, 'T')}"
                         f" (RMS), loss density {_eng(p['loss_density_w_per_m3'], 'W/m3')}")
    for text in results.get("warnings", []):
        lines.append("")
        lines.append(f"WARNING: {text}")
    return "\n".join(lines)
