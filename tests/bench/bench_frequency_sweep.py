"""A whole frequency response against one frequency (a benchmark, not a test).

An invented axisymmetric heater (a non-magnetic steel billet, 1 MS/m, in a 24-turn
stranded coil driven at 800 A), P2, about 1.5e5 unknowns, meshed once for the highest
frequency (meshing is left out of every figure). Printed side by side, each with assembly
included:

- one frequency (10 kHz), the plain cost of a harmonic solve: the first in the process and
  again (warm); the ratios are against the second, the stricter;
- 200 log-spaced frequencies from 200 Hz to 50 kHz through the reduced-order sweep
  (``reduced = "auto"``), with its full solves and largest estimated error;
- the 10-frequency list 200 Hz to 50 kHz solved the old way (``reduced = "off"``), one
  factorisation per frequency;
- the postprocessing of each (``solution_record`` per frequency: from projections for the
  reduced frequencies), apart, and solve plus postprocessing against one frequency's;
- the agreement of the reduced sweep with full solves at 5 frequencies of the 200.

Usage: python tests/bench/bench_frequency_sweep.py [--max-size MM] [--count 200]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from billet_heater import billet_heater  # noqa: E402

from whorl.cases import model  # noqa: E402
from whorl.cases.loader import parse_case  # noqa: E402
from whorl.meshes.build import build_mesh  # noqa: E402
from whorl.postprocess.circuits import source_results  # noqa: E402
from whorl.postprocess.records import solution_record  # noqa: E402
from whorl.postprocess.regions import region_totals  # noqa: E402
from whorl.solver.harmonic import solve_harmonic  # noqa: E402

HEATER = billet_heater("bench-frequency-response", "50 kHz",
                       "max_size = {max_size}\nper_skin_depth = 3")


def timed(fn, *args, **kw):
    t0 = time.perf_counter()
    out = fn(*args, **kw)
    return out, time.perf_counter() - t0


def postprocess(solutions):
    t0 = time.perf_counter()
    for s in solutions:
        solution_record(s)
    return time.perf_counter() - t0


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--max-size", type=float, default=2.2)
    ap.add_argument("--count", type=int, default=200)
    args = ap.parse_args()
    case = parse_case(HEATER.format(max_size=args.max_size))
    mesh, t_mesh = timed(build_mesh, model.sized_geometry(case))
    problem = model.problem(case, mesh)
    freqs = list(np.geomspace(200, 50e3, args.count))
    ten = list(np.geomspace(200, 50e3, 10))

    (one, info1), t1_cold = timed(solve_harmonic, problem, [10e3])
    p1_cold = postprocess(one)
    # again, warm (libraries loaded, tables cached), as every later run of a process is:
    # the ratios are against this one, the stricter
    (one, info1), t1 = timed(solve_harmonic, problem, [10e3])
    p1 = postprocess(one)
    (many, info), t200 = timed(solve_harmonic, problem, freqs)
    p200 = postprocess(many)
    (old, info10), t10 = timed(solve_harmonic, problem, ten, reduced="off")
    p10 = postprocess(old)
    sweep = info.get("reduced", {})
    print(f"unknowns {info1['unknowns']}, backend {info1['backend']}, meshing {t_mesh:.1f} s "
          "(not counted)")
    print(f"{'run':48s} {'solve s':>8s} {'x one':>6s} {'post s':>7s} {'both x one':>10s}")
    for label, t, p in (("one frequency (10 kHz), first run of the process", t1_cold, p1_cold),
                        ("one frequency (10 kHz), again", t1, p1),
                        (f"{len(freqs)} frequencies, reduced sweep", t200, p200),
                        ("10 frequencies, one factorisation each", t10, p10)):
        print(f"{label:48s} {t:8.2f} {t / t1:6.2f} {p:7.2f} {(t + p) / (t1 + p1):10.2f}")
    if sweep:
        print(f"reduced sweep: {len(sweep['full_solve_frequencies_hz'])} full solves at "
              f"{', '.join(f'{f:.0f}' for f in sweep['full_solve_frequencies_hz'])} Hz, basis "
              f"{sweep['basis_size']}, {sweep.get('estimate_solves', '?')} solves for the "
              f"error estimate, largest estimated error {max(sweep['estimated_error']):.1e}")
    pick = [freqs[i] for i in np.linspace(0, len(freqs) - 1, 5).astype(int)]
    full, _ = solve_harmonic(problem, pick, reduced="off")
    worst_z = worst_p = 0.0
    by_f = {s.frequency_hz: s for s in many}
    for s in full:
        r = by_f[s.frequency_hz]
        za, zb = source_results(r)["coil"].impedance_ohm, source_results(s)["coil"].impedance_ohm
        pa, pb = region_totals(r)["billet"].loss_w, region_totals(s)["billet"].loss_w
        worst_z = max(worst_z, abs(za - zb) / abs(zb))
        worst_p = max(worst_p, abs(pa - pb) / pb)
    print(f"reduced against full at {len(pick)} frequencies (ends included): impedance "
          f"{worst_z:.1e}, billet loss {worst_p:.1e} (relative)")


if __name__ == "__main__":
    main()
