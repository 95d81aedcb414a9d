"""Stepped sources in time: diffusion, R-L switching, capacitor discharges, steady state,
energy bookkeeping."""

import numpy as np
import pytest
from analytic import MU0, rlc_discharge, slab_step_flux
from meshing import graded, tensor_mesh
from test_circuits import box

from whorl.postprocess.regions import region_totals
from whorl.postprocess.series import SeriesRecorder
from whorl.solver import (
    BUILTIN,
    FluxNormal,
    FluxParallel,
    Massive,
    Material,
    Problem,
    Stranded,
    assemble,
    solve_harmonic,
)
from whorl.solver.transient import march
from whorl.solver.waveforms import Sine, Step

SIGMA = 5.8e7
HALF = 0.01  # m, half thickness of the slab
TAU = MU0 * SIGMA * HALF**2  # diffusion time constant mu sigma L^2


def half_slab_system():
    """Half a slab (0 < x < L) behind a current sheet; the mid-plane x = 0 is a symmetry
    plane (A = 0), the outer side and top/bottom are flux-normal, so the surface field is
    N i / h at every instant (Ampere's law). The slab is driven at 0 V (u = 0): an
    infinitely long conductor, no electrostatic field."""
    L, gap, sheet, height = HALF, 0.002, 0.001, 0.004
    xs = np.concatenate([graded(0, L, L / 60, L / 15, 1.1, "b"),
                         np.linspace(L, L + gap, 5)[1:],
                         np.linspace(L + gap, L + gap + sheet, 3)[1:]])
    tm = tensor_mesh(xs, np.linspace(0, height, 2),
                     {"slab": lambda x, y: x < L,
                      "sheet": lambda x, y: x > L + gap})
    turns, current = 10, 40.0
    problem = Problem(tm, {"slab": Material("cu", SIGMA, 1.0), "sheet": BUILTIN["air"],
                           "domain": BUILTIN["air"]},
                      sources=(Stranded("sheet", ("sheet",), turns=turns, waveform=Step(current)),
                               Massive("slab", ("slab",), drive="voltage", waveform=Step(0.0))),
                      boundary={"left": FluxParallel(), "right": FluxNormal(),
                                "top": FluxNormal(), "bottom": FluxNormal()}, order=2)
    return assemble(problem), turns * current / height, height


def slab_flux(system, step, scheme, end):
    """Flux per metre of height in the slab at ``end``: the integral of B_y over 0 < x < L,
    which is A(0) - A(L). It is negative: the sheet's current runs along +z on the slab's
    right, so the field beside it points along -y (right-hand rule)."""
    from whorl.postprocess.probes import probe

    *_, last = march(system, end, step, scheme)
    a = probe(last, np.array([[HALF, 0.0], [0.001, 0.001]])).a.real
    return -(a[0] - a[1])


@pytest.fixture(scope="module")
def slab():
    return half_slab_system()


def test_diffusion_into_a_slab_matches_the_series_solution(slab):
    """Carslaw and Jaeger, section 3.3, by the analogy of magnetic diffusion and heat
    conduction: flux in the slab against time within 1 % (BDF2, h = tau/200)."""
    system, h0, _ = slab
    for end in (0.1 * TAU, 0.5 * TAU):
        flux = -slab_flux(system, TAU / 200, "bdf2", end)
        assert flux == pytest.approx(slab_step_flux(end, HALF, SIGMA, 1.0, h0)[0], rel=0.01)


@pytest.mark.parametrize("scheme, order", [("implicit-euler", 1.0), ("bdf2", 2.0)])
def test_observed_order_in_time(slab, scheme, order):
    """Error against a fine-step reference halves (Euler) or quarters (BDF2) with the step."""
    system, _, _ = slab
    end = 0.3 * TAU
    reference = slab_flux(system, TAU / 1600, "bdf2", end)
    steps = [TAU / 20, TAU / 40, TAU / 80]
    errors = [abs(slab_flux(system, h, scheme, end) - reference) for h in steps]
    slope = np.polyfit(np.log(steps), np.log(errors), 1)[0]
    assert slope == pytest.approx(order, abs=0.15)


def air_coil(**source):
    rs = np.linspace(0, 0.08, 33)
    zs = np.linspace(-0.06, 0.06, 49)
    tm = tensor_mesh(rs, zs, {"coil": box(0.02, 0.03, -0.02, 0.02)}, axisymmetric=True)
    return Problem(tm, {"coil": BUILTIN["copper"], "domain": BUILTIN["air"]},
                   sources=(Stranded("coil", ("coil",), turns=100, **source),), order=2)


