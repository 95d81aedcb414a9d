r"""Harmonic studies of saturable materials: an effective permeability per element.

A time-harmonic model is linear, so a saturable material gets, in every element,
the permeability that a sinusoidal field of that element's amplitude sees. The
rule used here is the fundamental-harmonic (describing-function) effective
permeability: for H(t) = H_m sin(wt) the flux density B(H(t)) is not sinusoidal;
its fundamental has the amplitude

.. math::

    B_1(H_m) = \frac{4}{\pi}\int_0^{\pi/2} B(H_m\sin\theta)\,\sin\theta\,d\theta,
    \qquad \mu_\mathrm{eff}(H_m) = B_1(H_m) / H_m

(G. Paoli, O. Biro and G. Buchgraber, "Complex representation in nonlinear time
harmonic eddy current problems", IEEE Trans. Magn. 34(5), 1998, compare this and
other definitions of an effective permeability; the loss it gives differs from a
time-stepped solution by some per cent; citation from memory). Each element's
amplitude is sqrt(2) times the RMS of |B| over the element (exact for a field of
one direction; an elliptically polarised field is taken by its RMS magnitude).
The element's reluctivity is H_m / B_1 at the H_m whose B_1 equals that amplitude.

Limits: harmonics of the field are dropped (only the fundamental is kept), and
hysteresis is ignored (the curve is single-valued): the hysteresis loss of steel
is not in the result.

The magnetisation multiplier m of an element (``Problem.element_magnetisation``)
scales the magnetisation: B_1 = mu0 H_m + m (B_1,curve - mu0 H_m).

Iteration: solve the linear harmonic problem with the current reluctivities nu_k;
in each element take the reluctivity the curve gives for its flux density
amplitude B_m and the one it gives for its field strength amplitude H_m = nu_k B_m,
and aim at their geometric mean (the first is exact where the flux is imposed,
the second where the current imposes H, as a coil's current does at a surface;
the mean converges in both; a choice of this project). Relax: a step ``ALPHA`` in
log nu, halved when the change grows and raised by half again (up to ``ALPHA``)
when it falls, at most a factor of 10 per element and iteration. Converged when
the energy-weighted relative change of the reluctivity (:meth:`EffectiveSystem.
weighted_change`) is at most ``NU_TOL``; at most ``MAX_ITERATIONS`` solutions, else a
:class:`SolveError`. Only the saturable elements' stiffness is re-assembled. Harmonic
and heating solutions accelerate the iteration (Anderson; see :func:`iterate`): on the
shaft-end demo 16 solutions instead of 20, with the same stopping rule.
"""

from __future__ import annotations

import logging
from dataclasses import replace

import numpy as np
import scipy.sparse as sp

from whorl.solver.constants import MU0
from whorl.solver.errors import SolveError
from whorl.solver.reduction import reduce
from whorl.solver.reweighted import ReweightedMatrix
from whorl.solver.saturable import base_matrix, saturable_part
from whorl.solver.solution import Solution

log = logging.getLogger(__name__)

NU_TOL = 1e-3
MAX_ITERATIONS = 60
SHRINK = 0.5
ALPHA = 0.6
GROW = 1.5
ANDERSON_DEPTH = 4  # earlier iterates combined by the accelerated iteration
ANDERSON_RESET = 4.0  # its history is dropped when the change exceeds this times the least
STEP_LIMIT = np.log(10.0)  # nu changes by at most this factor (as a log) in one iteration
_GAUSS = np.polynomial.legendre.leggauss(48)


