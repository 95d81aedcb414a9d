"""Heating studies of steel with a B-H curve: effective permeability at the local temperature.

Checks (sources named):
- below the Curie point at a low field the effective permeability is the curve's initial
  one (the fundamental of B for a small sinusoidal H is mu_initial H: Taylor expansion of
  the curve; initial permeability as defined by Bozorth, Ferromagnetism, 1951), so the
  field solution equals that of the linear material with that permeability and the
  same temperature tables (0.5 %: a heating field solution stops at a 1e-2 change of
  the reluctivity, the loss moves less than the reluctivity, and the curve departs from
  linear by about 1e-3 at that field; 3e-4 measured);
- far above the Curie point the magnetisation is gone (B = mu0 H, the definition of the
  Curie point, Kittel, Introduction to Solid State Physics), so the curve and any linear
  permeability give the same field (1e-9: the same system);
- the Curie point in a heating run at constant coil current: the loss falls sharply when
  the surface passes it and the power moves inward (Davies and Simpson, Induction Heating
  Handbook, 1979: the power of a bar at a/delta >> 1 goes as sqrt(rho mu_r)); the energy
  balance holds within its 1 % tolerance;
- a power-controlled source on saturable steel: the drive found inside the effective
  iteration meets the power, and a separate effective solution at that drive (cold start,
  fixed current) gives the same loss (0.5 %: the heating field stops at a 1e-2 change of
  nu, the separate solution at 1e-3, and the loss moves less than nu; 7e-4 measured).
"""

from dataclasses import replace

import numpy as np
import pytest
from test_curie import A, bar_in_coil, loss_depth

from whorl.postprocess.heating import FieldEvaluation
from whorl.solver import BUILTIN
from whorl.solver.effective import EffectiveSystem
from whorl.solver.heating import HeatingStudy, run_heating
from whorl.solver.heating_field import FieldSolver
from whorl.solver.heatstep import Surface
from whorl.solver.linalg import choose
from whorl.solver.supply import Supply, with_drive
from whorl.solver.system import assemble

STEEL = BUILTIN["medium-carbon-steel-bh"]


def linear_twin(steel):
    """The same steel without its curve: the curve's initial permeability, same tables."""
    return replace(steel, bh_curve=None,
                   relative_permeability=steel.bh_curve.initial_relative_permeability)


def field_at(problem, temperature_c, supplies=None):
    """One field solution of the bar at a uniform temperature; (loss W, record)."""
    study = HeatingStudy(1000.0, 1.0, 0.1, heated=("bar",), supplies=supplies or {})
    ev = FieldEvaluation()
    solver = FieldSolver(problem, study, ev.terminals, ev.loss_density, ev.region_losses,
                         backend="scipy-superlu")
    n_el = problem.mesh.mesh.t.shape[1]
    heated = problem.mesh.elements("bar")
    record = solver.solve(np.full(n_el, temperature_c + 273.15), 0.0, heated)
    return record.region_loss_w["bar"], record


def field_sequence(problem, study, temperatures, heated):
    """Field solutions of one FieldSolver (warm-started from each other) at the element
    temperatures ``temperatures`` (K, one array per solution), 0.1 s apart."""
    ev = FieldEvaluation()
    solver = FieldSolver(problem, study, ev.terminals, ev.loss_density, ev.region_losses,
                         backend="scipy-superlu")
    return [solver.solve(t, 0.1 * k, heated) for k, t in enumerate(temperatures)]


def with_bar(problem, material):
    return replace(problem, materials={**problem.materials, "bar": material})


def test_low_field_below_curie_is_the_initial_permeability():
    # 0.01 A-turns over 4 mm: H ~ 2.5 A/m, a thousandth of the curve's knee (2.66 kA/m)
    problem = bar_in_coil(0.01)
    saturable, _ = field_at(with_bar(problem, STEEL), 300.0)
    linear, _ = field_at(with_bar(problem, linear_twin(STEEL)), 300.0)
    assert saturable == pytest.approx(linear, rel=5e-3)
    # and not by accident: at 20 degC the conductivity differs, so the loss does
    cold, _ = field_at(with_bar(problem, STEEL), 20.0)
    assert abs(cold / saturable - 1) > 0.1


def test_far_above_curie_curve_and_linear_give_the_same_field():
    problem = bar_in_coil(700.0)
    saturable, rec_s = field_at(with_bar(problem, STEEL), 900.0)
    linear, rec_l = field_at(with_bar(problem, linear_twin(STEEL)), 900.0)
    assert saturable == pytest.approx(linear, rel=1e-9)
    np.testing.assert_allclose(rec_s.solution.system.nu[problem.mesh.elements("bar")],
                               1 / 4e-7 / np.pi, rtol=1e-6)
    # below the Curie point the curve's field differs from mu0's
    cold, _ = field_at(with_bar(problem, STEEL), 500.0)
    assert cold > 1.5 * saturable


