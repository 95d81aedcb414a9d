r"""Stepped sources: march S0 x + S1 dx/dt = b(t) in time from a field-free start.

Schemes (fixed step h):

- implicit Euler:  (S0 + S1/h) x_{n+1} = b_{n+1} + S1 x_n / h                (order 1)
- BDF2:            (S0 + 3 S1/(2h)) x_{n+1} = b_{n+1} + S1 (2 x_n - x_{n-1}/2) / h   (order 2)

BDF2 starts with one implicit-Euler step, and restarts the same way at every
breakpoint of a source's waveform (a step lands on it; see :func:`march`); each
such step's error is O(h^2), so the global order stays 2 (E. Hairer and
G. Wanner, *Solving Ordinary Differential Equations II*, 1996, ch. V). Both are
L-stable, which the algebraic rows of the system (air, branch and circuit
equations) need. Each matrix is factorised once (per step size) and reused.

Saturable materials (a B-H curve): every step solves its nonlinear equations by
Newton's method (:mod:`.newton`), warm-started from the previous step's state; the
scheme's formula is the same, with S0 x replaced by S0' x + N(x), so both keep
their order. Each state then carries ``nonlinear`` (iterations, converged, residual).

Side conditions with a non-zero potential (and applied fields) switch on at
t = 0+ like a step; sources follow their waveforms; capacitors start at their
``initial_voltage``.
"""

from __future__ import annotations

import logging
import time

import numpy as np

from whorl.solver import linalg
from whorl.solver.errors import SolveError
from whorl.solver.newton import NonlinearSystem
from whorl.solver.reduction import reduce
from whorl.solver.saturable import has_saturable
from whorl.solver.solution import Solution
from whorl.solver.sources import Massive, Stranded, current_is_unknown
from whorl.solver.system import assemble

log = logging.getLogger(__name__)

SCHEMES = ("bdf2", "implicit-euler")


def drive_at(system, t: float) -> dict:
    """Source name -> its instantaneous current or voltage at time t."""
    out = {}
    for s in system.problem.sources:
        if not isinstance(s, Massive | Stranded):
            continue
        if s.waveform is None:
            if not current_is_unknown(s):
                raise SolveError(f"source {s.name!r} has no waveform for a transient study")
            out[s.name] = 0.0
        else:
            out[s.name] = float(s.waveform(t))
    return out


def initial_state(system) -> np.ndarray:
    """Field-free start; series capacitors charged to their initial voltage."""
    x = np.zeros(system.size)
    first = system.n_field + len(system.branches) + len(system.driven)
    for m, s in enumerate(system.capacitors):
        x[first + m] = s.initial_voltage
    return x


def breakpoints(system, end_s: float) -> dict[float, bool]:
    """Instants in [0, end] where a source's waveform kinks or jumps -> True for a jump
    (see :mod:`whorl.solver.waveforms`)."""
    out: dict[float, bool] = {}
    for s in system.problem.sources:
        listed = getattr(getattr(s, "waveform", None), "breakpoints", None)
        for t, jump in listed() if listed else ():
            if 0.0 <= t <= end_s:
                out[float(t)] = out.get(float(t), False) or bool(jump)
    return out


def time_grid(end_s: float, step_s: float, marks) -> np.ndarray:
    """t = 0, h, 2h, ... with every breakpoint in ``marks`` added; a grid instant within
    1e-6 h of a breakpoint moves onto it (no sliver steps)."""
    steps = int(round(end_s / step_s))
    grid = np.arange(steps + 1) * step_s
    extra = []
    for tb in marks:
        k = int(round(tb / step_s))
        if k <= steps and abs(grid[k] - tb) <= 1e-6 * step_s:
            grid[k] = tb
        elif tb < grid[-1]:
            extra.append(tb)
    return np.unique(np.concatenate([grid, extra]))


