"""Safe arithmetic over parameters and quantities, for case-file values.

A case file is data and must never run code, so expressions are never handed
to ``eval``: the text is parsed by :mod:`ast` and the tree is walked here
against a strict whitelist.

Grammar
-------
Allowed: numbers, quantity literals (``3 mm``, ``58 MS/m``, ``1.72e-8 ohm*m``),
parameter names, ``+ - * / **``, unary ``-`` and ``+``, parentheses, the
functions ``sqrt exp log sin cos tan`` (one argument each) and the constant
``pi``. Anything else (attribute access, calls of other names, subscripts,
strings, lambdas, comprehensions, comparisons, names starting with ``_``) is
a :class:`CaseError` naming the key.

How quantity literals are read
------------------------------
Before :func:`ast.parse`, a pre-pass over Python's tokens turns every run
``NUMBER UNIT`` into one literal. The unit run starts with the name directly
after the number and continues through ``*`` or ``/`` followed by another
unit name, and through ``**`` followed by an (optionally negative) integer;
``%`` directly after a number is percent. A parenthesised group of units
after ``*`` or ``/`` belongs to the run (``45 W/(m*K)``), and ``^`` is a power
inside a unit (``7850 kg/m^3``). A name counts as a unit only if it
is **not** a parameter name, not a function or ``pi``, and pint knows it:
*parameter names win*. So with a parameter ``turns``, ``"10 A/turns"`` is
10 A divided by the parameter, and ``"2 turns"`` is an error (write
``2*turns``). A literal binds tighter than any operator: ``"-120 deg"`` is
minus (120 deg) and ``"3 mm/2"`` is (3 mm)/2. A unit must follow a number
directly: write ``"(a + b)*1 mm"``, not ``"(a + b) mm"``.

Quantity arithmetic follows pint: a bare number is dimensionless, so
``"20 + gap"`` with ``gap = "6 mm"`` is an error; write ``"20 mm + gap"``.
Inside ``sin cos tan`` a bare number is in radians; write ``"30 deg"`` for
degrees. Numbers are evaluated as floats (no unbounded integers).
"""

from __future__ import annotations

import ast
import io
import math
import tokenize
from collections.abc import Mapping

import pint

from whorl.cases.errors import CaseError
from whorl.cases.units import UREG, Quantity, describe, is_unit

MAX_LENGTH = 1000
"""Longest expression accepted, in characters."""

MAX_EXPONENT = 12
"""Largest power of a unit (``mm**3``), and of a quantity with a unit, in size."""

CONSTANTS = {"pi": math.pi}
FUNCTIONS = ("sqrt", "exp", "log", "sin", "cos", "tan")
RESERVED = frozenset(FUNCTIONS) | frozenset(CONSTANTS)
"""Names that are never parameters or units."""

_PLACEHOLDER = "_q{}"
_FORBIDDEN = {
    ast.Attribute: "attribute access ('.')",
    ast.Subscript: "subscripts ('[...]')",
    ast.Lambda: "lambda",
    ast.ListComp: "comprehensions", ast.SetComp: "comprehensions",
    ast.DictComp: "comprehensions", ast.GeneratorExp: "comprehensions",
    ast.Compare: "comparisons", ast.BoolOp: "'and'/'or'", ast.IfExp: "'if ... else'",
    ast.List: "lists", ast.Tuple: "tuples", ast.Dict: "dicts", ast.Set: "sets",
    ast.JoinedStr: "text strings", ast.NamedExpr: "assignment (':=')",
    ast.Starred: "'*' unpacking", ast.Await: "await", ast.Yield: "yield",
}


def _error(key: str, message: str) -> CaseError:
    return CaseError(key, message)


def _tokens(text: str, key: str) -> list[tokenize.TokenInfo]:
    try:
        return list(tokenize.generate_tokens(io.StringIO(text).readline))
    except (tokenize.TokenError, SyntaxError, IndentationError) as exc:
        raise _error(key, f"cannot read expression {text!r}: {exc}") from None


