"""Time-harmonic and static solution of an assembled system."""

from __future__ import annotations

import logging
import time

import numpy as np

from whorl.solver import frequency_rom, linalg
from whorl.solver.effective import EffectiveSystem
from whorl.solver.errors import SolveError
from whorl.solver.newton import NonlinearSystem
from whorl.solver.reduction import reduce
from whorl.solver.saturable import has_saturable
from whorl.solver.solution import Solution
from whorl.solver.symmetrise import circuit_scaling
from whorl.solver.system import assemble

log = logging.getLogger(__name__)


def solve_system(system, frequencies, backend: str = "auto", progress=None,
                 reduced: str = "auto", tolerance: float = frequency_rom.TOLERANCE):
    """Solve an assembled system at each frequency in Hz (0 gives the static solution).

    Returns ``(solutions, info)`` where ``info`` has the backend's name and
    the time spent factorising and solving. Assembly and reduction are done once;
    a backend that can (``linalg.session``) also analyses the sparsity pattern once
    and only refactorises numerically at the next frequency.

    ``reduced`` ("auto", "on" or "off") asks for the certified reduced-order sweep of
    :mod:`.frequency_rom` ("auto": from ``frequency_rom.AUTO_FROM`` distinct frequencies
    on) with relative ``tolerance`` on impedances and losses; nonlinear and moving
    models, and the iterative backend, fall back to full solves (said in the log).
    ``info["reduced"]`` then records the full-solve frequencies and the estimates.
    """
    name, factorize = linalg.choose(backend)
    if frequency_rom.wanted(reduced, frequencies):
        why = frequency_rom.fallback_reason(system.problem, name)
        if why is None:
            return _solve_reduced(system, frequencies, backend, progress, tolerance)
        log.info("reduced frequency sweep not used: %s; every frequency is solved in full", why)
    # the session keeps the symbolic analysis across frequencies; circuit rows are scaled
    # to a symmetric matrix where the backend gains by it (.symmetrise)
    factorize = circuit_scaling(factorize, system, linalg.session(factorize))
    if has_saturable(system.problem):
        return _solve_saturable(system, frequencies, name, factorize, progress)
    red = reduce(system)
    solutions, convergence = [], []
    t0 = time.perf_counter()
    for i, f in enumerate(frequencies):
        omega = 2 * np.pi * float(f)
        if progress:
            progress(f"solving {i + 1}/{len(frequencies)} at {f:g} Hz ({red.free.size} unknowns)")
        _check_static(system, omega)
        solve = factorize(red.matrix(1.0, 1j * omega))
        x = red.expand(solve(red.rhs(system.rhs(omega), 1.0, 1j * omega)))
        if getattr(solve, "report", None):  # an iterative backend: steps and residual
            convergence.append({"frequency_hz": float(f), **solve.report})
        if not np.all(np.isfinite(x)):
            raise SolveError(f"the solution at {f:g} Hz is not finite: the system is singular "
                             "(a region floats or a source is not tied to anything)")
        solutions.append(Solution(system, float(f), x))
    elapsed = time.perf_counter() - t0
    log.info("solved %d frequencies with %s in %.2f s", len(frequencies), name, elapsed)
    info = {"backend": name, "solve_s": elapsed, "unknowns": int(red.free.size)}
    if convergence:
        info["convergence"] = convergence
    return solutions, info


def _solve_saturable(system, frequencies, name, factorize, progress):
    """Each frequency its own nonlinear problem: Newton at 0 Hz, effective permeability
    otherwise (see :mod:`.newton` and :mod:`.effective`)."""
    t0 = time.perf_counter()
    solutions, static, effective = [], None, None
    for i, f in enumerate(frequencies):
        omega = 2 * np.pi * float(f)
        _check_static(system, omega)
        if progress:
            progress(f"solving {i + 1}/{len(frequencies)} at {f:g} Hz (saturable materials)")
        if omega == 0:
            static = static or NonlinearSystem(system, factorize)
            x, report = static.solve(system.rhs(0.0), what="the static field")
            solutions.append(Solution(static.state_system(x), 0.0, x.astype(complex),
                                      nonlinear={**report.record(), "method": "Newton"}))
        else:
            effective = effective or EffectiveSystem(system, factorize)
            solutions.append(effective.solve(float(f)))
    elapsed = time.perf_counter() - t0
    log.info("solved %d frequencies (saturable) with %s in %.2f s", len(frequencies), name,
             elapsed)
    unknowns = int((static or effective).red.free.size)
    return solutions, {"backend": name, "solve_s": elapsed, "unknowns": unknowns}


def _solve_reduced(system, frequencies, backend, progress, tolerance):
    """The reduced sweep for the positive frequencies, full solves for 0 Hz."""
    t0 = time.perf_counter()
    static = [f for f in frequencies if f == 0]
    positive = [f for f in frequencies if f > 0]
    reduced, report, name = frequency_rom.reduced_sweep(system, positive, backend, tolerance,
                                                        progress)
    by_f = dict(zip([float(f) for f in positive], reduced, strict=True))
    if static:
        sols, _ = solve_system(system, [0.0], backend, progress, reduced="off")
        by_f[0.0] = sols[0]
    solutions = [by_f[float(f)] for f in frequencies]
    elapsed = time.perf_counter() - t0
    info = {"backend": name, "solve_s": elapsed, "unknowns": report.unknowns,
            "reduced": report.record([float(f) for f in frequencies])}
    if static:
        info["reduced"]["full_solve_frequencies_hz"].insert(0, 0.0)
    return solutions, info


def solve_harmonic(problem, frequencies, backend: str = "auto", progress=None,
                   reduced: str = "auto", tolerance: float = frequency_rom.TOLERANCE):
    """Assemble ``problem`` once and solve it at each frequency (Hz); see :func:`solve_system`."""
    t0 = time.perf_counter()
    system = assemble(problem, progress)
    t_asm = time.perf_counter() - t0
    solutions, info = solve_system(system, frequencies, backend, progress, reduced, tolerance)
    info["assemble_s"] = t_asm
    return solutions, info


def _check_static(system, omega):
    if omega != 0:
        return
    for s in system.driven:
        if s.kind == "stranded" and s.resistance <= 0:
            raise SolveError(f"source {s.name!r}: a voltage-driven winding at 0 Hz needs a "
                             "resistance (its current is V/R)")
