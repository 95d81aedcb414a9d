"""Arguments that several subcommands share."""

from __future__ import annotations


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