def _offsets(text: str) -> list[int]:
    starts, pos = [0], 0
    for line in text.splitlines(keepends=True):
        pos += len(line)
        starts.append(pos)
    return starts


def _number(text: str, key: str) -> float:
    try:
        value = ast.literal_eval(text)
    except (ValueError, SyntaxError):
        raise _error(key, f"cannot read the number {text!r}") from None
    if isinstance(value, complex) or not isinstance(value, int | float):
        raise _error(key, f"complex and other non-real numbers are not allowed ({text!r})")
    return float(value)


def _unit_name(tok, params) -> bool:
    return (tok.type == tokenize.NAME and tok.string not in params
            and tok.string not in RESERVED and not tok.string.startswith("_")
            and is_unit(tok.string))


def _unit_run(toks, i, params) -> int:
    """Index just past the unit run starting at ``toks[i]`` (``i`` if there is none)."""
    if toks[i].type == tokenize.OP and toks[i].string == "%":
        return i + 1
    if not _unit_name(toks[i], params):
        return i
    j = i + 1
    while j + 1 < len(toks) and toks[j].type == tokenize.OP:
        op, nxt = toks[j].string, toks[j + 1]
        if op in ("*", "/") and _unit_name(nxt, params):
            j += 2
        elif op in ("*", "/") and nxt.string == "(" and _unit_group(toks, j + 1, params):
            j = _unit_group(toks, j + 1, params)
        elif op in ("**", "^"):
            k = j + 2 if nxt.string == "-" else j + 1
            if k < len(toks) and toks[k].type == tokenize.NUMBER:
                j = k + 1
            else:
                break
        else:
            break
    return j


def _unit_group(toks, i, params) -> int:
    """Index just past a parenthesised group of units such as ``(m*K)`` or ``(m^2*K)``
    starting at ``toks[i]`` (the ``(``), or 0 when it is not one."""
    j = i + 1
    if j >= len(toks) or not _unit_name(toks[j], params):
        return 0
    end = _unit_run(toks, j, params)
    if end < len(toks) and toks[end].type == tokenize.OP and toks[end].string == ")":
        return end + 1
    return 0


def prepare(text: str, key: str, params=()) -> tuple[str, dict]:
    """Replace quantity literals by placeholder names.

    Parameters
    ----------
    text : str
        The expression as written.
    key : str
        Key path for error messages.
    params : collection of str
        Parameter names (they are never read as units).

    Returns
    -------
    source : str
        Python expression text with each literal replaced by ``_q0``, ``_q1`` ...
    literals : dict
        Placeholder name -> pint quantity.
    """
    if len(text) > MAX_LENGTH:
        raise _error(key, f"expression longer than {MAX_LENGTH} characters")
    toks = _tokens(text, key)
    starts = _offsets(text)
    pieces, literals, last, i = [], {}, 0, 0
    shown = {}
    while i < len(toks):
        tok = toks[i]
        if tok.type == tokenize.NAME and tok.string.startswith("_"):
            raise _error(key, f"names starting with '_' are not allowed ({tok.string!r})")
        if tok.type == tokenize.NUMBER and i + 1 < len(toks):
            end = _unit_run(toks, i + 1, params)
            if end > i + 1:
                a = starts[tok.start[0] - 1] + tok.start[1]
                u0 = starts[toks[i + 1].start[0] - 1] + toks[i + 1].start[1]
                b = starts[toks[end - 1].end[0] - 1] + toks[end - 1].end[1]
                unit_text = text[u0:b]
                name = _PLACEHOLDER.format(len(literals))
                units = units_of(toks[i + 1:end], unit_text, key)
                try:
                    literals[name] = Quantity(_number(tok.string, key), units)
                except (pint.errors.PintError, ValueError, TypeError, ZeroDivisionError,
                        OverflowError) as exc:
                    raise _error(key, f"cannot read {text[a:b]!r}: {exc}") from None
                shown[name] = text[a:b]
                pieces.append(text[last:a])
                pieces.append(name)
                last, i = b, end
                continue
        i += 1
    pieces.append(text[last:])
    _SHOWN.clear()
    _SHOWN.update(shown)
    return "".join(pieces), literals


