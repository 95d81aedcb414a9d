"""Convergence order under uniform refinement (as scikit-fem's own tests fit slopes).

The loss is a quadratic functional of the solution, so its error falls as
h^(2p): 2 for P1 and 4 for P2. Reference: the closed form of tests/analytic.py
(Stoll 1974). Slab of 3 skin depths, uniform meshes with 16 to 128 elements across.
"""

import numpy as np
import pytest
from slab import exact_loss, skin_depth, slab_problem

from whorl.postprocess.regions import region_totals
from whorl.solver import solve_harmonic


@pytest.mark.parametrize("order, rate", [(1, 2.0), (2, 4.0)])
def test_loss_error_rate(order, rate):
    f, sigma = 50.0, 5.8e7
    d = 3 * skin_depth(f, sigma, 1.0)
    X = d  # the slab's faces fall on nodes for every n below
    exact = exact_loss(d, X, sigma, 1.0, f, d / 8)
    hs, errors = [], []
    for n in (4, 8, 16, 32):
        xs = np.linspace(-X, X, 4 * n + 1)
        (sol,), _ = solve_harmonic(slab_problem(xs, d, sigma, 1.0, d / 8, order), [f])
        errors.append(abs(region_totals(sol)["slab"].loss_w / exact - 1))
        hs.append(2 * X / (4 * n))
    slope = np.polyfit(np.log(hs), np.log(errors), 1)[0]
    assert slope == pytest.approx(rate, abs=0.1)
    assert errors[-1] < (1e-3 if order == 1 else 1e-7)
