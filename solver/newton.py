r"""Newton's method for saturable materials, shared by static and transient studies.

Each static solution and each time step solves

.. math::

    F(x) = (a_0 S_0' + a_1 S_1)\,x + N(x) - b = 0

where S0' is S0 without the saturable elements' stiffness (assembled once),
N(x) = int H(B(x)) . curl v over the saturable elements, and (a0, a1) = (1, 0)
for a static solution, (1, 1/h) or (1, 3/(2h)) for a time step (b then holds
the scheme's history terms). The tangent dF/dx = a0 S0' + a1 S1 + dN/dx uses the
differential reluctivity tensor (:mod:`.saturable`), so convergence is
quadratic near the solution (J. E. Dennis and R. B. Schnabel, *Numerical
Methods for Unconstrained Optimization and Nonlinear Equations*, 1983, ch. 5).
Far from it a backtracking line search on |F| (halving the step until |F| falls
by the Armijo fraction 1e-4 of the step, at most ``HALVINGS`` times; ibid.
ch. 6) keeps deep saturation from overshooting.

Converged when both hold (stated tolerances):

- residual: |F(x)| <= ``RTOL`` * max(|b|, |N(x)|, |a0 S0' x|) (2-norms over the
  free unknowns);
- update: |dx| <= ``XTOL`` * |x| (the last full Newton step).

Otherwise, after ``MAX_ITERATIONS`` steps, :class:`SolveError` says what did
not converge.
"""

from __future__ import annotations

import logging
from dataclasses import dataclass, field, replace

import numpy as np
import scipy.sparse as sp

from whorl.solver.errors import SolveError
from whorl.solver.reduction import reduce
from whorl.solver.saturable import base_matrix, saturable_part

log = logging.getLogger(__name__)

RTOL = 1e-8
XTOL = 1e-7
MAX_ITERATIONS = 60
HALVINGS = 12
ARMIJO = 1e-4


@dataclass
class NewtonReport:
    """How one nonlinear solution went: steps, final relative residual, history."""

    iterations: int = 0
    converged: bool = False
    residual: float = float("nan")
    update: float = float("nan")
    history: list = field(default_factory=list)  # relative residual before each step

    def record(self) -> dict:
        """The ``"nonlinear"`` entry of results.json."""
        return {"iterations": int(self.iterations), "converged": bool(self.converged),
                "residual": float(self.residual)}


def newton(residual, tangent, factorize, y0, what: str = "the nonlinear solution"):
    """Solve ``residual(y) = (F, scale) = 0`` from ``y0``; returns ``(y, NewtonReport)``.

    ``tangent(y)`` gives the sparse Jacobian, ``factorize`` a linear-solver factory.
    Raises :class:`SolveError` when the tolerances are not met in ``MAX_ITERATIONS``.
    """
    y = np.array(y0, dtype=float)
    report = NewtonReport()
    r, scale = residual(y)
    norm = np.linalg.norm(r)
    last_update = np.inf
    for k in range(MAX_ITERATIONS + 1):
        rel = norm / scale if scale > 0 else 0.0
        report.history.append(rel)
        report.residual = rel
        # converged: both tolerances met (a start that meets the residual's a hundred
        # times over, as a warm start in a steady state may, needs no step)
        if rel <= RTOL and (last_update <= XTOL or (k == 0 and rel <= RTOL / 100)):
            report.converged = True
            break
        if k == MAX_ITERATIONS:
            break
        dy = np.asarray(factorize(tangent(y))(-r)).real
        report.iterations = k + 1
        step = 1.0
        for _ in range(HALVINGS):
            r_new, scale_new = residual(y + step * dy)
            norm_new = np.linalg.norm(r_new)
            if norm_new <= (1 - ARMIJO * step) * norm:
                break
            step /= 2
        y = y + step * dy
        ynorm = np.linalg.norm(y)
        last_update = step * np.linalg.norm(dy) / ynorm if ynorm > 0 else 0.0
        report.update = last_update
        r, scale, norm = r_new, scale_new, norm_new
    if not report.converged:
        raise SolveError(f"{what} did not converge: Newton's method took {report.iterations} "
                         f"steps and left a relative residual of {report.residual:.2e} "
                         f"(tolerance {RTOL:g}) and a relative update of {report.update:.2e} "
                         f"(tolerance {XTOL:g}); check the B-H curve and the sources, or "
                         "refine the mesh where the field is strongest")
    log.debug("Newton: %d steps, residual history %s", report.iterations,
              ", ".join(f"{h:.1e}" for h in report.history))
    return y, report


