"""Plain, JSON-ready records of a solution, in the shape of ``results.json``.

Complex values become ``[real, imaginary]`` pairs (RMS phasors); losses and
forces are time averages; planar totals are for the model depth,
axisymmetric ones for the full turn.
"""

from __future__ import annotations

import logging

import numpy as np

from whorl.postprocess.balance import power_balance
from whorl.postprocess.circuits import source_results
from whorl.postprocess.fields import quadrature_fields
from whorl.postprocess.forces import shell_force
from whorl.postprocess.loops import axisymmetric_loop, planar_loop
from whorl.postprocess.moving_loops import moving_loop
from whorl.postprocess.probes import probe
from whorl.postprocess.projected import is_reduced
from whorl.postprocess.regions import region_totals
from whorl.postprocess.surface import cached_surface_power, heated_regions
from whorl.solver.materials import MU0, skin_depth
from whorl.solver.sources import Massive, Stranded
from whorl.solver.windings import resistance_shares

log = logging.getLogger(__name__)


def pair(z) -> list[float]:
    """A complex number as [real, imaginary]."""
    z = complex(z)
    return [float(z.real), float(z.imag)]


def region_record(t) -> dict:
    return {
        "current_a": pair(t.current_a),
        "current_rms_a": float(abs(t.current_a)),
        "loss_w": t.loss_w,
        "magnetic_energy_j": t.magnetic_energy_j,
        "force_n": [t.force_n[0], t.force_n[1]],
        "area_m2": t.area_m2,
        "peak_loss_density_w_per_m3": t.peak_loss_density_w_per_m3,
        "peak_loss_at_m": list(t.peak_loss_at_m) if t.peak_loss_at_m else None,
        "peak_flux_density_t": t.peak_flux_density_t,
        **({"radial_load_n": t.radial_load_n, "mean_radial_pressure_pa": t.mean_radial_pressure_pa}
           if t.radial_load_n is not None else {}),
        **({"mechanical_power_w": t.mechanical_power_w}
           if t.mechanical_power_w is not None else {}),
        **({"torque_nm": t.torque_nm} if t.torque_nm is not None else {}),
    }


def source_record(s, omega, tuning: bool = True) -> dict:
    z = complex(s.impedance_ohm)
    apparent = abs(complex(s.power_w, s.reactive_power_var))
    x = z.imag
    return {
        "current_a": pair(s.current_a),
        "voltage_v": pair(s.voltage_v),
        "impedance_ohm": pair(s.impedance_ohm),
        "resistance_ohm": s.resistance_ohm,
        "inductance_h": s.inductance_h,
        "power_w": s.power_w,
        "reactive_power_var": s.reactive_power_var,
        "flux_linkage_wb": pair(s.flux_linkage_wb),
        "power_factor": s.power_w / apparent if apparent > 0 else None,
        # Capacitance that resonates with the source at this frequency: in series
        # (1 / (omega X)) and across the terminals (X / (omega |Z|^2)); None if not inductive
        # or ``tuning`` False (not a single coil, see single_coil).
        "tuning_capacitance_series_f": (1 / (omega * x) if tuning and omega > 0 and x > 0
                                        else None),
        "tuning_capacitance_parallel_f": (x / (omega * abs(z) ** 2)
                                          if tuning and omega > 0 and x > 0 else None),
    }


def point_record(p, k: int) -> dict:
    return {
        "inside": bool(p.inside[k]),
        "potential_wb_per_m": pair(p.a[k]),
        "flux_density_t": [pair(p.b[0, k]), pair(p.b[1, k])],
        "field_strength_a_per_m": [pair(p.h[0, k]), pair(p.h[1, k])],
        "electric_field_v_per_m": pair(p.e[k]),
        "current_density_a_per_m2": pair(p.j[k]),
        "loss_density_w_per_m3": float(p.loss[k]),
    }


def loop_record(lp) -> dict:
    return {"turns": lp.turns, "flux_wb": pair(lp.flux_wb),
            "flux_from_b_wb": pair(lp.flux_from_b_wb),
            "flux_linkage_wb": pair(lp.flux_linkage_wb), "emf_v": pair(lp.emf_v),
            "emf_from_e_v": pair(lp.emf_from_e_v)}


def loop_result(solution, loop: dict, surface: bool = True):
    """``loop``: name, turns and ``at`` (axisymmetric) or ``start``/``end`` (planar), metres;
    an optional ``velocity`` (m/s) makes it a moving loop (:mod:`.moving_loops`)."""
    turns = loop.get("turns", 1.0)
    if solution.problem.axisymmetric:
        result = axisymmetric_loop(solution, loop["name"], *loop["at"], turns, surface)
    else:
        result = planar_loop(solution, loop["name"], loop["start"], loop["end"], turns, surface)
    if loop.get("velocity") is not None and any(loop["velocity"]):
        result = moving_loop(solution, result, loop)
    return result