class EffectiveCurve:
    """The fundamental-harmonic effective curve B_1(H_m) of one B-H curve, tabulated."""

    def __init__(self, curve, points: int = 400):
        top = curve.h[-1] * 1e3
        self.hm = np.geomspace(max(curve.h[1], 1e-6) * 1e-4, top, points)
        t, w = _GAUSS
        theta = (t + 1) * np.pi / 4  # Gauss-Legendre on [0, pi/2]
        weights = w * np.pi / 4
        b = curve.flux_density(np.outer(self.hm, np.sin(theta)))
        b1 = 4 / np.pi * (b * np.sin(theta) * weights).sum(axis=1)
        self.m1 = b1 - MU0 * self.hm  # the fundamental of the magnetisation (T)
        self.log_hm = np.log(self.hm)

    def _segment(self, log_h):
        """Magnetisation and its slope d(mu0 M)/d(log H_m) at ``log_h`` (the table is
        linear in log H_m between its points; held at its last value above it)."""
        i = np.clip(np.searchsorted(self.log_hm, log_h) - 1, 0, self.log_hm.size - 2)
        slope = (self.m1[i + 1] - self.m1[i]) / (self.log_hm[i + 1] - self.log_hm[i])
        above = log_h >= self.log_hm[-1]
        slope = np.where(above, 0.0, slope)
        value = np.where(above, self.m1[-1],
                         self.m1[i] + slope * (log_h - self.log_hm[i]))
        return value, slope

    def magnetisation(self, hm):
        """Fundamental of mu0 M for H amplitude ``hm``; held at its ends (linear below,
        saturated above the table)."""
        hm = np.asarray(hm, float)
        low = hm < self.hm[0]
        out = np.interp(np.log(np.maximum(hm, self.hm[0])), self.log_hm, self.m1)
        return np.where(low, self.m1[0] * hm / self.hm[0], out)

    def reluctivity_at_field(self, h_amplitude, m=None):
        """Effective reluctivity H_m / B_1 (m/H) for H amplitudes ``h_amplitude`` (A/m)."""
        h = np.maximum(np.asarray(h_amplitude, float), 1e-12)
        m = np.ones_like(h) if m is None else np.asarray(m, float)
        return h / (MU0 * h + m * self.magnetisation(h))

    def field_strength(self, b_amplitude, m=None):
        """The H amplitude H_m (A/m) whose fundamental B_1 = mu0 H_m + m mu0 M_1(H_m) is
        ``b_amplitude`` (T), with magnetisation multipliers ``m`` (default 1).

        B_1 increases with H_m, so the root is unique. Below the table B_1 is linear,
        (mu0 + m M_1(h_0)/h_0) H_m: a closed form (so also where m = 0). Above its first
        point: Newton's method on s = log H_m, where the table is linear in s piece by
        piece, kept inside a bracket that every step narrows (a bisection step when
        Newton's would leave it), from the root for m = 1 read off the table; converged
        to 1e-13 in s. About three steps where m = 1 (it replaced a bisection of 48
        steps: 8 ms instead of 60 ms for 2e4 elements).
        """
        bm = np.maximum(np.asarray(b_amplitude, float), 1e-300)
        m = np.ones_like(bm) if m is None else np.broadcast_to(np.asarray(m, float), bm.shape)
        low_slope = MU0 + m * self.m1[0] / self.hm[0]
        b_first = low_slope * self.hm[0]
        h = bm / low_slope  # also exact where m = 0 (vacuum)
        todo = np.flatnonzero((bm > b_first) & (m > 0))
        if todo.size:
            h[todo] = np.exp(self._log_field(bm[todo], m[todo]))
        return h

    def _log_field(self, bm, m):
        lo = np.full(bm.shape, self.log_hm[0])
        hi = np.log(bm / MU0)  # B_1 >= mu0 H_m, so H_m <= B_m / mu0
        # start: the root with m = 1 from the table (B_1 tabulated on the same points)
        b_table = MU0 * self.hm + self.m1
        s = np.clip(np.interp(np.log(bm), np.log(b_table), self.log_hm), lo, hi)
        active = np.arange(bm.size)
        for _ in range(100):
            value, slope = self._segment(s[active])
            h = np.exp(s[active])
            f = MU0 * h + m[active] * value - bm[active]
            above = f > 0
            hi[active] = np.where(above, s[active], hi[active])
            lo[active] = np.where(above, lo[active], s[active])
            fprime = MU0 * h + m[active] * slope
            step = s[active] - f / fprime
            inside = (step >= lo[active]) & (step <= hi[active])  # s itself is an end
            new = np.where(inside, step, 0.5 * (lo[active] + hi[active]))
            done = (np.abs(new - s[active]) <= 1e-13) | (hi[active] - lo[active] <= 1e-13)
            s[active] = new
            active = active[~done]
            if not active.size:
                break
        return s

    def reluctivity(self, b_amplitude, m=None):
        """Effective reluctivity H_m / B_1 (m/H) for fundamental amplitudes ``b_amplitude``
        (T), with magnetisation multipliers ``m`` (default 1)."""
        bm = np.maximum(np.asarray(b_amplitude, float), 1e-12)
        return self.field_strength(bm, m) / bm


_CURVES: dict = {}


def effective_curve(curve) -> EffectiveCurve:
    """The (cached) :class:`EffectiveCurve` of ``curve``."""
    key = id(curve)
    if key not in _CURVES or _CURVES[key][0] is not curve:
        _CURVES[key] = (curve, EffectiveCurve(curve))
    return _CURVES[key][1]


def effective_reluctivity(sat, x, nu_now, rms=None):
    """Per element of the saturable part ``sat``: the effective reluctivity for the
    amplitude of ``x``, taken from its flux density B_m and from its field strength
    H_m = nu_now B_m; returns both (m/H). ``rms``: the elements' RMS flux density of ``x``
    when known (``sat.element_flux_density(x)``)."""
    b = np.sqrt(2.0) * (sat.element_flux_density(x) if rms is None else rms)
    from_b, from_h = np.empty_like(b), np.empty_like(b)
    for curve, pos in sat.curves:
        m = None if sat.multiplier is None else sat.multiplier[pos]
        eff = effective_curve(curve)
        from_b[pos] = eff.reluctivity(b[pos], m)
        from_h[pos] = eff.reluctivity_at_field(nu_now[pos] * b[pos], m)
    return from_b, from_h


