"""``whorl run CASE``: mesh, solve and write the results folder."""

from __future__ import annotations

import time

from whorl.cases.cli.common import add_case_args, add_limit_args
from whorl.cases.errors import CaseError
from whorl.cases.limits import check_mesh_estimate
from whorl.cases.loader import load_case
from whorl.cases.output import output_key, output_root
from whorl.cases.parameters import parse_set_args
from whorl.cases.progress import StageReporter
from whorl.cases.run import CAUTION, run_case
from whorl.postprocess.summary import summary_text
from whorl.solver import linalg

HELP = "mesh, solve and write results (results.json, tables, log) for a case file"


def add_args(parser) -> None:
    add_case_args(parser)
    add_limit_args(parser)
    parser.add_argument("--solver", metavar="NAME",
                        help="linear solver backend (overrides [model] solver): "
                             f"auto, {', '.join(linalg.BACKENDS)}")


def handle(args) -> int:
    # the reported total is the whole command's time, from the start of main()
    started = getattr(args, "started", None) or time.perf_counter()
    case = load_case(args.case, parse_set_args(args.overrides), args.max_points)
    if args.solver:
        if args.solver not in ("auto", *linalg.BACKENDS):
            raise CaseError("--solver", f"unknown linear solver {args.solver!r}; known: "
                                        f"auto, {', '.join(linalg.BACKENDS)}")
        case.solver = args.solver
    check_mesh_estimate(case, args.max_elements)
    root = output_root(case, args.out)
    outcome = run_case(case, root, StageReporter(quiet=args.quiet),
                       output_key(args.out), args.mesh_time_limit, started)
    print(summary_text(outcome.results))
    print()
    print(f"results in {outcome.folder}")
    for f in outcome.files:
        print(f"  {f.relative_to(outcome.folder)}")
    print()
    print("Caution: " + CAUTION)
    return 0
