"""The coupling loop of a heating study: field solutions and heat steps in time.

1. Solve the harmonic field with every element's conductivity and permeability at
   its temperature (:mod:`.heating_field`: linear materials, or B-H curves through
   their effective permeability), the supply as :mod:`.supply` says.
2. Its time-averaged loss density heats the heated regions through implicit
   heat steps (:mod:`.heatstep`), held fixed until the next field solution.
3. Solve the field again when any heated element's temperature has moved by
   ``field_update`` since the last field solution (unless no heated material's
   conductivity or permeability depends on temperature), and at every switching time
   (a source's ``on`` window or a surface's window opens or closes). Steps land
   on every switching time, the first after each one short (``RESTART_FRACTION``);
   a step halves when temperatures move fast (more than half of ``field_update``
   in a step while a source is on, or ``FAST_CHANGE_K`` otherwise) and doubles
   back up to ``step`` when they move under 40 % of that.

The loop takes the postprocessing it needs (loss density, terminal values) as
callables, so this layer stays below :mod:`whorl.postprocess`.
"""

from __future__ import annotations

import logging
import time
from dataclasses import dataclass, field

import numpy as np

from whorl.solver.heat import heat_domain
from whorl.solver.heating_field import FieldRecord, FieldSolver
from whorl.solver.heatstep import HeatStepper, Surface
from whorl.solver.supply import Supply

log = logging.getLogger(__name__)

FAST_CHANGE_K = 50.0
"""Largest temperature change per step while no source is on (K)."""
MIN_STEP_FRACTION = 1.0 / 1024
"""Steps never shrink below this fraction of ``step``."""
RESTART_FRACTION = 1.0 / 16
"""The first step after the start and after every switching time, as a fraction of
``step`` (it grows by at most 2 per step): the heat input jumps there, and a short
first step keeps both the start of the transient and the energy bookkeeping of the
restarted BDF2 accurate."""


@dataclass(frozen=True)
class HeatingStudy:
    """What a heating study asks (SI units, temperatures in K)."""

    frequency_hz: float
    end_s: float
    step_s: float
    initial_k: float = 293.15
    heated: tuple[str, ...] = ()
    field_update_k: float = 20.0
    surfaces: tuple[Surface, ...] = ()
    supplies: dict = field(default_factory=dict)
    unheated_k: float = 293.15  # temperature of every element outside the heated regions
    scheme: str = "bdf2"        # or "implicit-euler"

    def switching_times(self) -> list[float]:
        times = {0.0, self.end_s}
        for s in self.surfaces:
            times.update((s.start_s, s.end_s))
        for sup in self.supplies.values():
            times.update(sup.on)
        return sorted(t for t in times if 0.0 <= t <= self.end_s)


@dataclass
class HeatingHistory:
    """Everything a heating run produced, as plain arrays.

    ``temperature_k[n]`` holds the unknowns of :attr:`domain` at ``time_s[n]``;
    ``field_index[n]`` the field solution that was heating during the step that
    ended at ``time_s[n]`` (for n = 0 the first one). Each record of :attr:`fields`
    keeps its numbers (loss density, terminals, region losses, iteration report); the
    whole solution (its system's matrices, about 9 MB on the shaft demo) only while it
    is the last one, then :attr:`last_solution`: a long run's memory does not grow with
    its field solutions.
    """

    domain: object
    time_s: list = field(default_factory=list)
    temperature_k: list = field(default_factory=list)
    field_index: list = field(default_factory=list)
    fields: list = field(default_factory=list)
    peak_k: np.ndarray | None = None
    induced_j: float = 0.0
    stored_j: float = 0.0
    surface_loss_j: float = 0.0
    steps: int = 0
    rejected_steps: int = 0
    heat_seconds: float = 0.0
    field_seconds: float = 0.0
    end_of_heating_s: float | None = None
    temperature_at_end_of_heating: np.ndarray | None = None
    last_solution: object | None = None  # the last field solution (only it is kept whole)


def _any_source_on(study: HeatingStudy, problem, time_s: float) -> bool:
    names = [s.name for s in problem.sources if hasattr(s, "regions")]
    return any(study.supplies.get(n, Supply(n)).energised(time_s) for n in names)


