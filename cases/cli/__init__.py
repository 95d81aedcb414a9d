"""The ``whorl`` command line: one module per subcommand.

Each subcommand module defines ``HELP`` (one line), ``add_args(parser)`` and
``handle(args) -> int``. :func:`main` turns the library's typed errors into
messages and exit statuses: 2 for bad input, 1 for a failure while meshing
or solving.
"""

from __future__ import annotations

import argparse
import importlib
import logging
import os
import sys
import time

from whorl.cases.errors import CaseError
from whorl.meshes.errors import MeshError
from whorl.solver.errors import SolveError

SUBCOMMANDS = ("run", "check", "mesh", "sweep", "materials", "verify")

EXIT_OK, EXIT_FAILED, EXIT_BAD_INPUT = 0, 1, 2


def build_parser() -> argparse.ArgumentParser:
    from whorl import __version__

    parser = argparse.ArgumentParser(
        prog="whorl", description="2D eddy-current and induction solver driven by case files.")
    parser.add_argument("--version", action="version", version=f"whorl {__version__}")
    parser.add_argument("-v", "--verbose", action="store_true", help="log debug messages")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", required=True)
    for name in SUBCOMMANDS:
        try:
            module = importlib.import_module(f"whorl.cases.cli.{name}")
        except ModuleNotFoundError as exc:  # a subcommand not built yet
            if exc.name != f"whorl.cases.cli.{name}":
                raise
            continue
        p = sub.add_parser(name, help=module.HELP, description=module.HELP)
        module.add_args(p)
        p.set_defaults(handler=module.handle)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the command line; returns the exit status."""
    started = time.perf_counter()  # a run reports its total from here (loading included)
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse: --help exits 0, usage errors exit 2
        return int(exc.code or 0)
    args.started = started
    console = logging.StreamHandler()
    console.setLevel(logging.DEBUG if args.verbose else logging.WARNING)
    console.setFormatter(logging.Formatter("%(levelname)s %(name)s: %(message)s"))
    logging.getLogger().addHandler(console)
    logging.getLogger().setLevel(logging.DEBUG if args.verbose else logging.WARNING)
    try:
        status = int(args.handler(args) or 0)
        sys.stdout.flush()  # a closed pipe shows here, inside the handler of BrokenPipeError
        return status
    except CaseError as exc:
        print(f"whorl: bad input: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except MeshError as exc:
        print(f"whorl: meshing failed: {exc}", file=sys.stderr)
        return EXIT_FAILED
    except SolveError as exc:
        print(f"whorl: solve failed: {exc}", file=sys.stderr)
        return EXIT_FAILED
    except KeyboardInterrupt:
        print("whorl: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        # the reader of our output went away (``whorl run CASE | head``): every file was
        # written before the summary is printed; stop quietly (the recipe of Python's
        # signal module documentation, "Note on SIGPIPE")
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return EXIT_FAILED
    finally:
        logging.getLogger().removeHandler(console)


if __name__ == "__main__":
    sys.exit(main())
