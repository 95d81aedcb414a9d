"""The field solutions of a heating study: linear or saturable materials, with the supply.

Every element takes its conductivity and permeability at its own temperature
(:mod:`.coefficients`); only the heated elements (and the saturable ones) change
between field solutions, so the system is re-weighted there (:mod:`.reassembly`)
instead of assembled again.

Linear materials: the field is linear in the drive, so one solution per source
(unit drive) serves every trial drive of the supply's iteration (:mod:`.supply`).

Saturable materials (a B-H curve): the effective permeability per element
(:mod:`.effective`) at each element's temperature. The Curie transition enters once,
as the magnetisation multiplier m(T) of the curve
(:func:`~whorl.solver.coefficients.magnetisation`, from ``element_temperature_k``;
``element_magnetisation`` is not set as well, which would apply it twice); the
conductivity comes from its temperature table. The field now depends on the
drive's amplitude, so superposing unit solutions is no longer exact for the whole
problem; but at every iterate of the effective iteration the reluctivities are
frozen and the problem *is* linear. The supply is therefore found inside the
effective iteration: at each iterate, :func:`~.supply.find_drive` finds (by
superposition, exactly) the drive that meets the power and the caps for the
frozen reluctivities, and the reluctivities are then updated from the field of
that drive. At convergence the reluctivities agree with the field to the heating field's
tolerance (``TOLERANCE``, an energy-weighted relative change of 1e-2) and the drive
meets the supply to ``find_drive``'s tolerance (1e-9, relative) for them. A
power-controlled saturable model costs one factorisation per iterate, as a fixed drive
does (a choice of this project, instead of an outer secant iteration on the amplitude
around whole effective solutions). Warm start:
the last field solution's reluctivities, updated once from its field with the
multipliers of the new temperatures (the field moves little between two field
solutions, the permeability much only where an element crosses the Curie point),
extrapolated in time (``PREDICT``); the iteration is Anderson-accelerated
(``ACCELERATE``) and keeps its secant pairs from one field solution to the next unless
the Curie transition moved. Once a Curie front exists, the layer of steel around it is
settled first, alone, with the rest of the model frozen (:mod:`.front`, ``FRONT``: 221
instead of 315 linear solutions over the shaft-end demo's cycle). These change the number
of linear solutions, not the result: the stopping rule is the same. Each iterate's matrix
is the last one re-weighted on the saturable elements (:mod:`.reweighted`: one sparse
product, the pattern and so the backend's analysis kept), where the fixed unknowns are
zero; the system carrying the effective reluctivities is built once, for the converged
solution.

Not used, measured: solving each iterate by GMRES preconditioned with the last
factorisation instead of factorising it. On the shaft demo (4.5e4 unknowns, PARDISO) a
factorisation costs about two solves, and GMRES needed about ten preconditioned steps
per solve to reach a relative residual of 1e-10, three to four times the time of a
fresh factorisation.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, replace

import numpy as np

from whorl.solver import front, linalg
from whorl.solver.coefficients import element_regions, magnetisation
from whorl.solver.constants import MU0
from whorl.solver.effective import (
    effective_reluctivity,
    iterate,
    start_reluctivity,
    with_reluctivity,
)
from whorl.solver.errors import SolveError
from whorl.solver.reassembly import Reassembler, applies
from whorl.solver.reduction import reduce, with_stiffness
from whorl.solver.reweighted import ReweightedMatrix
from whorl.solver.saturable import base_matrix, has_saturable, saturable_part
from whorl.solver.solution import Solution
from whorl.solver.supply import find_drive, with_drive
from whorl.solver.symmetrise import circuit_scaling
from whorl.solver.system import assemble

ACCELERATE = True
"""Anderson acceleration of the effective iteration (see :func:`.effective.iterate`)."""
TOLERANCE = 1e-2
"""Stopping rule of the effective iteration in heating field solutions: an energy-weighted
relative change of the reluctivity of at most 1e-2 (:func:`.effective.iterate`; harmonic
studies stop at ``effective.NU_TOL`` = 1e-3). The inner solve only needs the accuracy of the
coupling around it: a heating study holds each field while the temperatures move by
``field_update``, and that lag is its larger error (on the shaft-end demo, a ``field_update``
of 40 K instead of 20 K moves the peak temperature at 3 mm by 10 K). Measured on that demo
(docs/performance.md): at three instants of the heat (before, while and after the surface
passes the Curie point) the heated loss at 1e-2 is within 1.2e-4 of a solution converged to
1e-6 (at 1e-3: 2e-5); over the cycle the temperatures at its three points move by at most
0.025 K and the induced energy by 5e-5 against 1e-3, for 315 linear solutions instead of 470."""
FRONT = True
"""Settle the layer around a moving Curie front before each field solution's iteration
(:mod:`.front`); this changes the number of linear solutions, not the result."""
PREDICT = True
"""Start each warm field solution from the reluctivities extrapolated in time from the last
two (their ratio, to the power of the ratio of the time steps, at most 1.5; each element's
factor held within 0.5 to 2; not where the element's Curie factor moved), never below the
vacuum's permeability."""


@dataclass
class FieldRecord:
    """One field solution: when, the drive it found, terminal values, region losses."""

    time_s: float
    solution: object
    loss_density: np.ndarray  # W/m^3 at the heated elements' quadrature points
    sources: dict             # name -> (current, voltage) complex RMS
    region_loss_w: dict
    capped: dict
    shortfall_w: dict
    seconds: float = 0.0
    linear_solutions: int = 1  # linear systems solved (iterates of the effective iteration)
    front_solutions: int = 0  # solves of the Curie front's layer alone (.front)
    nonlinear: dict | None = None  # the effective iteration's report (saturable materials)

    @property
    def solved(self) -> bool:
        """Whether a field was solved (False: no source on); :attr:`solution` itself may
        have been released since (see :class:`~.heating.HeatingHistory`)."""
        return self.linear_solutions > 0


def saturable_regions(problem) -> list[str]:
    """Names of the regions whose material has a B-H curve."""
    return [n for n in element_regions(problem)
            if getattr(problem.materials[n], "bh_curve", None) is not None]


class FieldSolver:
    """The harmonic field at given element temperatures, with the supply's iteration."""

    def __init__(self, problem, study, terminals, loss_density, region_losses,
                 backend: str = "auto"):
        self.problem, self.study = problem, study
        self.terminals, self.loss_density, self.region_losses = (terminals, loss_density,
                                                                 region_losses)
        self.backend_name, self.backend = linalg.choose(backend)
        self.factorize = linalg.session(self.backend)
        self.previous = None
        self.reassembler = None
        self.saturable = has_saturable(problem)
        self.sat = None        # the saturable part (elements, curves, multipliers)
        self.nu_sat = None     # its effective reluctivities at the last field solution
        self.x_last = None     # the last field solution (a warm start)
        self.rms_last = None   # its elements' RMS flux density (T)
        self.nu_before = None  # ... at the one before (for the extrapolation)
        self.times = []        # times of the saturable field solutions
        self.m_last = (None, None)  # magnetisation multipliers at the last two
        self.memory = []       # secant pairs of the accelerated iteration, kept across solutions
        self.reweighted = None  # the factorised matrix as a function of nu (see .reweighted)
        self.structure = None   # the reduction's structure (fixed values zero), or False
        self.centroids = None   # of the mesh's elements (the Curie front's layer, .front)
        self.forms = None       # the saturable elements' unit matrices (.front)
        self.local_factorize = linalg.session(self.backend)  # the layer's small block (.front)
        self.scaled = None  # self.factorize with circuit rows scaled where that pays

    def _changing(self, problem, heated_elements):
        """Elements whose coefficients may change, the heated and the saturable ones, and
        the names of their regions."""
        regions = element_regions(problem)
        names = saturable_regions(problem) if self.saturable else []
        elements = np.union1d(np.asarray(heated_elements),
                              np.concatenate([[], *(regions[n] for n in names)]))
        return elements.astype(np.int64), [*self.study.heated, *names]

    def _system(self, problem, heated_elements):
        if self.reassembler is None:
            elements, regions = self._changing(problem, heated_elements)
            first = Reassembler(problem, elements)
            if not applies(first.base, regions):
                self.reassembler = False
            else:  # its systems, the first too, keep one pattern (.reassembly)
                self.reassembler = first
        if self.reassembler is False:
            return assemble(problem)
        return self.reassembler.system(problem)

    def _drive(self, system, problem, time_s, red=None, matrix=None):
        """The supply's drive for the (linear) ``system`` and its solution; returns
        (DriveState, Solution). ``red``: the system reduced already; ``matrix``: its
        matrix on the free unknowns, when known already."""
        red = reduce(system) if red is None else red
        omega = 2 * np.pi * self.study.frequency_hz
        if self.scaled is None:  # one wrapper, which keeps its row scaling (.symmetrise);
            # every matrix it gets is a new one, not used again: scaled in place
            self.scaled = circuit_scaling(self.backend, system, self.factorize,
                                          overwrite=True)
        factorize = self.scaled
        solve = factorize(red.matrix(1.0, 1j * omega) if matrix is None else matrix)
        linear = not np.any(red.fixed_values)  # superposition of one solution per source
        unit = {}

        def solve_one(drive):
            x = red.expand(solve(red.rhs(system.rhs_for(drive), 1.0, 1j * omega)))
            if not np.all(np.isfinite(x)):
                raise SolveError("the field solution is not finite: the system is singular")
            return x

        def solve_for(drive):
            sys_d = replace(system, problem=with_drive(problem, drive))
            if not linear:
                return Solution(sys_d, self.study.frequency_hz, solve_one(drive))
            x = np.zeros(system.size, dtype=complex)
            for name, d in drive.items():
                if d != 0:
                    if name not in unit:
                        unit[name] = solve_one({name: 1.0 + 0j})
                    x += d * unit[name]
            return Solution(sys_d, self.study.frequency_hz, x)

        state, solution = find_drive(solve_for, self.terminals, problem,
                                     self.study.supplies, time_s, self.previous)
        self.previous = {k: v for k, v in state.drive.items() if v != 0} or self.previous
        return state, solution

    def _front(self, system, sat, nu, omega):
        """The start ``nu`` with the layer around the Curie front settled (:mod:`.front`);
        returns (nu, solves of the layer), or (nu, 0) where there is no front."""
        sigma = np.asarray(system.sigma, float)[sat.elements]
        if self.centroids is None:
            mesh = system.basis.mesh
            self.centroids = mesh.p[:, mesh.t].mean(axis=1).T
        positions = front.layer_positions(sat, nu, sigma, omega, self.centroids)
        if positions is None or not positions.size:
            return nu, 0
        if self.forms is None:
            self.forms = front.SaturableForms(system, sat)
        local = front.LocalProblem(self.forms, positions, sigma, self.reweighted.free_of,
                                   omega)
        reduced = self.structure
        rhs = reduced.rhs(system.rhs_for(self.previous or {}), 1.0, 1j * omega)
        try:
            return front.relax(front.Layer(sat, positions), local,
                               self.reweighted.rows(local.unknowns), self.local_factorize, nu,
                               reduced.restrict(self.x_last), rhs[local.unknowns],
                               reduced.expand)
        except SolveError:  # a singular layer (no conductivity in it): start as before
            return nu, 0

    def _saturable(self, system, problem, time_s):
        """The effective-permeability iteration with the supply found at every iterate;
        returns (DriveState, Solution, number of iterates)."""
        if self.sat is None:
            self.sat = saturable_part(system)
        sat = self.sat
        m = np.clip(magnetisation(problem)[sat.elements], 0.0, 1.0)  # Curie, once
        sat.multiplier = None if np.all(m == 1.0) else m
        if self.reassembler:
            def stiffness(nu):
                return self.reassembler.stiffness(nu)
        else:
            without = base_matrix(system, sat)

            def stiffness(nu):
                return (without + sat.stiffness(nu[sat.elements])).tocsr()
        if self.nu_sat is None:
            start = start_reluctivity(sat)
        else:
            from_b, from_h = effective_reluctivity(sat, self.x_last, self.nu_sat,
                                                   self.rms_last)
            start = np.sqrt(from_b * from_h)
            if PREDICT and self.nu_before is not None:
                t1, t0 = self.times[-1], self.times[-2]
                ratio = min((time_s - t1) / (t1 - t0), 1.5) if t1 > t0 else 0.0
                factor = np.clip(self.nu_sat / self.nu_before, 0.5, 2.0) ** ratio
                # not where the Curie transition moved: m changed there, not the trend
                steady = (m == self.m_last[0]) & (m == self.m_last[1])
                start = np.where(steady, start * factor, start)
            start = np.minimum(start, 1.0 / MU0)  # an effective mu_r is at least 1
        if self.m_last[0] is not None and np.any(m != self.m_last[0]):
            self.memory.clear()  # the Curie transition moved: the old secants describe
            # another map
        found = {}
        if self.structure is None:
            first = reduce(system)
            # which unknowns are free, glued and fixed never changes; where the fixed ones
            # are zero the factorised matrix is affine in nu: re-weight it (.reweighted)
            # and keep the reduction's structure only (its fixed part multiplies zeros)
            self.structure = (replace(first, S0_ff=None, S1_ff=None)
                              if not np.any(first.fixed_values) else False)
            if self.structure:
                self.reweighted = ReweightedMatrix(first, sat)
        if self.structure:
            reduced = self.structure
            omega = 2 * np.pi * self.study.frequency_hz
            self.reweighted.rebase_system(system.S0, system.S1, 1j * omega,
                                          system.nu[sat.elements])
            if FRONT and self.x_last is not None:
                start, found["front"] = self._front(system, sat, start, omega)

            def linear(nu_sat):
                found["drive"], found["solution"] = self._drive(
                    system, problem, time_s, reduced, self.reweighted.matrix(nu_sat))
                return found["solution"].x
        else:
            reduced = reduce(system)  # S1 and the conditions; S0's blocks follow each iterate

            def linear(nu_sat):
                state = with_reluctivity(system, sat, nu_sat, stiffness)
                found["drive"], found["solution"] = self._drive(
                    state, problem, time_s, with_stiffness(reduced, state.S0))
                return found["solution"].x

        kept = {}
        x, nu_sat, report = iterate(linear, sat, start, f"t = {time_s:g} s",
                                    tolerance=TOLERANCE, accelerate=ACCELERATE,
                                    memory=self.memory, keep=kept)
        self.rms_last = kept["rms"]  # of x: the next start needs no new flux density
        report["front_solutions"] = found.pop("front", 0)
        self.nu_before = self.nu_sat
        self.times.append(time_s)
        self.m_last = (m, self.m_last[0])
        self.nu_sat, self.x_last = nu_sat, x
        # the solution's system carries the effective reluctivities (losses, records)
        state = with_reluctivity(system, sat, nu_sat, stiffness)
        solution = replace(found["solution"],
                           system=replace(state, problem=found["solution"].system.problem))
        solution.nonlinear = report
        return found["drive"], solution, report["iterations"]

    def solve(self, element_temperature_k, time_s: float, heated_elements) -> FieldRecord:
        t0 = time.perf_counter()
        problem = replace(self.problem, element_temperature_k=element_temperature_k)
        system = self._system(problem, heated_elements)
        if self.saturable:
            state, solution, count = self._saturable(system, problem, time_s)
        else:
            (state, solution), count = self._drive(system, problem, time_s), 1
        q = self.loss_density(solution)[heated_elements]
        record = FieldRecord(time_s, solution, q, state.terminals,
                             self.region_losses(solution), state.capped, state.shortfall_w)
        record.seconds = time.perf_counter() - t0
        record.linear_solutions = count
        if self.saturable:
            record.front_solutions = solution.nonlinear.get("front_solutions", 0)
            record.nonlinear = solution.nonlinear
        return record