def run_heating(problem, study: HeatingStudy, terminals, loss_density, region_losses,
                backend: str = "auto", progress=None) -> HeatingHistory:
    """March a heating study from ``study.initial_k`` to ``study.end_s``.

    Parameters
    ----------
    problem : Problem
        The field problem; its materials must carry thermal data in the heated regions.
    terminals : callable Solution -> {source name: (current, voltage)} (complex RMS)
    loss_density : callable Solution -> (elements, quadrature points) W/m^3
    region_losses : callable Solution -> {region name: W}
    """
    say = progress or (lambda message: None)
    tagged = problem.mesh
    domain = heat_domain(tagged, problem.order, list(study.heated),
                         [s.regions for s in study.surfaces], problem.boundary,
                         problem.depth_m)
    materials = {r: problem.materials[r] for r in study.heated}
    stepper = HeatStepper(domain, materials, study.surfaces, backend=backend)
    fields = FieldSolver(problem, study, terminals, loss_density, region_losses, backend)
    n_el = tagged.mesh.t.shape[1]

    def element_temperature(t):
        full = np.full(n_el, study.unheated_k)
        full[domain.elements] = domain.element_temperature(t)
        return full

    follows = any(problem.materials[r].electromagnetic_tables for r in study.heated)
    history = HeatingHistory(domain)
    t_now = np.full(domain.size, study.initial_k)
    history.peak_k = t_now.copy()
    switching = study.switching_times()
    heating_ends = [s.on[1] for s in study.supplies.values() if s.on[1] <= study.end_s]
    history.end_of_heating_s = max(heating_ends) if heating_ends else study.end_s

    def new_field(time_s, t):
        if not _any_source_on(study, problem, time_s):
            zero = np.zeros((domain.elements.size, domain.basis.X.shape[-1]))
            rec = FieldRecord(time_s, None, zero, {}, {}, {}, {}, linear_solutions=0)
            if history.fields and history.fields[-1].solved:
                last = history.fields[-1]
                rec.sources = {n: (0j, 0j) for n in last.sources}
                rec.region_loss_w = dict.fromkeys(last.region_loss_w, 0.0)
            history.fields.append(rec)
        else:
            say(f"field solution {len(history.fields) + 1} at t = {time_s:.4g} s")
            for earlier in history.fields:
                earlier.solution = None  # its numbers are kept in the record
            history.fields.append(fields.solve(element_temperature(t), time_s,
                                               domain.elements))
            history.last_solution = history.fields[-1].solution
            history.field_seconds += history.fields[-1].seconds
        rec = history.fields[-1]
        return domain.source_vector(rec.loss_density), domain.element_temperature(t)

    source, te_field = new_field(0.0, t_now)
    history.time_s.append(0.0)
    history.temperature_k.append(t_now)
    history.field_index.append(0)
    states = [(t_now, None)]
    t, h = 0.0, study.step_s * RESTART_FRACTION
    h_min = study.step_s * MIN_STEP_FRACTION
    restart = True
    while t < study.end_s * (1 - 1e-12):
        upcoming = min(s for s in switching if s > t * (1 + 1e-12) + 1e-300)
        h_try = min(h, upcoming - t)
        if upcoming - t - h_try < 1e-9 * study.step_s:
            h_try = upcoming - t
        on = _any_source_on(study, problem, t + 0.5 * h_try)
        limit = 0.5 * study.field_update_k if on else FAST_CHANGE_K
        t0 = time.perf_counter()
        result = stepper.step(states, h_try, t + h_try, source,
                              bdf2=(study.scheme == "bdf2" and not restart))
        history.heat_seconds += time.perf_counter() - t0
        change = np.abs(result.t - states[-1][0]).max()
        if change > 2 * limit and h_try > 2 * h_min:
            h = 0.5 * h_try
            history.rejected_steps += 1
            continue
        t += h_try
        if abs(t - upcoming) < 1e-9 * study.step_s:
            t = upcoming
        history.steps += 1
        history.induced_j += result.induced_j
        history.stored_j += result.stored_j
        history.surface_loss_j += result.surface_loss_j
        states = [*states[-2:], (result.t, h_try)]  # three: the quadratic first guess
        restart = False
        history.time_s.append(t)
        history.temperature_k.append(result.t)
        history.field_index.append(len(history.fields) - 1)
        np.maximum(history.peak_k, result.t, out=history.peak_k)
        if history.temperature_at_end_of_heating is None and t >= history.end_of_heating_s:
            history.temperature_at_end_of_heating = result.t
        # The next step: twice as long while temperatures move under 40 % of ``limit``
        # per step, half as long above it, at most ``step`` (sizes in powers of two keep
        # the heat solver's factorisation valid for many steps).
        if h_try >= h * (1 - 1e-9):  # a full step (not one cut short by a switching time)
            if change < 0.4 * limit:
                h = min(study.step_s, 2.0 * h)
            elif change > limit:
                h = max(h_min, 0.5 * h)
        if t >= study.end_s:
            break
        te = domain.element_temperature(result.t)
        if t == upcoming:
            source, te_field = new_field(t, result.t)
            restart = True
            h = min(h, study.step_s * RESTART_FRACTION)
        elif on and follows and np.abs(te - te_field).max() >= study.field_update_k:
            source, te_field = new_field(t, result.t)
        if history.steps % 20 == 0:
            say(f"t = {t:.4g} s of {study.end_s:g} s, max {result.t.max() - 273.15:.0f} degC")
    if history.temperature_at_end_of_heating is None:
        history.temperature_at_end_of_heating = history.temperature_k[-1]
    induced = history.induced_j
    balance = ((induced - history.stored_j - history.surface_loss_j) / induced
               if induced > 0 else 0.0)
    if abs(balance) > 0.01:
        log.error("heating energy balance off by %.2e (induced %.4g J, stored %.4g J, "
                  "surface loss %.4g J)", balance, induced, history.stored_j,
                  history.surface_loss_j)
    return history


def energy_balance(history: HeatingHistory) -> dict:
    """induced = stored + surface loss, and the relative mismatch (of induced)."""
    induced = history.induced_j
    mismatch = induced - history.stored_j - history.surface_loss_j
    return {"induced_j": induced, "stored_j": history.stored_j,
            "surface_loss_j": history.surface_loss_j,
            "balance": mismatch / induced if induced > 0 else 0.0}


__all__ = ["FieldRecord", "FieldSolver", "HeatingHistory", "HeatingStudy", "Surface", "Supply",
           "energy_balance", "run_heating"]
