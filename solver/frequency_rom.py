r"""A frequency response from a few factorisations: rational Krylov projection.

The harmonic system (S0 + s S1) x = b0 + s b1, s = j omega, with real S0 and
S1 assembled once, is projected onto a real orthonormal basis V built from
full solves at a few *expansion frequencies* s_k and, at each, the first
moments of the solution about s_k: the rational Krylov space

    span{ x_k, (A_k^{-1} S1) x_k, (A_k^{-1} S1)^2 x_k, ... },   A_k = S0 + s_k S1,

of A. Ruhe, "Rational Krylov sequence methods for eigenvalue computation",
Linear Algebra Appl. 58 (1984) 391-405, and its use for frequency sweeps as
multipoint moment matching (E. J. Grimme, "Krylov projection methods for model
reduction", PhD thesis, University of Illinois, 1997). Real and imaginary
parts of every vector enter the basis apart, so the projected matrices stay
real and the moments match at s_k and its conjugate. The projected system
(V^T S0 V + s V^T S1 V) y = V^T b(s) is solved at every requested frequency
(Galerkin: the power balance x^H A x = x^H b holds exactly for x = V y).

Expansion frequencies are picked greedily, in the manner of the reduced-basis
method (Hesthaven, Rozza, Stamm, "Certified Reduced Basis Methods for
Parametrized Partial Differential Equations", Springer 2016, ch. 3): the first
in the middle of the range (on a log scale), then one at the requested
frequency with the largest error estimate, until every estimate is below the
tolerance.

Error estimate. The error of the reduced solution is e = A(s)^{-1} r(s) with
the full residual r(s) = b(s) - A(s) V y. The factorisation of a neighbouring
expansion frequency gives the *preconditioned residual*
e_k = A_k^{-1} r(s) = A_k^{-1} A(s) e, for free in the basis of V and
W_k = A_k^{-1} S1 V:

    e_k = V (c_k + (s - s_k) d_k - y) - (s - s_k) W_k y,

with x_k = V c_k and A_k^{-1} b1 = V d_k. For the eddy-current pencil
(K symmetric positive definite, M symmetric positive semi-definite) the
eigenvalues of A(s)^{-1} A_k are (lambda + j omega_k) / (lambda + j omega),
lambda >= 0, so |e| <= max(1, omega_k / omega) |e_k| in the energy norm.

Offline/online split of the estimate (Hesthaven, Rozza and Stamm, the chapter on a
posteriori error estimation; cited from memory): the
residual r(s) = b0 + s b1 - (S0 + s S1) V y lies in the span of b0, b1, S0 V and S1 V,
so e_k lies in that of V and W_k: once W_k is solved for (one solve per basis vector,
kept as the basis grows), the quantities below are small quadratic forms in y whose
Gram matrices are formed once per basis. Every estimate goes through one *fixed*
factorisation, the first expansion frequency's (the middle of the range), so W is
solved for once per basis vector in all, not once per basis vector and expansion
frequency. Where that bound, pessimistic by up to the ratio of the frequencies, is
above the tolerance, the bounds through the two neighbouring expansion frequencies are
taken too (their W made or extended then) and the smallest counts, but only when they
could bring every such frequency below the tolerance (the neighbour's bound is tighter by
at most max(f_c / f, f / f_c)); otherwise a full solve is added anyway.
``SweepReport.estimate_solves`` counts the solves the estimate made.

W_k is split as V R12 + W_perp (R12 = V^T W_k), so that e_k = V (c_k + (s - s_k)
d_k - y - (s - s_k) R12 y) - (s - s_k) W_perp y (+ the parts of x_k and A_k^{-1} b1 the
basis dropped as below its threshold) is formed from small parts whose Gram sums do not
cancel: its region losses L_r(e_k) agree with those of e_k = A_k^{-1} r formed in full
to four digits at L_r(e_k) / L_r(x) ~ 1e-14 (measured on the voltage-fed heater of the
tests; without the dropped parts they were off by up to 30 times there). The estimate's
floor is set by the loss bound below instead: 2 sqrt(L_r(e) / L_r(x)) is about 1e-6 when
|e_k| / |x| is about 1e-11 (Cauchy-Schwarz allows e to be aligned with x), so the
true errors of a certified sweep are usually far below the tolerance, and a small model
asked for a tolerance near that floor makes more full solves than it needs.

From e_k it bounds the relative error of every quantity the tolerance speaks of:

- a source's impedance: the relative error of its current (voltage-driven)
  or its voltage (current-driven), both linear in x; the copper loss R |I|^2 of a
  voltage-driven winding: 2 eps + eps^2 for a relative current error eps;
- a region's loss L_r(x) (a Hermitian form in x): by Cauchy-Schwarz
  |L_r(x + e) - L_r(x)| / L_r(x) <= 2 sqrt(L_r(e) / L_r(x)) + L_r(e) / L_r(x).

Regions whose loss is below ``LOSS_FLOOR`` times the total are left out.
Everything is evaluated with small Gram matrices, so certifying a frequency
costs O(m^2) once the basis (size m) is there.
"""

