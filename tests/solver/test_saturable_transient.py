"""Transient nonlinear diffusion: a saturable steel slab whose faces are stepped to a field.

Reference: the 1D magnetic diffusion equation d2H/dx2 = sigma dB(H)/dt (Faraday's and
Ampere's laws in a conductor, any eddy-current text, e.g. R. L. Stoll, *The Analysis of
Eddy Currents*, 1974, ch. 1), solved in the test by the method of lines (second-order
differences in x, SciPy's stiff BDF integrator in t) on the analytic Frohlich-Kennelly
curve, and checked for grid convergence (two grids agree to 0.1 %). whorl gets the same
curve as 40 tabulated points and a planar model: the slab between two air gaps and two
thin current sheets (a stranded go and return) whose current steps on at t = 0+, so that
by Ampere's law the field in the gaps, and at the slab's faces, is H0 = I / height at
once, as inside a long solenoid. The flux through the slab
agrees within 2 % at three instants while the saturation front crosses it.
"""

import numpy as np
import pytest
from meshing import tensor_mesh
from scipy.integrate import solve_ivp
from scipy.sparse import diags

from whorl.postprocess.regions import region_totals
from whorl.solver import FluxNormal, Material, Problem, Stranded, solve_harmonic
from whorl.solver.bh import BHCurve
from whorl.solver.constants import MU0
from whorl.solver.system import assemble
from whorl.solver.transient import march
from whorl.solver.waveforms import Sine, Step

JS, MU_I = 2.0, 600.0
HK = JS / (MU0 * (MU_I - 1))
SIGMA, HALF, H0 = 5e6, 5e-3, 2e4
HEIGHT = 2e-4
TIMES = (1e-3, 3e-3, 8e-3)


def law(h):
    return MU0 * h + JS * h / (HK + h)


def slope(h):
    return MU0 + JS * HK / (HK + h) ** 2


def reference_flux(n):
    """Flux per metre through the slab from the 1D equation on n intervals of the half."""
    x = np.linspace(0, HALF, n + 1)
    dx = x[1] - x[0]

    def rhs(t, h):
        full = np.concatenate([h, [H0]])  # the face holds H0
        lap = np.empty_like(h)
        lap[0] = 2 * (full[1] - full[0]) / dx**2  # symmetry at the mid-plane
        lap[1:] = (full[2:] - 2 * full[1:-1] + full[:-2]) / dx**2
        return lap / (SIGMA * slope(h))

    pattern = diags([1.0, 1.0, 1.0], [-1, 0, 1], shape=(n, n))
    sol = solve_ivp(rhs, (0, TIMES[-1]), np.zeros(n), method="BDF", t_eval=TIMES,
                    rtol=1e-7, atol=1e-6 * H0, jac_sparsity=pattern)
    out = []
    for k in range(len(TIMES)):
        b = law(np.concatenate([sol.y[:, k], [H0]]))
        out.append(2 * np.trapezoid(b, x))
    return np.array(out)


@pytest.fixture(scope="module")
def reference():
    coarse, fine = reference_flux(100), reference_flux(200)
    assert np.allclose(coarse, fine, rtol=1e-3)  # grid-converged
    return fine


def test_slab_flux_against_1d_diffusion(reference):
    h = np.concatenate([[0.0], np.geomspace(HK * 1e-3, 1e6, 39)])
    curve = BHCurve.from_points(h, law(h))
    gap, sheet, outer = 1e-3, 1e-3, 2e-3
    xs = np.concatenate([np.linspace(-HALF - gap - sheet - outer, -HALF - gap - sheet, 3),
                         np.linspace(-HALF - gap - sheet, -HALF, 5)[1:-1],
                         np.linspace(-HALF, HALF, 21),
                         np.linspace(HALF, HALF + gap + sheet, 5)[1:-1],
                         np.linspace(HALF + gap + sheet, HALF + gap + sheet + outer, 3)])
    height = 2e-4
    mesh = tensor_mesh(xs, np.array([0.0, height]),
                       {"slab": lambda x, y: np.abs(x) < HALF,
                        "go": lambda x, y: (x > HALF + gap) & (x < HALF + gap + sheet),
                        "back": lambda x, y: (x < -HALF - gap) & (x > -HALF - gap - sheet)})
    # go along +z at x > 0 and back at x < 0: H_y = -I/height between them (sign does
    # not matter for the flux's magnitude)
    source = Stranded("sheet", ("go",), turns=1.0, return_regions=("back",),
                      waveform=Step(H0 * height))
    problem = Problem(mesh, {"slab": Material("steel", SIGMA, MU_I, bh_curve=curve),
                             "go": Material("air"), "back": Material("air"),
                             "domain": Material("air")},
                      sources=(source,),
                      # outside the sheets H = 0: the left side flux-normal lets the flux
                      # close at infinity; the right side (A = 0) fixes the gauge
                      boundary={"top": FluxNormal(), "bottom": FluxNormal(),
                                "left": FluxNormal()}, order=2)
    system = assemble(problem)
    step = 1e-4
    got = {}
    left = np.flatnonzero(np.isclose(system.basis.doflocs[0], -HALF))
    right = np.flatnonzero(np.isclose(system.basis.doflocs[0], HALF))
    iterations = []
    for state in march(system, TIMES[-1], step, "bdf2", backend="scipy-superlu"):
        if state.nonlinear:
            assert state.nonlinear["converged"]
            iterations.append(state.nonlinear["iterations"])
        for t in TIMES:
            if abs(state.time_s - t) < step / 2:
                a = state.a.real
                # planar: By = -dA/dx, so the flux per metre is A(-d) - A(d)
                got[t] = a[left].mean() - a[right].mean()
    flux = np.abs([got[t] for t in TIMES])
    print("slab flux", flux, "reference", reference, "relative", flux / reference - 1)
    np.testing.assert_allclose(flux, reference, rtol=0.02)
    assert max(iterations) <= 12


