"""The ``[parameters]`` table: values that may refer to each other, with overrides.

Parameters keep the unit they are written with (pint quantities; a value
without a unit stays a bare float). A parameter may refer to others in any
order; a cycle is a :class:`CaseError` naming it, and so is a name that is
neither a parameter nor a function.

Overrides (``--set NAME=VALUE`` on the command line, or a sweep point)
replace the file's value before resolution. An override that is a bare
number for a parameter the file gives a unit takes that unit: with
``coil_gap = "6 mm"``, ``--set coil_gap=4`` means 4 mm. Overriding a parameter
the file does not define is an error.
"""

from __future__ import annotations

import keyword
import unicodedata
from collections.abc import Mapping

from whorl.cases.errors import CaseError
from whorl.cases.expressions import RESERVED, evaluate, names
from whorl.cases.units import Quantity, to_si


def check_name(name: str, key: str) -> None:
    """A parameter name must be an identifier that is not a keyword, function or pi."""
    folded = unicodedata.normalize("NFKC", name)
    if folded != name:
        raise CaseError(key, f"{name!r} is not in normal form: Python reads it as "
                             f"{folded!r}, so it could not be told apart; write {folded!r}")
    if not name.isidentifier() or keyword.iskeyword(name) or name.startswith("_"):
        raise CaseError(key, f"{name!r} is not a valid parameter name: use letters, digits "
                             "and _, starting with a letter")
    if name in RESERVED:
        raise CaseError(key, f"{name!r} is reserved for the function or constant of that name")


def resolve(table: Mapping, overrides: Mapping | None = None, key_of=None) -> dict:
    """Resolve a parameter table.

    Parameters
    ----------
    table : mapping of str -> int, float or str
        The ``[parameters]`` table as read from TOML.
    overrides : mapping of str -> str or number, optional
        Values that replace the file's (``--set``, sweep points).
    key_of : callable, optional
        ``key_of(name, overridden) -> (key path, line)`` for error messages;
        default ``parameters.NAME`` (``--set NAME`` for an override), no line.

    Returns
    -------
    dict of str -> float or pint.Quantity
        Every parameter, in the file's order, with its unit.
    """
    overrides = dict(overrides or {})
    key_of = key_of or _default_key
    for name in table:
        check_name(name, key_of(name, False)[0])
    for name in overrides:
        if name not in table:
            known = ", ".join(table) or "none defined"
            raise CaseError(f"--set {name}", f"no parameter {name!r} in [parameters] "
                                             f"(parameters: {known})")
    resolved = _resolve(dict(table), {}, key_of, overridden=set())
    if not overrides:
        return resolved
    merged = dict(table)
    merged.update(overrides)
    values = _resolve(merged, {}, key_of, overridden=set(overrides))
    for name in overrides:
        if not isinstance(values[name], Quantity) and isinstance(resolved[name], Quantity):
            values[name] = Quantity(values[name], resolved[name].units)
        _same_kind(name, values[name], resolved[name], table[name], key_of)
    # a bare override takes the file's unit; parameters that depend on it are recomputed
    fixed = {name: values[name] for name in overrides}
    return _resolve(merged, fixed, key_of, overridden=set(overrides))


def _same_kind(name, new, old, written, key_of) -> None:
    """An override must be the same kind of quantity as the file's value (both with a
    unit); else the error names ``--set NAME``, not the key the value ends up in."""
    a, b = (v.dimensionality if isinstance(v, Quantity) else None for v in (new, old))
    if a is not None and b is not None and a != b:
        raise CaseError(key_of(name, True)[0],
                        f"expected a value in units like the file's {written!r} "
                        f"({b}), got {new:~} ({a})")


def _default_key(name: str, overridden: bool):
    return (f"--set {name}" if overridden else f"parameters.{name}"), None


def _resolve(table: dict, fixed: dict, key_of, overridden: set) -> dict:
    done: dict = dict(fixed)
    params = set(table)

    def visit(name: str, stack: list[str]) -> None:
        if name in done:
            return
        key, line = key_of(name, name in overridden)
        if name in stack:
            cycle = " -> ".join(stack[stack.index(name):] + [name])
            first, first_line = key_of(stack[stack.index(name)], stack[0] in overridden)
            raise CaseError(first, f"parameters refer to each other in a cycle: {cycle}",
                            first_line)
        raw = table[name]
        try:
            needed = names(raw, key, params) if isinstance(raw, str) else set()
            for other in sorted(needed):
                if other not in params:
                    raise CaseError(key, f"unknown name {other!r}: not a parameter")
                visit(other, stack + [name])
            done[name] = evaluate(raw, key, {n: done[n] for n in needed})
        except CaseError as exc:
            if exc.line is None and exc.key == key and line is not None:
                raise CaseError(exc.key, exc.message, line) from None
            raise

    for name in table:
        visit(name, [])
    return {name: done[name] for name in table}


def si_values(params: Mapping) -> dict:
    """Resolved parameters as SI floats (for ``results.json``; angles in radians)."""
    return {name: to_si(value) for name, value in params.items()}


_SI_LABELS = ("m", "Hz", "s", "A", "V", "W", "S/m", "ohm*m", "ohm", "T", "Wb", "H", "F", "rad",
              "m/s")
_ANGLES = ("radian", "revolution", "degree", "turn", "revolutions_per_minute",
           "revolutions_per_second")


def si_unit(value) -> str:
    """The SI unit of a resolved parameter as :func:`si_values` gives it ("" if none known)."""
    if not isinstance(value, Quantity):
        return ""
    if value.dimensionality == Quantity(1.0, "Hz").dimensionality and any(
            name in _ANGLES for name in value._units):
        return "rad/s"  # an angular velocity ("3000 rpm") is kept in rad/s, not Hz
    for label in _SI_LABELS:
        if value.dimensionality == Quantity(1.0, label).dimensionality:
            return "rad" if label == "rad" else label
    return ""


def parse_set_args(items) -> dict:
    """Turn ``["freq=10 kHz", "coil_gap=4"]`` into ``{"freq": "10 kHz", "coil_gap": "4"}``.

    Raises :class:`CaseError` (key ``--set``) for an item without ``=``.
    """
    out: dict = {}
    for item in items or ():
        name, sep, value = item.partition("=")
        name = name.strip()
        if not sep or not name or not value.strip():
            raise CaseError("--set", f"expected NAME=VALUE, got {item!r}")
        value = value.strip()
        if len(value) >= 2 and value[0] == value[-1] and value[0] in "\"'":
            value = value[1:-1].strip()  # quotes that reached us from a shell script
        out[name] = value
    return out
