"""``whorl verify``: check an installation against published results before trusting it."""

from __future__ import annotations

from pathlib import Path

from whorl.cases.errors import CaseError
from whorl.cases.verify import available, table_lines, verify, write_html

HELP = ("run the verification cases shipped with whorl and compare each number with its "
        "published reference (prints a table, writes verification.html)")


def add_args(parser) -> None:
    parser.add_argument("--case", dest="cases", action="append", default=[], metavar="NAME",
                        help=f"run only this verification case (repeatable): "
                             f"{', '.join(available())}")
    parser.add_argument("--out", metavar="FOLDER", default=".",
                        help="folder for verification.html (default: the current folder)")
    parser.add_argument("-q", "--quiet", action="store_true", help="no progress messages")


def handle(args) -> int:
    known = available()
    for name in args.cases:
        if name not in known:
            raise CaseError("--case", f"no verification case {name!r}; known: "
                                      f"{', '.join(known)}")
    say = None if args.quiet else (lambda message: print(message, flush=True))
    checks, timing = verify(args.cases or None, say)
    for line in table_lines(checks):
        print(line)
    folder = Path(args.out)
    folder.mkdir(parents=True, exist_ok=True)
    page = write_html(checks, timing, folder / "verification.html")
    failed = [c for c in checks if not c.passed]
    print(f"\n{len(checks) - len(failed)} of {len(checks)} checks pass "
          f"({sum(timing.values()):.1f} s); the page: {page}")
    return 1 if failed else 0
