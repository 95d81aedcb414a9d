"""Saturable steel: what the nonlinear solutions cost beside linear ones (a benchmark,
not a test; nothing is asserted).

1. Harmonic: the shaft-end demo (cases/examples/shaft-end-heater.toml, its B-H curve)
   solved with the effective-permeability iteration, beside the same model made linear
   (the shaft at a fixed relative permeability of 16) on the very same mesh. Target of
   issue 11: at most 6 times the linear run.
2. Static: Newton's method for a steel tube around a conductor in deep saturation (about
   0.5 MA/m at the tube's bore), beside one linear solve on the same mesh. Target: at
   most 12 linear solves.

Both ratios are printed beside the linear run's time. Usage:
python tests/bench/bench_saturable.py
"""

from __future__ import annotations

import sys
import time
from dataclasses import replace
from pathlib import Path

from whorl.cases import model
from whorl.cases.loader import load_case
from whorl.meshes.build import build_mesh
from whorl.solver import linalg
from whorl.solver.harmonic import solve_harmonic
from whorl.solver.newton import NonlinearSystem
from whorl.solver.reduction import reduce
from whorl.solver.system import assemble

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "tests" / "solver"))


def harmonic() -> None:
    case = load_case(ROOT / "cases" / "examples" / "shaft-end-heater.toml")
    mesh = build_mesh(model.sized_geometry(case))
    nonlinear = model.problem(case, mesh)
    linear = model.problem(case, mesh)
    steel = linear.materials["shaft"]
    linear.materials["shaft"] = replace(steel, relative_permeability=16.0, bh_curve=None)
    times = {}
    for name, problem in (("linear", linear), ("nonlinear", nonlinear)):
        start = time.perf_counter()
        (sol,), info = solve_harmonic(problem, list(case.study.frequencies))
        times[name] = time.perf_counter() - start
        extra = f", {sol.nonlinear['iterations']} harmonic solutions" if sol.nonlinear else ""
        print(f"  {name:<10} {times[name]:7.2f} s (assembly and solution{extra})")
    print(f"harmonic shaft-end demo, {mesh.mesh.t.shape[1]} elements: nonlinear / linear = "
          f"{times['nonlinear'] / times['linear']:.1f} (target <= 6)")


def static() -> None:
    from test_saturable_static import tube_case

    case = tube_case(3.2e4)
    mesh = build_mesh(model.sized_geometry(case))
    system = assemble(model.problem(case, mesh))
    _, factorize = linalg.choose("auto")
    start = time.perf_counter()
    red = reduce(system)  # one linear solve: reduction, factorisation, solution
    factorize(red.matrix(1.0, 0.0))(red.rhs(system.rhs(0.0).real, 1.0, 0.0))
    one = time.perf_counter() - start
    start = time.perf_counter()
    _, report = NonlinearSystem(system, linalg.session(factorize)).solve(system.rhs(0.0))
    newton = time.perf_counter() - start
    print(f"  one linear solve {one:7.3f} s; Newton {newton:7.3f} s in {report.iterations} steps")
    print(f"static tube in deep saturation, {mesh.mesh.t.shape[1]} elements: Newton / one "
          f"linear solve = {newton / one:.1f} (target <= 12)")


if __name__ == "__main__":
    harmonic()
    static()