from __future__ import annotations

import logging
import time
from dataclasses import dataclass, field

import numpy as np
from skfem import asm
from threadpoolctl import threadpool_limits

from whorl.solver import linalg
from whorl.solver.errors import SolveError
from whorl.solver.reduction import reduce
from whorl.solver.solution import ReducedSolution, ReducedSpace, Solution
from whorl.solver.sources import Massive, Stranded, current_is_unknown
from whorl.solver.symmetrise import circuit_scaling

log = logging.getLogger(__name__)

TOLERANCE = 1e-6      # default relative tolerance on impedances and region losses
AUTO_FROM = 8         # "auto": reduce from this many distinct frequencies on
MOMENTS = 6           # complex Krylov vectors per expansion frequency
LOSS_FLOOR = 1e-9     # regions with less than this share of the total loss are not certified
MAX_POINTS = 24       # expansion frequencies at most; then the rest is solved in full
REFINE = True         # neighbours' bounds where the fixed factorisation's is above tolerance


@dataclass
class SweepReport:
    """What the reduced sweep did: JSON-ready."""

    tolerance: float
    expansion_hz: list = field(default_factory=list)
    basis_size: int = 0
    estimates: dict = field(default_factory=dict)   # frequency -> estimated relative error
    full_hz: list = field(default_factory=list)     # frequencies solved in full
    unknowns: int = 0
    estimate_solves: int = 0   # solves (right-hand sides) made for the error estimate

    def record(self, frequencies) -> dict:
        return {
            "method": "rational Krylov (greedy expansion frequencies)",
            "tolerance": self.tolerance,
            "basis_size": self.basis_size,
            "expansion_frequencies_hz": sorted(self.expansion_hz),
            "full_solve_frequencies_hz": sorted(set(self.full_hz)),
            "frequencies_hz": [float(f) for f in frequencies],
            "estimated_error": [self.estimates.get(float(f), 0.0) for f in frequencies],
            "estimate_solves": self.estimate_solves,
        }


def fallback_reason(problem, backend_name: str) -> str | None:
    """Why ``problem`` cannot be reduced (None when it can): nonlinear materials,
    motion, or a backend without a reusable factorisation."""
    if any(getattr(m, "bh_curve", None) is not None for m in problem.materials.values()):
        return "a material has a B-H curve (nonlinear)"
    if getattr(problem, "motions", None):
        return "the model has moving conductors"
    if backend_name == "iterative":
        return "the iterative backend keeps no factorisation to reuse"
    return None


def wanted(mode: str, frequencies) -> bool:
    """Whether the reduced sweep is asked for: ``mode`` "on", "off" or "auto"."""
    distinct = {float(f) for f in frequencies if f > 0}
    if mode == "off" or not distinct:
        return False
    return mode == "on" or len(distinct) >= AUTO_FROM


