"""Transient rates at the kinks and jumps of a source's waveform.

A loop in air beside a coil in air links flux in proportion to the coil's
current at every instant (no eddy currents anywhere), so by Faraday's law
(EMF = -d(flux linkage)/dt; any electromagnetics text) its EMF is -M di/dt:
constant during a ramp and exactly zero once the current is held. Likewise the
terminal voltage of a current-driven air coil is R i + L di/dt, which after a
current step is R i > 0: it never changes sign.
"""

import numpy as np
import pytest
from test_transient import air_coil

from whorl.postprocess.circuits import source_results
from whorl.postprocess.loops import axisymmetric_loop
from whorl.solver import assemble, solve_harmonic
from whorl.solver.transient import march, time_grid
from whorl.solver.waveforms import Ramp, Step, Table

R_LOOP, Z_LOOP, TURNS = 0.05, 0.01, 5


@pytest.fixture(scope="module")
def flux_per_ampere():
    """Flux through one turn of the loop per ampere of coil current (static solution)."""
    (dc,), _ = solve_harmonic(air_coil(current=1.0), [0.0])
    return axisymmetric_loop(dc, "loop", R_LOOP, Z_LOOP).flux_wb.real


def loop_emf(waveform, end, step):
    states = list(march(assemble(air_coil(waveform=waveform)), end, step, "bdf2"))
    t = np.array([s.time_s for s in states])
    emf = np.array([axisymmetric_loop(s, "loop", R_LOOP, Z_LOOP, TURNS, surface=False).emf_v.real
                    for s in states])
    return t, emf


@pytest.mark.parametrize("rise", [4e-3, 4.35e-3])
def test_ramp_then_hold_gives_zero_emf_after_the_ramp(flux_per_ampere, rise):
    """The ramp's end on the step grid and between two grid instants (a step lands on it)."""
    value, step = 100.0, 1e-3
    t, emf = loop_emf(Ramp(value, rise), 10e-3, step)
    assert rise in t  # a step lands on the breakpoint
    ramp_emf = -TURNS * flux_per_ampere * value / rise
    during = (t > 0) & (t <= rise * (1 + 1e-12))
    assert emf[during] == pytest.approx(np.full(during.sum(), ramp_emf), rel=1e-6)
    after = t > rise * (1 + 1e-12)
    assert np.all(np.abs(emf[after]) < 1e-3 * abs(ramp_emf))


def test_current_step_never_flips_the_terminal_voltage():
    """v = R i + L di/dt of an air coil after a current step: positive, then R i."""
    resistance, current = 0.5, 20.0
    problem = air_coil(resistance=resistance, waveform=Step(current))
    states = list(march(assemble(problem), 5e-3, 1e-4, "bdf2"))
    v = np.array([source_results(s)["coil"].voltage_v.real for s in states[1:]])
    assert np.all(v > 0)
    assert v[1:] == pytest.approx(np.full(v.size - 1, resistance * current), rel=1e-6)


def test_a_table_jump_restarts_the_scheme(flux_per_ampere):
    """A table that ramps up, then falls at once to half (a vertical step), then holds:
    EMF -M di/dt during the ramp, zero while held, the fall's average over the step that
    lands on it (the table holds its later value at a repeated time), then zero."""
    step = 1e-3
    t, emf = loop_emf(Table(((0.0, 0.0), (3e-3, 60.0), (5e-3, 60.0), (5e-3, 30.0))),
                      10e-3, step)
    m = TURNS * flux_per_ampere
    assert emf[(t > 0) & (t <= 3e-3 + 1e-12)] == pytest.approx(-m * 60.0 / 3e-3, rel=1e-6)
    hold = ((t > 3e-3 + 1e-12) & (t < 5e-3 - 1e-12)) | (t > 5e-3 + 1e-12)
    assert np.all(np.abs(emf[hold]) < 1e-3 * m * 60.0 / 3e-3)
    assert emf[np.isclose(t, 5e-3)] == pytest.approx(m * 30.0 / step, rel=1e-6)


def test_time_grid_lands_on_breakpoints_without_slivers():
    grid = time_grid(1.0, 0.1, [0.0, 0.35, 0.5 + 1e-9, 2.0])
    assert 0.35 in grid and 0.5 + 1e-9 in grid and grid[-1] == pytest.approx(1.0)
    assert grid.size == 12 and np.all(np.diff(grid) > 0.04)
