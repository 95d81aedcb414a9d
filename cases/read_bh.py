"""``bh_curve`` of a ``[material.NAME]`` table: a CSV file beside the case, or inline.

- ``bh_curve = "steel-bh.csv"``: a text file in the case file's folder (or below
  it): a header row, then one ``H, B`` row per point, H in A/m and B in T
  (plain numbers; blank lines are skipped).
- ``bh_curve = { h = [0, 100, ...], b = [0, 0.6, ...] }``: the points inline,
  numbers in A/m and T or quantities such as ``"2 kA/m"`` and ``"1.2 T"``.

Every problem is a :class:`CaseError` at ``material.NAME.bh_curve[ROW]`` (the
data row, counted from 1 after the header) or at the whole key.
"""

from __future__ import annotations

import csv
from pathlib import Path

from whorl.cases.errors import CaseError
from whorl.cases.reader import Table
from whorl.solver.bh import BHCurve, CurveError


def read_bh_curve(table: Table) -> BHCurve:
    """The checked curve of ``table``'s ``bh_curve`` key."""
    key = table.key("bh_curve")
    raw = table.raw("bh_curve")
    if isinstance(raw, str):
        h, b, where = _from_file(table, key, raw)
        row_key = key
    elif isinstance(raw, dict):
        h, b = _inline(table, key, raw)
        where, row_key = "inline points", key
    else:
        raise table.error("bh_curve", "expected the name of a CSV file beside the case file "
                                      "or a table { h = [...], b = [...] }")
    try:
        return BHCurve.from_points(h, b, f"B-H curve from {where}")
    except CurveError as exc:
        if exc.row is None:
            raise table.error("bh_curve", exc.message) from None
        if isinstance(raw, dict):
            raise CaseError(f"{row_key}.{exc.column}[{exc.row}]", exc.message,
                            table.line("bh_curve")) from None
        raise CaseError(f"{row_key}[{exc.row}]", f"{raw} data row {exc.row}: {exc.message}",
                        table.line("bh_curve")) from None


def _from_file(table: Table, key: str, name: str):
    folder = table.ctx.folder
    if folder is None:
        raise table.error("bh_curve", "a curve in a file needs the case file on disk; "
                                      "give the points inline instead")
    folder = Path(folder).resolve()
    path = (folder / name).resolve()
    if not path.is_relative_to(folder):
        raise table.error("bh_curve", f"the file {name!r} lies outside the case file's folder "
                                      f"({folder}); copy it beside the case file")
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise table.error("bh_curve", f"no file {name!r} in {folder}") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise table.error("bh_curve", f"cannot read {name!r}: {exc}") from None
    rows = [r for r in csv.reader(text.splitlines()) if any(c.strip() for c in r)]
    if not rows:
        raise table.error("bh_curve", f"{name}: empty file (expected a header row, then "
                                      "H (A/m), B (T) rows)")
    h, b = [], []
    for i, row in enumerate(rows[1:], start=1):
        if len(row) != 2:
            raise CaseError(f"{key}[{i}]", f"{name} data row {i}: expected two values "
                                           f"H (A/m), B (T), got {len(row)}: {row}",
                            table.line("bh_curve"))
        try:
            h.append(float(row[0]))
            b.append(float(row[1]))
        except ValueError:
            raise CaseError(f"{key}[{i}]", f"{name} data row {i}: expected numbers H (A/m), "
                                           f"B (T), got {row}", table.line("bh_curve")) from None
    return h, b, name


def _inline(table: Table, key: str, raw: dict):
    sub = table.table("bh_curve")
    sub.allow({"h", "b"}, required=("h", "b"))
    out = []
    for name, kind in (("h", "field_strength"), ("b", "flux_density")):
        values = sub.raw(name)
        if not isinstance(values, list):
            raise sub.error(name, "expected a list of values")
        out.append([sub.convert(v, f"{key}.{name}[{i}]", kind, False, name)
                    for i, v in enumerate(values, start=1)])
    return out
