"""A solved harmonic (or static) state: plain data for the postprocessor."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass
class Solution:
    """The solution of one problem at one frequency.

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
        """The RMS current phasor of a stranded or massive source (A)."""
        if source.voltage is None:
            return complex(source.current)
        k = self.system.driven.index(source)
        return complex(self.x[self.system.n_field + len(self.system.branches) + k])

    def branch_current(self, i: int) -> complex:
        """Net current of branch i (A): sign times its source current, or 0 when free."""
        br = self.system.branches[i]
        src = self.system.source(br.source)
        return 0j if src is None else br.sign * self.source_current(src)