class _Basis:
    """A real orthonormal basis (columns), grown by Gram-Schmidt applied twice."""

    def __init__(self, n):
        self._store = np.zeros((n, 16), order="F")  # room to grow without copying
        self.m = 0

    @property
    def cols(self) -> np.ndarray:
        return self._store[:, : self.m]

    def add(self, v, drop=1e-10) -> int:
        """Add the real and imaginary parts of ``v``; returns how many columns were kept."""
        kept = 0
        for part in (np.real(v), np.imag(v)):
            w = np.array(part, dtype=float)
            norm0 = np.linalg.norm(w)
            if norm0 == 0:
                continue
            for _ in range(2):
                w -= self.cols @ (self.cols.T @ w)
            norm = np.linalg.norm(w)
            if norm > drop * norm0:
                if self.m == self._store.shape[1]:
                    self._store = np.asfortranarray(
                        np.hstack([self._store, np.zeros_like(self._store)]))
                self._store[:, self.m] = w / norm
                self.m += 1
                kept += 1
        return kept


class _Forms:
    """Linear and quadratic quantities of the full vector x the estimate looks at.

    Loss of region r (W): L_r(x) = kappa [omega^2 a^H P_r a + g_r |u|^2
    + 2 Re(-j omega conj(u) c_r^T a)], u the voltage unknown of r's branch (none:
    u = 0). Source functionals: the current (driven) or the omega-dependent part
    of the voltage (current-driven). Everything is kept on the few unknowns these
    quantities touch (``rows``, full numbering), so projections cost little.
    """

    def __init__(self, system):
        problem = system.problem
        nf, nb = system.n_field, len(system.branches)
        branch_of = {r: i for i, br in enumerate(system.branches) for r in br.regions}
        raw_loss, raw_src, used = [], [], []
        for name in problem.mesh.regions:
            if not np.any(system.sigma[problem.mesh.elements(name)] > 0):
                continue
            rb = system.region_basis(name)
            sig = system.sigma[rb.tind][:, None] * np.ones((1, rb.X.shape[1]))
            P = asm(system.form.conductor_mass, rb, sigma=sig).tocsr()
            rows = np.unique(P.indices)
            c = np.asarray(asm(system.form.voltage_coupling, rb, sigma=sig))[rows]
            g = float(asm(system.form.voltage_conductance, rb, sigma=sig))
            b = branch_of.get(name)
            raw_loss.append((name, rows, P[rows][:, rows], c, g, None if b is None else nf + b))
            used += [rows] + ([np.array([nf + b])] if b is not None else [])
        for s in problem.sources:
            if not isinstance(s, Massive | Stranded):
                continue
            v = np.zeros(system.size)
            if current_is_unknown(s):
                v[nf + nb + system.driven.index(s)] = 1.0
                kind, scaled = "current", False
            elif isinstance(s, Stranded):
                v[:nf] = system.kappa * system.stranded_load[s.name]
                kind, scaled = "voltage", True
            else:
                for i, br in enumerate(system.branches):
                    if br.source == s.name:
                        v[nf + i] = br.sign * system.kappa
                kind, scaled = "voltage", False
            idx = np.flatnonzero(v)
            raw_src.append((s.name, kind, idx, v[idx], scaled))
            used.append(idx)
        self.rows = np.unique(np.concatenate(used)) if used else np.zeros(0, dtype=np.int64)
        local = lambda idx: np.searchsorted(self.rows, idx)  # noqa: E731
        self.loss = [(name, local(rows), P, c, g, None if u is None else int(local(u)))
                     for name, rows, P, c, g, u in raw_loss]
        self.sources = [(name, kind, local(idx), vals, scaled)
                        for name, kind, idx, vals, scaled in raw_src]
        self.fixed_voltage = {s.name: s.resistance * complex(s.current) for s in problem.sources
                              if isinstance(s, Massive | Stranded) and not current_is_unknown(s)}

    def grams(self, Z):
        """Projections of every form on the columns of ``Z`` (rows: ``self.rows``)."""
        loss = []
        for name, rows, P, c, g, u in self.loss:
            Zr = Z[rows]
            loss.append((name, Zr.conj().T @ (P @ Zr), c @ Zr, g, None if u is None else Z[u]))
        src = [(name, kind, vals @ Z[idx], scaled) for name, kind, idx, vals, scaled in
               self.sources]
        return loss, src