_SHOWN: dict = {}  # placeholder -> the literal as written, for messages about the last parse


def units_of(tokens, unit_text: str, key: str):
    """The pint unit of a unit run (``mm``, ``ohm*m``, ``W/m**2``, ``W/(m^2*K)``, ``%``),
    built here.

    The text is never handed to pint's own parser: each name is looked up on its
    own, and products, quotients and integer powers are formed here, with
    exponents limited to :data:`MAX_EXPONENT` in size and one power per name.
    """
    if unit_text == "%":
        return UREG.percent

    def bad(why: str) -> CaseError:
        return _error(key, f"cannot read the unit {unit_text!r}: {why}")

    factors = []  # [name, +1 or -1, exponent]
    sign, i = 1, 0
    group, outer = 1, []  # sign of the enclosing parenthesised group: W/(m*K)
    while i < len(tokens):
        tok = tokens[i]
        if tok.type == tokenize.NAME:
            factors.append([tok.string, sign, None])
            i += 1
        elif tok.string in ("*", "/"):
            sign = group * (1 if tok.string == "*" else -1)
            i += 1
        elif tok.string == "(":
            outer.append(group)
            group = sign
            i += 1
        elif tok.string == ")" and outer:
            group = outer.pop()
            i += 1
        elif tok.string in ("**", "^") and factors:
            if factors[-1][2] is not None:
                raise bad("one power per unit name (write mm**3, not mm**3**2)")
            negative = i + 1 < len(tokens) and tokens[i + 1].string == "-"
            j = i + 2 if negative else i + 1
            exponent = _number(tokens[j].string, key) * (-1 if negative else 1)
            if exponent != int(exponent) or exponent == 0 or abs(exponent) > MAX_EXPONENT:
                raise bad(f"a unit's power must be a whole number from -{MAX_EXPONENT} to "
                          f"{MAX_EXPONENT} other than 0")
            factors[-1][2] = int(exponent)
            i = j + 1
        else:
            raise bad("unexpected text")
    try:
        units = UREG.dimensionless
        for name, sign, exponent in factors:
            unit = UREG.parse_units(name) ** (sign * (1 if exponent is None else exponent))
            units = units * unit
    except (pint.errors.PintError, ValueError, TypeError, AttributeError, KeyError,
            ZeroDivisionError, OverflowError, SyntaxError) as exc:
        raise bad(str(exc) or type(exc).__name__) from None
    return units


def read_unit(text: str, key: str):
    """A unit written on its own (``"mm"``, ``"in"``, ``"W/m**2"``) as a pint unit, read
    by :func:`units_of`; anything else is a :class:`CaseError`."""
    if not isinstance(text, str) or not text.strip() or len(text) > MAX_LENGTH:
        raise _error(key, f"expected a unit name such as 'mm', got {text!r}")
    toks = [t for t in _tokens(text.strip(), key)
            if t.type not in (tokenize.NEWLINE, tokenize.NL, tokenize.ENDMARKER)]
    if not toks or _unit_run(toks, 0, ()) != len(toks):
        raise _error(key, f"{text!r} is not a unit (try 'mm', 'cm', 'm', 'in')")
    return units_of(toks, text.strip(), key)


def parse(text: str, key: str, params=()) -> tuple[ast.Expression, dict]:
    """Parse an expression into a checked AST and its quantity literals.

    Every node is checked against the whitelist here, so a rejected
    construct is reported even if evaluation would never reach it.
    """
    source, literals = prepare(text, key, params)
    try:
        tree = ast.parse(source.strip(), mode="eval")
    except (SyntaxError, ValueError, MemoryError, RecursionError) as exc:
        detail = getattr(exc, "msg", None) or str(exc)
        raise _error(key, f"cannot read expression {text!r}: {detail}"
                          f"{_juxtaposition_hint(text, key, params)}") from None
    for node in ast.walk(tree):
        _check_node(node, key)
    return tree, literals


