"""Records of a heating run: temperatures at points and per region, supply, energy.

Temperatures in the records are degrees Celsius, times seconds, powers watts;
source values are RMS magnitudes. "Time to temperature" is the first time a
point reaches a temperature (linear between recorded steps). The hardened
depth along a line is the distance from the line's start to the first sample
whose peak temperature stayed below the hardening temperature: the case the
heat could harden, a common-practice estimate that ignores transformation
kinetics (time at temperature, prior structure, quench severity).
"""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp
from skfem import Basis

from whorl.postprocess.circuits import terminal_voltage
from whorl.postprocess.fields import conductor_loss, quadrature_fields
from whorl.postprocess.probes import _locate, line_points
from whorl.postprocess.regions import region_totals
from whorl.solver.heating import energy_balance
from whorl.solver.sources import Massive, Stranded

KELVIN = 273.15


class FieldEvaluation:
    """The postprocessing a heating loop needs: the loss density (W/m^3, per element and
    quadrature point) and the loss per region (W), both from one evaluation of the last
    solution on its conducting elements (:func:`~.fields.conductor_loss`; the whole
    :func:`~.fields.quadrature_fields` where conductors move)."""

    def __init__(self):
        self._key, self._loss = None, None

    def _evaluate(self, solution):
        """(loss density, loss per region) of ``solution``, kept for the next call."""
        if self._key is not solution:
            found = conductor_loss(solution)
            names = solution.problem.mesh.regions
            if found is None:
                q = quadrature_fields(solution)
                totals = region_totals(solution, q)
                self._loss = (q.loss, {n: t.loss_w for n, t in totals.items() if n in names})
            else:
                elements, loss, dv = found
                tagged = solution.problem.mesh
                density = np.zeros((tagged.mesh.t.shape[1], loss.shape[1]))
                density[elements] = loss
                index = tagged.region_of_element()[elements]
                per = np.bincount(index, weights=(loss * dv).sum(1),
                                  minlength=1 + len(tagged.regions))
                by_name = dict(zip((tagged.background, *tagged.regions), per, strict=True))
                self._loss = (density, {n: float(by_name[n]) for n in names})
            self._key = solution
        return self._loss

    def loss_density(self, solution):
        return self._evaluate(solution)[0]

    def terminals(self, solution):
        """Current and terminal voltage of every stranded and massive source."""
        return {s.name: (solution.source_current(s), terminal_voltage(solution, s))
                for s in solution.problem.sources if isinstance(s, Massive | Stranded)}

    def region_losses(self, solution):
        return self._evaluate(solution)[1]


def temperature_probe(domain, points_m):
    """(matrix, inside): matrix @ unknowns gives T at ``points_m`` (2, P) in metres;
    ``inside`` is False where a point lies outside the heated regions."""
    points = np.array(points_m, dtype=float).reshape(2, -1)
    mesh = domain.basis.mesh
    full = Basis(mesh, type(domain.basis.elem)())
    cells = _locate(full, points)
    inside = np.isin(cells, domain.elements) & (cells >= 0)
    # A point on the edge of a heated region (a line starting at its surface) may be found
    # in the neighbouring element: look a hair's breadth to each side.
    size = float(np.ptp(mesh.p, axis=1).max())
    for dx, dy in ((1, 0), (-1, 0), (0, 1), (0, -1)):
        if inside.all():
            break
        out = np.flatnonzero(~inside)
        moved = points[:, out] + 1e-9 * size * np.array([[dx], [dy]])
        found = _locate(full, moved)
        hit = np.isin(found, domain.elements) & (found >= 0)
        points[:, out[hit]] = moved[:, hit]
        cells[out[hit]] = found[hit]
        inside[out[hit]] = True
    if not inside.any():
        return None, inside
    # Basis values at the points (curved elements too: the inverse of the element map).
    c = cells[inside]
    ref = full.mapping.invF(points[:, inside, None], tind=c)
    rows, cols, vals = [], [], []
    for k in range(full.Nbfun):
        phi = full.elem.gbasis(full.mapping, ref, k, tind=c)[0]
        rows.append(np.arange(c.size))
        cols.append(domain.local[full.element_dofs[k, c]])
        vals.append(np.asarray(phi)[:, 0])
    matrix = sp.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                           shape=(c.size, domain.size))
    return matrix, inside


def _values(matrix, inside, t):
    out = np.full(inside.size, np.nan)
    if matrix is not None:
        out[inside] = matrix @ t
    return out


def time_to_reach(times, values, target) -> float | None:
    """First time ``values`` reaches ``target`` (linear between samples), or None."""
    for k in range(len(values)):
        if values[k] >= target:
            if k == 0:
                return float(times[0])
            v0, v1 = values[k - 1], values[k]
            return float(times[k - 1] + (target - v0) / (v1 - v0) * (times[k] - times[k - 1]))
    return None


def case_depth(distance, peak, hardening) -> float | None:
    """Distance from the start of a line to where the peak temperature first drops
    below ``hardening`` (linear between samples); None if the start never got there."""
    peak = np.asarray(peak)
    if not np.isfinite(peak[0]) or peak[0] < hardening:
        return None
    for k in range(1, peak.size):
        if not np.isfinite(peak[k]) or peak[k] < hardening:
            if not np.isfinite(peak[k]):
                return float(distance[k - 1])
            d0, d1, p0, p1 = distance[k - 1], distance[k], peak[k - 1], peak[k]
            return float(d0 + (p0 - hardening) / (p0 - p1) * (d1 - d0))
    return float(distance[-1])


