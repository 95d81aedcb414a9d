"""A solved harmonic (or static) state: plain data for the postprocessor."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from whorl.solver.sources import current_is_unknown


@dataclass
class Solution:
    """The solution of one problem at one frequency (or one instant of a transient).

    For a transient state ``frequency_hz`` is 0, ``x`` holds instantaneous
    values, ``x_rate`` their time derivative and ``time_s`` the instant.

    Attributes
    ----------
    system : System
        The assembled system (basis, coefficients, branches).
    frequency_hz : float
    x : ndarray of complex
        All unknowns: A at the field dofs (Wb/m, RMS phasors), the branch
        voltages u (V/m planar, V/rad axisymmetric), the currents of
        voltage-driven sources (A).
    """

    system: object
    frequency_hz: float
    x: np.ndarray
    x_rate: np.ndarray | None = None  # dx/dt of a transient state; None for phasors
    time_s: float | None = None
    nonlinear: dict | None = None  # saturable materials: iterations, converged, residual
    step: str | None = None  # transient: the step that reached this state, "euler" or "bdf2"

    @property
    def rate(self) -> np.ndarray:
        """dx/dt: j omega x for phasors, the stored derivative for a transient state."""
        return self.x_rate if self.x_rate is not None else 1j * self.omega * self.x

    @property
    def a_rate(self) -> np.ndarray:
        """dA/dt at the field dofs (V/m)."""
        return self.rate[: self.system.n_field]

    @property
    def omega(self) -> float:
        return 2 * np.pi * self.frequency_hz

    @property
    def problem(self):
        return self.system.problem

    @property
    def a(self) -> np.ndarray:
        """A at the field dofs (Wb/m)."""
        return self.x[: self.system.n_field]

    @property
    def branch_u(self) -> np.ndarray:
        nf = self.system.n_field
        return self.x[nf: nf + len(self.system.branches)]

    def source_current(self, source) -> complex:
        """The current of a stranded or massive source (A): an RMS phasor, or the
        instantaneous value of a transient state."""
        if not current_is_unknown(source):
            if self.time_s is not None:  # a transient state: the waveform's value
                return complex(float(source.waveform(self.time_s)))
            return complex(source.current)
        k = self.system.driven.index(source)
        return complex(self.x[self.system.n_field + len(self.system.branches) + k])

    def branch_current(self, i: int) -> complex:
        """Net current of branch i (A): sign times its source current, or 0 when free."""
        br = self.system.branches[i]
        src = self.system.source(br.source)
        return 0j if src is None else br.sign * self.source_current(src)


class ReducedSpace:
    """The columns a reduced solution is a combination of, in the full numbering.

    ``columns`` (size, m + 1): first the affine part (the fixed values of the side
    conditions, zero elsewhere), then the m basis vectors of the reduced model. A reduced
    solution is ``columns @ z`` with coefficients z, z[0] = 1. ``cache`` keeps what the
    postprocessor projects once per space (see :mod:`whorl.postprocess.projected`).
    """

    def __init__(self, columns: np.ndarray):
        self.columns = columns
        self.cache: dict = {}
        self.members: list = []  # the solutions made of it, in order (batched evaluation)

    @property
    def size(self) -> int:
        return self.columns.shape[1]

    def expand(self, z) -> np.ndarray:
        """``columns @ z`` for coefficients z (m + 1,) or (m + 1, k): real columns times
        complex z in one product, without a complex copy of the columns."""
        z = np.asarray(z)
        if np.iscomplexobj(self.columns):
            return self.columns @ z
        k = 1 if z.ndim == 1 else z.shape[1]
        both = self.columns @ np.hstack([z.real.reshape(-1, k), z.imag.reshape(-1, k)])
        out = both[:, :k] + 1j * both[:, k:]
        return out[:, 0] if z.ndim == 1 else out

    def rows(self, index, z) -> np.ndarray:
        """Some unknowns of ``columns @ z``: the rows ``index`` only."""
        return self.columns[index] @ np.asarray(z)


class ReducedSolution(Solution):
    """A harmonic solution known by its coefficients in a :class:`ReducedSpace`.

    It behaves as a :class:`Solution`; the full vector ``x`` is formed (one product with
    the basis) only when something asks for it (a field file, a picture, a peak over
    elements). Circuit unknowns (branch voltages, driven currents) come from their rows
    alone, and the postprocessor evaluates totals, terminal quantities and point values
    from projections of the space (:mod:`whorl.postprocess.projected`).
    """

    def __init__(self, system, frequency_hz: float, space: ReducedSpace, coefficients):
        self.system = system
        self.frequency_hz = float(frequency_hz)
        self.space = space
        self.coefficients = np.asarray(coefficients, dtype=complex)
        self.x_rate = None
        self.time_s = None
        self.nonlinear = None
        self._x = None

    @property
    def x(self) -> np.ndarray:
        if self._x is None:
            self._x = self.space.expand(self.coefficients)
        return self._x

    @property
    def branch_u(self) -> np.ndarray:
        nf = self.system.n_field
        return self.space.rows(slice(nf, nf + len(self.system.branches)), self.coefficients)

    def source_current(self, source) -> complex:
        if not current_is_unknown(source):
            return complex(source.current)
        k = self.system.n_field + len(self.system.branches) + self.system.driven.index(source)
        return complex(self.space.rows(k, self.coefficients))