def weighted_change(sat, x, nu, new, rms=None):
    """The energy-weighted relative change of the reluctivity:
    sum |new - nu| B^2 dV / sum nu B^2 dV over the saturable elements (B: the
    element's RMS flux density, ``rms`` when known, dV its volume per radian or metre)."""
    rms = sat.element_flux_density(x) if rms is None else rms
    weight = rms ** 2 * sat.volumes()
    total = float((nu * weight).sum())
    return float((np.abs(new - nu) * weight).sum() / total) if total > 0 else 0.0


def start_reluctivity(sat):
    """A first guess of the reluctivities of the saturable part ``sat``: the effective
    value at 1 T (with its magnetisation multipliers)."""
    nu = np.empty(sat.elements.size)
    for curve, pos in sat.curves:
        m = None if sat.multiplier is None else sat.multiplier[pos]
        nu[pos] = effective_curve(curve).reluctivity(np.ones(pos.size), m)
    return nu


def relaxation(alpha: float, change: float, before: float) -> float:
    """The next relaxation of the iteration's step in log nu: ``SHRINK`` times ``alpha``
    (not below 0.05) when the change grew from ``before``, else ``GROW`` times it (at
    most ``ALPHA``)."""
    return max(alpha * SHRINK, 0.05) if change > before else min(alpha * GROW, ALPHA)


def iterate(linear, sat, nu, what: str, tolerance: float = NU_TOL,
            max_iterations: int = MAX_ITERATIONS, accelerate: bool = False,
            alpha: float = ALPHA, memory: list | None = None, keep: dict | None = None):
    """The relaxed fixed-point iteration of the module docstring.

    Parameters
    ----------
    linear : callable nu -> x
        The harmonic solution (full numbering) with reluctivities ``nu`` (m/H) in the
        saturable elements; it may do more (find a supply's drive) as long as it is a
        linear solution for that ``nu``.
    sat : Saturable
        The saturable part (curves and magnetisation multipliers).
    nu : ndarray
        Reluctivities to start from (per element of ``sat``).
    what : str
        Named in the log and in the error when it does not converge.
    accelerate : bool
        Anderson acceleration (depth ``ANDERSON_DEPTH``) of the fixed-point map
        log nu -> log nu_new (D. G. Anderson, J. ACM 12(4), 1965; H. F. Walker and P. Ni,
        SIAM J. Numer. Anal. 49(4), 2011): the step is the combination of the last
        steps whose residuals (log nu_new - log nu, weighted by each element's share
        of B^2 dV) combine to the smallest, mixed with ``ALPHA``; when the change grows,
        the history is dropped and a plain relaxed step taken. The stopping rule is the
        same (the change of an actual solution), so the result is the same to the
        tolerance; only the number of solutions differs.
    keep : dict, optional
        Receives ``"rms"``: the elements' RMS flux density of the returned solution (T),
        for a caller that starts its next iteration from that solution.

    Returns
    -------
    (x, nu, report): the last solution, the reluctivities it belongs to, and a record
    (iterations, converged, residual, method).
    """
    change_before = np.inf
    history = []
    pairs = [] if memory is None else memory  # Anderson: (change of log nu, of residual)
    weight, last = None, None
    for _ in range(max_iterations):
        x = linear(nu)
        rms = sat.element_flux_density(x)
        from_b, from_h = effective_reluctivity(sat, x, nu, rms)
        new = np.sqrt(from_b * from_h)
        change = weighted_change(sat, x, nu, new, rms)
        history.append(change)
        if change <= tolerance:
            break  # x belongs to nu (kept, so that the solution is consistent)
        alpha = relaxation(alpha, change, change_before)
        change_before = change
        residual = np.log(new / nu)
        step = alpha * residual
        if accelerate:
            if weight is None:  # each element's share of B^2 dV, fixed for the iteration
                weight = np.sqrt(rms ** 2 * sat.volumes())
            if change > ANDERSON_RESET * min(history):
                pairs.clear()
            elif last is not None:
                pairs.append((np.log(nu) - last[0], residual - last[1]))
                del pairs[:-ANDERSON_DEPTH]
            last = (np.log(nu), residual)
            if pairs:
                d_u = np.array([p[0] for p in pairs]).T
                d_f = np.array([p[1] for p in pairs]).T
                gamma = np.linalg.lstsq(d_f * weight[:, None], residual * weight,
                                        rcond=None)[0]
                step = step - (d_u + alpha * d_f) @ gamma
        step = np.clip(step, -STEP_LIMIT, STEP_LIMIT)
        nu = nu * np.exp(step)
    else:
        raise SolveError(f"the effective permeability at {what} did not converge: after "
                         f"{max_iterations} harmonic solutions the energy-weighted relative "
                         f"change of the reluctivity was {change:.2e} (tolerance "
                         f"{tolerance:g})")
    if keep is not None:
        keep["rms"] = rms
    log.debug("effective permeability at %s: %d solutions, changes %s", what, len(history),
              ", ".join(f"{h:.1e}" for h in history))
    return x, nu, {"iterations": len(history), "converged": True, "residual": change,
                   "method": "effective permeability (fundamental harmonic)"}


