"""Line numbers of case-file keys, for error messages.

TOML parsers do not report where a key was written, so this is a plain text
scan: it records every table header (``[model]``, ``[material.copper]``,
``[[region]]`` with its occurrence number) and finds a key by name inside the
header's block. It is a best effort; a key it cannot find falls back to its
table's header line.
"""

from __future__ import annotations

import re

from whorl.cases.errors import CaseError

_HEADER = re.compile(r"^\s*(\[\[?)\s*([^\]#]+?)\s*(\]\]?)\s*(#.*)?$")


_KEY = re.compile(r"(?:^|[\s{,])[\"']?([^\s{,=\"']+)[\"']?\s*=")


def _normal(name: str) -> str:
    return ".".join(part.strip().strip("\"'") for part in name.split("."))


class LineIndex:
    """Where tables and keys are in the text of a case file.

    Blocks are identified by ``(header, occurrence)``: ``("region", 3)`` is the
    third ``[[region]]`` (counting from 1), ``("material.copper", 0)`` the table
    ``[material.copper]`` and ``("", 0)`` the top level.
    """

    def __init__(self, text: str):
        self.lines = text.splitlines()
        self.blocks: dict[tuple[str, int], tuple[int, int]] = {}
        self.duplicates: list[tuple[str, int, int]] = []
        starts: list[tuple[tuple[str, int], int]] = [(("", 0), 0)]
        counts: dict[str, int] = {}
        seen: dict[str, int] = {}
        for i, line in enumerate(self.lines):
            m = _HEADER.match(line)
            if not m or len(m.group(1)) != len(m.group(3)):
                continue
            name = _normal(m.group(2))
            if m.group(1) == "[[":
                counts[name] = counts.get(name, 0) + 1
                starts.append(((name, counts[name]), i))
            else:
                if name in seen:
                    self.duplicates.append((name, seen[name] + 1, i + 1))
                seen[name] = i
                starts.append(((name, 0), i))
        for (block, start), nxt in zip(starts, starts[1:] + [(None, len(self.lines))],
                                       strict=True):
            first = start + 1 if block != ("", 0) else start
            self.blocks.setdefault(block, (first, nxt[1]))
        self.headers = {b: s for b, s in starts}
        self._keys: dict[tuple[str, int], dict[str, int]] = {}

    def check_duplicates(self) -> None:
        """A table header written twice is an error naming the table and both lines."""
        if self.duplicates:
            name, first, second = self.duplicates[0]
            raise CaseError(name, f"table [{name}] is defined twice (lines {first} and "
                                  f"{second}); names must be unique", second)

    def find(self, block: tuple[str, int], *keys: str) -> int | None:
        """1-based line of the first of ``keys`` found in ``block`` (else the header line)."""
        span = self.blocks.get(block)
        if span is None:
            return None
        found = self._keys.get(block)
        if found is None:  # every key of the block once: finding is then a look-up
            found = self._keys[block] = {}
            for i in range(*span):
                text = self.lines[i].split("#", 1)[0]
                for m in _KEY.finditer(text):
                    found.setdefault(m.group(1), i + 1)
        for key in keys:
            if key and key in found:
                return found[key]
        return self.headers[block] + 1 if block != ("", 0) else None