def march(system, end_s: float, step_s: float, scheme: str = "bdf2", backend: str = "auto",
          progress=None):
    """Yield a :class:`Solution` (with ``x_rate`` and ``time_s``) at t = 0, h, 2h, ... end,
    and at every breakpoint of the sources' waveforms in between.

    BDF2 needs two equal steps of size h within one smooth piece of every input: the
    points t_{n-1}, t_n, t_{n+1} must not straddle a breakpoint (none at t_n, no jump
    at t_{n-1} or t_{n+1}, where the state holds the value on the other side of the
    jump). Elsewhere the step
    is an implicit-Euler step, whose rate (x_{n+1} - x_n) / dt is then the reported one:
    the scheme restarts at every breakpoint, and the rates never difference across one.
    """
    if scheme not in SCHEMES:
        raise SolveError(f"unknown time scheme {scheme!r}; use one of {', '.join(SCHEMES)}")
    if step_s <= 0 or end_s <= 0:
        raise SolveError("the time step and the end time must be positive")
    h = step_s
    marks = breakpoints(system, end_s)
    times = time_grid(end_s, h, marks)
    kind = [marks.get(float(t)) for t in times]  # None, False (kink) or True (jump)
    steps = times.size - 1
    name, factorize = linalg.choose(backend)
    red = reduce(system)
    red.fixed_values = red.fixed_values.real.copy()  # instantaneous values are real
    x = initial_state(system)
    yield Solution(system, 0.0, x.astype(complex), np.zeros(system.size, dtype=complex), 0.0)
    euler: dict = {}
    bdf2 = None
    nonlinear = NonlinearSystem(system, linalg.session(factorize)) \
        if has_saturable(system.problem) else None
    S1 = system.S1
    x_prev = None
    t0 = time.perf_counter()
    for n in range(1, steps + 1):
        t, dt = float(times[n]), float(times[n] - times[n - 1])
        b = system.rhs_for(drive_at(system, t))
        use_bdf2 = (scheme == "bdf2" and x_prev is not None and kind[n - 1] is None
                    and kind[n - 2] is not True and kind[n] is not True and abs(dt - h) <= 1e-9 * h
                    and abs(times[n - 1] - times[n - 2] - h) <= 1e-9 * h)
        report = None
        if nonlinear is not None:
            c = 1.5 / h if use_bdf2 else 1.0 / dt
            hist = S1 @ ((2 * x - 0.5 * x_prev) / h if use_bdf2 else x / dt)
            x_new, report = nonlinear.solve(b + hist, 1.0, c, x0=x,
                                            what=f"the field at t = {t:g} s")
            rate = ((1.5 * x_new - 2 * x + 0.5 * x_prev) / h if use_bdf2
                    else (x_new - x) / dt)
        elif use_bdf2:
            if bdf2 is None:
                bdf2 = factorize(red.matrix(1.0, 1.5 / h))
            hist = S1 @ (2 * x - 0.5 * x_prev) / h
            x_new = red.expand(bdf2(red.rhs(b + hist, 1.0, 1.5 / h)))
            rate = (1.5 * x_new - 2 * x + 0.5 * x_prev) / h
        else:
            key = round(dt / h, 9)
            if key not in euler:
                euler[key] = factorize(red.matrix(1.0, 1.0 / dt))
            hist = S1 @ x / dt
            x_new = red.expand(euler[key](red.rhs(b + hist, 1.0, 1.0 / dt)))
            rate = (x_new - x) / dt
        if not np.all(np.isfinite(x_new)):
            raise SolveError(f"the solution at t = {t:g} s is not finite")
        x_prev, x = x, x_new
        if progress and (n % max(steps // 20, 1) == 0 or n == steps):
            progress(f"step {n}/{steps}, t = {t:.4g} s")
        step = "bdf2" if use_bdf2 else "euler"
        if report is None:
            yield Solution(system, 0.0, x.astype(complex), rate.astype(complex), t, step=step)
        else:
            yield Solution(nonlinear.state_system(x), 0.0, x.astype(complex),
                           rate.astype(complex), t, nonlinear=report.record(), step=step)
    log.info("marched %d steps (%s, %s) in %.2f s", steps, scheme, name, time.perf_counter() - t0)


def solve_transient(problem, end_s, step_s, scheme="bdf2", backend="auto", progress=None):
    """Assemble ``problem`` and march it; returns ``(system, states)`` with states a generator."""
    system = assemble(problem, progress)
    return system, march(system, end_s, step_s, scheme, backend, progress)