def _rc(real, z):
    """``real @ z`` for a real matrix and a complex vector or matrix in one pass over
    ``real`` (numpy would otherwise make a complex copy of it)."""
    z = np.asarray(z)
    k = 1 if z.ndim == 1 else z.shape[1]
    both = real @ np.hstack([z.real.reshape(-1, k), z.imag.reshape(-1, k)])
    out = both[:, :k] + 1j * both[:, k:]
    return out[:, 0] if z.ndim == 1 else out


def _loss_value(gram, z, omega, kappa):
    """L_r for coefficients ``z`` of the columns ``gram`` was made from (W)."""
    _, PZZ, cZ, g, uZ = gram
    val = omega ** 2 * np.real(np.conj(z) @ (PZZ @ z))
    if uZ is not None:
        u = uZ @ z
        val += g * abs(u) ** 2 + 2 * np.real(-1j * omega * np.conj(u) * (cZ @ z))
    return kappa * max(float(val), 0.0)


class _Sweep:
    def __init__(self, system, frequencies, factorize, tolerance, progress):
        self.system = system
        self.red = reduce(system)
        self.factorize = factorize
        self.tol = tolerance
        self.progress = progress or (lambda message: None)
        red = self.red
        n = red.free.size
        self.b0 = red.rhs(system.rhs(), 1.0, 0.0)
        self.b1 = red.rhs(np.zeros(system.size), 0.0, 1.0)
        self.has_b1 = bool(np.any(self.b1 != 0))
        self.x_fixed = red.expand(np.zeros(n), 1.0)  # the affine part (fixed values)
        self.basis = _Basis(n)
        self.points = {}  # frequency -> (solve, x_k, W_k)
        self.fixed = None  # the expansion frequency whose factorisation every estimate uses
        self.b1_solutions = {}  # frequency -> A_k^{-1} b1 (fixed values in S1's columns)
        self.S0V = self.S1V = np.zeros((n, 0))
        self.alone = {}   # frequency -> x of a full solve past MAX_POINTS
        self.forms = _Forms(system)
        # where each observed unknown sits among the free ones (-1: fixed)
        where = np.full(red.size, -1)
        where[red.free] = np.arange(red.free.size)
        self.obs_free = where[red.renumber[self.forms.rows]]
        self.freqs = sorted({float(f) for f in frequencies if f > 0})
        self.report = SweepReport(tolerance, unknowns=int(n))

    def solve_alone(self, f):
        """A full solve at f (Hz) that does not enter the basis (the last slot of the
        factorisation family, reused)."""
        s = 2j * np.pi * f
        x = self.factorize(self.red.matrix(1.0, s), MAX_POINTS)(self.b0 + s * self.b1)
        if not np.all(np.isfinite(x)):
            raise SolveError(f"the solution at {f:g} Hz is not finite: the system is singular")
        return x

    def full(self, f):
        """A full solve at f (Hz), kept as an expansion frequency."""
        s = 2j * np.pi * f
        self.progress(f"full solve at {f:g} Hz ({self.red.free.size} unknowns)")
        solve = self.factorize(self.red.matrix(1.0, s), len(self.points))
        x = solve(self.b0 + s * self.b1)
        if not np.all(np.isfinite(x)):
            raise SolveError(f"the solution at {f:g} Hz is not finite: the system is singular "
                             "(a region floats or a source is not tied to anything)")
        self.points[f] = (solve, x, (np.zeros((x.size, 0)), np.zeros((x.size, 0))))
        if self.fixed is None:  # the first: its factorisation serves every estimate
            self.fixed = f
        self.report.expansion_hz.append(f)
        self.report.full_hz.append(f)
        self.basis.add(x)
        if self.has_b1:
            self.b1_solutions[f] = solve(self.b1)
            self.basis.add(self.b1_solutions[f])
        v = x
        S1 = self.red.S1_ff
        for _ in range(MOMENTS - 1):
            v = solve(S1 @ v)
            norm = np.linalg.norm(v)
            if norm == 0 or self.basis.add(v / norm) == 0:
                break
            v = v / norm

    def _observed(self, cols):
        """The ``forms.rows`` of free-numbering columns in the full numbering (fixed: 0)."""
        out = np.zeros((self.obs_free.size, cols.shape[1]), dtype=cols.dtype)
        hit = self.obs_free >= 0
        out[hit] = cols[self.obs_free[hit]]
        return out

    def project(self):
        """Projected matrices, and what the estimate needs of the fixed expansion
        frequency (the others' only when a refined bound is asked for)."""
        V = self.basis.cols
        red = self.red
        done = self.S0V.shape[1]  # S0 V and S1 V: products for the new columns only
        if done < V.shape[1]:
            self.S0V = np.column_stack([self.S0V, red.S0_ff @ V[:, done:]])
            self.S1V = np.column_stack([self.S1V, red.S1_ff @ V[:, done:]])
        self.S0r = V.T @ self.S0V
        self.S1r = V.T @ self.S1V
        self.b0r = V.T @ self.b0
        self.b1r = V.T @ self.b1
        self.Vobs = self._observed(V)
        self.est = {}
        self._prepare(self.fixed)  # the others only when a refined bound is asked for
        Xd = np.column_stack([self.x_fixed[self.forms.rows], self.Vobs])
        self.value_grams = self.forms.grams(Xd)

    def _prepare(self, p):
        """For the expansion frequency p: W_p = A_p^{-1} S1 V (kept as real and imaginary
        parts), split as V R12 + W_perp with R12 = V^T W_p, so that the estimate's two
        parts are both small and its Gram sums do not cancel; W_perp is needed only on the
        rows the forms touch, where it is formed, and the forms' Gram matrices on
        [V, W_perp] there. Only columns added since the last call are solved for: m
        solves per expansion frequency whose bound is used, in all."""
        V = self.basis.cols
        m = V.shape[1]
        solve, x, (Wr, Wi) = self.points[p]
        if Wr.shape[1] < m:  # V grew: solve for the new columns only
            new = solve(self.S1V[:, Wr.shape[1]:])
            self.report.estimate_solves += m - Wr.shape[1]
            Wr, Wi = np.column_stack([Wr, new.real]), np.column_stack([Wi, new.imag])
            self.points[p] = (solve, x, (Wr, Wi))
        R12 = V.T @ Wr + 1j * (V.T @ Wi)
        obs = self.obs_free >= 0
        W_obs = np.zeros((self.obs_free.size, m), dtype=complex)
        W_obs[obs] = Wr[self.obs_free[obs]] + 1j * Wi[self.obs_free[obs]]
        perp_obs = W_obs - _rc(self.Vobs, R12)
        # x_p and A_p^{-1} b1 lie in span V but for what the basis dropped as below its
        # threshold: that rest enters e_p too (coefficients 1 and s - s_p)
        c = _rc(V.T, x)
        cols = [self.Vobs, perp_obs, self._observed(x[:, None]) - _rc(self.Vobs, c)[:, None]]
        d = np.zeros(m)
        if self.has_b1:
            d = _rc(V.T, self.b1_solutions[p])
            cols.append(self._observed(self.b1_solutions[p][:, None])
                        - _rc(self.Vobs, d)[:, None])
        self.est[p] = (c, d, R12, self.forms.grams(np.column_stack(cols)))

    def reduced(self, f):
        s = 2j * np.pi * f
        return np.linalg.solve(self.S0r + s * self.S1r, self.b0r + s * self.b1r)

    def estimate(self, f, y):
        """Estimated relative error of impedances and region losses at f (see the module)
        through the first expansion frequency's factorisation, whose W is kept for every
        basis; returns it and what :meth:`refined` needs."""
        omega = 2 * np.pi * f
        kappa = self.system.kappa
        z_x = np.concatenate([[1.0], y])
        loss_x, src_x = self.value_grams
        losses = [_loss_value(g, z_x, omega, kappa) for g in loss_x]
        total = sum(losses)
        values = []
        for name, kind, vZ, scaled in src_x:
            value = vZ @ z_x
            if kind == "voltage":
                if scaled:
                    value = 1j * omega * value
                value += self.forms.fixed_voltage.get(name, 0.0)
            values.append(abs(value))
        context = (losses, total, values)
        return float(self._bound(self.fixed, f, y, *context)), context

    def refined(self, f, y, context):
        """The smallest of the bounds through the two expansion frequencies around f (their
        W made or extended now, for the basis as it is) and the fixed one."""
        below = [p for p in self.points if p <= f]
        above = [p for p in self.points if p > f]
        best = np.inf
        for p in ([max(below)] if below else []) + ([min(above)] if above else []):
            if p not in self.est:
                self._prepare(p)
            best = min(best, self._bound(p, f, y, *context))
        return float(best)

    def spread(self, f):
        """How much tighter than the fixed bound a neighbour's can be at f, at most: the
        fixed bound's factor max(1, f_c / f) times its overestimate max(1, f / f_c)."""
        return max(self.fixed / f, f / self.fixed)

    def _bound(self, p, f, y, losses, total, values):
        """The bound on the relative errors at f through expansion frequency p's
        factorisation: e_p = A_p^{-1} r in the basis [V, W_perp], times max(1, f_p / f)."""
        omega = 2 * np.pi * f
        kappa = self.system.kappa
        c, d, R12, (loss, src) = self.est[p]
        delta = 1j * omega - 2j * np.pi * p
        w = np.concatenate([c + delta * d - y - delta * (R12 @ y), -delta * y, [1.0],
                            [delta] if self.has_b1 else []])
        factor = max(1.0, p / f)
        worst = 0.0
        for g, lx in zip(loss, losses, strict=True):
            if lx <= LOSS_FLOOR * total or lx == 0:
                continue
            ratio = factor ** 2 * _loss_value(g, w, omega, kappa) / lx
            worst = max(worst, 2 * np.sqrt(ratio) + ratio)
        for (_, kind, vZ, scaled), value in zip(src, values, strict=True):
            err = abs(vZ @ w) * factor * (omega if scaled else 1.0)
            if value > 0:
                rel = err / value
                # a driven winding's copper loss R |I|^2 moves twice as much as I
                worst = max(worst, 2 * rel + rel**2 if kind == "current" else rel)
        return worst

    def run(self):
        fs = self.freqs
        logs = np.log(fs)
        start = fs[int(np.argmin(np.abs(logs - 0.5 * (logs[0] + logs[-1]))))]
        self.full(start)
        while True:
            self.project()
            worst_f, worst = None, -1.0
            self.answers, context = {}, {}
            for f in fs:
                if f in self.points:
                    self.answers[f] = None
                    self.report.estimates[f] = 0.0
                    continue
                y = self.reduced(f)
                self.answers[f] = y
                self.report.estimates[f], context[f] = self.estimate(f, y)
            # Refine where the fixed bound is above the tolerance, but only when the
            # neighbours' bounds could bring every such frequency below it: otherwise a
            # full solve is added anyway and their solves would be wasted.
            high = [f for f in context if self.report.estimates[f] > self.tol]
            if high and REFINE and all(self.report.estimates[f] / self.spread(f) <= self.tol
                                       for f in high):
                for f in high:
                    self.report.estimates[f] = min(self.report.estimates[f],
                                                   self.refined(f, self.answers[f], context[f]))
            for f in context:
                if self.report.estimates[f] > worst:
                    worst_f, worst = f, self.report.estimates[f]
            self.progress(f"reduced basis of {self.basis.cols.shape[1]} vectors from "
                          f"{len(self.points)} full solves: largest estimated error "
                          f"{max(worst, 0.0):.2e}")
            if worst_f is None or worst <= self.tol:
                break
            if len(self.points) >= MAX_POINTS:
                log.warning("reduced sweep: %d full solves did not bring every estimate "
                            "below %g; solving the rest in full", MAX_POINTS, self.tol)
                for f in fs:
                    if f not in self.points and self.report.estimates[f] > self.tol:
                        self.alone[f] = self.solve_alone(f)
                        self.report.full_hz.append(f)
                        self.report.estimates[f] = 0.0
                break
            self.full(worst_f)
        self.report.basis_size = int(self.basis.cols.shape[1])

    def space(self) -> ReducedSpace:
        """The affine part and the basis in the full numbering (see :class:`ReducedSpace`)."""
        red, V = self.red, self.basis.cols
        cols = np.zeros((red.size, V.shape[1] + 1), dtype=np.result_type(V, red.fixed_values))
        cols[red.fixed, 0] = red.fixed_values
        cols[red.free, 1:] = V
        if np.array_equal(red.renumber, np.arange(red.size)):  # nothing glued
            return ReducedSpace(cols)
        return ReducedSpace(cols[red.renumber])

    def solutions(self, frequencies):
        """A solution per frequency (Hz): the full one at expansion frequencies and
        frequencies solved alone, a :class:`ReducedSolution` (coefficients only) elsewhere."""
        space = self.space()
        out = []
        for f in frequencies:
            if f in self.points:
                out.append(Solution(self.system, f, self.red.expand(self.points[f][1])))
            elif f in self.alone:
                out.append(Solution(self.system, f, self.red.expand(self.alone[f])))
            else:
                out.append(ReducedSolution(self.system, f, space,
                                           np.concatenate([[1.0], self.answers[f]])))
                space.members.append(out[-1])
        return out


