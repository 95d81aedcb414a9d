"""The ``[sweep]`` table: parameter values to run, as a grid or side by side."""

from __future__ import annotations

import math

from whorl.cases.reader import Table
from whorl.cases.spec import SweepSpec
from whorl.cases.values import value_list

MODES = ("grid", "zip")


def read_sweep(table: Table | None, parameters) -> SweepSpec | None:
    """``mode`` (grid or zip, default grid) and one list or range per parameter.

    Parameters
    ----------
    table : Table or None
        The ``[sweep]`` table.
    parameters : collection of str
        Names defined under ``[parameters]``.

    Returns
    -------
    SweepSpec or None
        ``axes`` maps each swept parameter to its values (numbers or
        quantity strings, as a ``--set`` override takes them).
    """
    if table is None:
        return None
    mode = table.string("mode", "grid", MODES)
    axes: dict = {}
    for name in table.data:
        if name == "mode":
            continue
        if name not in parameters:
            known = ", ".join(parameters) or "none defined"
            raise table.error(name, f"{name!r} is not a parameter: a sweep varies parameters "
                                    f"defined under [parameters] ({known})")
        axes[name] = [value for _, value in value_list(table, name)]
    if not axes:
        raise table.error(None, "the sweep varies nothing: add a parameter with a list of values")
    if mode == "zip":
        lengths = {name: len(values) for name, values in axes.items()}
        if len(set(lengths.values())) > 1:
            shown = ", ".join(f"{n}: {k}" for n, k in lengths.items())
            longest = max(lengths, key=lengths.get)
            raise table.error(longest, f"a zip sweep needs lists of equal length ({shown})")
    return SweepSpec(mode, axes)


def sweep_size(sweep: SweepSpec | None) -> int:
    """Number of points of a sweep (0 without a sweep)."""
    if sweep is None:
        return 0
    lengths = [len(v) for v in sweep.axes.values()]
    return lengths[0] if sweep.mode == "zip" else math.prod(lengths)
