"""Heating cycle against one harmonic run of the same model (a benchmark, not a test).

Runs the shaft hardening demo (cases/examples/shaft-end-hardening.toml: 3.5 s of heating,
6.5 s of spray quench, steel with a B-H curve, field re-solved as the temperatures move) and,
as the baseline, one
harmonic run of the same model on the same mesh (the heating study replaced by a harmonic
study at its frequency, the coil at the current the first field solution found). Both
through ``solve_case`` (solution and postprocessing, no files). Prints the times, their
ratio (the aim is at most 10), and the time per field solution and per heat step.

Usage: python tests/bench/bench_heating.py [CASE]
"""

from __future__ import annotations

import argparse
import time
from dataclasses import replace
from pathlib import Path

from whorl.cases import model
from whorl.cases.loader import load_case
from whorl.cases.run import solve_case
from whorl.cases.spec import StudySpec
from whorl.meshes.build import build_mesh

DEMO = Path(__file__).resolve().parents[2] / "cases" / "examples" / "shaft-end-hardening.toml"


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("case", nargs="?", default=str(DEMO))
    args = parser.parse_args(argv)
    case = load_case(args.case)
    t0 = time.perf_counter()
    mesh = build_mesh(model.sized_geometry(case))
    t_mesh = time.perf_counter() - t0

    t0 = time.perf_counter()
    results, _, _ = solve_case(case, mesh=mesh)
    t_heat = time.perf_counter() - t0
    heating = results.pop("heating")
    results.pop("_heating", None)
    first = {name: rec["current_a"][0] for name, rec in heating["sources"].items()}

    sources = tuple(replace(s, current=complex(first.get(s.name, abs(s.current or 0))))
                    if getattr(s, "current", None) is not None else s for s in case.sources)
    harmonic = replace(case, study=StudySpec("harmonic", case.study.frequencies),
                       sources=sources, surfaces=(), supplies={})
    t0 = time.perf_counter()
    solve_case(harmonic, mesh=mesh)
    t_harm = time.perf_counter() - t0

    n_field, n_steps = heating["field_solutions"], heating["steps"]
    timing = heating["timing_s"]
    print(f"case {case.name}: {mesh.mesh.t.shape[1]} elements, P{case.order}; "
          f"meshing {t_mesh:.2f} s (not counted below)")
    print(f"  one harmonic run (solve + postprocess)      {t_harm:8.2f} s")
    print(f"  heating cycle to {case.study.end_s:g} s                    {t_heat:8.2f} s")
    print(f"  ratio heating / harmonic                     {t_heat / t_harm:8.2f}  (aim: <= 10)")
    linear = heating.get("field_linear_solutions", [])
    print(f"  field solutions {n_field:4d}: {timing['field_solutions'] / max(n_field, 1):.3f} s "
          f"each (assembly, effective iteration, supply, losses)")
    if linear:
        print(f"    linear systems {sum(linear)} ({sum(linear) / len(linear):.1f} per field "
              f"solution)")
    print(f"  heat steps      {n_steps:4d}: {timing['heat_steps'] / max(n_steps, 1):.3f} s each "
          f"({heating['rejected_steps']} rejected and repeated)")


if __name__ == "__main__":
    main()
