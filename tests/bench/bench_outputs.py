"""Writing the outputs of a run against the run itself (a benchmark, not a test).

An invented billet heater (axisymmetric, P2, about 1e5 unknowns, one [[line]]) is
solved once; then every output a run writes — results.json, regions.csv, the line
table and picture, fields.vtu, the four field pictures, the surface power table and
picture, report.html — is written into a temporary folder, each timed. The target:
all outputs at most 25 % of the whole run (mesh + solve + postprocess + outputs).

Beside it, the plain baseline of the same run: the solution vector saved with
``numpy.save`` and one naive ``tripcolor`` picture of |A| on the full P1 mesh (what a
hand-written script would do).

Usage: python tests/bench/bench_outputs.py [--max-size MM]
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from billet_heater import billet_heater  # noqa: E402

from whorl.cases.loader import parse_case  # noqa: E402
from whorl.cases.run import solve_case, write_results  # noqa: E402

CASE = billet_heater("bench-outputs", "3 kHz", "max_size = {max_size}\nper_skin_depth = 3",
                     relative_permeability=20, extra="""\
[[line]]
name = "radial"
from = [0, 0]
to = [100, 0]
samples = 401
[output]
fields = true
plots = true
""")


class Timed:
    """Wraps the writers that ``write_results`` calls to time each kind of output."""

    def __init__(self):
        self.seconds: dict[str, float] = {}

    def wrap(self, module, name, label):
        original = getattr(module, name)

        def timed(*args, **kwargs):
            t0 = time.perf_counter()
            try:
                return original(*args, **kwargs)
            finally:
                self.seconds[label] = self.seconds.get(label, 0.0) + time.perf_counter() - t0

        setattr(module, name, timed)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--max-size", type=float, default=2.4,
                        help="mesh max_size in mm (2.4: about 1e5 unknowns)")
    args = parser.parse_args(argv)
    case = parse_case(CASE.replace("{max_size}", str(args.max_size)))
    t0 = time.perf_counter()
    results, solutions, mesh = solve_case(case)
    solved = time.perf_counter() - t0
    from whorl.cases import run

    timer = Timed()
    for name, label in (("write_fields_vtu", "fields.vtu"), ("plot_field", "field pictures"),
                        ("plot_line", "line picture"), ("write_report", "report.html"),
                        ("write_surface_power", "surface power"), ("write_csv", "CSV tables"),
                        ("line_rows", "line sampling")):
        timer.wrap(run, name, label)
    with tempfile.TemporaryDirectory() as tmp:
        t1 = time.perf_counter()
        write_results(case, results, solutions, Path(tmp))
        outputs = time.perf_counter() - t1
        # the plain baseline
        import matplotlib
        matplotlib.use("Agg")
        from matplotlib.figure import Figure

        t2 = time.perf_counter()
        sol = solutions[0]
        np.save(Path(tmp) / "a.npy", sol.a)
        m = mesh.mesh
        fig = Figure()
        ax = fig.add_subplot()
        ax.tripcolor(m.p[0], m.p[1], m.t[:3].T,
                     np.abs(sol.a[sol.system.basis.nodal_dofs[0]]), shading="gouraud")
        fig.savefig(Path(tmp) / "baseline.png", dpi=120)
        baseline = time.perf_counter() - t2
    total = solved + outputs
    print(f"unknowns {results['mesh']['dofs']}, elements {results['mesh']['elements']}")
    print(f"mesh + solve + postprocess  {solved:8.2f} s")
    print(f"all outputs                 {outputs:8.2f} s  ({100 * outputs / total:.1f} % of "
          f"the run of {total:.2f} s; target <= 25 %)")
    for label, seconds in sorted(timer.seconds.items(), key=lambda kv: -kv[1]):
        print(f"  {label:<26}{seconds:8.2f} s")
    print(f"plain baseline (np.save + one tripcolor picture) {baseline:.2f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
