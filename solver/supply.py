"""The supply of a heating study: constant current, voltage or power, with caps.

A source keeps its case-file drive (an RMS current or voltage phasor) unless it
asks for a ``power``: its drive is then scaled at every field solution until the
power at its terminals is that value. ``max_current`` and ``max_voltage`` (RMS)
cap any source; a capped power source falls short of its power. The field is
linear in the drive for a given set of coefficients, so one factorisation
serves every trial drive (a back-substitution each).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

from whorl.solver.errors import SolveError
from whorl.solver.sources import Massive, Stranded, current_is_unknown


@dataclass(frozen=True)
class Supply:
    """How a source is driven in a heating study.

    power_w : terminal power to hold (W), or None (keep the case's current or voltage)
    max_current_a, max_voltage_v : RMS caps, or None
    on : (start, end) of the window in which the source is energised (s)
    """

    name: str
    power_w: float | None = None
    max_current_a: float | None = None
    max_voltage_v: float | None = None
    on: tuple[float, float] = (0.0, math.inf)

    def energised(self, time_s: float) -> bool:
        return self.on[0] <= time_s < self.on[1]


@dataclass
class DriveState:
    """The drive found at one field solution: per source its phasor (the current, or the
    voltage of a voltage-driven source), and which caps bound."""

    drive: dict
    capped: dict  # source name -> "max_current" / "max_voltage" / None
    shortfall_w: dict  # power sources: target - reached (W), 0 when met
    terminals: dict | None = None  # name -> (current, voltage) of the solution found


def driven_sources(problem):
    return [s for s in problem.sources if isinstance(s, Massive | Stranded)]


def base_drive(source) -> complex:
    return complex(source.voltage if current_is_unknown(source) else source.current)


def with_drive(problem, drive: dict):
    """``problem`` with every source's current or voltage replaced by ``drive[name]``."""
    sources = []
    for s in problem.sources:
        if s.name in drive:
            key = "voltage" if current_is_unknown(s) else "current"
            s = replace(s, **{key: drive[s.name]})
        sources.append(s)
    return replace(problem, sources=tuple(sources))


def find_drive(solve_for, terminals, problem, supplies: dict, time_s: float,
               previous: dict | None = None, iterations: int = 30,
               rtol: float = 1e-9) -> tuple[DriveState, object]:
    """The drive of every source at ``time_s`` and the solution it gives.

    Parameters
    ----------
    solve_for : callable drive -> solution (one back-substitution)
    terminals : callable solution -> {name: (current, voltage)} complex RMS phasors
    supplies : dict name -> Supply (sources not listed: constant drive, always on)
    previous : the drive of the last field solution (a starting guess for power sources)
    """
    drive, targets = {}, {}
    for s in driven_sources(problem):
        supply = supplies.get(s.name, Supply(s.name))
        if not supply.energised(time_s):
            drive[s.name] = 0j
            continue
        base = base_drive(s)
        if supply.power_w is not None:
            targets[s.name] = supply.power_w
            guess = (previous or {}).get(s.name) or base or 1.0
            base = complex(guess)
        drive[s.name] = base
    nominal = dict(drive)
    capped = dict.fromkeys(drive)
    for _ in range(iterations):
        solution = solve_for(drive)
        values = terminals(solution)
        factors = {}
        for name, d in drive.items():
            if d == 0:
                continue
            current, voltage = values[name]
            supply = supplies.get(name, Supply(name))
            if name in targets:
                power = (voltage * current.conjugate()).real
                if power <= 0:
                    raise SolveError(f"source {name!r} draws no power ({power:g} W): it "
                                     "cannot be driven at constant power")
                f = math.sqrt(targets[name] / power)
            else:
                f = abs(nominal[name]) / abs(d)
            which = None
            if supply.max_current_a is not None and abs(current) * f > supply.max_current_a:
                f, which = supply.max_current_a / abs(current), "max_current"
            if supply.max_voltage_v is not None and abs(voltage) * f > supply.max_voltage_v:
                f, which = supply.max_voltage_v / abs(voltage), "max_voltage"
            capped[name] = which
            factors[name] = f
        if all(abs(f - 1) < rtol for f in factors.values()):
            break
        drive = {n: d * factors.get(n, 1.0) for n, d in drive.items()}
    else:
        raise SolveError("the supply did not settle (power and caps of the sources)")
    shortfall = {}
    for name, target in targets.items():
        current, voltage = values[name]
        shortfall[name] = max(0.0, target - (voltage * current.conjugate()).real)
    state = DriveState(drive, capped, shortfall)
    state.terminals = values
    return state, solution