def heating_record(history, points: dict, reported_k=()) -> dict:
    """The ``heating`` section of results.json.

    ``points`` maps a point name to its coordinates in metres; ``reported_k`` lists
    temperatures (K) whose time of arrival is given at each point.
    """
    domain = history.domain
    times = [float(t) for t in history.time_s]
    temps = history.temperature_k
    out = {"time_s": times, "points": {}, "regions": {}, "sources": {}}
    if points:
        names = list(points)
        xy = np.array([points[n] for n in names], dtype=float).T
        matrix, inside = temperature_probe(domain, xy)
        series = np.array([_values(matrix, inside, t) for t in temps])  # (times, points)
        for k, name in enumerate(names):
            values = series[:, k]
            rec = {"inside_heated": bool(inside[k]),
                   "temperature_c": [None if not np.isfinite(v) else float(v - KELVIN)
                                     for v in values]}
            if inside[k]:
                rec["peak_temperature_c"] = float(np.nanmax(values) - KELVIN)
                rec["time_to_temperature_s"] = {
                    f"{tk - KELVIN:g}": time_to_reach(times, values, tk) for tk in reported_k}
            out["points"][name] = rec
    volume = domain.element_volume
    for name in dict.fromkeys(domain.region):
        sel = domain.region == name
        dofs = np.unique(domain.local[domain.basis.element_dofs[:, sel]])
        mean = [float((domain.element_temperature(t)[sel] * volume[sel]).sum()
                      / volume[sel].sum() - KELVIN) for t in temps]
        out["regions"][name] = {
            "min_temperature_c": [float(t[dofs].min() - KELVIN) for t in temps],
            "mean_temperature_c": mean,
            "max_temperature_c": [float(t[dofs].max() - KELVIN) for t in temps],
            "peak_temperature_c": float(history.peak_k[dofs].max() - KELVIN),
        }
    fields = history.fields
    idx = history.field_index
    region_names = {n for f in fields for n in f.region_loss_w}
    for name in sorted(region_names):
        rec = out["regions"].setdefault(name, {})
        rec["loss_w"] = [float(fields[i].region_loss_w.get(name, 0.0)) for i in idx]
    source_names = list(dict.fromkeys(n for f in fields for n in f.sources))
    for name in source_names:
        cur = [abs(fields[i].sources.get(name, (0j, 0j))[0]) for i in idx]
        vol = [abs(fields[i].sources.get(name, (0j, 0j))[1]) for i in idx]
        powr = [float((v * np.conj(c)).real) for c, v in
                (fields[i].sources.get(name, (0j, 0j)) for i in idx)]
        z = [(v / c) if c != 0 else complex(np.nan, np.nan)
             for c, v in (fields[i].sources.get(name, (0j, 0j)) for i in idx)]
        out["sources"][name] = {
            "current_a": [float(c) for c in cur], "voltage_v": [float(v) for v in vol],
            "power_w": powr,
            "resistance_ohm": [None if np.isnan(x.real) else float(x.real) for x in z],
            "reactance_ohm": [None if np.isnan(x.imag) else float(x.imag) for x in z],
            "supply_limit": _limit(fields, name),
        }
    out["field_solutions"] = sum(1 for f in fields if f.solved)
    out["field_solution_times_s"] = [float(f.time_s) for f in fields if f.solved]
    # factorised systems per field solution (more than 1: effective-permeability iterates)
    out["field_linear_solutions"] = [int(getattr(f, "linear_solutions", 1))
                                     for f in fields if f.solved]
    out["steps"] = history.steps
    out["rejected_steps"] = history.rejected_steps
    out["end_of_heating_s"] = history.end_of_heating_s
    out["energy"] = energy_balance(history)
    return out


def _limit(fields, name) -> dict | None:
    """From when a cap bound a power source and by how much its power fell short."""
    bound = [(f.time_s, f.capped.get(name), f.shortfall_w.get(name, 0.0)) for f in fields
             if f.solved and f.capped.get(name)]
    if not bound:
        return None
    short = [s for _, _, s in bound]
    return {"from_s": float(bound[0][0]), "cap": bound[0][1],
            "max_shortfall_w": float(max(short)), "last_shortfall_w": float(short[-1])}


def line_temperatures(history, start_m, end_m, samples: int, unit_m: float, unit: str):
    """(header, rows) of a line: distance and coordinates in the length unit, final,
    end-of-heating and peak temperatures (degrees C; blank outside heated regions)."""

    xy = line_points(start_m, end_m, samples)
    matrix, inside = temperature_probe(history.domain, xy)
    final = _values(matrix, inside, history.temperature_k[-1]) - KELVIN
    heat_end = _values(matrix, inside, history.temperature_at_end_of_heating) - KELVIN
    peak = _values(matrix, inside, history.peak_k) - KELVIN
    d = np.hypot(xy[0] - xy[0, 0], xy[1] - xy[1, 0])
    header = [f"distance_{unit}", f"x_{unit}", f"y_{unit}", "temperature_c",
              "end_of_heating_temperature_c", "peak_temperature_c"]
    rows = [[d[k] / unit_m, xy[0, k] / unit_m, xy[1, k] / unit_m,
             *[None if not np.isfinite(v) else float(v) for v in (final[k], heat_end[k],
                                                                   peak[k])]]
            for k in range(xy.shape[1])]
    return header, rows
