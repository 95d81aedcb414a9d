"""Errors of the case-file layer."""

from __future__ import annotations


class CaseError(ValueError):
    """Bad input in a case file: names the key path and, where known, the line.

    The command line turns it into a message and exit status 2.
    """

    def __init__(self, key: str, message: str, line: int | None = None):
        self.key = key
        self.message = message
        self.line = line
        where = f" (line {line})" if line else ""
        super().__init__(f"{key}{where}: {message}" if key else message)
