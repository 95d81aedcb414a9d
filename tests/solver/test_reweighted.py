"""The factorised matrix re-weighted per element equals the one assembled and reduced.

Internal check of :mod:`whorl.solver.reweighted` (no outside source is involved: both
sides compute the same matrix, one by a sparse product on a fixed pattern, one by
assembly, reduction and conversion): for random reluctivities of the saturable elements
the two agree to round-off, the pattern does not change between calls, and a rebase on a
new conductivity (a heating study's next field solution), from the reduced matrix or from
the system's own matrices, is followed as well.
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

    # the base from the system's own (unreduced) matrices, twice: the placement is kept
    for factor in (1.0, 2.0):
        rew.rebase_system(system.S0, factor * system.S1, 1j * OMEGA, system.nu[sat.elements])
        expected = assembled(system, sat, nu) + (factor - 1) * 1j * OMEGA * red.S1_ff
        assert np.abs(rew.matrix(nu) - expected).max() <= 1e-13 * np.abs(expected).max()


def test_nonzero_fixed_values_refused():
    system = assemble(problem_with(STEEL, 200.0))
    red = reduce(system)
    red.fixed_values = np.ones_like(red.fixed_values)
    if not red.fixed_values.size:
        pytest.skip("the model has no fixed unknowns")
    with pytest.raises(ValueError, match="fixed unknowns"):
        ReweightedMatrix(red, saturable_part(system))


def test_reweighted_with_glued_unknowns(tmp_path):
    """The same with an open boundary (Kelvin transformation: unknowns glued, P^T S P):
    the bus-bar cover plate demo with its plate on a B-H curve."""
    from pathlib import Path

    from whorl.cases import model
    from whorl.cases.loader import load_case
    from whorl.meshes.build import build_mesh

    demo = Path(__file__).resolve().parents[2] / "cases" / "examples" / "busbar-cover-plate.toml"
    text = demo.read_text().replace('material = "carbon-steel"',
                                    'material = "low-carbon-steel-bh"')
    case_file = tmp_path / "plate.toml"
    case_file.write_text(text)
    case = load_case(case_file)
    problem = model.problem(case, build_mesh(model.sized_geometry(case)))
    system = assemble(problem)
    sat = saturable_part(system)
    red = reduce(system)
    assert red.P is not None and not np.any(red.fixed_values)
    rew = ReweightedMatrix(red, sat)
    nu = system.nu[sat.elements] * 10 ** np.random.default_rng(4).uniform(0, 2, sat.elements.size)
    for rebase in ("reduced", "system"):
        if rebase == "reduced":
            rew.rebase(red.matrix(1.0, 1j * OMEGA), system.nu[sat.elements])
        else:
            rew.rebase_system(system.S0, system.S1, 1j * OMEGA, system.nu[sat.elements])
        plain = assembled(system, sat, nu)
        assert np.abs(rew.matrix(nu) - plain).max() <= 1e-13 * np.abs(plain).max()


def test_reassembled_matrices_keep_their_pattern():
    """A re-assembled S0 or S1 (:mod:`whorl.solver.reassembly`) equals base + change and
    keeps one pattern whatever the change, even one that cancels entries exactly (a
    sparse sum would drop them, and the pattern would follow the values)."""
    from whorl.solver.reassembly import Reassembler

    problem = problem_with(STEEL, 200.0)
    elements = problem.mesh.elements("bar")
    rea = Reassembler(problem, elements)
    base = rea.base
    patterns = set()
    for nu in (base.nu * 2.0, np.where(np.isin(np.arange(base.nu.size), elements), 0.0,
                                       base.nu)):  # the second removes the bar's stiffness
        s0 = rea.stiffness(nu)
        change = rea._stiffness.matrix(nu[elements] - base.nu[elements])
        expected = base.S0 + change
        assert abs(s0 - expected).max() <= 1e-14 * abs(base.S0).max()
        patterns.add((s0.indptr.tobytes(), s0.indices.tobytes()))
    assert len(patterns) == 1