def _juxtaposition_hint(text: str, key: str, params) -> str:
    toks = _tokens(text, key)
    for a, b in zip(toks, toks[1:], strict=False):
        if a.type == tokenize.NUMBER and b.type == tokenize.NAME:
            if b.string in params or b.string in RESERVED:
                return f" (write {a.string}*{b.string} for a product)"
            return f" ({b.string!r} is neither a parameter nor a known unit)"
    return ""


def _check_node(node, key: str) -> None:
    for cls, what in _FORBIDDEN.items():
        if isinstance(node, cls):
            raise _error(key, f"{what} is not allowed in an expression")
    if isinstance(node, ast.Call):
        func = node.func.id if isinstance(node.func, ast.Name) else None
        if func not in FUNCTIONS:
            shown = f"'{_SHOWN.get(func, func)}'" if func else "this"
            raise _error(key, f"calling {shown} is not allowed: only "
                              f"{', '.join(FUNCTIONS)} may be called")
        if node.keywords or len(node.args) != 1:
            raise _error(key, f"{func}() takes exactly one argument")
    elif isinstance(node, ast.Constant):
        if isinstance(node.value, str | bytes):
            raise _error(key, "text strings are not allowed inside an expression")
        if isinstance(node.value, bool) or not isinstance(node.value, int | float):
            raise _error(key, f"{node.value!r} is not allowed in an expression")
    elif isinstance(node, ast.BinOp):
        if not isinstance(node.op, ast.Add | ast.Sub | ast.Mult | ast.Div | ast.Pow):
            raise _error(key, f"the operator {type(node.op).__name__} is not allowed "
                              "(only + - * / **)")
    elif isinstance(node, ast.UnaryOp):
        if not isinstance(node.op, ast.USub | ast.UAdd):
            raise _error(key, "only unary - and + are allowed")
    elif not isinstance(node, ast.Expression | ast.Name | ast.Load | ast.operator
                        | ast.unaryop):
        raise _error(key, f"{type(node).__name__} is not allowed in an expression")


def names(text: str, key: str, params=()) -> set[str]:
    """Names an expression refers to (parameters or unknown names; not functions or pi)."""
    tree, literals = parse(text, key, params)
    called = {id(n.func) for n in ast.walk(tree) if isinstance(n, ast.Call)}
    return {n.id for n in ast.walk(tree) if isinstance(n, ast.Name)
            and id(n) not in called and n.id not in literals and n.id not in CONSTANTS}


def evaluate(value, key: str, params: Mapping | None = None):
    """Evaluate a case-file value: a number, or a string expression over ``params``.

    Parameters
    ----------
    value : int, float or str
        As read from TOML.
    key : str
        Key path for error messages.
    params : mapping of str -> float or pint.Quantity
        Resolved parameters.

    Returns
    -------
    float or pint.Quantity
        A bare float when no unit is involved.
    """
    params = params or {}
    if isinstance(value, bool):
        raise _error(key, f"expected a number or a quantity, got {value!r}")
    if isinstance(value, int | float):
        return float(value)
    if not isinstance(value, str):
        raise _error(key, f"expected a number or a quantity string, got {_type(value)}")
    if not value.strip():
        raise _error(key, "empty value")
    tree, literals = parse(value, key, params)
    try:
        result = _Evaluator(key, params, literals).visit(tree.body)
        magnitude = result.magnitude if isinstance(result, Quantity) else result
        if not math.isfinite(float(magnitude)):
            raise _error(key, f"{value!r} is not a finite number ({float(magnitude)})")
        return result
    except CaseError:
        raise
    except pint.errors.DimensionalityError as exc:
        raise _error(key, f"units do not match in {value!r}: {_dim_message(exc)}") from None
    except pint.errors.PintError as exc:
        raise _error(key, f"cannot evaluate {value!r}: {exc}") from None
    except ZeroDivisionError:
        raise _error(key, f"division by zero in {value!r}") from None
    except (OverflowError, MemoryError, RecursionError):
        raise _error(key, f"{value!r} is too large or too deeply nested") from None
    except (TypeError, ValueError) as exc:
        raise _error(key, f"cannot evaluate {value!r}: {exc}") from None


