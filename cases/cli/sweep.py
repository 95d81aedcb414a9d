"""``whorl sweep CASE``: run, resume or inspect the case's parametric sweep."""

from __future__ import annotations

import argparse
import os
import sys

from whorl.cases.cli.common import add_case_args, add_limit_args
from whorl.cases.errors import CaseError
from whorl.cases.parameters import parse_set_args
from whorl.cases.run import CAUTION
from whorl.cases.sweep import run_sweep, sweep_status

HELP = "run the [sweep] points of a case (parallel, resumable), or show a sweep's progress"

EPILOG = """\
Results go to OUTPUT/CASE_NAME/sweep/: summary.csv, a folder per point
(points/0001, ...), plots/, report.html and the store sweep.sqlite.
Running the same command again resumes: finished points are kept, points
that were running when the sweep stopped run again, failed points only with
--retry-failed. A case changed outside its [sweep] table is refused unless
--restart is given (which discards the folder's sweep results).

exit status: 0 every point done; 1 some points failed (each failure is
recorded with its message in summary.csv and report.html; the other points
finish); 2 bad input, a changed case without --restart, or another sweep
already running in the same folder.
"""


def _positive_int(text: str) -> int:
    value = int(text)
    if value < 1:
        raise argparse.ArgumentTypeError("must be at least 1")
    return value


def _positive_float(text: str) -> float:
    value = float(text)
    if not value > 0:
        raise argparse.ArgumentTypeError("must be a positive number of seconds")
    return value


def add_args(parser) -> None:
    parser.formatter_class = argparse.RawDescriptionHelpFormatter
    parser.epilog = EPILOG
    add_case_args(parser, "the case file (TOML) with a [sweep] table", quiet="no progress bar")
    add_limit_args(parser, mesh_time=False)
    parser.add_argument("--workers", type=_positive_int, metavar="N",
                        help=f"local worker processes (default: all cores, {os.cpu_count()})")
    parser.add_argument("--scheduler", metavar="ADDRESS",
                        help="send the points to a running Dask cluster, e.g. "
                             "tcp://HOST:8786 (needs: pip install 'whorl[cluster]')")
    parser.add_argument("--point-timeout", type=_positive_float, metavar="SECONDS",
                        help="stop a point that runs longer and record it as failed")
    parser.add_argument("--retry-failed", action="store_true",
                        help="run the points that failed before again")
    parser.add_argument("--restart", action="store_true",
                        help="discard this sweep's results and start over")
    parser.add_argument("--vary", action="append", default=[], metavar="NAME=V1,V2,...",
                        help="sweep a parameter over these values without editing the case, "
                             "e.g. --vary gap=2mm,3mm,4mm (repeatable: a grid; replaces the "
                             "case's [sweep] table)")
    parser.add_argument("--status", action="store_true",
                        help="print the progress of a running or stopped sweep; start nothing")


class _Bar:
    """The tqdm progress bar fed by the sweep's progress events."""

    def __init__(self, quiet: bool):
        self.quiet = quiet
        self.bar = None

    def __call__(self, event: dict) -> None:
        if self.quiet:
            return
        if self.bar is None:
            from tqdm import tqdm
            self.bar = tqdm(total=event["total"], unit="point", file=sys.stderr,
                            dynamic_ncols=True, desc="sweep")
        self.bar.set_postfix(done=event["done"], failed=event["failed"], refresh=False)
        self.bar.update(event["done"] + event["failed"] - self.bar.n)

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()


def _duration(seconds) -> str:
    if seconds is None:
        return "-"
    hours, rest = divmod(int(seconds), 3600)
    return f"{hours} h {rest // 60:02d} min" if hours else f"{rest // 60} min {rest % 60:02d} s"


def _print_status(info: dict) -> int:
    print(f"sweep folder: {info['folder']}")
    if not info["started"]:
        print(f"not started: the case's sweep has {info['expected']} points")
        return 0
    if info.get("damaged"):
        print(f"the sweep's store is damaged: {info['damaged']}")
        print(f"{info['finished_folders']} finished point folders are intact; running the "
              "sweep again sets the damaged store aside and rebuilds it from them")
        return 0
    c = info["counts"]
    finished = c["done"] + c["failed"] == c["total"] and c["total"] > 0
    state = "running" if info["running"] else "finished" if finished else "stopped"
    print(f"{state}: {c['done']} done, {c['failed']} failed, {c['running']} running, "
          f"{c['pending']} pending of {c['total']} points")
    if info.get("rate_per_hour"):
        print(f"rate in the latest run: {info['rate_per_hour']:.1f} points per hour; "
              f"time left: {_duration(info['eta_s'])}")
    if info["case_changed"]:
        print("note: the case changed since this sweep started (resuming needs --restart)")
    for point, error in info["failures"][:20]:
        print(f"  point {point} failed: {error}")
    if len(info["failures"]) > 20:
        print(f"  ... and {len(info['failures']) - 20} more (see summary.csv)")
    return 0


def parse_vary_args(items) -> dict:
    """``["gap=2mm,3mm", "freq=1kHz,3kHz"]`` -> ``{"gap": ["2mm", "3mm"], ...}``."""
    out: dict = {}
    for item in items or ():
        name, sep, values = item.partition("=")
        name = name.strip()
        listed = [v.strip() for v in values.split(",") if v.strip()]
        if not sep or not name or not listed:
            raise CaseError("--vary", f"expected NAME=VALUE,VALUE,..., got {item!r}")
        if name in out:
            raise CaseError(f"--vary {name}", f"{name} is given twice")
        out[name] = listed
    return out


def handle(args) -> int:
    overrides = parse_set_args(args.overrides)
    vary = parse_vary_args(args.vary)
    if args.status:
        return _print_status(sweep_status(args.case, overrides, args.out, args.max_points,
                                          vary))
    bar = _Bar(args.quiet)
    try:
        outcome = run_sweep(args.case, overrides, out=args.out, workers=args.workers,
                            scheduler=args.scheduler, point_timeout=args.point_timeout,
                            retry_failed=args.retry_failed, restart=args.restart,
                            max_points=args.max_points, progress=bar,
                            max_elements=args.max_elements, vary=vary)
    finally:
        bar.close()
    c = outcome.counts
    if outcome.repaired:
        print(f"note: {outcome.repaired}")
    print(f"sweep: {c['done']} of {c['total']} points done, {c['failed']} failed "
          f"({outcome.ran} run now, {outcome.meshed} "
          f"mesh{'' if outcome.meshed == 1 else 'es'} built)")
    print(f"results in {outcome.folder}")
    print("  summary.csv, report.html, plots/, points/")
    if c["failed"]:
        print(f"some points failed (exit status 1): see summary.csv, or "
              f"whorl sweep {args.case} --status; --retry-failed runs them again")
    print()
    print("Caution: " + CAUTION)
    return 1 if c["failed"] or c["pending"] else 0