class NonlinearSystem:
    """An assembled system with saturable elements, reduced once, ready for Newton.

    ``system.S0`` keeps the saturable elements' stiffness at the initial reluctivity
    (``system.nu``); here it is removed once, and the field-dependent part added back
    at every step.
    """

    def __init__(self, system, factorize):
        self.system = system
        self.saturable = saturable_part(system)
        if self.saturable is None:
            raise SolveError("no material of the problem has a B-H curve")
        self.base = replace(system, S0=base_matrix(system, self.saturable))
        self.red = reduce(self.base)
        self.factorize = factorize
        self._matrices = {}

    def _reduce_vector(self, v):
        red = self.red
        if red.P is not None:
            v = red.P.T @ v
        return v[red.free]

    def _reduce_matrix(self, k):
        red = self.red
        if red.P is not None:
            k = red.P.T @ k @ red.P
        k = sp.csr_matrix(k)
        return k[red.free][:, red.free]

    def linear(self, a0, a1):
        key = (a0, a1)
        if key not in self._matrices:
            if len(self._matrices) > 4:  # a few step sizes at most (restarts)
                self._matrices.clear()
            self._matrices[key] = self.red.matrix(a0, a1)
        return self._matrices[key]

    def solve(self, b, a0=1.0, a1=0.0, x0=None, what="the static field"):
        """Solve (a0 S0' + a1 S1) x + N(x) = b (full numbering, real); returns (x, report).

        ``x0`` (full numbering) is the starting point (warm start); default zero.
        """
        red = self.red
        red.fixed_values = red.fixed_values.real.copy()
        lin = self.linear(a0, a1)
        rhs = red.rhs(np.asarray(b).real, a0, a1)
        rhs_norm = np.linalg.norm(rhs)
        sat = self.saturable

        def residual(y):
            x = red.expand(y)
            n = self._reduce_vector(sat.residual(x))
            ly = lin @ y
            return ly + n - rhs, max(rhs_norm, np.linalg.norm(n), np.linalg.norm(ly))

        def tangent(y):
            return (lin + self._reduce_matrix(sat.tangent(red.expand(y)))).tocsc()

        y0 = np.zeros(red.free.size) if x0 is None else red.restrict(np.asarray(x0).real)
        y, report = newton(residual, tangent, self.factorize, y0, what)
        return red.expand(y), report

    def state_system(self, x):
        """A copy of the system for postprocessing the state ``x``: the secant reluctivity
        per element (``nu``, ``nu_q``) and the stored energy density int H dB at the
        quadrature points (``energy_q``) from the curves."""
        sat = self.saturable
        nu = self.secant_reluctivity(x)
        nu_q = np.array(self.system.nu_q, dtype=float, copy=True)
        b = sat.flux_density(x)
        mag, nu_sat, _ = sat.material(b)
        nu_q[sat.elements] = nu_sat
        energy = np.empty_like(mag)
        for curve, pos in sat.groups:
            energy[pos] = curve.energy_density(mag[pos])
        return replace(self.system, nu=nu, nu_q=nu_q,
                       energy_q=(sat.elements, energy))

    def secant_reluctivity(self, x):
        """Per element reluctivity nu = H/B at the element's RMS |B| (m/H), over every
        element: ``system.nu`` with the saturable elements replaced."""
        nu = np.array(self.system.nu, dtype=float)
        b = self.saturable.element_flux_density(x)
        for curve, pos in self.saturable.groups:
            nu[self.saturable.elements[pos]] = curve.reluctivity(b[pos])
        return nu
