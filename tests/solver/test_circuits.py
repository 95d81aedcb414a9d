"""Massive conductors in circuits: series, parallel, voltage drive, free conductors.

Checks of circuit laws (Kirchhoff's current and voltage laws, Ohm's law at
DC) and of Poynting's theorem (power balance), on small structured meshes.
"""

import numpy as np
import pytest
from meshing import tensor_mesh

from whorl.postprocess.balance import power_balance
from whorl.postprocess.circuits import source_results
from whorl.postprocess.regions import region_totals
from whorl.solver import (
    BUILTIN,
    Massive,
    Material,
    Problem,
    Shorted,
    Stranded,
    solve_harmonic,
)

CU = BUILTIN["copper"]
STEEL = Material("plate-steel", 5e6, 200.0)


def box(x0, x1, y0, y1):
    return lambda x, y: (x > x0) & (x < x1) & (y > y0) & (y < y1)


def busbar_mesh():
    """Go bar, return bar and a steel plate below them, in a 200 mm x 160 mm box (m)."""
    xs = np.linspace(-0.1, 0.1, 81)
    ys = np.linspace(-0.08, 0.08, 65)
    return tensor_mesh(xs, ys, {
        "go": box(-0.04, -0.02, 0.0, 0.01),
        "back": box(0.02, 0.04, 0.0, 0.01),
        "plate": box(-0.06, 0.06, -0.03, -0.02),
    })


def busbar_problem(source, shorted=()):
    tm = busbar_mesh()
    return Problem(tm, {"go": CU, "back": CU, "plate": STEEL, "domain": BUILTIN["air"]},
                   sources=(source,), shorted=shorted, order=2, depth_m=2.0)


def test_series_go_and_return_and_free_plate():
    """Series massive source: go and return carry +I and -I; the plate, in no source,
    carries zero net current (open ends) but has eddy loss; terminal power equals
    the losses and 2 omega W (Poynting)."""
    current = 1000.0 * np.exp(1j * 0.3)
    problem = busbar_problem(Massive("bus", ("go",), "series", current=current,
                                     return_regions=("back",)))
    (sol,), _ = solve_harmonic(problem, [50.0])
    totals = region_totals(sol)
    assert totals["go"].current_a == pytest.approx(current, rel=1e-9)
    assert totals["back"].current_a == pytest.approx(-current, rel=1e-9)
    assert abs(totals["plate"].current_a) < 1e-9 * abs(current)
    assert totals["plate"].loss_w > 0
    sources = source_results(sol)
    balance = power_balance(sol, totals, sources)
    assert balance["applies"] and balance["relative_mismatch"] < 1e-9
    assert sources["bus"].power_w == pytest.approx(sum(t.loss_w for t in totals.values()),
                                                   rel=1e-3)


def test_shorted_group_currents_sum_to_zero_but_each_flows():
    """Two conductors joined at their ends: each may carry current, their sum is zero."""
    problem = busbar_problem(Stranded("coil", ("go",), turns=5, current=100.0,
                                      return_regions=("back",)))
    problem.materials["go"] = BUILTIN["air"]
    problem.materials["back"] = BUILTIN["air"]
    tm = problem.mesh
    # Split the plate into halves and short them.
    elems = tm.mesh.subdomains["plate"]
    cx = tm.mesh.p[0, tm.mesh.t[:, elems]].mean(axis=0)
    sub = dict(tm.mesh.subdomains)
    sub["left"], sub["right"] = elems[cx < 0], elems[cx >= 0]
    del sub["plate"]
    tm.mesh = tm.mesh.with_subdomains(sub)
    tm.regions = ("go", "back", "left", "right")
    problem.materials.update({"left": STEEL, "right": STEEL})
    del problem.materials["plate"]
    problem.shorted = (Shorted(("left", "right")),)
    (sol,), _ = solve_harmonic(problem, [50.0])
    totals = region_totals(sol)
    i_left, i_right = totals["left"].current_a, totals["right"].current_a
    assert abs(i_left + i_right) < 1e-9 * abs(i_left)
    assert abs(i_left) > 1e-3 * 500  # an induced loop current does flow


def test_parallel_bars_split_by_conductance_at_dc_and_share_voltage():
    """Parallel regions share one voltage: at 0 Hz the current divides in proportion to
    the cross-sections (Ohm's law); at 50 Hz the currents still add up to the source's."""
    xs = np.linspace(-0.05, 0.05, 41)
    ys = np.linspace(-0.05, 0.05, 41)
    tm = tensor_mesh(xs, ys, {"thin": box(-0.03, -0.02, -0.01, 0.01),
                              "thick": box(0.0, 0.03, -0.01, 0.01)})
    problem = Problem(tm, {"thin": CU, "thick": CU, "domain": BUILTIN["air"]},
                      sources=(Massive("pair", ("thin", "thick"), "parallel", current=300.0),))
    dc, ac = solve_harmonic(problem, [0.0, 50.0])[0]
    t = region_totals(dc)
    assert t["thin"].current_a.real == pytest.approx(300.0 * 1 / 4, rel=1e-9)
    assert t["thick"].current_a.real == pytest.approx(300.0 * 3 / 4, rel=1e-9)
    t = region_totals(ac)
    assert t["thin"].current_a + t["thick"].current_a == pytest.approx(300.0, rel=1e-9)
    assert abs(t["thin"].current_a) / abs(t["thick"].current_a) != pytest.approx(1 / 3, rel=1e-3)


@pytest.mark.parametrize("kind", ["massive", "stranded"])
def test_voltage_drive_gives_back_the_current(kind):
    """Drive by the voltage a current-driven run produced: the same current comes back."""
    def source(**drive):
        if kind == "massive":
            return Massive("bus", ("go",), "series", return_regions=("back",), **drive)
        return Stranded("bus", ("go",), turns=3, resistance=0.02, return_regions=("back",),
                        **drive)

    (sol,), _ = solve_harmonic(busbar_problem(source(current=800.0)), [150.0])
    voltage = source_results(sol)["bus"].voltage_v
    (back,), _ = solve_harmonic(busbar_problem(source(voltage=voltage)), [150.0])
    assert source_results(back)["bus"].current_a == pytest.approx(800.0, rel=1e-6)


def test_series_turns_of_an_axisymmetric_coil_carry_the_same_current():
    rs = np.linspace(0, 0.06, 61)
    zs = np.linspace(-0.04, 0.04, 81)
    regions = {f"turn.{k}": box(0.03, 0.036, -0.025 + 0.02 * k, -0.019 + 0.02 * k)
               for k in range(3)}
    regions["billet"] = box(0.0, 0.02, -0.03, 0.03)
    tm = tensor_mesh(rs, zs, regions, axisymmetric=True)
    materials = {name: CU for name in regions} | {"billet": STEEL, "domain": BUILTIN["air"]}
    problem = Problem(tm, materials, sources=(Massive("coil", tuple(f"turn.{k}" for k in range(3)),
                                                      "series", current=500.0),))
    (sol,), _ = solve_harmonic(problem, [3000.0])
    totals = region_totals(sol)
    for k in range(3):
        assert totals[f"turn.{k}"].current_a == pytest.approx(500.0, rel=1e-9)
    # The billet is a closed ring: induced current flows, opposing the coil's.
    assert totals["billet"].current_a.real < 0
    sources = source_results(sol)
    assert power_balance(sol, totals, sources)["relative_mismatch"] < 1e-9
    assert sources["coil"].resistance_ohm > 0 and sources["coil"].inductance_h > 0
