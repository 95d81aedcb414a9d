"""Time-harmonic and static solution of an assembled system."""

from __future__ import annotations

import logging
import time

import numpy as np
import scipy.sparse as sp

from whorl.solver import linalg
from whorl.solver.errors import SolveError
from whorl.solver.solution import Solution
from whorl.solver.system import assemble

log = logging.getLogger(__name__)


def solve_system(system, frequencies, backend: str = "auto", progress=None):
    """Solve an assembled system at each frequency in Hz (0 gives the static solution).

    Returns ``(solutions, info)`` where ``info`` has the backend's name and
    the time spent factorising and solving.
    """
    name, factorize = linalg.choose(backend)
    target = system.target
    keep = np.unique(target)  # unknowns left after gluing (the identity without one)
    n = keep.size
    glued = keep.size < system.size
    if glued:  # S -> P^T S P with P[i, target[i]] = 1, in the numbering of ``keep``
        renumber = np.searchsorted(keep, target)
        P = sp.csr_matrix((np.ones(system.size), (np.arange(system.size), renumber)),
                          shape=(system.size, n))
        S0, S1 = (P.T @ system.S0 @ P).tocsc(), (P.T @ system.S1 @ P).tocsc()
    else:
        renumber, P = np.arange(n), None
        S0, S1 = system.S0.tocsc(), system.S1.tocsc()
    fixed, first = np.unique(renumber[system.fixed], return_index=True)
    fixed_values = system.fixed_values[first]
    free = np.setdiff1d(np.arange(n), fixed)
    S0_ff, S1_ff = S0[free][:, free], S1[free][:, free]
    S0_fd, S1_fd = S0[free][:, fixed], S1[free][:, fixed]
    solutions = []
    t0 = time.perf_counter()
    for i, f in enumerate(frequencies):
        omega = 2 * np.pi * float(f)
        if progress:
            progress(f"solving {i + 1}/{len(frequencies)} at {f:g} Hz ({free.size} unknowns)")
        _check_static(system, omega)
        matrix = (S0_ff + (1j * omega) * S1_ff).tocsc()
        b = system.rhs(omega)
        if glued:
            b = P.T @ b
        rhs = b[free] - (S0_fd + (1j * omega) * S1_fd) @ fixed_values
        solve = factorize(matrix)
        x = np.empty(n, dtype=complex)
        x[fixed] = fixed_values
        x[free] = solve(rhs)
        x = x[renumber]  # back to the full numbering
        if not np.all(np.isfinite(x)):
            raise SolveError(f"the solution at {f:g} Hz is not finite: the system is singular "
                             "(a region floats or a source is not tied to anything)")
        solutions.append(Solution(system, float(f), x))
    elapsed = time.perf_counter() - t0
    log.info("solved %d frequencies with %s in %.2f s", len(frequencies), name, elapsed)
    return solutions, {"backend": name, "solve_s": elapsed, "unknowns": int(free.size)}


def solve_harmonic(problem, frequencies, backend: str = "auto", progress=None):
    """Assemble ``problem`` once and solve it at each frequency (Hz); see :func:`solve_system`."""
    t0 = time.perf_counter()
    system = assemble(problem, progress)
    t_asm = time.perf_counter() - t0
    solutions, info = solve_system(system, frequencies, backend, progress)
    info["assemble_s"] = t_asm
    return solutions, info


def _check_static(system, omega):
    if omega != 0:
        return
    for s in system.driven:
        if s.kind == "stranded" and s.resistance <= 0:
            raise SolveError(f"source {s.name!r}: a voltage-driven winding at 0 Hz needs a "
                             "resistance (its current is V/R)")