@pytest.fixture(scope="module")
def coil_inductance():
    (dc,), _ = solve_harmonic(air_coil(current=1.0), [0.0])
    from whorl.postprocess.circuits import source_results

    return source_results(dc)["coil"].inductance_h


def test_rl_switch_on(coil_inductance):
    """i(t) = V/R (1 - exp(-t R/L)) with L from the static solution (any circuits text)."""
    R, V = 2.0, 10.0
    tau = coil_inductance / R
    problem = air_coil(resistance=R, drive="voltage", waveform=Step(V))
    system = assemble(problem)
    states = list(march(system, 3 * tau, tau / 100, "bdf2"))
    t = np.array([s.time_s for s in states])
    i = np.array([s.source_current(problem.sources[0]).real for s in states])
    expected = V / R * (1 - np.exp(-t / tau))
    assert np.max(np.abs(i - expected)) < 0.01 * V / R


@pytest.mark.parametrize("resistance", [0.0, 0.5])
def test_capacitor_discharge(coil_inductance, resistance):
    """Undamped and damped R-L-C discharge: peak current and its time within 1 %."""
    C, V0 = 100e-6, 400.0
    L = coil_inductance
    period = 2 * np.pi * np.sqrt(L * C)
    problem = air_coil(resistance=resistance, capacitance=C, initial_voltage=V0)
    rec = SeriesRecorder()
    for state in march(assemble(problem), 0.6 * period, period / 400, "bdf2"):
        rec.add(state)
    t = np.array(rec.time_s)
    i = np.array(rec.sources["coil"]["current_a"])
    fine = np.linspace(0, 0.6 * period, 20001)
    exact = rlc_discharge(fine, C, L, resistance, V0)
    k = np.argmax(i)
    # The sampled peak sits within half a step of the true one; compare the peak of a
    # parabola through the three samples around it.
    c = np.polyfit(t[k - 1:k + 2], i[k - 1:k + 2], 2)
    t_peak, i_peak = -c[1] / (2 * c[0]), np.polyval(c, -c[1] / (2 * c[0]))
    assert i_peak == pytest.approx(exact.max(), rel=0.01)
    assert t_peak == pytest.approx(fine[np.argmax(exact)], rel=0.01)
    balance = rec.energy_balance()
    assert balance["relative_mismatch"] < 0.005
    # The capacitor's energy went into the coil: 1/2 C (V0^2 - v^2) = delivered energy.
    v_end = rec.sources["coil"]["capacitor_voltage_v"][-1]
    assert 0.5 * C * (V0**2 - v_end**2) == pytest.approx(balance["delivered_j"], rel=0.005)


def test_sine_reaches_the_harmonic_losses():
    """A sine run to steady state gives the harmonic study's losses within 1 %, averaged
    over the last cycle."""
    f, i_rms = 200.0, 50.0
    rs = np.linspace(0, 0.05, 41)
    zs = np.linspace(-0.04, 0.04, 41)
    tm = tensor_mesh(rs, zs, {"billet": box(0.0, 0.01, -0.015, 0.015),
                              "coil": box(0.015, 0.02, -0.015, 0.015)}, axisymmetric=True)
    materials = {"billet": BUILTIN["aluminium"], "coil": BUILTIN["copper"],
                 "domain": BUILTIN["air"]}
    harmonic = Problem(tm, materials, sources=(Stranded("coil", ("coil",), 20, current=i_rms),))
    (sol,), _ = solve_harmonic(harmonic, [f])
    p_harmonic = region_totals(sol)["billet"].loss_w
    stepped = Problem(tm, materials, sources=(Stranded("coil", ("coil",), 20,
                                                       waveform=Sine(np.sqrt(2) * i_rms, f)),))
    per_cycle, cycles = 80, 6
    rec = SeriesRecorder()
    for state in march(assemble(stepped), cycles / f, 1 / (f * per_cycle), "bdf2"):
        rec.add(state)
    loss = np.array(rec.regions["billet"]["loss_w"])
    t = np.array(rec.time_s)
    last = t >= (cycles - 1) / f - 1e-12
    mean = np.trapezoid(loss[last], t[last]) / (t[last][-1] - t[last][0])
    assert mean == pytest.approx(p_harmonic, rel=0.01)
    assert rec.energy_balance()["relative_mismatch"] < 0.005
