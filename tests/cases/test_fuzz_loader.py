"""A property-based fuzz of the case loader (issue 10): whatever the structure or text of
a case file, reading and checking it ends in a valid case or a CaseError (exit 2), never
another exception, and within a bounded time.

The default budget is 300 examples (a few seconds); set WHORL_FUZZ_EXAMPLES for a longer
run, e.g. ``WHORL_FUZZ_EXAMPLES=20000 pytest tests/cases/test_fuzz_loader.py``.
"""

from __future__ import annotations

import json
import math
import os
import tomllib

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from test_sweep_points import TINY

from whorl.cases.errors import CaseError
from whorl.cases.limits import check_mesh_estimate
from whorl.cases.loader import parse_case

EXAMPLES = int(os.environ.get("WHORL_FUZZ_EXAMPLES", "300"))
FUZZ = settings(max_examples=EXAMPLES, deadline=None, derandomize="WHORL_FUZZ_EXAMPLES" not in
                os.environ, suppress_health_check=list(HealthCheck))

BASE = tomllib.loads(TINY + '\n[sweep]\ngap = ["2 mm", "4 mm"]\n')

TRICKY = [
    "0 mm**9**9**9", "1 mm/0", "mm**0**-1", "1 degC**0", "(", ")", "((1 mm)", "1e308 * 1e308",
    "5e-324 ohm*m", "nan", "inf", "-0", "1e300", "1e-300", "2**1e9", "sqrt(-1)", "log(0)",
    "__import__('os')", "gap.real", "[1]", "'x'", "gap if gap else 1", "lambda: 1",
    "3 mm + 2 s", "2 mm(3)", "20 mm + gap", "freq*2", "1 kHz", "\x00", "a\nb", "../..",
    "x" * 1200, "1 " + "m*" * 300 + "m", "(" * 200 + "1" + ")" * 200, "-" * 500 + "1",
    "1e1000", "0x10", "1_000", "\ufb01", "25 %", "3 furlong", "1 m**13",
    "polygon", "circle", "ring", "rectangle", "outline", "billet", "coil", "coil.*",
]

scalars = st.one_of(
    st.integers(min_value=-10**20, max_value=10**20),
    st.floats(allow_nan=True, allow_infinity=True),
    st.booleans(),
    st.sampled_from(TRICKY),
    st.text(max_size=30),
)
values = st.recursive(scalars, lambda inner: st.one_of(
    st.lists(inner, max_size=4), st.dictionaries(st.text(min_size=1, max_size=8), inner,
                                                 max_size=3)), max_leaves=8)


def _leaves(doc, path=()):
    if isinstance(doc, dict):
        for k, v in doc.items():
            yield from _leaves(v, (*path, k))
    elif isinstance(doc, list):
        for i, v in enumerate(doc):
            yield from _leaves(v, (*path, i))
    yield path


def _set(doc, path, value):
    if not path:
        return value
    target = doc
    for k in path[:-1]:
        target = target[k]
    if value is _DELETE:
        if isinstance(target, dict):
            del target[path[-1]]
        else:
            target.pop(path[-1])
    else:
        target[path[-1]] = value
    return doc


_DELETE = object()


def _key(k) -> str:
    return json.dumps(str(k), ensure_ascii=True)


def _value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=True)
    if isinstance(v, list):
        return "[" + ", ".join(_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{_key(k)} = {_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def to_toml(doc: dict) -> str:
    """A small TOML writer: scalars and arrays at the top, tables and arrays of tables."""
    lines = [f"{_key(k)} = {_value(v)}" for k, v in doc.items()
             if not isinstance(v, dict) and not (isinstance(v, list) and v
                                                  and all(isinstance(x, dict) for x in v))]
    for k, v in doc.items():
        if isinstance(v, dict):
            lines.append(f"[{_key(k)}]")
            lines += [f"{_key(a)} = {_value(b)}" for a, b in v.items()]
        elif isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
            for item in v:
                lines.append(f"[[{_key(k)}]]")
                lines += [f"{_key(a)} = {_value(b)}" for a, b in item.items()]
    return "\n".join(lines) + "\n"


def _check(text: str) -> None:
    try:
        case = parse_case(text, max_points=50)
        check_mesh_estimate(case)
    except CaseError:
        pass  # exit 2: fine


@FUZZ
@given(data=st.data())
def test_mutated_structure_is_a_case_or_bad_input(data):
    doc = json.loads(json.dumps(BASE))
    for _ in range(data.draw(st.integers(1, 3))):
        paths = list(_leaves(doc))
        path = data.draw(st.sampled_from(paths))
        action = data.draw(st.sampled_from(["replace", "replace", "delete", "add"]))
        if action == "delete" and path:
            doc = _set(doc, path, _DELETE)
        elif action == "add":
            parent = path[:-1] if path else ()
            target = doc
            for k in parent:
                target = target[k]
            if isinstance(target, dict):
                target[data.draw(st.sampled_from(["name", "repeat", "count", "step", "samples",
                                                  "mesh_size", "margin", "points", "x",
                                                  "fillet", "chamfer", "subtract", "shape",
                                                  "center", "radius", "inner", "outer"]))] = \
                    data.draw(values)
        else:
            doc = _set(doc, path, data.draw(values))
    if not isinstance(doc, dict):
        return
    _check(to_toml(doc))


@FUZZ
@given(data=st.data())
def test_mutated_text_is_a_case_or_bad_input(data):
    text = TINY
    for _ in range(data.draw(st.integers(1, 4))):
        at = data.draw(st.integers(0, len(text)))
        cut = data.draw(st.integers(0, 8))
        insert = data.draw(st.one_of(st.text(max_size=6), st.sampled_from(
            ["[", "]", "=", '"', "\n", "[[region]]\n", "1e999", "**9", "#", "\\u0000", "."])))
        text = text[:at] + insert + text[at + cut:]
    _check(text)
