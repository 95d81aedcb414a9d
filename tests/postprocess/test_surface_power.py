"""Surface power density: the power entering a conductor through its surface.

Poynting's theorem (J. D. Jackson, Classical Electrodynamics, sec. 6.9): the flux of
Re(E x H*) into a conductor equals its loss; its integral along the outline is checked
against the region's loss within 1 %. On a long cylinder in a long coil the density on
the surface is the Bessel solution's P' / (2 pi a) (E. J. Davies and P. Simpson,
Induction Heating Handbook, 1979).
"""

import csv
import json
from pathlib import Path

import numpy as np
import pytest
from analytic import MU0, cylinder_power_per_length, round_wire_impedance

from whorl.cases.cli import main
from whorl.cases.loader import load_case
from whorl.cases.run import solve_case
from whorl.postprocess.regions import region_totals
from whorl.postprocess.surface import heated_regions, surface_power

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="module")
def cylinder():
    case = load_case(ROOT / "cases" / "verification" / "cylinder-in-coil.toml",
                     {"freq": "5 kHz", "mu": "20"})
    _, (sol,), _ = solve_case(case)
    return sol


def test_integral_equals_the_loss_and_the_bessel_density(cylinder):
    assert heated_regions(cylinder.problem) == ["billet"]
    sp = surface_power(cylinder, "billet")
    loss = region_totals(cylinder)["billet"].loss_w
    assert sp.total_w == pytest.approx(loss, rel=0.01)
    # on the cylinder's side the density is P' / (2 pi a), H0 = N I / h (Ampere)
    side = np.isclose(sp.x[0], 0.02)
    expected = cylinder_power_per_length(10 * 5.0 / 0.01, 0.02, 5.8e6, 20.0, 5e3)
    expected /= 2 * np.pi * 0.02
    assert sp.density_w_per_m2[side] == pytest.approx(np.full(side.sum(), expected),
                                                      rel=0.01)
    # the flux-normal ends and the axis take in nothing; there H comes from inside the
    # skin-deep layer (no element beyond the model's side), so allow 2 % of the side's
    # density as that derivative's discretisation error near the corner
    assert np.all(np.abs(sp.density_w_per_m2[~side]) < 0.02 * expected)
    # arc length runs along the outline without jumps larger than an edge
    assert np.all(np.diff(sp.s_m) >= 0)


def test_planar_plate_beside_bars_through_the_command_line(tmp_path, capsys):
    """A plate at zero net current (its voltage term matters) beside three bus bars."""
    assert main(["run", str(ROOT / "cases" / "examples" / "busbar-cover-plate.toml"),
                 "--out", str(tmp_path), "-q"]) == 0
    out = capsys.readouterr().out
    folder = tmp_path / "busbar-cover-plate"
    results = json.loads((folder / "results.json").read_text())
    cover = results["solutions"][0]["regions"]["cover"]
    with (folder / "surface_cover.csv").open() as fh:
        rows = list(csv.DictReader(fh))
    assert list(rows[0]) == ["s_m", "x_m", "y_m", "power_density_w_per_m2"]
    density = np.array([float(r["power_density_w_per_m2"]) for r in rows])
    assert cover["peak_surface_power_density_w_per_m2"] == pytest.approx(density.max())
    assert cover["surface_power_w"] == pytest.approx(cover["loss_w"], rel=0.01)
    assert (folder / "surface_cover.png").stat().st_size > 0
    assert "peak surface power density" in out and "cover" in out
    # the bars are in sources: no surface file
    assert not list(folder.glob("surface_bar*"))


def test_curved_wire_surface_follows_the_circle():
    """A round copper wire at a/delta = 2 on curved P2 elements (`[mesh] curved`): the
    samples lie on the circle (to the quadratic map's error, far below the chords' 3e-3),
    the density is the same all round (symmetry), and it is R I^2 / (2 pi a) per metre
    with R from the Bessel solution (Ramo, Whinnery and Van Duzer, Fields and Waves in
    Communication Electronics, 1965): within 1 %, as the straight-sided check above."""
    from dataclasses import replace

    sigma, radius, ratio = 1 / 1.68e-8, 0.005, 2.0  # copper (the case's), 5 mm, a/delta
    frequency = ratio**2 / (radius**2 * np.pi * MU0 * sigma)
    case = load_case(ROOT / "cases" / "verification" / "round-wire-skin-effect.toml",
                     {"freq": f"{frequency} Hz"})
    case.geometry = replace(case.geometry, options=replace(case.geometry.options,
                                                           curved=True))
    _, (sol,), _ = solve_case(case)
    sp = surface_power(sol, "wire")
    assert np.max(np.abs(np.hypot(*sp.x) / radius - 1)) < 1e-4
    assert sp.total_w == pytest.approx(region_totals(sol)["wire"].loss_w, rel=0.01)
    expected = round_wire_impedance(radius, sigma, frequency).real / (2 * np.pi * radius)
    assert sp.density_w_per_m2 == pytest.approx(np.full(sp.s_m.size, expected), rel=0.01)
    # the weights add up to the circle's perimeter times the depth (1 m)
    assert sp.weight_m2.sum() == pytest.approx(2 * np.pi * radius, rel=1e-4)
