"""Induction heating of a thick bar at a/delta ~ 90 against the semi-infinite solid.

Source: Carslaw and Jaeger, Conduction of Heat in Solids, 1959, section 2.9: a
semi-infinite solid under a constant surface flux F has the surface temperature
rise 2 F sqrt(alpha t / pi) / k. Induction puts the heat in a layer of depth
delta/2 (the loss density falls as exp(-2x/delta)), so at times much longer than
delta^2/alpha the surface rise approaches that value less F (delta/2) / k, the
first-order shift of a source at mean depth delta/2 (derived here from the
same solution by superposition). The bar's radius is 100 times the heat's
penetration (1 m against 10 mm), so its curvature shifts the surface rise by
under 0.5 % at these times.
"""

import math

import numpy as np
from heat_analytic import semi_infinite_surface
from meshing import graded, tensor_mesh

from whorl.postprocess.heating import FieldEvaluation
from whorl.solver import BUILTIN, FluxNormal, Material, Problem, Stranded, skin_depth
from whorl.solver.heating import HeatingStudy, run_heating

A, HEIGHT, F_HZ, SIGMA, K, RHO, C = 1.0, 0.004, 10e3, 5e6, 40.0, 7800.0, 500.0


def test_surface_temperature_approaches_the_semi_infinite_solid():
    delta = skin_depth(F_HZ, SIGMA)
    rs = np.concatenate([graded(0, A, delta / 3, A / 8, 1.25, "b"),
                         graded(A, A + 0.004, delta / 3, 0.002, 1.4, "a")[1:],
                         [A + 0.006, A + 0.01]])
    tm = tensor_mesh(rs, np.linspace(0, HEIGHT, 2),
                     {"bar": lambda r, z: r < A,
                      "coil": lambda r, z: (r > A + 0.004) & (r < A + 0.006)},
                     axisymmetric=True)
    metal = Material("metal", SIGMA, 1.0, thermal_conductivity=K, density=RHO,
                     specific_heat=C)
    problem = Problem(tm, {"bar": metal, "coil": BUILTIN["copper"], "domain": BUILTIN["air"]},
                      sources=(Stranded("coil", ("coil",), turns=1, current=200.0),),
                      boundary={"right": FluxNormal(), "top": FluxNormal(),
                                "bottom": FluxNormal()})
    study = HeatingStudy(F_HZ, 10.0, 0.05, heated=("bar",))
    ev = FieldEvaluation()
    hist = run_heating(problem, study, ev.terminals, ev.loss_density, ev.region_losses)
    assert len(hist.fields) == 1  # constant properties: one field serves the whole run
    flux = hist.fields[0].region_loss_w["bar"] / (2 * math.pi * A * HEIGHT)
    alpha = K / (RHO * C)
    assert delta ** 2 / alpha < 0.6  # the times below are much longer than delta^2/alpha
    r = hist.domain.basis.doflocs[0, hist.domain.active]
    surface = np.argmax(r)
    times = np.array(hist.time_s)
    deviation = []
    for t in (2.0, 5.0, 10.0):
        k = int(np.argmin(np.abs(times - t)))
        rise = hist.temperature_k[k][surface] - 293.15
        flat = semi_infinite_surface(flux, times[k], K, alpha)
        deviation.append(abs(rise - flat) / flat)
    shifted = flat - flux * (delta / 2) / K
    assert abs(rise - shifted) < 0.02 * flat, (rise, shifted, flat)
    assert deviation[2] < deviation[1] < deviation[0] < 0.25  # it approaches F-only solution
