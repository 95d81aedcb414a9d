"""Typed, checked access to one table of a case file.

:class:`Table` wraps a TOML table with its key path (``region[3]``,
``source.inductor``) and knows how to read each kind of value from it: a
quantity of a given dimension (through the expression evaluator and the
parameters), a coordinate pair, an integer, a choice, a list of names. Every
failure is a :class:`CaseError` naming the full key path and, where the text
scan finds it, the line. Positions in key paths count from 1.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from whorl.cases.errors import CaseError
from whorl.cases.expressions import evaluate
from whorl.cases.limits import MAX_MAGNITUDE
from whorl.cases.lines import LineIndex
from whorl.cases.units import to_unit

MISSING = object()


@dataclass
class Context:
    """What every section reader shares: the text index, parameters and length unit."""

    index: LineIndex
    params: dict = field(default_factory=dict)
    length_unit: str = "mm"
    unit_m: float = 1e-3
    axisymmetric: bool = False
    folder: Path | None = None  # the case file's folder (data files are read from it)
    temperature_k: float = 293.15  # [model] temperature: where tables are read

    def quantity(self, raw, key: str, kind: str, geometry: bool = False) -> float:
        """Evaluate ``raw`` and convert it to ``kind`` (length unit if ``geometry``)."""
        unit = self.length_unit if geometry else None
        return to_unit(evaluate(raw, key, self.params), kind, key, unit)


def describe_type(value) -> str:
    if isinstance(value, bool):
        return "true/false"
    return {list: "a list", dict: "a table", str: "text", int: "a number",
            float: "a number"}.get(type(value), type(value).__name__)


class Table:
    """One TOML table (or inline table) with its key path and source block."""

    def __init__(self, ctx: Context, data, path: str, block=("", 0)):
        self.ctx, self.path, self.block = ctx, path, block
        if not isinstance(data, dict):
            raise self._error(None, f"expected a table, got {describe_type(data)}", ())
        self.data = data

    # -- keys, lines and errors ------------------------------------------------------

    def key(self, name) -> str:
        if name is None:
            return self.path
        return f"{self.path}.{name}" if self.path else str(name)

    def line(self, *names) -> int | None:
        search = [n for n in names if n] + self.path.replace("]", "").split(".")[-1:]
        return self.ctx.index.find(self.block, *[s.split("[")[0] for s in search])

    def _error(self, name, message: str, search=None) -> CaseError:
        search = (name,) if search is None else search
        return CaseError(self.key(name), message, self.line(*[str(s) for s in search if s]))

    def error(self, name, message: str) -> CaseError:
        """A :class:`CaseError` for key ``name`` of this table, with its line."""
        return self._error(name, message)

    def relined(self, exc: CaseError, name) -> CaseError:
        if exc.line is not None:
            return exc
        return CaseError(exc.key, exc.message, self.line(str(name)))

    def allow(self, allowed, required=(), hint: str = "") -> None:
        """Unknown keys and missing required keys are errors."""
        for name in self.data:
            if name not in allowed:
                expected = ", ".join(sorted(allowed)) or "no keys"
                raise self.error(name, f"unknown key (expected one of: {expected}){hint}")
        for name in required:
            if name not in self.data:
                raise self._error(name, "this key is required", ())

    def has(self, name) -> bool:
        return name in self.data

    def raw(self, name, default=MISSING):
        if name in self.data:
            return self.data[name]
        if default is MISSING:
            raise self._error(name, "this key is required", ())
        return default

    # -- typed values --------------------------------------------------------------------

    def value(self, name, kind: str, default=MISSING, geometry: bool = False) -> float:
        """A quantity of ``kind`` as a float (SI, or the length unit for geometry)."""
        if name not in self.data and default is not MISSING:
            return default
        return self.convert(self.raw(name), self.key(name), kind, geometry, name)

    def convert(self, raw, key: str, kind: str, geometry: bool, name) -> float:
        try:
            value = self.ctx.quantity(raw, key, kind, geometry)
        except CaseError as exc:
            raise self.relined(exc, str(name)) from None
        bound = MAX_MAGNITUDE.get(kind)
        if bound is not None and abs(value) > bound:
            raise self.relined(CaseError(key, f"{value:g} is beyond the physical range of "
                                              f"a {kind.replace('_', ' ')} (at most "
                                              f"{bound:g} in size, SI)"), str(name))
        return value

    def positive(self, name, kind: str, default=MISSING, geometry=False, zero=False) -> float:
        """A quantity that must be > 0 (or >= 0 with ``zero``)."""
        value = self.value(name, kind, default, geometry)
        if value is not None and (value < 0 or (value == 0 and not zero)):
            raise self.error(name, f"must be {'>= 0' if zero else '> 0'}, got {value:g}")
        return value

    def vector(self, name, kind: str, size: int = 2, geometry: bool = True,
               default=MISSING) -> tuple[float, ...]:
        """A list of ``size`` quantities, such as a point ``[x, y]``."""
        if name not in self.data and default is not MISSING:
            return default
        raw = self.raw(name)
        if not isinstance(raw, list) or len(raw) != size:
            raise self.error(name, f"expected a list of {size} values, got {_shown(raw)}")
        return tuple(self.convert(v, f"{self.key(name)}[{i}]", kind, geometry, name)
                     for i, v in enumerate(raw, start=1))

    def point(self, name, default=MISSING) -> tuple[float, float]:
        """Coordinates ``[x, y]`` in the length unit."""
        return self.vector(name, "length", 2, True, default)

    def integer(self, name, default=MISSING, minimum: int | None = None) -> int:
        """A whole number (an expression giving a whole number is fine)."""
        if name not in self.data and default is not MISSING:
            return default
        value = self.value(name, "dimensionless")
        if value != round(value):
            raise self.error(name, f"expected a whole number, got {value:g}")
        if minimum is not None and value < minimum:
            raise self.error(name, f"must be at least {minimum}, got {value:g}")
        return int(round(value))

    def string(self, name, default=MISSING, choices=None) -> str:
        """A text value, optionally one of ``choices``."""
        raw = self.raw(name, default)
        if raw is default and default is not MISSING:
            return raw
        if not isinstance(raw, str):
            raise self.error(name, f"expected text, got {describe_type(raw)}")
        if choices is not None and raw not in choices:
            raise self.error(name, f"expected one of {', '.join(map(repr, choices))}, "
                                   f"got {raw!r}")
        return raw

    def boolean(self, name, default=MISSING) -> bool:
        raw = self.raw(name, default)
        if not isinstance(raw, bool):
            raise self.error(name, f"expected true or false, got {_shown(raw)}")
        return raw

    def names(self, name, default=MISSING) -> list[str]:
        """A list of names (a single name is accepted as a list of one)."""
        raw = self.raw(name, default)
        if isinstance(raw, str):
            raw = [raw]
        if not isinstance(raw, list) or not raw:
            raise self.error(name, f"expected a list of names, got {_shown(raw)}")
        for i, item in enumerate(raw, start=1):
            if not isinstance(item, str) or not item.strip():
                raise self._error(f"{name}[{i}]", f"expected a name, got {_shown(item)}",
                                  (name,))
        return list(raw)

    def table(self, name, default=MISSING) -> Table | None:
        """A sub-table (inline or not), or ``default`` when absent."""
        if name not in self.data and default is not MISSING:
            return default
        raw = self.raw(name)
        if not isinstance(raw, dict):
            raise self.error(name, f"expected a table, got {describe_type(raw)}")
        key = self.key(name)
        block = (key, 0) if (key, 0) in self.ctx.index.blocks else self.block
        return Table(self.ctx, raw, key, block)


def _shown(raw) -> str:
    text = repr(raw)
    return text if len(text) <= 60 else text[:57] + "..."


def array_of_tables(ctx: Context, document: dict, name: str) -> list[Table]:
    """The ``[[name]]`` tables of the document, keyed ``name[1]``, ``name[2]`` ..."""
    raw = document.get(name, [])
    if isinstance(raw, dict):
        raw = [raw]
    if not isinstance(raw, list):
        raise CaseError(name, f"expected [[{name}]] tables, got {describe_type(raw)}",
                        ctx.index.find(("", 0), name))
    return [Table(ctx, item, f"{name}[{i}]", (name, i)) for i, item in enumerate(raw, start=1)]
