"""Lists of values in a case file: explicit lists or ``{from, to, count, scale}`` ranges.

Used by sweeps and by frequency lists. A range gives ``count`` values from
``from`` to ``to`` inclusive, evenly spaced (``scale = "linear"``, the
default) or in geometric steps (``scale = "log"``, both ends of one sign and
non-zero). Range ends keep their units: ``{ from = "1 kHz", to = "100 kHz",
count = 3 }`` gives ``"1 kHz", "10 kHz", "100 kHz"`` as quantity strings; a bare
end takes the unit of the other end.
"""

from __future__ import annotations

import math

from whorl.cases.errors import CaseError
from whorl.cases.expressions import evaluate
from whorl.cases.limits import MAX_VALUES, check_count
from whorl.cases.reader import Table
from whorl.cases.units import Quantity, quantity_text

RANGE_KEYS = {"from", "to", "count", "scale"}


def value_list(table: Table, name: str) -> list[tuple[str, object]]:
    """``(key path, raw value)`` for every value of a list or range at ``table[name]``.

    Explicit list entries are returned as written (strings or numbers); range
    values are numbers or quantity strings such as ``"2.5 millimeter"``.
    """
    raw = table.raw(name)
    key = table.key(name)
    if isinstance(raw, list):
        if not raw:
            raise table.error(name, "the list is empty")
        check_count(table, name, len(raw), MAX_VALUES, "values")
        for i, item in enumerate(raw, start=1):
            if isinstance(item, bool) or not isinstance(item, int | float | str):
                raise table.error(f"{name}[{i}]", f"expected a number or a quantity, "
                                                  f"got {item!r}")
        return [(f"{key}[{i}]", item) for i, item in enumerate(raw, start=1)]
    if not isinstance(raw, dict):
        raise table.error(name, "expected a list of values or a table "
                                "{ from, to, count, scale }")
    rng = table.table(name)
    rng.allow(RANGE_KEYS, required=("from", "to", "count"))
    check_count(rng, "count", rng.value("count", "dimensionless"), MAX_VALUES, "values")
    count = rng.integer("count", minimum=1)
    scale = rng.string("scale", "linear", ("linear", "log"))
    start, stop = _ends(rng)
    values = spaced(start, stop, count, scale, rng)
    return [(f"{key}[{i}]", v) for i, v in enumerate(values, start=1)]


def _ends(rng: Table):
    a = _evaluate(rng, "from")
    b = _evaluate(rng, "to")
    qa, qb = isinstance(a, Quantity), isinstance(b, Quantity)
    try:
        if qa and not qb:
            b = Quantity(b, a.units)
        elif qb and not qa:
            a = Quantity(a, b.units)
        elif qa and qb:
            b = b.to(a.units)
    except Exception:  # pint DimensionalityError
        raise rng.error("to", "from and to have different dimensions") from None
    return a, b


def _evaluate(rng: Table, key: str):
    try:
        value = evaluate(rng.raw(key), rng.key(key), rng.ctx.params)
    except CaseError as exc:
        raise rng.relined(exc, key) from None
    magnitude = value.magnitude if isinstance(value, Quantity) else value
    try:
        finite = math.isfinite(float(magnitude))
    except (TypeError, ValueError, OverflowError):
        finite = False
    if not finite:
        raise rng.error(key, f"the range end is not a finite number ({magnitude})")
    return value


def spaced(start, stop, count: int, scale: str, table: Table) -> list:
    """``count`` values from ``start`` to ``stop``; quantities come back as strings."""
    units = start.units if isinstance(start, Quantity) else None
    a = float(start.magnitude if units is not None else start)
    b = float(stop.magnitude if units is not None else stop)
    if count == 1:
        mags = [a]
    elif scale == "log":
        if a == 0 or b == 0 or (a > 0) != (b > 0):
            raise table.error("scale", "a log range needs non-zero ends of the same sign")
        ratio = (b / a) ** (1 / (count - 1))
        mags = [a * ratio**k for k in range(count)]
        mags[-1] = b
    else:
        mags = [a + (b - a) * k / (count - 1) for k in range(count)]
    mags = [float(f"{m:.12g}") if math.isfinite(m) else m for m in mags]
    if units is None:
        return mags
    return [quantity_text(m, units) for m in mags]
