"""Names that become parts of file names: regions, sources, loops, lines, points, cases.

A name is checked against the whole string (``re.fullmatch``: a trailing
newline does not slip through) and against a length limit, so that no name
from a case file can be a path (``/``, ``..``) or too long for a file name.
"""

from __future__ import annotations

import re

from whorl.cases.errors import CaseError

#: Region, source, loop, line and point names: a letter, digit or ``_`` first, then
#: letters, digits, ``_``, ``-`` and ``.``.
NAME = re.compile(r"[A-Za-z0-9_][A-Za-z0-9_.-]*")
#: Case names (they name the output folder): letters, digits, ``-`` and ``_``.
SLUG = re.compile(r"[A-Za-z0-9_-]+")
#: Longest name accepted, in characters (file names add a few characters to it).
MAX_NAME = 100


def valid_name(name: str, pattern: re.Pattern = NAME) -> bool:
    """True when ``name`` matches ``pattern`` as a whole and is not too long."""
    return (isinstance(name, str) and len(name) <= MAX_NAME
            and pattern.fullmatch(name) is not None)


def checked_name(table, key: str, kind: str, pattern: re.Pattern = NAME,
                 rule: str = "use letters, digits, -, _ and . (starting with a letter, "
                             "digit or _)") -> str:
    """The text at ``key`` of ``table`` as a valid name, else :class:`CaseError`."""
    name = table.string(key)
    if not valid_name(name, pattern):
        why = (f"longer than {MAX_NAME} characters" if len(name) > MAX_NAME else rule)
        raise table.error(key, f"{_shown(name)} is not a valid {kind} name: {why} "
                               "(it becomes part of a file name)")
    return name


def _shown(name: str) -> str:
    text = repr(name)
    return text if len(text) <= 60 else text[:57] + "..."


def check_key_name(name: str, key: str, kind: str, pattern: re.Pattern = NAME) -> None:
    """Like :func:`checked_name` for a name that is not in a table."""
    if not valid_name(name, pattern):
        raise CaseError(key, f"{_shown(name)} is not a valid {kind} name")
