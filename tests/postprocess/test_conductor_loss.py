"""The heating loop's loss evaluation on conducting elements only equals the full one.

Internal check (no outside source: both compute |J|^2 / sigma with the same formulas):
:class:`whorl.postprocess.heating.FieldEvaluation`, which evaluates the eddy-current loss
on the conducting elements alone (``fields.conductor_loss``), gives the loss density of
every element and the loss of every region of :func:`~whorl.postprocess.fields.
quadrature_fields` and :func:`~whorl.postprocess.regions.region_totals` to round-off, on
models with massive conductors (their applied voltage term), a series capacitor, stranded
windings (no eddy loss) and a free plate, planar and axisymmetric.
"""

import numpy as np
import pytest
from test_symmetrise import PROBLEMS

from whorl.postprocess.fields import quadrature_fields
from whorl.postprocess.heating import FieldEvaluation
from whorl.postprocess.regions import region_totals
from whorl.solver.harmonic import solve_harmonic


@pytest.mark.parametrize("name", ["planar", "axisymmetric"])
def test_conducting_elements_only_equal_the_whole_evaluation(name):
    problem = PROBLEMS[name]()
    solution = solve_harmonic(problem, [2000.0], backend="scipy-superlu")[0][0]
    evaluation = FieldEvaluation()
    density = evaluation.loss_density(solution)
    regions = evaluation.region_losses(solution)
    q = quadrature_fields(solution)
    assert density.shape == q.loss.shape
    assert np.abs(density - q.loss).max() <= 1e-12 * q.loss.max()
    full = {n: t.loss_w for n, t in region_totals(solution, q).items()
            if n in problem.mesh.regions}
    assert set(regions) == set(full)
    total = sum(full.values())
    assert total > 0
    for n, w in full.items():
        assert regions[n] == pytest.approx(w, rel=1e-12, abs=1e-12 * total)