def derived_numbers(solution, regions, sources) -> dict:
    """Skin depths, heating efficiency: numbers an engineer asks for next."""
    problem = solution.problem
    skin = {}
    for name in problem.mesh.regions:
        m = problem.materials[name]
        if m.conductivity > 0 and solution.frequency_hz > 0:
            skin[name] = m.skin_depth(solution.frequency_hz)
            if getattr(m, "bh_curve", None) is not None:  # at the most saturated element's
                elems = problem.mesh.elements(name)      # effective permeability
                mu_r = 1.0 / (MU0 * float(np.max(solution.system.nu[elems])))
                skin[name] = skin_depth(solution.frequency_hz, m.conductivity, mu_r)
    fed = {r for s in problem.sources for r in (*getattr(s, "regions", ()),
                                                 *getattr(s, "return_regions", ()))}
    work = sum(t.loss_w for n, t in regions.items() if n not in fed)
    winding = sum(s.resistance * abs(solution.source_current(s)) ** 2
                  for s in problem.sources if isinstance(s, Stranded))
    total = sum(t.loss_w for t in regions.values()) + winding
    return {"skin_depth_m": skin,
            "heating_efficiency": (work / total if total > 0 and work > 0
                                   and single_coil(problem) else None),
            "loss_in_unsourced_conductors_w": work}


def single_coil(problem) -> bool:
    """True for one driven source (a coil and its workpiece): heating efficiency and
    tuning capacitors mean something only then. With several sources (three phases,
    say) each one's impedance depends on the others' currents."""
    return sum(isinstance(s, Stranded | Massive) for s in problem.sources) == 1


def add_windings(solution, record) -> None:
    """Stranded regions as engineers read them: ``current_a`` the conductor current (the
    source's, negative in return regions), ``ampere_turns_a`` the net current through
    the section (turns x current), and the winding's copper loss R |I|^2 shared among
    its regions (:func:`~whorl.solver.windings.resistance_shares`) in ``loss_w`` and
    ``winding_loss_w``, so that region losses add up to the terminal power."""
    for s in solution.problem.sources:
        if not isinstance(s, Stranded):
            continue
        current = solution.source_current(s)
        loss = s.resistance * abs(current) ** 2
        shares = resistance_shares(solution.problem, s)
        for name in (*s.regions, *s.return_regions):
            r = record["regions"][name]
            sign = -1.0 if name in s.return_regions else 1.0
            r["ampere_turns_a"] = r["current_a"]
            r["current_a"] = pair(sign * current)
            r["current_rms_a"] = float(abs(current))
            r["winding_loss_w"] = float(shares[name] * loss)
            r["loss_w"] = float(r["loss_w"] + shares[name] * loss)
    record["totals"]["loss_w"] = float(sum(r["loss_w"] for r in record["regions"].values()))


def solution_record(solution, points=None, loops=None) -> dict:
    """The ``solutions[i]`` entry of results.json.

    ``points`` maps a point name to its coordinates in metres; ``loops`` is a list
    of loop descriptions in metres (see :func:`loop_result`).
    """
    # a reduced solution's totals and point values come from projections (.projected)
    fields = None if is_reduced(solution) else quadrature_fields(solution)
    regions = region_totals(solution, fields)
    sources = source_results(solution)
    balance = power_balance(solution, regions, sources)
    if balance["applies"] and balance["relative_mismatch"] > balance["tolerance"]:
        log.error("power balance off at %g Hz: terminals %s VA, fields %s VA (mismatch %.2e): "
                  "the impedance is not to be trusted", solution.frequency_hz,
                  balance["terminals_va"], balance["fields_va"], balance["relative_mismatch"])
    record = {
        "frequency_hz": solution.frequency_hz,
        "regions": {name: region_record(t) for name, t in regions.items()},
        "sources": {name: source_record(s, solution.omega, single_coil(solution.problem))
                    for name, s in sources.items()},
        "loops": {lp["name"]: loop_record(loop_result(solution, lp)) for lp in loops or ()},
        "points": {},
        "totals": {
            "loss_w": float(sum(t.loss_w for t in regions.values())),
            "magnetic_energy_j": float(sum(t.magnetic_energy_j for t in regions.values())),
            "winding_loss_w": balance["winding_loss_w"],
            "power_balance": balance,
        },
        "derived": derived_numbers(solution, regions, sources),
    }
    if getattr(solution, "nonlinear", None) is not None:
        record["nonlinear"] = dict(solution.nonlinear)
    for s in solution.problem.sources:  # a source's force: the sum over its conductors
        if s.name in record["sources"]:
            parts = [regions[r].force_n for r in (*s.regions, *s.return_regions)]
            record["sources"][s.name]["force_n"] = [float(sum(f[0] for f in parts)),
                                                    float(sum(f[1] for f in parts))]
    add_windings(solution, record)
    if solution.frequency_hz > 0:
        for name in heated_regions(solution.problem):
            sp = cached_surface_power(solution, name)
            peak, at = sp.peak()
            record["regions"][name].update(surface_power_w=sp.total_w,
                                           peak_surface_power_density_w_per_m2=peak,
                                           peak_surface_power_at_m=list(at))
    for name in solution.problem.mesh.regions:
        force = shell_force(solution, name, fields)
        record["regions"][name]["force_maxwell_n"] = list(force) if force else None
    if points:
        names = list(points)
        xy = np.array([points[n] for n in names], dtype=float).T
        p = probe(solution, xy)
        record["points"] = {n: point_record(p, k) for k, n in enumerate(names)}
    return record
