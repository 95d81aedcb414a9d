"""The saturation level of a B-H curve and its mark on |B| pictures.

Checks:
- for the Frohlich-Kennelly law B = mu0 H + J_s H/(H_k + H) (Bozorth, Ferromagnetism,
  1951, for the form) the level where J reaches 0.9 of its last tabulated value has the
  closed form J = 0.9 J_end at H = J H_k/(J_s - J); the curve is a monotone cubic through
  60 tabulated points, so it agrees to its interpolation error (1e-3);
- a harmonic run of a steel bar deep in saturation marks cells, each at or above
  B_s/sqrt(2) RMS and inside the steel; a weak field marks none; a Curie-reduced
  magnetisation (m = 0) marks none;
- the picture shows the mark: pixels of the mark's colour appear only when cells are marked.
"""

from dataclasses import replace

import matplotlib.image
import numpy as np
import pytest
from test_cylinder import SIGMA, cylinder_problem

from whorl.postprocess.plots import SATURATION_COLOUR, plot_field
from whorl.postprocess.saturation import saturation_marks
from whorl.postprocess.vtu import cell_means
from whorl.solver import Material, skin_depth, solve_harmonic
from whorl.solver.bh import frohlich_kennelly
from whorl.solver.constants import MU0

F = 1000.0


@pytest.mark.parametrize("js, mu_i", [(2.1, 1500.0), (1.5, 500.0)])
def test_level_of_frohlich_kennelly(js, mu_i):
    curve = frohlich_kennelly(js, mu_i, h_max=1e6)
    hk = js / (MU0 * (mu_i - 1))
    j_end = js * 1e6 / (hk + 1e6)
    j = 0.9 * j_end
    h = j * hk / (js - j)
    assert curve.saturation_level() == pytest.approx(j + MU0 * h, rel=1e-3)


STEEL = Material("steel", SIGMA, 600.0, bh_curve=frohlich_kennelly(2.0, 600.0))


def solved(current, magnetisation=None):
    delta = skin_depth(F, SIGMA, 20.0)
    problem, _ = cylinder_problem(4 * delta, delta, 20.0, order=1, per_delta=3)
    problem.materials["bar"] = STEEL
    problem.sources = (replace(problem.sources[0], current=current),)
    if magnetisation is not None:
        problem.element_magnetisation = np.full(problem.mesh.mesh.t.shape[1], magnetisation)
    (sol,), _ = solve_harmonic(problem, [F])
    return sol


def red_pixels(path):
    image = matplotlib.image.imread(path)[..., :3]
    target = np.array([int(SATURATION_COLOUR[k:k + 2], 16) / 255 for k in (1, 3, 5)])
    return int((np.abs(image - target).max(axis=-1) < 0.04).sum())


def test_marks_follow_the_field(tmp_path):
    deep = solved(3000.0)
    b = cell_means(deep).b_rms
    (mark,) = saturation_marks(deep, b)
    bar = np.zeros(b.size, dtype=bool)
    bar[deep.problem.mesh.elements("bar")] = True
    assert mark.level_t == pytest.approx(STEEL.bh_curve.saturation_level() / np.sqrt(2))
    assert mark.saturated.any()
    assert np.all(bar[mark.saturated]) and np.all(b[mark.saturated] >= mark.level_t)
    # every steel cell at or above the level is marked
    assert np.array_equal(mark.saturated, bar & (b >= mark.level_t))
    weak = solved(1.0)
    assert not saturation_marks(weak, cell_means(weak).b_rms)[0].saturated.any()
    hot = solved(3000.0, magnetisation=0.0)
    assert not saturation_marks(hot, cell_means(hot).b_rms)[0].saturated.any()
    # the picture: the mark's colour appears in the saturated case only (the legend's
    # sample line is drawn in both, so compare counts)
    plot_field("flux-density", deep, tmp_path / "deep.png")
    plot_field("flux-density", weak, tmp_path / "weak.png")
    assert red_pixels(tmp_path / "deep.png") > red_pixels(tmp_path / "weak.png") + 20