def _type(value) -> str:
    return {list: "a list", dict: "a table"}.get(type(value), type(value).__name__)


def _dim_message(exc) -> str:
    d1, d2 = exc.dim1 or "dimensionless", exc.dim2 or "dimensionless"
    return (f"cannot combine {exc.units1} ({d1}) with {exc.units2} ({d2}); "
            "give bare numbers a unit, e.g. '20 mm + gap'")


class _Evaluator:
    """Walks a checked AST; every node type it meets has been whitelisted."""

    def __init__(self, key, params, literals):
        self.key, self.params, self.literals = key, params, literals

    def visit(self, node):
        if isinstance(node, ast.Constant):
            return float(node.value)
        if isinstance(node, ast.Name):
            return self.name(node.id)
        if isinstance(node, ast.UnaryOp):
            operand = self.visit(node.operand)
            return -operand if isinstance(node.op, ast.USub) else +operand
        if isinstance(node, ast.BinOp):
            return self.binop(node)
        if isinstance(node, ast.Call):
            return self.call(node.func.id, self.visit(node.args[0]))
        raise _error(self.key, f"{type(node).__name__} is not allowed")  # pragma: no cover

    def name(self, name):
        if name in self.literals:
            return self.literals[name]
        if name in self.params:
            return self.params[name]
        if name in CONSTANTS:
            return CONSTANTS[name]
        if name in FUNCTIONS:
            raise _error(self.key, f"{name} is a function: write {name}(...)")
        raise _error(self.key, f"unknown name {name!r}: not a parameter "
                               "(define it under [parameters])")

    def binop(self, node):
        a, b = self.visit(node.left), self.visit(node.right)
        op = node.op
        if isinstance(op, ast.Add | ast.Sub):
            self.same_dimension(a, b, "add" if isinstance(op, ast.Add) else "subtract")
            return a + b if isinstance(op, ast.Add) else a - b
        if isinstance(op, ast.Mult):
            return a * b
        if isinstance(op, ast.Div):
            return a / b
        exponent = self.plain(b, "an exponent")
        if isinstance(a, Quantity) and not a.dimensionless:
            if abs(exponent) > MAX_EXPONENT:
                raise _error(self.key, f"a quantity with a unit may be raised to powers up to "
                                       f"{MAX_EXPONENT} in size, not {exponent:g}")
            return a ** exponent
        if isinstance(a, Quantity):
            return a ** exponent
        return math.pow(a, exponent)

    def same_dimension(self, a, b, verb):
        da = a.dimensionality if isinstance(a, Quantity) else UREG.dimensionless.dimensionality
        db = b.dimensionality if isinstance(b, Quantity) else UREG.dimensionless.dimensionality
        if da != db:
            raise _error(self.key, f"cannot {verb} {describe(a)} and {describe(b)}: "
                                   "give bare numbers a unit, e.g. '20 mm + gap'")

    def plain(self, x, what) -> float:
        if isinstance(x, Quantity):
            if not x.dimensionless:
                raise _error(self.key, f"{what} must be a plain number, got {describe(x)}")
            return float(x.to("dimensionless").magnitude)
        return float(x)

    def call(self, func, x):
        if func == "sqrt":
            magnitude = x.magnitude if isinstance(x, Quantity) else x
            if magnitude < 0:
                raise _error(self.key, "sqrt of a negative value")
            return x ** 0.5
        if func in ("sin", "cos", "tan"):
            if isinstance(x, Quantity):
                if not x.dimensionless:
                    raise _error(self.key, f"{func}() needs an angle, got {describe(x)}")
                x = float(x.to("radian").magnitude)
            return getattr(math, func)(x)
        arg = self.plain(x, f"the argument of {func}()")
        if func == "log" and arg <= 0:
            raise _error(self.key, "log of a value <= 0")
        return getattr(math, func)(arg)
