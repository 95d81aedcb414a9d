"""Speed and scale: whorl beside a hand-written scikit-fem + spsolve script (a benchmark).

Two invented scenarios, P2, each at three sizes (about 5e4, 3e5 and 1e6 unknowns):

- ``axisymmetric``: a hot steel billet (non-magnetic, 1 MS/m) in a 24-turn
  stranded coil at 10 kHz;
- ``planar``: a go/return pair of stranded bus bars at 1 kHz with an aluminium
  cover plate above them (open ends: no net current, one extra unknown).

For each it prints the unknowns, whorl's mesh / assemble / solve / postprocess
times with every backend asked for, the peak memory of each stage, the same
problem solved by ``baseline.py`` on the very same mesh in this run, the ratio
of the two and the agreement of their losses; then the exponent of total time
against unknowns, the cost of a 10-frequency list against one frequency, and
the accuracy per unknown of the skin-depth-graded mesh against uniform meshes
for a long cylinder in a coil at a / delta = 30 (Bessel solution).

Usage: python tests/bench/bench_scale.py [--sizes small,medium,large|none]
       [--scenarios axisymmetric,planar] [--backends auto,scipy-superlu] [--no-extras]
"""

from __future__ import annotations

import argparse
import gc
import math
import os
import platform
import sys
import threading
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

import baseline  # noqa: E402
from billet_heater import billet_heater  # noqa: E402

from whorl.cases import model  # noqa: E402
from whorl.cases.loader import parse_case  # noqa: E402
from whorl.cases.run import solve_case  # noqa: E402
from whorl.meshes.build import build_mesh  # noqa: E402
from whorl.solver import linalg  # noqa: E402
from whorl.solver.sources import Stranded  # noqa: E402

AXISYMMETRIC = billet_heater("bench-billet", "{freq}", "{mesh}")

PLANAR = """\
format = 1
[case]
name = "bench-bus-plate"
[model]
geometry = "planar"
length_unit = "mm"
order = 2
[[region]]
name = "go"
material = "copper"
shape = "rectangle"
corner = [-70, -30]
size = [10, 60]
[[region]]
name = "return"
material = "copper"
shape = "rectangle"
corner = [60, -30]
size = [10, 60]
[[region]]
name = "plate"
material = "aluminium"
shape = "rectangle"
corner = [-150, 50]
size = [300, 8]
[domain]
shape = "rectangle"
corner = [-400, -400]
size = [800, 800]
[[source]]
name = "bus"
kind = "stranded"
regions = ["go"]
return_regions = ["return"]
current = "2 kA"
[study]
kind = "harmonic"
frequency = "{freq}"
[mesh]
{mesh}
"""

SCENARIOS = {"axisymmetric": (AXISYMMETRIC, "10 kHz"), "planar": (PLANAR, "1 kHz")}
#: [mesh] tables giving about 5e4, 3e5 and 1e6 unknowns (P2); the skin-depth grading
#: stays on, finer everywhere as a very detailed model would be.
SIZES = {
    "small": {"axisymmetric": "max_size = 4.2", "planar": "max_size = 8.8"},
    "medium": {"axisymmetric": "max_size = 1.68\nper_skin_depth = 4",
               "planar": "max_size = 3.3\nper_skin_depth = 4"},
    "large": {"axisymmetric": "max_size = 0.93\nper_skin_depth = 6",
              "planar": "max_size = 1.8\nper_skin_depth = 6"},
}


class PeakMemory:
    """Peak resident memory of this process during a ``with`` block (sampled, GiB)."""

    def __enter__(self):
        self.peak = _rss()
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._sample, daemon=True)
        self._thread.start()
        return self

    def _sample(self):
        while not self._stop.wait(0.01):
            self.peak = max(self.peak, _rss())

    def __exit__(self, *exc):
        self._stop.set()
        self._thread.join()
        self.peak = max(self.peak, _rss())
        self.gib = self.peak / 2**30


def _rss() -> int:
    with open("/proc/self/statm") as f:
        return int(f.read().split()[1]) * os.sysconf("SC_PAGE_SIZE")


def case_for(scenario: str, mesh_table: str, freq: str | None = None):
    text, default_freq = SCENARIOS[scenario]
    return parse_case(text.format(freq=freq or default_freq, mesh=mesh_table))


