"""The heat equation and its time stepping, against closed forms (no field).

Sources: Carslaw and Jaeger, Conduction of Heat in Solids, 1959 (cylinder with
uniform generation and surface heat transfer: steady state and Bessel series;
see tests/heat_analytic.py); radiation cooling of a lumped body (closed-form
integral). Internal: observed order of the time schemes, energy balance.
"""

import numpy as np
import pytest
from heat_analytic import cylinder_steady, cylinder_transient, radiation_time
from meshing import tensor_mesh

from whorl.solver.boundary import FluxNormal
from whorl.solver.heat import heat_domain
from whorl.solver.heatstep import HeatStepper, Surface
from whorl.solver.materials import Material

A, K, RHO, C, H, Q, TA = 0.02, 40.0, 7800.0, 500.0, 2000.0, 1e7, 293.15
ALPHA = K / (RHO * C)
STEEL = Material("m", 1e6, 1.0, thermal_conductivity=K, density=RHO, specific_heat=C)


def cylinder(n=21, order=2):
    rs = np.linspace(0, A, n)
    tm = tensor_mesh(np.concatenate([rs, [1.5 * A]]), np.linspace(0, 0.002, 2),
                     {"bar": lambda r, z: r < A}, axisymmetric=True)
    dom = heat_domain(tm, order, ["bar"], [("bar",)],
                      {"top": FluxNormal(), "bottom": FluxNormal()})
    stepper = HeatStepper(dom, {"bar": STEEL}, [Surface(("bar",), H, TA)], tolerance_k=1e-9)
    q = np.full((dom.elements.size, dom.basis.X.shape[-1]), Q)
    return dom, stepper, dom.source_vector(q)


def march(stepper, source, size, h, end, bdf2=True):
    hist = [(np.full(size, TA), None)]
    energy = np.zeros(3)
    for n in range(int(round(end / h))):
        r = stepper.step(hist, h, (n + 1) * h, source, bdf2 and n > 0)
        hist = [hist[-1], (r.t, h)]
        energy += (r.induced_j, r.stored_j, r.surface_loss_j)
    return hist[-1][0], energy


def test_cylinder_steady_state_exact():
    """P2 reproduces the quadratic steady profile (Carslaw and Jaeger) to round-off."""
    dom, stepper, source = cylinder(order=2)
    t, _ = march(stepper, source, dom.size, 50.0, 3000.0, bdf2=False)
    r = dom.basis.doflocs[0, dom.active]
    expected = cylinder_steady(r, A, Q, H, K, TA)
    assert np.abs(t - expected).max() < 1e-6 * (expected.max() - TA)


@pytest.mark.parametrize("order", [1, 2])
def test_cylinder_transient_against_bessel_series(order):
    """Centre and surface temperature rise at several times within 1 % of the series."""
    dom, stepper, source = cylinder(n=41 if order == 1 else 21, order=order)
    r = dom.basis.doflocs[0, dom.active]
    centre, surface = np.argmin(r), np.argmax(r)
    hist = [(np.full(dom.size, TA), None)]
    h, t = 0.1, 0.0
    checks = {2.0: None, 10.0: None, 40.0: None}
    for n in range(int(40.0 / h)):
        res = stepper.step(hist, h, t + h, source, n > 0)
        hist = [hist[-1], (res.t, h)]
        t = round(t + h, 10)
        if t in checks:
            checks[t] = res.t.copy()
    for time_s, temps in checks.items():
        exact = cylinder_transient(np.array([0.0, A]), time_s, A, Q, H, K, ALPHA, TA)
        got = temps[[centre, surface]]
        assert np.abs(got - exact).max() < 0.01 * (exact - TA).min(), (time_s, got, exact)


def test_time_scheme_orders():
    """Observed order against a fine-step reference on the same mesh: about 1 for
    implicit Euler, about 2 for BDF2 (internal check: the scheme's consistency)."""
    dom, stepper, source = cylinder(n=11)
    ref, _ = march(stepper, source, dom.size, 0.0125, 4.0)
    rates = {}
    for bdf2 in (False, True):
        errors = [np.abs(march(stepper, source, dom.size, h, 4.0, bdf2)[0] - ref).max()
                  for h in (0.4, 0.2, 0.1)]
        rates[bdf2] = np.polyfit(np.log([0.4, 0.2, 0.1]), np.log(errors), 1)[0]
    assert rates[False] == pytest.approx(1.0, abs=0.15)
    assert rates[True] == pytest.approx(2.0, abs=0.25)


def test_energy_balance_implicit_euler():
    """Implicit Euler conserves energy exactly: induced = stored + surface loss."""
    dom, stepper, source = cylinder(n=11)
    _, (induced, stored, lost) = march(stepper, source, dom.size, 0.5, 20.0, bdf2=False)
    assert abs(induced - stored - lost) < 1e-9 * induced


def test_radiation_cooling_of_a_thin_body():
    """A thin, highly conducting plate (Biot << 1) cooling by radiation only: time to
    fall from 1000 K to 500 K within 0.5 % of the lumped closed form."""
    w, d = 0.001, 0.01   # thickness (x) and height (y) of the plate's cross-section, m
    tm = tensor_mesh(np.linspace(0, w, 3), np.linspace(0, d, 6), {"plate": lambda x, y: x > -1})
    dom = heat_domain(tm, 2, ["plate"], [("plate",)], {"top": FluxNormal(),
                                                      "bottom": FluxNormal()})
    eps, ta = 0.8, 300.0
    metal = Material("p", 1e6, 1.0, thermal_conductivity=400.0, density=2700.0,
                     specific_heat=900.0)
    stepper = HeatStepper(dom, {"plate": metal}, [Surface(("plate",), 0.0, ta, eps)],
                          tolerance_k=1e-8)
    hist = [(np.full(dom.size, 1000.0), None)]
    h, t = 0.25, 0.0
    zero = np.zeros(dom.size)
    while hist[-1][0].mean() > 500.0:
        prev = hist[-1][0].mean()
        res = stepper.step(hist, h, t + h, zero, len(hist) > 1)
        hist = [hist[-1], (res.t, h)]
        t += h
    now = hist[-1][0].mean()
    crossing = t - h * (500.0 - now) / (prev - now)   # linear between the last two steps
    exact = radiation_time(1000.0, 500.0, ta, eps, 2 * d, 2700.0 * 900.0 * w * d)
    assert crossing == pytest.approx(exact, rel=5e-3)


def test_first_guess_is_exact_for_polynomials_of_its_degree():
    """The step's first guess (``heatstep.predict``) through the last three states of
    unequal steps reproduces a quadratic in time exactly, through the last two a linear
    one (Lagrange interpolation); it only sets where the iteration starts."""
    from whorl.solver.heatstep import predict

    def quadratic(t):
        return np.array([1.0 + 2.0 * t - 3.0 * t * t, -0.5 * t * t])

    def linear(t):
        return np.array([4.0 - t, 2.0 * t])

    times = [0.0, 0.3, 0.45]  # steps 0.3 and 0.15, then 0.2
    for f, quad in ((quadratic, True), (linear, False)):
        history = [(f(times[0]), None), (f(times[1]), 0.3), (f(times[2]), 0.15)]
        assert np.allclose(predict(history, 0.2, quadratic=quad), f(0.65), rtol=0, atol=1e-13)
    curved = [(quadratic(times[0]), None), (quadratic(times[1]), 0.3),
              (quadratic(times[2]), 0.15)]
    assert not np.allclose(predict(curved, 0.2, quadratic=False), quadratic(0.65))
