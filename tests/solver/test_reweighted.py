"""The factorised matrix re-weighted per element equals the one assembled and reduced.

Internal check of :mod:`whorl.solver.reweighted` (no outside source is involved: both
sides compute the same matrix, one by a sparse product on a fixed pattern, one by
assembly, reduction and conversion): for random reluctivities of the saturable elements
the two agree to round-off, the pattern does not change between calls, and a rebase on a
new conductivity (a heating study's next field solution) is followed as well.
"""

import numpy as np
import pytest
from test_saturable_harmonic import STEEL, problem_with

from whorl.solver.effective import with_reluctivity
from whorl.solver.reduction import reduce
from whorl.solver.reweighted import ReweightedMatrix
from whorl.solver.saturable import base_matrix, saturable_part
from whorl.solver.system import assemble

OMEGA = 2 * np.pi * 1000.0


def assembled(system, sat, nu):
    """The matrix the plain path factorises: assemble S0 at ``nu``, reduce, combine."""
    without = base_matrix(system, sat)
    state = with_reluctivity(system, sat, nu,
                             lambda n: (without + sat.stiffness(n[sat.elements])).tocsr())
    return reduce(state).matrix(1.0, 1j * OMEGA)


def test_reweighted_equals_assembled():
    system = assemble(problem_with(STEEL, 200.0))
    sat = saturable_part(system)
    red = reduce(system)
    assert not np.any(red.fixed_values)
    rew = ReweightedMatrix(red, sat)
    rew.rebase(red.matrix(1.0, 1j * OMEGA), system.nu[sat.elements])
    rng = np.random.default_rng(3)
    patterns = set()
    for _ in range(3):
        nu = system.nu[sat.elements] * 10 ** rng.uniform(0, 2.5, sat.elements.size)
        fast, plain = rew.matrix(nu), assembled(system, sat, nu)
        scale = np.abs(plain).max()
        assert np.abs(fast - plain).max() <= 1e-13 * scale
        patterns.add((fast.indptr.tobytes(), fast.indices.tobytes()))
    assert len(patterns) == 1  # one pattern: a backend keeps its analysis

    # a new base (another conductivity, as the next field solution of a heating study)
    doubled = red.S0_ff + 2j * OMEGA * red.S1_ff
    rew.rebase(doubled, system.nu[sat.elements])
    nu = system.nu[sat.elements] * 3.0
    expected = assembled(system, sat, nu) + 1j * OMEGA * red.S1_ff
    assert np.abs(rew.matrix(nu) - expected).max() <= 1e-13 * np.abs(expected).max()


def test_nonzero_fixed_values_refused():
    system = assemble(problem_with(STEEL, 200.0))
    red = reduce(system)
    red.fixed_values = np.ones_like(red.fixed_values)
    if not red.fixed_values.size:
        pytest.skip("the model has no fixed unknowns")
    with pytest.raises(ValueError, match="fixed unknowns"):
        ReweightedMatrix(red, saturable_part(system))