def baseline_inputs(case, mesh):
    """Per-element reluctivity, conductivity and source current density of ``case``."""
    problem = model.problem(case, mesh)
    m = mesh.mesh
    nel = m.t.shape[1]
    nu, sigma, js = np.zeros(nel), np.zeros(nel), np.zeros(nel)
    stranded = {r for s in problem.sources if isinstance(s, Stranded)
                for r in (*s.regions, *s.return_regions)}
    areas = {}
    p = m.p[:, m.t]
    area = 0.5 * np.abs((p[0, 1] - p[0, 0]) * (p[1, 2] - p[1, 0])
                        - (p[0, 2] - p[0, 0]) * (p[1, 1] - p[1, 0]))
    for name, elems in m.subdomains.items():
        mat = problem.materials[name]
        nu[elems] = 1.0 / (baseline.MU0 * mat.relative_permeability)
        if name not in stranded:
            sigma[elems] = mat.conductivity
        areas[name] = area[elems].sum()
    for s in problem.sources:
        if isinstance(s, Stranded):
            for sign, regions in ((1, s.regions), (-1, s.return_regions)):
                for r in regions:
                    js[m.subdomains[r]] = sign * s.turns * complex(s.current).real / areas[r]
    eddy = {n: e for n, e in m.subdomains.items() if sigma[e].max(initial=0) > 0}
    free = [] if case.axisymmetric else list(eddy.values())
    return nu, sigma, js, free, eddy


def run_whorl(case, mesh, backend):
    case.solver = backend
    gc.collect()
    with PeakMemory() as mem:
        results, solutions, _ = solve_case(case, mesh=mesh)
    del solutions
    t = results["timing_s"]
    totals = results["solutions"][0]["totals"]
    # the baseline computes eddy losses only; whorl's totals add the windings' copper loss
    # R |I|^2 (from their fill factor), which the baseline does not model
    loss = totals["loss_w"] - (totals.get("winding_loss_w") or 0.0)
    return {"backend": results["solver"]["backend"], "unknowns": results["solver"]["unknowns"],
            "assemble": t["assemble"], "solve": t["solve"], "postprocess": t["postprocess"],
            "work": t["assemble"] + t["solve"] + t["postprocess"], "loss": loss,
            "peak_gib": mem.gib}


def run_baseline(case, mesh):
    nu, sigma, js, free, eddy = baseline_inputs(case, mesh)
    gc.collect()
    with PeakMemory() as mem:
        losses, t = baseline.solve(mesh.mesh, nu, sigma, js, case.study.frequencies[0],
                                   case.axisymmetric, case.depth_m, free, eddy)
    return {**t, "work": t["assemble"] + t["solve"] + t["postprocess"],
            "loss": sum(losses.values()), "peak_gib": mem.gib}


def bench_size(scenario, size, backends):
    case = case_for(scenario, SIZES[size][scenario])
    gc.collect()
    with PeakMemory() as mem:
        t0 = time.perf_counter()
        mesh = build_mesh(model.sized_geometry(case))
        t_mesh = time.perf_counter() - t0
    rows = [run_whorl(case, mesh, b) for b in backends]
    base = run_baseline(case, mesh)
    del mesh
    gc.collect()
    return {"scenario": scenario, "size": size, "mesh": t_mesh, "mesh_gib": mem.gib,
            "whorl": rows, "baseline": base}


def print_table(results):
    head = (f"{'scenario':<13}{'size':<7}{'unknowns':>9}{'who':>22}{'mesh':>7}{'asm':>7}"
            f"{'solve':>7}{'post':>7}{'a+s+p':>8}{'peak GiB':>9}{'/base':>7}{'loss diff':>11}")
    print(head)
    print("-" * len(head))
    for r in results:
        b = r["baseline"]
        for w in r["whorl"]:
            who = "whorl " + w["backend"]
            peak = max(w["peak_gib"], r["mesh_gib"])
            print(f"{r['scenario']:<13}{r['size']:<7}{w['unknowns']:>9}{who:>22}"
                  f"{r['mesh']:>7.1f}{w['assemble']:>7.2f}{w['solve']:>7.2f}"
                  f"{w['postprocess']:>7.2f}{w['work']:>8.2f}{peak:>9.2f}"
                  f"{w['work'] / b['work']:>7.2f}{abs(w['loss'] / b['loss'] - 1):>11.1e}")
        print(f"{r['scenario']:<13}{r['size']:<7}{b['unknowns']:>9}{'hand-written':>22}"
              f"{'':>7}{b['assemble']:>7.2f}{b['solve']:>7.2f}{b['postprocess']:>7.2f}"
              f"{b['work']:>8.2f}{b['peak_gib']:>9.2f}{1:>7.2f}{'':>11}")


