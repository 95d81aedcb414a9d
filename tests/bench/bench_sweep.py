"""Sweep throughput: points per hour at 1 and 2 local workers (a benchmark, not a test).

Runs the overnight demo (cases/examples/shaft-heater-overnight.toml, order 1, coarse
mesh) with 4 coil gaps instead of 3 (3 frequencies x 4 gaps = 12 points in 4
frequency groups, so 2 workers get equal shares), and a heavier copy of it
(order 2, default mesh sizing), three ways each, and prints the figures side by
side:

- baseline: every point solved one after another in this process with
  ``solve_case`` (its own mesh and assembly, no files written);
- ``whorl sweep`` with 1 and with 2 local workers, in a fresh folder each time.
  ``total`` counts everything (worker start-up, point folders, store, summary,
  plots, report); ``points`` counts the point phase only.

Usage: python tests/bench/bench_sweep.py [CASE] [--workers 1 2]
"""

from __future__ import annotations

import argparse
import re
import shutil
import tempfile
import time
from pathlib import Path

from whorl.cases.run import solve_case
from whorl.cases.sweep import run_sweep
from whorl.cases.sweep.driver import load_sweep
from whorl.cases.sweep.points import point_case

DEMO = Path(__file__).resolve().parents[2] / "cases" / "examples" / "shaft-heater-overnight.toml"


def baseline(path: Path) -> tuple[int, float]:
    _, specs = load_sweep(path)
    text = path.read_text(encoding="utf-8")
    start = time.perf_counter()
    for spec in specs:
        solve_case(point_case(text, path, spec))
    return len(specs), time.perf_counter() - start


def sweep(path: Path, workers: int):
    with tempfile.TemporaryDirectory(prefix="whorl-bench-") as out:
        start = time.perf_counter()
        outcome = run_sweep(path, out=out, workers=workers)
        total = time.perf_counter() - start
    return outcome.counts["done"], total, outcome.timing_s["run"], outcome.meshed


def variant(path: Path, folder: Path, order2: bool) -> Path:
    """The demo with 4 coil gaps; with ``order2`` also at order 2, default mesh sizing."""
    text = path.read_text(encoding="utf-8").replace("count = 3", "count = 4")
    name = path.name.replace(".toml", "-4gaps.toml")
    if order2:
        text = text.replace("order = 1", "order = 2")
        text = re.sub(r"\[mesh\]\n(?:[^\[\n].*\n)*", "", text)
        name = name.replace(".toml", "-order2.toml")
    copy = folder / name
    copy.write_text(text, encoding="utf-8")
    for data in path.parent.glob("*.csv"):  # data files the case reads (a B-H curve)
        shutil.copy(data, folder / data.name)
    return copy


def bench(path: Path, workers_list) -> None:
    print(f"\ncase: {path.name}")
    print(f"{'run':<30} {'points':>6} {'meshes':>6} {'total s':>8} {'points/h total':>15} "
          f"{'points/h points':>16}")
    n, seconds = baseline(path)
    rate = 3600 * n / seconds
    print(f"{'baseline (in-process loop)':<30} {n:>6} {n:>6} {seconds:>8.1f} {rate:>15.0f} "
          f"{rate:>16.0f}")
    for workers in workers_list:
        n, total, run, meshed = sweep(path, workers)
        print(f"{f'whorl sweep, {workers} worker(s)':<30} {n:>6} {meshed:>6} {total:>8.1f} "
              f"{3600 * n / total:>15.0f} {3600 * n / run:>16.0f}")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("case", nargs="?", default=str(DEMO))
    parser.add_argument("--workers", type=int, nargs="+", default=[1, 2])
    args = parser.parse_args()
    path = Path(args.case).resolve()
    with tempfile.TemporaryDirectory(prefix="whorl-bench-case-") as folder:
        for order2 in (False, True):
            bench(variant(path, Path(folder), order2), args.workers)


if __name__ == "__main__":
    main()
