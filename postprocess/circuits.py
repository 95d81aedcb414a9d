"""Terminal quantities of every source: voltage, impedance, power.

Stranded winding: flux linkage Psi = kappa f_s^T A (turns/area times the
integral of A, times 2 pi r or depth, signed for return sides), terminal
voltage V = j omega Psi + R I. Massive source: V = kappa sum_b sign_b u_b
over its branches. Impedance Z = V / I; resistance Re Z; inductance Im Z /
omega (at 0 Hz, Psi / I); complex power S = V I* (RMS, no factor 1/2).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from whorl.solver.sources import Massive, Stranded


@dataclass
class SourceResult:
    name: str
    current_a: complex
    voltage_v: complex
    flux_linkage_wb: complex
    impedance_ohm: complex
    resistance_ohm: float
    inductance_h: float
    power_w: float
    reactive_power_var: float


def flux_linkage(solution, source, a=None) -> complex:
    """Flux linkage of a source (Wb-turns); for massive sources the DC-weighted mean.
    ``a`` replaces the solution's A (pass dA/dt for the rate of flux linkage)."""
    system = solution.system
    a = solution.a if a is None else a
    if isinstance(source, Stranded):
        return complex(system.kappa * system.stranded_load[source.name] @ a)
    # Massive: (1/I) int A J_dc dV with the DC current distribution of each branch.
    psi = 0j
    for i, br in enumerate(system.branches):
        if br.source == source.name:
            c, g = system.coupling[:, i], system.conductance[i]
            psi += br.sign * system.kappa * (c @ a) / g
    return psi


def terminal_voltage(solution, source) -> complex:
    system = solution.system
    current = solution.source_current(source)
    if isinstance(source, Stranded):
        return flux_linkage(solution, source, solution.a_rate) + source.resistance * current
    u = solution.branch_u
    return complex(sum(br.sign * system.kappa * u[i]
                       for i, br in enumerate(system.branches) if br.source == source.name)
                   + source.resistance * current)


def source_results(solution) -> dict[str, SourceResult]:
    """Terminal quantities of every stranded and massive source (for a reduced solution
    from the projected rows, see :mod:`.projected`)."""
    from whorl.postprocess.projected import is_reduced, terminal_values

    out = {}
    for s in solution.problem.sources:
        if not isinstance(s, Stranded | Massive):
            continue
        if is_reduced(solution):
            current, voltage, psi = terminal_values(solution, s)
        else:
            current = solution.source_current(s)
            voltage = terminal_voltage(solution, s)
            psi = flux_linkage(solution, s)
        z = voltage / current if current != 0 else complex(np.nan, np.nan)
        if solution.omega > 0:
            inductance = z.imag / solution.omega
        else:
            inductance = (psi / current).real if current != 0 else float("nan")
        power = voltage * np.conj(current)
        out[s.name] = SourceResult(s.name, current, voltage, psi, z, float(z.real),
                                   float(inductance), float(power.real), float(power.imag))
    return out