def fit_exponents(results):
    """Exponent p of total time ~ unknowns^p (least squares in log-log), per scenario."""
    print("\ncost against size: total time (mesh + assemble + solve + postprocess) ~ N^p")
    for scenario in dict.fromkeys(r["scenario"] for r in results):
        rows = [r for r in results if r["scenario"] == scenario]
        if len(rows) < 2:
            continue
        for k, w in enumerate(rows[0]["whorl"]):
            n = np.array([r["whorl"][k]["unknowns"] for r in rows], float)
            t = np.array([r["mesh"] + r["whorl"][k]["work"] for r in rows])
            p = np.polyfit(np.log(n), np.log(t), 1)[0]
            print(f"  {scenario:<13} whorl {w['backend']:<14} p = {p:.2f}  "
                  f"({', '.join(f'{x:.0f}: {y:.1f} s' for x, y in zip(n, t, strict=True))})")
        n = np.array([r["baseline"]["unknowns"] for r in rows], float)
        t = np.array([r["mesh"] + r["baseline"]["work"] for r in rows])
        print(f"  {scenario:<13} hand-written         p = "
              f"{np.polyfit(np.log(n), np.log(t), 1)[0]:.2f}")


def frequency_list(scenario="axisymmetric", size="small"):
    """Whole run (mesh included) at 1 frequency and at 10, auto backend."""
    out = {}
    for label, freq in (("1", "10 kHz"), ("10", "[" + ", ".join(
            f'"{f} kHz"' for f in range(1, 11)) + "]")):
        text, _ = SCENARIOS[scenario]
        text = text.replace('frequency = "{freq}"', f"frequency = {freq}" if label == "10"
                            else 'frequency = "10 kHz"')
        case = parse_case(text.format(mesh=SIZES[size][scenario]))
        t0 = time.perf_counter()
        results, _, _ = solve_case(case)
        out[label] = (time.perf_counter() - t0, results["timing_s"], results["solver"])
    (t1, s1, info), (t10, s10, _) = out["1"], out["10"]
    print(f"\nfrequency list ({scenario}, {size}, {info['unknowns']} unknowns, {info['backend']}):"
          f" 1 frequency {t1:.2f} s (solve {s1['solve']:.2f}, post {s1['postprocess']:.2f}), "
          f"10 frequencies {t10:.2f} s (solve {s10['solve']:.2f}, post {s10['postprocess']:.2f}):"
          f" ratio {t10 / t1:.2f} (target <= 3)")


def cylinder_power_per_length(a, sigma, frequency, h0):
    """Loss per unit length (W/m) of a long cylinder (radius a, mu0) in a uniform axial
    RMS field h0: -2 pi a Re(k J1(ka) / (sigma J0(ka))) h0^2 with k = (1 - j)/delta,
    the classical Bessel solution (e.g. J. Lammeraner and M. Stafl, *Eddy Currents*,
    1966, ch. 3)."""
    from scipy.special import jve

    delta = math.sqrt(2 / (2 * math.pi * frequency * baseline.MU0 * sigma))
    k = (1 - 1j) / delta
    ratio = jve(1, k * a) / jve(0, k * a)  # the exponential scalings cancel
    return -2 * math.pi * a * (k * ratio / sigma).real * h0 ** 2


