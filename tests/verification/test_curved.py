"""Curved (isoparametric quadratic) elements on a round wire: the internal impedance
against the Bessel-function solution (S. Ramo, J. R. Whinnery, T. Van Duzer, Fields and
Waves in Communication Electronics, 1965, skin effect in round wires), before and after
the element edges follow the circle."""

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from analytic import MU0, round_wire_impedance

from whorl.cases.loader import load_case
from whorl.cases.run import solve_case

CASE = (Path(__file__).resolve().parents[2] / "cases" / "verification"
        / "round-wire-skin-effect.toml")
SIGMA, RADIUS, RATIO = 1 / 1.68e-8, 0.005, 2.0  # copper, 5 mm, a / delta = 2
FREQUENCY = RATIO**2 / (RADIUS**2 * np.pi * MU0 * SIGMA)


def reference_resistance():
    return round_wire_impedance(RADIUS, SIGMA, FREQUENCY).real


def loss_error(curved: bool, size_mm: float | None = None) -> float:
    case = load_case(CASE, {"freq": f"{FREQUENCY} Hz"})
    g = case.geometry
    options = replace(g.options, curved=curved)
    regions = g.regions
    if size_mm is not None:  # the same size on and inside the wire, graded outside
        regions = tuple(replace(r, mesh_size=size_mm) for r in regions)
        options = replace(options, per_skin_depth=RADIUS * 1e3 / RATIO / size_mm)
    case.geometry = replace(g, regions=regions, options=options)
    results, _, _ = solve_case(case)
    loss = results["solutions"][0]["regions"]["wire"]["loss_w"]  # = R with 1 A RMS
    return abs(loss / reference_resistance() - 1)


def test_default_mesh_error_ten_times_smaller():
    """Straight edges: about 3e-3 (the chord error of 40 segments); curved: below 1e-4."""
    straight, curved = loss_error(False), loss_error(True)
    assert straight > 1e-3
    assert curved < 1e-4
    assert straight / curved > 10


def test_convergence_rate_recovers_the_element_order():
    """Loss is an energy: its error falls as h^(2p) = h^4 for P2 once the geometry is
    exact, but only as h^2 with chords (the area error of the polygon). Fitted log-log
    slopes over three halvings of the size."""
    sizes = np.array([0.7, 0.35, 0.175])
    rates = {}
    for curved in (False, True):
        errors = [loss_error(curved, h) for h in sizes]
        rates[curved] = np.polyfit(np.log(sizes), np.log(errors), 1)[0]
    assert rates[False] == pytest.approx(2.0, abs=0.3)
    assert rates[True] > 3.6
