"""Arguments that several subcommands share."""

from __future__ import annotations

import argparse
import math

from whorl.cases.limits import MAX_SWEEP_POINTS
from whorl.cases.meshing import DEFAULT_MESH_TIME_LIMIT
from whorl.meshes.estimate import DEFAULT_MAX_ELEMENTS


def _count(text: str) -> int:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None
    if not math.isfinite(value) or value < 1 or value != int(value):
        raise argparse.ArgumentTypeError(f"expected a whole number >= 1, got {text!r}")
    return int(value)


def _seconds(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected seconds, got {text!r}") from None
    if not (math.isfinite(value) and value > 0):
        raise argparse.ArgumentTypeError(f"expected a positive number of seconds, got {text!r}")
    return value


def add_limit_args(parser, mesh_time: bool = True) -> None:
    """``--max-elements``, ``--max-points`` and (optionally) ``--mesh-time-limit``.

    ``--max-points`` is on every command that reads a case, because every one of them
    checks a case's ``[sweep]`` (each value is tried) and refuses one that is too large.
    """
    parser.add_argument("--max-elements", type=_count, default=DEFAULT_MAX_ELEMENTS,
                        metavar="N", help="refuse a case whose mesh is estimated to need more "
                                          f"elements (default {DEFAULT_MAX_ELEMENTS:,})")
    parser.add_argument("--max-points", type=_count, default=MAX_SWEEP_POINTS,
                        metavar="N", help="refuse a case whose [sweep] has more points "
                                          f"(default {MAX_SWEEP_POINTS:,})")
    if mesh_time:
        parser.add_argument("--mesh-time-limit", type=_seconds,
                            default=DEFAULT_MESH_TIME_LIMIT, metavar="SECONDS",
                            help="stop meshing that takes longer (default "
                                 f"{DEFAULT_MESH_TIME_LIMIT:g} s)")


def add_case_args(parser, case_help: str = "the case file (TOML)", out: bool = True,
                  quiet: str | None = "no progress messages") -> None:
    """CASE, ``--set NAME=VALUE`` (repeatable), and optionally ``--out`` and ``-q``."""
    parser.add_argument("case", metavar="CASE", help=case_help)
    if out:
        parser.add_argument("--out", metavar="FOLDER",
                            help="output folder (overrides [output] folder)")
    parser.add_argument("--set", dest="overrides", action="append", default=[],
                        metavar="NAME=VALUE",
                        help='override a parameter, e.g. --set freq="10 kHz" (repeatable)')
    if quiet:
        parser.add_argument("-q", "--quiet", action="store_true", help=quiet)
