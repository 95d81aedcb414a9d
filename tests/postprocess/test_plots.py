"""PNG pictures: every plot kind, line plots and frequency curves, read back with matplotlib."""

from functools import cache

import matplotlib.image
import numpy as np
import pytest
from test_vtu import axisymmetric_p2_mixed, open_planar, planar_p2

from whorl.postprocess.plots import (
    PLOTS,
    plot_field,
    plot_frequency_curves,
    plot_line,
    register_plot,
)
from whorl.postprocess.records import solution_record
from whorl.postprocess.tables import line_rows
from whorl.solver import solve_harmonic

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
MODELS = {"planar": planar_p2, "axisymmetric": axisymmetric_p2_mixed, "open": open_planar}


@cache
def sweep():
    """The planar model at 0 Hz and three more frequencies, plus its 400 Hz solution."""
    sols, _ = solve_harmonic(planar_p2().problem, [0.0, 50.0, 3200.0])
    return [sols[0], sols[1], planar_p2(), sols[2]]


def check_png(path, min_size=(150, 200)):
    """A PNG that is not blank: the signature, a plausible size, pixels that vary."""
    assert path.read_bytes()[:8] == PNG_SIGNATURE
    image = matplotlib.image.imread(path)
    assert image.ndim == 3 and image.shape[2] in (3, 4)
    assert image.shape[0] >= min_size[0] and image.shape[1] >= min_size[1]
    assert image[..., :3].var() > 1e-4
    return image


@pytest.mark.parametrize("model", list(MODELS))
@pytest.mark.parametrize("kind", ["flux-lines", "flux-density", "current-density",
                                  "loss-density"])
def test_every_kind_writes_a_picture(tmp_path, kind, model):
    path = tmp_path / f"{kind}.png"
    assert plot_field(kind, MODELS[model](), path, dpi=50) == path
    check_png(path)


def test_the_four_kinds_are_registered_and_unknown_ones_refused(tmp_path):
    assert {"flux-lines", "flux-density", "current-density", "loss-density"} <= set(PLOTS)
    with pytest.raises(ValueError, match="unknown plot kind 'nope'"):
        plot_field("nope", planar_p2(), tmp_path / "x.png")


def test_register_a_new_kind(tmp_path):
    seen = []

    @register_plot("test-kind")
    def draw(solution, path, **options):
        seen.append((solution.frequency_hz, options))
        return path

    try:
        plot_field("test-kind", planar_p2(), tmp_path / "t.png", dpi=10)
        assert seen == [(400.0, {"dpi": 10})]
    finally:
        del PLOTS["test-kind"]


def test_static_solution_has_no_loss_but_still_a_picture(tmp_path):
    sol = sweep()[0]
    for kind in ("loss-density", "flux-lines"):
        check_png(plot_field(kind, sol, tmp_path / f"{kind}.png", dpi=50))


def test_line_plot_one_and_several_frequencies(tmp_path):
    sol = planar_p2()
    start, end = [-0.08, 0.005], [0.08, 0.005]  # through both bars
    header, rows = line_rows(sol, start, end, 81, 1e-3, "mm")
    check_png(plot_line(header, rows, tmp_path / "one.png", title="across", dpi=50))
    table = []
    for s in sweep()[1:3]:
        h, r = line_rows(s, start, end, 81, 1e-3, "mm")
        table += [[s.frequency_hz, *row] for row in r]
    check_png(plot_line(["frequency_hz", *h], table, tmp_path / "two.png", dpi=50))


def test_frequency_curves(tmp_path):
    records = [solution_record(s) for s in sweep()]
    image = check_png(plot_frequency_curves(records[:0:-1], tmp_path / "f.png", dpi=50))
    assert image.shape[0] > image.shape[1]  # three panels stacked
    # With 0 Hz the frequency axis is linear.
    check_png(plot_frequency_curves(records, tmp_path / "g.png", dpi=50))


def test_plots_differ_between_quantities(tmp_path):
    """The four kinds draw different pictures of the same solution."""
    sol = axisymmetric_p2_mixed()
    images = [check_png(plot_field(k, sol, tmp_path / f"{k}.png", dpi=50)) for k in PLOTS
              if k in ("flux-lines", "flux-density", "current-density", "loss-density")]
    for a in range(len(images)):
        for b in range(a + 1, len(images)):
            assert images[a].shape != images[b].shape or not np.array_equal(images[a], images[b])