CYLINDER = """\
format = 1
[case]
name = "bench-cylinder"
[model]
geometry = "axisymmetric"
length_unit = "mm"
order = 2
[material.bar]
conductivity = "10 MS/m"
[[region]]
name = "bar"
material = "bar"
shape = "rectangle"
corner = [0, 0]
size = [30, 30]
[[region]]
name = "coil"
material = "copper"
shape = "rectangle"
corner = [36, 0]
size = [2, 30]
[domain]
shape = "rectangle"
corner = [0, 0]
size = [38, 30]
[domain.boundary]
top = "flux-normal"
bottom = "flux-normal"
right = "flux-normal"
[[source]]
name = "coil"
kind = "stranded"
regions = ["coil"]
current = "1 kA"
[study]
kind = "harmonic"
frequency = "{freq}"
[mesh]
{mesh}
"""


def accuracy_per_cost():
    """Long cylinder (radius 30 mm) in a long coil at a/delta = 30: the default graded
    mesh against uniform meshes. The coil's sides are flux-normal (no field outside an
    infinitely long coil), so H inside is N I / h exactly."""
    from whorl.meshes.geometry import Geometry, MeshOptions, RegionSpec

    a, sigma, height = 0.030, 1e7, 0.030
    delta = a / 30
    freq = 2 / (delta ** 2 * 2 * math.pi * baseline.MU0 * sigma)
    exact = cylinder_power_per_length(a, sigma, freq, 1000 / height) * height

    def error(case, mesh):
        results, _, _ = solve_case(case, mesh=mesh)
        loss = results["solutions"][0]["regions"]["bar"]["loss_w"]
        return abs(loss / exact - 1), results["solver"]["unknowns"]

    print(f"\naccuracy per cost: cylinder a = 30 mm, a/delta = 30 (f = {freq:.4g} Hz, "
          f"delta = {delta * 1e3:.3f} mm), exact loss {exact:.6g} W")
    case = parse_case(CYLINDER.format(freq=f"{freq} Hz", mesh=""))
    graded = error(case, build_mesh(model.sized_geometry(case)))
    print(f"  graded (default [mesh]): error {graded[0]:.3%} with {graded[1]} unknowns")
    uniform = []
    for per_mm in (0.25, 0.35, 0.5, 0.7, 1.0, 1.4, 2.0, 2.8):
        h = 1.0 / per_mm
        g = case.geometry
        geo = Geometry(tuple(RegionSpec(r.name, r.shape, None, None) for r in g.regions),
                       g.domain, g.axisymmetric, g.unit_m,
                       MeshOptions(order=2, max_size=h))
        err, n = error(case, build_mesh(geo))
        uniform.append((err, n))
        print(f"  uniform h = {h:.3f} mm ({h / (delta * 1e3):.2f} delta): error {err:.3%} "
              f"with {n} unknowns")
        if err <= graded[0]:
            break
    for target, label in ((0.01, "1 %"), (graded[0], "the graded mesh's error")):
        n = next((n for err, n in uniform if err <= target), None)
        if n is None:
            print(f"  uniform meshes did not reach {label} in the sizes tried")
        else:
            print(f"  unknowns to reach {label}: uniform {n}, graded {graded[1]}: "
                  f"uniform / graded = {n / graded[1]:.1f} (target >= 10)")


def machine() -> str:
    cpu = platform.processor() or platform.machine()
    try:
        for line in open("/proc/cpuinfo"):
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    mem = os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES") / 2**30
    return (f"{cpu}, {len(os.sched_getaffinity(0))} cores, {mem:.0f} GiB, "
            f"Python {platform.python_version()}")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", default="small,medium,large")
    parser.add_argument("--scenarios", default="axisymmetric,planar")
    parser.add_argument("--backends", default="auto,scipy-superlu",
                        help="whorl backends to time (comma-separated)")
    parser.add_argument("--no-extras", action="store_true",
                        help="skip the frequency-list and accuracy-per-cost parts")
    args = parser.parse_args(argv)
    backends = [b for b in args.backends.split(",") if b]
    auto = linalg.choose("auto")[0]
    print(f"machine: {machine()}; auto backend: {auto}")
    results = []
    for size in [s for s in args.sizes.split(",") if s in SIZES]:
        for scenario in args.scenarios.split(","):
            results.append(bench_size(scenario, size, backends))
            print(f"  done {scenario} {size}", flush=True)
    if results:
        print()
        print_table(results)
        fit_exponents(results)
    if not args.no_extras:
        frequency_list()
        accuracy_per_cost()
    return 0


if __name__ == "__main__":
    sys.exit(main())