class EffectiveSystem:
    """An assembled system with saturable elements, for harmonic effective-permeability
    solutions (one per frequency, each its own nonlinear problem)."""

    def __init__(self, system, factorize):
        self.system = system
        self.saturable = saturable_part(system)
        if self.saturable is None:
            raise SolveError("no material of the problem has a B-H curve")
        self.base = replace(system, S0=base_matrix(system, self.saturable))
        self.red = reduce(self.base)
        self.factorize = factorize
        # where the fixed unknowns are zero, iterates re-weight one matrix (.reweighted)
        self.reweighted = (None if np.any(self.red.fixed_values)
                           else ReweightedMatrix(self.red, self.saturable))
        self._omega = None

    def effective_reluctivity(self, x, nu_now):
        """See :func:`effective_reluctivity`."""
        return effective_reluctivity(self.saturable, x, nu_now)

    def weighted_change(self, x, nu, new):
        """See :func:`weighted_change`."""
        return weighted_change(self.saturable, x, nu, new)

    def start(self):
        """See :func:`start_reluctivity`."""
        return start_reluctivity(self.saturable)

    def _blocks(self, k):
        red = self.red
        if red.P is not None:
            k = red.P.T @ k @ red.P
        k = sp.csr_matrix(k)
        rows = k[red.free]
        return rows[:, red.free], rows[:, red.fixed]

    def solve_linear(self, nu_sat, omega, b):
        """The harmonic solution with reluctivity ``nu_sat`` in the saturable elements."""
        red = self.red
        if self.reweighted is not None:
            if self._omega != omega:  # the base: no saturable stiffness (nu = 0 there)
                self.reweighted.rebase(red.matrix(1.0, 1j * omega), np.zeros(nu_sat.size))
                self._omega = omega
            matrix, rhs = self.reweighted.matrix(nu_sat), red.rhs(b, 1.0, 1j * omega)
        else:
            k_ff, k_fd = self._blocks(self.saturable.stiffness(nu_sat))
            matrix = (red.matrix(1.0, 1j * omega) + k_ff).tocsc()
            rhs = red.rhs(b, 1.0, 1j * omega) - k_fd @ red.fixed_values
        x = red.expand(self.factorize(matrix)(rhs))
        if not np.all(np.isfinite(x)):
            raise SolveError("the solution is not finite: the system is singular")
        return x

    def solve(self, frequency_hz: float, b=None, start=None):
        """Iterate to the effective permeabilities at ``frequency_hz``; returns a
        :class:`Solution` whose system carries them (``nu``, ``nu_q``, ``S0``) and whose
        ``nonlinear`` says how the iteration went.

        ``b`` is the right-hand side (default: the sources' phasors); ``start`` the
        saturable elements' reluctivities to start from (default :meth:`start`).
        """
        omega = 2 * np.pi * float(frequency_hz)
        b = self.system.rhs(omega) if b is None else b
        nu = self.start() if start is None else np.array(start, float)
        x, nu, report = iterate(lambda nu_k: self.solve_linear(nu_k, omega, b),
                                self.saturable, nu, f"{frequency_hz:g} Hz", accelerate=True)
        return Solution(self.state_system(nu), float(frequency_hz), x, nonlinear=report)

    def state_system(self, nu_sat):
        """A copy of the system carrying the effective reluctivities ``nu_sat``."""
        sat = self.saturable
        return with_reluctivity(
            self.system, sat, nu_sat,
            lambda nu: (self.base.S0 + sat.stiffness(nu[sat.elements])).tocsr())


def with_reluctivity(system, sat, nu_sat, stiffness):
    """A copy of ``system`` whose saturable elements (of ``sat``) carry the reluctivities
    ``nu_sat`` (m/H, one per element, constant over it), with ``S0 = stiffness(nu)`` for the
    resulting reluctivity ``nu`` of every element."""
    nu = np.array(system.nu, float)
    nu[sat.elements] = nu_sat
    nu_q = np.array(system.nu_q, float, copy=True)
    nu_q[sat.elements] = nu_sat[:, None]
    return replace(system, nu=nu, nu_q=nu_q, S0=stiffness(nu))
