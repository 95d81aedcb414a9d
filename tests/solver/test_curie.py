"""The Curie point in a heating run: a steel bar in a long coil at constant current.

Source: the loss of steel falls sharply when its surface passes the Curie point
(about 770 degC for carbon steel, common practice) because mu_r drops to 1 and
the skin depth grows by about sqrt(mu_r) (Davies and Simpson, Induction Heating
Handbook, 1979: the eddy-current power of a bar is proportional to
sqrt(rho mu_r) at a/delta >> 1). Checked: the bar's loss peaks as the surface
nears the Curie point and then falls well below its peak, and the loss moves
inward (the loss-weighted depth below the surface grows by half within a second).
"""

import numpy as np
from meshing import graded, tensor_mesh

from whorl.postprocess.heating import FieldEvaluation
from whorl.solver import BUILTIN, FluxNormal, Problem, Stranded
from whorl.solver.heating import HeatingStudy, run_heating
from whorl.solver.heatstep import Surface

A, GAP, THICK, HEIGHT = 0.02, 0.004, 0.002, 0.004


def bar_in_coil(ampere_turns):
    rs = np.concatenate([graded(0, A, 0.0004, A / 6, 1.3, "b"),
                         graded(A, A + GAP, 0.0004, GAP / 3, 1.4, "a")[1:],
                         np.linspace(A + GAP, A + GAP + THICK, 3)[1:], [A + 2 * GAP + THICK]])
    tm = tensor_mesh(rs, np.linspace(0, HEIGHT, 2),
                     {"bar": lambda r, z: r < A,
                      "coil": lambda r, z: (r > A + GAP) & (r < A + GAP + THICK)},
                     axisymmetric=True)
    return Problem(tm, {"bar": BUILTIN["carbon-steel"], "coil": BUILTIN["copper"],
                        "domain": BUILTIN["air"]},
                   sources=(Stranded("coil", ("coil",), turns=1, current=ampere_turns),),
                   boundary={"right": FluxNormal(), "top": FluxNormal(),
                             "bottom": FluxNormal()})


def loss_depth(history, record):
    """Loss-weighted mean depth below the bar's surface (m)."""
    dom = history.domain
    r = np.asarray(dom.basis.global_coordinates())[0]
    w = record.loss_density * dom.weight * dom.basis.dx
    return float((w * (A - r)).sum() / w.sum())


def test_loss_falls_and_moves_inward_past_the_curie_point():
    problem = bar_in_coil(300.0)
    study = HeatingStudy(1000.0, 11.0, 0.05, heated=("bar",),
                         surfaces=(Surface(("bar",), 10.0, 293.15),))
    ev = FieldEvaluation()
    hist = run_heating(problem, study, ev.terminals, ev.loss_density, ev.region_losses)
    r = hist.domain.basis.doflocs[0, hist.domain.active]
    surface = np.argmax(r)
    loss = [f.region_loss_w["bar"] for f in hist.fields]
    surface_c = [hist.temperature_k[hist.field_index.index(i)][surface] - 273.15
                 for i in range(len(hist.fields))]
    top = int(np.argmax(loss))
    assert 700 < surface_c[top] < 775          # the peak comes just before the Curie point
    assert surface_c[-1] > 780                 # and the surface has passed it
    assert loss[-1] < 0.75 * loss[top]         # the loss falls sharply
    assert loss_depth(hist, hist.fields[-1]) > 1.5 * loss_depth(hist, hist.fields[top])
