"""What motion costs: a harmonic run with a moving conductor beside the same run at rest.

An invented scenario: the aluminium strip of ``cases/examples/strip-induction-line.toml``
(P2, about 5e4 unknowns, meshed once) at 1 kHz, solved

- at rest (no motion): assembly of K, M and the coupling blocks, then one factorisation;
- moving at 10 m/s (Galerkin: mesh Peclet number below 1) and at 200 m/s (streamline
  upwinding on in the strip): the same plus the motion's blocks (integrated over the
  moving elements only), and an unsymmetric factorisation instead of a symmetric one.

It prints assemble and solve times of each, the extra assembly time against one
assembly of the stiffness matrix alone (measured in the same run), and the ratios to the
run at rest. The issue asks that motion cost no more than one more assembly.

Usage: python tests/bench/bench_motion.py [--repeat N] [--backend auto|scipy-superlu]
"""

from __future__ import annotations

import argparse
import time
from dataclasses import replace
from pathlib import Path

from skfem import Basis, asm

from whorl.cases import model
from whorl.cases.loader import load_case
from whorl.meshes.build import build_mesh
from whorl.solver.coefficients import reluctivity
from whorl.solver.harmonic import solve_harmonic
from whorl.solver.system import ELEMENTS, _p0, formulation

CASE = Path(__file__).resolve().parents[2] / "cases" / "examples" / "strip-induction-line.toml"


def best(fn, repeat):
    times, out = [], None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t0)
    return min(times), out


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--backend", default="auto")
    args = parser.parse_args(argv)
    case = load_case(CASE)
    mesh = build_mesh(model.sized_geometry(case))
    base = model.problem(case, mesh)
    problems = {"at rest": replace(base, motions=()), "10 m/s": base,
                "200 m/s": replace(base, motions=(replace(base.motions[0],
                                                          velocity=(200.0, 0.0)),))}

    def stiffness_only():
        form = formulation(base)
        basis = Basis(mesh.mesh, ELEMENTS[base.order](), intorder=2 * base.order)
        return asm(form.stiffness, basis, nu=_p0(basis, reluctivity(base)))

    t_k, _ = best(stiffness_only, args.repeat)
    rows = {}
    for name, problem in problems.items():
        def run(problem=problem):
            return solve_harmonic(problem, [1000.0], backend=args.backend)
        total, (sols, info) = best(run, args.repeat)
        motion = sols[0].system.motion
        rows[name] = (info["assemble_s"], info["solve_s"], total, info["backend"],
                      motion.summary if motion else None)
    print(f"strip-induction-line, P2, {sols[0].system.size} unknowns, best of {args.repeat}")
    print(f"one stiffness assembly alone (the yardstick): {t_k:.3f} s")
    rest = rows["at rest"]
    print(f"{'run':<10} {'assemble s':>11} {'solve s':>9} {'total s':>9} "
          f"{'extra asm / K asm':>18} {'total / at rest':>16}  backend, motion")
    for name, (asm_s, solve_s, total, backend, summary) in rows.items():
        extra = (asm_s - rest[0]) / t_k
        print(f"{name:<10} {asm_s:>11.3f} {solve_s:>9.3f} {total:>9.3f} {extra:>18.2f} "
              f"{total / rest[2]:>16.2f}  {backend}, {summary}")


if __name__ == "__main__":
    main()