def slab_problem(curve, nx, source):
    """The slab between two current sheets (see the module notes), order 2."""
    gap, sheet, outer = 1e-3, 1e-3, 2e-3
    xs = np.concatenate([np.linspace(-HALF - gap - sheet - outer, -HALF - gap - sheet, 3),
                         np.linspace(-HALF - gap - sheet, -HALF, 5)[1:-1],
                         np.linspace(-HALF, HALF, nx),
                         np.linspace(HALF, HALF + gap + sheet, 5)[1:-1],
                         np.linspace(HALF + gap + sheet, HALF + gap + sheet + outer, 3)])
    mesh = tensor_mesh(xs, np.array([0.0, HEIGHT]),
                       {"slab": lambda x, y: np.abs(x) < HALF,
                        "go": lambda x, y: (x > HALF + gap) & (x < HALF + gap + sheet),
                        "back": lambda x, y: (x < -HALF - gap) & (x > -HALF - gap - sheet)})
    return Problem(mesh, {"slab": Material("steel", SIGMA, MU_I, bh_curve=curve),
                          "go": Material("air"), "back": Material("air"),
                          "domain": Material("air")},
                   sources=(source,),
                   # outside the sheets H = 0: the left side flux-normal lets the flux
                   # close at infinity; the right side (A = 0) fixes the gauge
                   boundary={"top": FluxNormal(), "bottom": FluxNormal(),
                             "left": FluxNormal()}, order=2)


def test_sine_transient_against_effective_permeability():
    """Sine-driven faces (H0 = 20 kA/m peak at 200 Hz: the surface deep in saturation),
    marched to a periodic state (5 periods, 40 steps each; the decay time of the start,
    sigma mu d^2, is under a period at the saturated permeability), loss averaged over the
    last period, against the harmonic effective-permeability run. The effective
    permeability keeps only the fundamental and so differs by some per cent (Paoli, Biro
    and Buchgraber, IEEE Trans. Magn. 34(5), 1998, report differences of that order):
    measured -1.9 % here; the check asks for under 5 % and the sign (the harmonic run
    lower), so a change that moves the difference shows."""
    h = np.concatenate([[0.0], np.geomspace(HK * 1e-3, 1e6, 39)])
    curve = BHCurve.from_points(h, law(h))
    f, peak = 200.0, H0 * HEIGHT
    periods, per = 5, 40
    problem = slab_problem(curve, 21, Stranded("sheet", ("go",), turns=1.0,
                                                return_regions=("back",),
                                                waveform=Sine(peak, f)))
    losses = [region_totals(state)["slab"].loss_w
              for state in march(assemble(problem), periods / f, 1 / (f * per), "bdf2",
                                 backend="scipy-superlu")
              if state.time_s > (periods - 1) / f + 1e-9]
    transient = float(np.mean(losses))
    problem = slab_problem(curve, 21, Stranded("sheet", ("go",), turns=1.0,
                                                return_regions=("back",),
                                                current=peak / np.sqrt(2)))
    (sol,), _ = solve_harmonic(problem, [f])
    harmonic = region_totals(sol)["slab"].loss_w
    difference = harmonic / transient - 1
    print(f"slab loss: transient {transient:.4g} W/m, harmonic {harmonic:.4g} W/m, "
          f"difference {100 * difference:+.2f} %")
    assert -0.05 < difference < 0
