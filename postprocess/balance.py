r"""Power balance: the impedance two ways.

Complex power delivered at the terminals, sum over sources of V I*, must equal
the complex power the fields take (Poynting's theorem for time-harmonic RMS
phasors): P + j 2 omega W_m, with P the eddy and winding losses and W_m the
time-average stored magnetic energy. In a Galerkin solution the identity holds
to round-off when both sides use the same quadrature, so a mismatch above
``TOLERANCE`` means an error (a missed source of power, such as a side with an
imposed potential, is reported as not applicable instead).

Moving conductors add the mechanical power that keeps them moving (see
:mod:`whorl.postprocess.regions`): terminal power + mechanical power = losses, and
the reactive parts as before. The plain Galerkin solution keeps the identity to
round-off; where streamline upwinding acts (:mod:`whorl.solver.motion`) the test
functions differ from the trial functions in the moving elements and the balance
holds to the discretisation error, checked against ``STABILISED_TOLERANCE``.
"""

from __future__ import annotations

import numpy as np

from whorl.solver.sources import AppliedField, Stranded

TOLERANCE = 1e-6
STABILISED_TOLERANCE = 1e-2


def power_balance(solution, regions, sources) -> dict:
    """Both sides of the balance, their relative mismatch, whether it applies and the
    tolerance it is held to; with moving conductors ``terminals_va`` includes the
    mechanical power (also given alone as ``mechanical_w``).

    ``regions`` and ``sources`` are the results of :func:`region_totals` and
    :func:`source_results` for the same solution.
    """
    problem = solution.problem
    winding = sum(s.resistance * abs(solution.source_current(s)) ** 2
                  for s in problem.sources if isinstance(s, Stranded))
    loss = sum(t.loss_w for t in regions.values()) + winding
    energy = sum(t.magnetic_energy_j for t in regions.values())
    fields = complex(loss, 2 * solution.omega * energy)
    terminals = complex(sum(complex(s.power_w, s.reactive_power_var) for s in sources.values()))
    mechanical = sum(t.mechanical_power_w or 0.0 for t in regions.values())
    motion = getattr(solution.system, "motion", None)
    stabilised = bool(motion is not None and motion.summary["stabilised_elements"])
    terminals += mechanical
    applies = (not any(isinstance(s, AppliedField) for s in problem.sources)
               and not np.any(np.abs(solution.system.fixed_values) > 0))
    scale = max(abs(fields), abs(terminals), 1e-300)
    out = {
        "terminals_va": [terminals.real, terminals.imag],
        "fields_va": [fields.real, fields.imag],
        "winding_loss_w": float(winding),
        "relative_mismatch": float(abs(fields - terminals) / scale),
        "applies": bool(applies),
        "tolerance": STABILISED_TOLERANCE if stabilised else TOLERANCE,
    }
    if motion is not None:
        out["mechanical_w"] = float(mechanical)
        out["stabilised"] = stabilised
    return out