def reduced_sweep(system, frequencies, backend="auto", tolerance=TOLERANCE, progress=None):
    """Solve ``system`` at every frequency (Hz, all > 0) through a certified reduced model.

    Returns ``(solutions, report, backend name)``: a solution per requested frequency (in
    order; full solutions at the expansion frequencies, :class:`ReducedSolution` elsewhere)
    and a :class:`SweepReport`.
    """
    name, factorize = linalg.choose(backend)
    t0 = time.perf_counter()
    # every expansion frequency's factorisation stays valid: one analysis for them all;
    # no iterative refinement (it triples a solve's cost; residuals stay near 1e-12 and
    # every solve's residual is checked)
    factorize = circuit_scaling(factorize, system, linalg.family(factorize, MAX_POINTS + 1,
                                                                  refine=False))
    sweep = _Sweep(system, frequencies, factorize, tolerance, progress)
    # The dense work is on thin matrices: threaded BLAS only loses on them, and badly so
    # when other processes share the cores.
    with threadpool_limits(limits=1, user_api="blas"):
        sweep.run()
        solutions = sweep.solutions([float(f) for f in frequencies])
    log.info("reduced sweep: %d frequencies from %d full solves (basis %d) in %.2f s; "
             "largest estimated error %.2e", len(sweep.freqs), len(sweep.points),
             sweep.report.basis_size, time.perf_counter() - t0,
             max(sweep.report.estimates.values(), default=0.0))
    return solutions, sweep.report, name


__all__ = ["reduced_sweep", "wanted", "fallback_reason", "SweepReport", "TOLERANCE"]