def test_curie_point_with_a_curve_loss_falls_and_moves_inward():
    problem = with_bar(bar_in_coil(700.0), STEEL)
    study = HeatingStudy(1000.0, 7.0, 0.05, heated=("bar",),
                         surfaces=(Surface(("bar",), 10.0, 293.15),))
    ev = FieldEvaluation()
    hist = run_heating(problem, study, ev.terminals, ev.loss_density, ev.region_losses)
    r = hist.domain.basis.doflocs[0, hist.domain.active]
    surface = np.argmax(r)
    assert r[surface] == pytest.approx(A)
    loss = [f.region_loss_w["bar"] for f in hist.fields]
    surface_c = [hist.temperature_k[hist.field_index.index(i)][surface] - 273.15
                 for i in range(len(hist.fields))]
    top = int(np.argmax(loss))
    assert 700 < surface_c[top] < 780          # the peak comes near the Curie point (770)
    assert surface_c[-1] > 850                 # and the surface has passed it
    assert loss[-1] < 0.75 * loss[top]         # the loss falls sharply
    assert loss_depth(hist, hist.fields[-1]) > 1.5 * loss_depth(hist, hist.fields[top])
    assert all(f.nonlinear["converged"] for f in hist.fields)
    # only the last field solution is kept whole: memory does not grow with the run
    assert hist.fields[-1].solution is hist.last_solution
    assert hist.last_solution is not None
    assert all(f.solution is None and f.solved for f in hist.fields[:-1])
    balance = (hist.induced_j - hist.stored_j - hist.surface_loss_j) / hist.induced_j
    assert abs(balance) < 0.01


def test_power_source_on_saturable_steel_meets_its_power_consistently():
    problem = with_bar(bar_in_coil(1.0), STEEL)
    target = 2000.0
    loss, record = field_at(problem, 300.0, {"coil": Supply("coil", power_w=target)})
    current, voltage = record.sources["coil"]
    assert (voltage * current.conjugate()).real == pytest.approx(target, rel=1e-6)
    assert record.linear_solutions > 2            # the field did depend on the amplitude
    # the same drive as a fixed current, solved on its own from a cold start
    fixed = with_drive(replace(problem, element_temperature_k=np.full(
        problem.mesh.mesh.t.shape[1], 573.15)), {"coil": current})
    solution = EffectiveSystem(assemble(fixed), choose("scipy-superlu")[1]).solve(1000.0)
    alone = FieldEvaluation().region_losses(solution)["bar"]
    assert alone == pytest.approx(loss, rel=5e-3)


def test_accelerated_warm_started_field_solutions_agree_with_plain_ones(monkeypatch):
    """The heating field's Anderson acceleration, its secant memory across solutions and
    the extrapolated start change only the number of linear solutions: the losses of a
    sequence of field solutions at rising temperatures agree with cold-started plain
    iterations to the iteration's tolerance (0.5 %), with fewer solutions in all."""
    import whorl.solver.heating_field as heating_field

    problem = with_bar(bar_in_coil(700.0), STEEL)
    n_el = problem.mesh.mesh.t.shape[1]
    heated = problem.mesh.elements("bar")
    r = problem.mesh.mesh.p[0, problem.mesh.mesh.t].mean(axis=0)[heated]
    steps = [293.15 + 25.0 * k * np.exp(-(A - r) / 0.002) for k in range(5)]
    study = HeatingStudy(1000.0, 1.0, 0.1, heated=("bar",))

    temperatures = []
    for t in steps:
        temperature = np.full(n_el, 293.15)
        temperature[heated] = t
        temperatures.append(temperature)
    fast = field_sequence(problem, study, temperatures, heated)
    monkeypatch.setattr(heating_field, "ACCELERATE", False)
    monkeypatch.setattr(heating_field, "PREDICT", False)
    plain = field_sequence(problem, study, temperatures, heated)
    for a, b in zip(fast, plain, strict=True):
        assert a.region_loss_w["bar"] == pytest.approx(b.region_loss_w["bar"], rel=5e-3)
    assert sum(a.linear_solutions for a in fast) < sum(b.linear_solutions for b in plain)
    assert fast[-1].region_loss_w["bar"] != pytest.approx(fast[0].region_loss_w["bar"],
                                                          rel=2e-2)
