"""Safe parsing, evaluation and differentiation of user formulas.

Users describe a wheel radius such as ``0.3 + 0.05*cos(3*phi)`` (variable
``phi``, radians) or a track profile such as ``0.5*cos(2*x)`` (variable ``x``,
metres) as text. This module turns that text into a :class:`Formula` without
ever handing it to Python's own evaluator: a small tokenizer and a
recursive-descent parser build an expression tree from a fixed whitelist of
operators, constants and functions. The tree is compiled into a flat list of
numpy operations, so evaluation is vectorised, and it can be differentiated
symbolically.

Grammar, lowest precedence first::

    sum      := product (('+' | '-') product)*
    product  := unary (('*' | '/') unary)*
    unary    := ('+' | '-') unary | power
    power    := primary (('^' | '**') unary)?
    primary  := number | variable | 'pi' | 'e' | '(' sum ')'
              | function '(' sum (',' sum)* ')'

Hence ``^`` (or ``**``) is right-associative and binds tighter than a unary
minus on its left (``-x^2`` is ``-(x^2)``), and ``2^-1`` is allowed.
Implicit multiplication (``2x``) is an error. Every problem raises
:class:`~ridesim.errors.FormulaError` with a one-line message that quotes the
formula, names the offending token and its (0-based) character position and
says what is allowed.
"""

from __future__ import annotations

import difflib
import operator
import re
from collections.abc import Callable, Iterator
from dataclasses import field
from typing import Any, NamedTuple

import numpy as np

from ridesim.errors import FormulaError, InputError
from ridesim.records import record

__all__ = ["Formula", "parse", "MAX_FORMULA_LENGTH", "MAX_NESTING"]

MAX_FORMULA_LENGTH = 2000
"""Longest formula text accepted, in characters."""

MAX_NESTING = 100
"""Deepest nesting of parentheses, calls, unary signs and powers accepted."""

_QUOTE_LIMIT = 200
_MAX_DERIVATIVE_NODES = 100_000

# --------------------------------------------------------------------------
# Whitelist
# --------------------------------------------------------------------------

_CONSTANTS: dict[str, float] = {"pi": float(np.pi), "e": float(np.e)}

# Canonical one-argument functions and their numpy implementations.
_FUNCS1: dict[str, Callable[[Any], Any]] = {
    "sin": np.sin,
    "cos": np.cos,
    "tan": np.tan,
    "arcsin": np.arcsin,
    "arccos": np.arccos,
    "arctan": np.arctan,
    "sinh": np.sinh,
    "cosh": np.cosh,
    "tanh": np.tanh,
    "arcsinh": np.arcsinh,
    "arccosh": np.arccosh,
    "arctanh": np.arctanh,
    "exp": np.exp,
    "log": np.log,
    "log10": np.log10,
    "sqrt": np.sqrt,
    "abs": np.abs,
}

# Canonical two-argument functions.
_FUNCS2: dict[str, Callable[[Any, Any], Any]] = {
    "arctan2": np.arctan2,
    "min": np.minimum,
    "max": np.maximum,
    "hypot": np.hypot,
}

# Spelling accepted in formulas -> canonical name.
_ALIASES: dict[str, str] = {name: name for name in (*_FUNCS1, *_FUNCS2)}
_ALIASES.update(
    {
        "asin": "arcsin",
        "acos": "arccos",
        "atan": "arctan",
        "asinh": "arcsinh",
        "acosh": "arccosh",
        "atanh": "arctanh",
        "atan2": "arctan2",
    }
)

_SIGNATURES: dict[str, str] = {
    "arctan2": "(y, x)",
    "min": "(a, b)",
    "max": "(a, b)",
    "hypot": "(a, b)",
}

# Functions that only appear in derivatives (never accepted by the parser).
_INTERNAL_FUNCS: dict[str, Callable[..., Any]] = {"sign": np.sign}

_FUNCTION_ORDER = (
    "sin cos tan arcsin arccos arctan asin acos atan sinh cosh tanh arcsinh arccosh "
    "arctanh asinh acosh atanh exp log log10 sqrt abs atan2 arctan2 min max hypot"
).split()

_RESERVED = frozenset(_CONSTANTS) | frozenset(_ALIASES) | frozenset(_INTERNAL_FUNCS)

_TWO_ARG_LIST = "atan2(y, x), arctan2(y, x), min(a, b), max(a, b) and hypot(a, b)"

# Names that are variables elsewhere in the project: never "corrected" to a constant.
_VARIABLE_NAMES = frozenset({"x", "y", "z", "t", "s", "u", "r", "phi", "theta"})

# Characters people commonly paste from typeset formulas.
_CHAR_HINTS = {
    "\u03c0": "pi",
    "\u03c6": "phi",
    "\u03d5": "phi",
    "\u00d7": "*",
    "\u00b7": "*",
    "\u2212": "-",
    "\u00f7": "/",
    "\u00b2": "^2",
    "\u00b3": "^3",
}


def _allowed_names(variable: str) -> str:
    return ", ".join([variable, "pi", "e", *_FUNCTION_ORDER])


def _quote(text: str) -> str:
    """Quote formula text on one line, escaping control characters and truncating."""
    shown = text if len(text) <= _QUOTE_LIMIT else text[: _QUOTE_LIMIT - 3] + "..."
    shown = "".join(ch if ch.isprintable() else repr(ch)[1:-1] for ch in shown)
    return f'"{shown}"'


# --------------------------------------------------------------------------
# Tokenizer
# --------------------------------------------------------------------------

_NUM, _NAME, _OP, _END = "number", "name", "op", "end"

_TOKEN_RE = re.compile(
    r"""
     (?P<ws>\s+)
    |(?P<number>(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?)
    |(?P<name>[A-Za-z_][A-Za-z0-9_]*)
    |(?P<op>\*\*|[-+*/^(),])
    """,
    re.VERBOSE | re.ASCII,
)


class _Token(NamedTuple):
    kind: str
    text: str
    pos: int


def _tokenize(text: str, fail: Callable[[str], FormulaError]) -> list[_Token]:
    tokens: list[_Token] = []
    pos = 0
    n = len(text)
    while pos < n:
        m = _TOKEN_RE.match(text, pos)
        if m is None:
            ch = text[pos]
            hint = ""
            if ch in _CHAR_HINTS:
                hint = f" (write {_CHAR_HINTS[ch]})"
            elif ch == ".":
                hint = " (attribute access is not allowed)"
            raise fail(
                f"unexpected character {ch!r} at position {pos}{hint}; allowed: numbers, "
                "names, + - * / ^ ** ( ) and ','"
            )
        kind = m.lastgroup
        end = m.end()
        if kind == _NUM:
            rest = text[end:]
            if rest[:1] == "." or re.match(r"[eE][+-](?![0-9])", rest):
                bad_m = re.match(r"[0-9.eE+-]*", text[pos:])
                bad = bad_m.group() if bad_m else text[pos:end]
                raise fail(
                    f"malformed number '{bad}' at position {pos}; write numbers like 2, 0.5, .5 or 1e-3"
                )
            value = float(m.group())
            if not np.isfinite(value):
                raise fail(f"number '{m.group()}' at position {pos} is too large for a float")
        if kind != "ws":
            tokens.append(_Token(str(kind), m.group(), pos))
        pos = end
    tokens.append(_Token(_END, "", n))
    return tokens


# --------------------------------------------------------------------------
# Expression tree
# --------------------------------------------------------------------------

_PREC_SUM, _PREC_PRODUCT, _PREC_UNARY, _PREC_POWER, _PREC_ATOM = 1, 2, 3, 4, 5

# Instruction opcodes of the compiled program.
_PUSH_CONST, _PUSH_VAR, _APPLY1, _APPLY2, _APPLYN = 0, 1, 2, 3, 4


class _Node:
    """Base of the expression-tree node classes."""

    __slots__ = ()

    def steps(self) -> Iterator[Any]:
        """Yield child nodes and instructions in evaluation order."""
        raise NotImplementedError

    def render(self, variable: str) -> tuple[str, int]:
        """Return the text of the node and its precedence."""
        raise NotImplementedError

    def diff(self) -> _Node:
        """Return the derivative with respect to the variable."""
        raise NotImplementedError


class _Const(_Node):
    __slots__ = ("value",)

    def __init__(self, value: float) -> None:
        self.value = np.float64(value)

    def steps(self) -> Iterator[Any]:
        yield (_PUSH_CONST, self.value)

    def render(self, variable: str) -> tuple[str, int]:
        v = float(self.value)
        if v < 0:
            return "-" + _format_number(-v), _PREC_UNARY
        return _format_number(v), _PREC_ATOM

    def diff(self) -> _Node:
        return _ZERO


class _Var(_Node):
    __slots__ = ()

    def steps(self) -> Iterator[Any]:
        yield (_PUSH_VAR, None)

    def render(self, variable: str) -> tuple[str, int]:
        return variable, _PREC_ATOM

    def diff(self) -> _Node:
        return _ONE


class _Neg(_Node):
    __slots__ = ("arg",)

    def __init__(self, arg: _Node) -> None:
        self.arg = arg

    def steps(self) -> Iterator[Any]:
        yield self.arg
        yield (_APPLY1, np.negative)

    def render(self, variable: str) -> tuple[str, int]:
        text = _wrap(self.arg, variable, _PREC_UNARY)
        if text.startswith("-"):
            text = f"({text})"
        return "-" + text, _PREC_UNARY

    def diff(self) -> _Node:
        return _neg(self.arg.diff())


class _Sum(_Node):
    """Left-to-right chain ``t0 +/- t1 +/- t2 ...`` (``subtract[0]`` is always False)."""

    __slots__ = ("terms", "subtract")

    def __init__(self, terms: tuple[_Node, ...], subtract: tuple[bool, ...]) -> None:
        self.terms = terms
        self.subtract = subtract

    def steps(self) -> Iterator[Any]:
        yield self.terms[0]
        for term, sub in zip(self.terms[1:], self.subtract[1:], strict=True):
            yield term
            yield (_APPLY2, np.subtract if sub else np.add)

    def render(self, variable: str) -> tuple[str, int]:
        parts = [_wrap(self.terms[0], variable, _PREC_PRODUCT)]
        for term, sub in zip(self.terms[1:], self.subtract[1:], strict=True):
            text = _wrap(term, variable, _PREC_PRODUCT)
            if text.startswith("-"):
                text = f"({text})"
            parts.append((" - " if sub else " + ") + text)
        return "".join(parts), _PREC_SUM

    def diff(self) -> _Node:
        result: _Node = _ZERO
        for term, sub in zip(self.terms, self.subtract, strict=True):
            d = term.diff()
            result = _sub(result, d) if sub else _add(result, d)
        return result


class _Product(_Node):
    """Left-to-right chain ``f0 *or/ f1 *or/ f2 ...`` (``divide[0]`` is always False)."""

    __slots__ = ("factors", "divide")

    def __init__(self, factors: tuple[_Node, ...], divide: tuple[bool, ...]) -> None:
        self.factors = factors
        self.divide = divide

    def steps(self) -> Iterator[Any]:
        yield self.factors[0]
        for factor, div in zip(self.factors[1:], self.divide[1:], strict=True):
            yield factor
            yield (_APPLY2, np.divide if div else np.multiply)

    def render(self, variable: str) -> tuple[str, int]:
        parts = [_wrap(self.factors[0], variable, _PREC_UNARY)]
        for factor, div in zip(self.factors[1:], self.divide[1:], strict=True):
            text = _wrap(factor, variable, _PREC_UNARY)
            if text.startswith("-"):
                text = f"({text})"
            parts.append(("/" if div else "*") + text)
        return "".join(parts), _PREC_PRODUCT

    def diff(self) -> _Node:
        prefix = self.factors[0]
        d_prefix = prefix.diff()
        for i in range(1, len(self.factors)):
            factor = self.factors[i]
            d_factor = factor.diff()
            if self.divide[i]:
                # (A/f)' = A'/f - A*f'/f^2
                d_prefix = _sub(
                    _div(d_prefix, factor),
                    _div(_mul(prefix, d_factor), _pow(factor, _Const(2.0))),
                )
            else:
                # (A*f)' = A'*f + A*f'
                d_prefix = _add(_mul(d_prefix, factor), _mul(prefix, d_factor))
            prefix = _Product(self.factors[: i + 1], self.divide[: i + 1])
        return d_prefix


class _Power(_Node):
    __slots__ = ("base", "exponent")

    def __init__(self, base: _Node, exponent: _Node) -> None:
        self.base = base
        self.exponent = exponent

    def steps(self) -> Iterator[Any]:
        yield self.base
        yield self.exponent
        # operator.pow keeps numpy's fast paths for x**2, x**0.5, x**-1.
        yield (_APPLY2, operator.pow)

    def render(self, variable: str) -> tuple[str, int]:
        base = _wrap(self.base, variable, _PREC_ATOM)
        exponent = _wrap(self.exponent, variable, _PREC_UNARY)
        return f"{base}^{exponent}", _PREC_POWER

    def diff(self) -> _Node:
        u, v = self.base, self.exponent
        du, dv = u.diff(), v.diff()
        if isinstance(v, _Const):
            c = float(v.value)
            return _mul(_mul(_Const(c), _pow(u, _Const(c - 1.0))), du)
        if isinstance(u, _Const):
            return _mul(_mul(self, _call("log", u)), dv)
        # (u^v)' = u^v * (v'*log(u) + v*u'/u)
        return _mul(self, _add(_mul(dv, _call("log", u)), _div(_mul(v, du), u)))


class _Call(_Node):
    __slots__ = ("name", "args")

    def __init__(self, name: str, args: tuple[_Node, ...]) -> None:
        self.name = name
        self.args = args

    def steps(self) -> Iterator[Any]:
        yield from self.args
        if len(self.args) == 1:
            yield (_APPLY1, _FUNCS1.get(self.name) or _INTERNAL_FUNCS[self.name])
        else:
            yield (_APPLY2, _FUNCS2[self.name])

    def render(self, variable: str) -> tuple[str, int]:
        inner = ", ".join(arg.render(variable)[0] for arg in self.args)
        return f"{self.name}({inner})", _PREC_ATOM

    def diff(self) -> _Node:
        if len(self.args) == 2:
            return _diff_call2(self.name, *self.args)
        u = self.args[0]
        du = u.diff()
        if _is_value(du, 0.0) or self.name == "sign":
            return _ZERO
        return _DIFF1[self.name](u, du)


def _select_le(a: Any, b: Any, p: Any, q: Any) -> Any:
    return np.where(a <= b, p, q)


def _select_ge(a: Any, b: Any, p: Any, q: Any) -> Any:
    return np.where(a >= b, p, q)


class _Select(_Node):
    """``p`` where ``a <= b`` (or ``a >= b``), else ``q``; only built by derivatives."""

    __slots__ = ("op", "a", "b", "p", "q")

    def __init__(self, op: str, a: _Node, b: _Node, p: _Node, q: _Node) -> None:
        self.op, self.a, self.b, self.p, self.q = op, a, b, p, q

    def steps(self) -> Iterator[Any]:
        yield from (self.a, self.b, self.p, self.q)
        yield (_APPLYN, (4, _select_le if self.op == "<=" else _select_ge))

    def render(self, variable: str) -> tuple[str, int]:
        a, b, p, q = (n.render(variable)[0] for n in (self.a, self.b, self.p, self.q))
        return f"where({a} {self.op} {b}, {p}, {q})", _PREC_ATOM

    def diff(self) -> _Node:
        return _select(self.op, self.a, self.b, self.p.diff(), self.q.diff())


def _format_number(v: float) -> str:
    if v.is_integer() and abs(v) < 1e16:
        return str(int(v))
    return repr(v)


def _wrap(node: _Node, variable: str, min_prec: int) -> str:
    text, prec = node.render(variable)
    return text if prec >= min_prec else f"({text})"


# --------------------------------------------------------------------------
# Compilation and evaluation
# --------------------------------------------------------------------------

_DONE = object()


def _compile(root: _Node) -> tuple[tuple[int, Any], ...]:
    """Flatten a tree into a postfix program without recursing."""
    program: list[tuple[int, Any]] = []
    stack = [root.steps()]
    while stack:
        item = next(stack[-1], _DONE)
        if item is _DONE:
            stack.pop()
        elif isinstance(item, _Node):
            stack.append(item.steps())
        elif isinstance(item, tuple):
            program.append(item)
    return tuple(program)


def _run(program: tuple[tuple[int, Any], ...], x: Any) -> Any:
    """Execute a compiled program on ``x`` (caller sets ``np.errstate``)."""
    stack: list[Any] = []
    push = stack.append
    pop = stack.pop
    for code, arg in program:
        if code == _APPLY2:
            right = pop()
            stack[-1] = arg(stack[-1], right)
        elif code == _PUSH_CONST:
            push(arg)
        elif code == _PUSH_VAR:
            push(x)
        elif code == _APPLY1:
            stack[-1] = arg(stack[-1])
        else:
            n, fn = arg
            args = stack[-n:]
            del stack[-n:]
            push(fn(*args))
    return stack[0]


def _expanded_size(node: _Node, memo: dict[int, int]) -> int:
    """Count the operations of a tree, counting shared sub-trees each time used."""
    key = id(node)
    if key not in memo:
        children = [s for s in node.steps() if isinstance(s, _Node)]
        memo[key] = 1 + sum(_expanded_size(c, memo) for c in children)
    return memo[key]


def _fold(node: _Node) -> _Node:
    """Replace a node whose operands are all constants by its (finite) value."""
    with np.errstate(all="ignore"):
        value = np.float64(_run(_compile(node), None))
    return _Const(value) if np.isfinite(value) else node


def _all_const(*nodes: _Node) -> bool:
    return all(isinstance(n, _Const) for n in nodes)


def _is_value(node: _Node, value: float) -> bool:
    return isinstance(node, _Const) and node.value == value


# --------------------------------------------------------------------------
# Tree builders. The parser uses the plain ones, which only fold constants
# (so evaluation order and floating-point results match the text exactly);
# derivatives use the simplifying ones below, which also drop 0 and 1.
# --------------------------------------------------------------------------


def _make_chain(cls: type, items: list[_Node], flags: list[bool]) -> _Node:
    """Build a sum or product, folding its leading constant operands."""
    while len(items) > 1 and _all_const(items[0], items[1]):
        folded = _fold(cls((items[0], items[1]), (False, flags[1])))
        if not isinstance(folded, _Const):
            break
        items = [folded, *items[2:]]
        flags = [False, *flags[2:]]
    if len(items) == 1:
        return items[0]
    return cls(tuple(items), tuple(flags))


def _parse_neg(arg: _Node) -> _Node:
    if isinstance(arg, _Const):
        return _Const(-arg.value)
    if isinstance(arg, _Neg):
        return arg.arg
    return _Neg(arg)


def _maybe_fold(node: _Node, *operands: _Node) -> _Node:
    return _fold(node) if _all_const(*operands) else node


_ZERO = _Const(0.0)
_ONE = _Const(1.0)


def _neg(a: _Node) -> _Node:
    if isinstance(a, _Product) and isinstance(a.factors[0], _Const):
        return _Product((_Const(-a.factors[0].value), *a.factors[1:]), a.divide)
    return _parse_neg(a)


def _add(a: _Node, b: _Node) -> _Node:
    if _is_value(a, 0.0):
        return b
    if _is_value(b, 0.0):
        return a
    if isinstance(b, _Neg):
        return _sub(a, b.arg)
    if _all_const(a, b):
        return _fold(_Sum((a, b), (False, False)))
    if isinstance(a, _Sum):
        return _Sum((*a.terms, b), (*a.subtract, False))
    return _Sum((a, b), (False, False))


def _sub(a: _Node, b: _Node) -> _Node:
    if _is_value(b, 0.0):
        return a
    if _is_value(a, 0.0):
        return _neg(b)
    if isinstance(b, _Neg):
        return _add(a, b.arg)
    if _all_const(a, b):
        return _fold(_Sum((a, b), (False, True)))
    if isinstance(a, _Sum):
        return _Sum((*a.terms, b), (*a.subtract, True))
    return _Sum((a, b), (False, True))


def _mul(a: _Node, b: _Node) -> _Node:
    if _is_value(a, 0.0) or _is_value(b, 0.0):
        return _ZERO
    if _is_value(a, 1.0):
        return b
    if _is_value(b, 1.0):
        return a
    if _is_value(a, -1.0):
        return _neg(b)
    if _is_value(b, -1.0):
        return _neg(a)
    if _all_const(a, b):
        return _fold(_Product((a, b), (False, False)))
    if isinstance(a, _Neg):
        return _neg(_mul(a.arg, b))
    if isinstance(b, _Neg):
        return _neg(_mul(a, b.arg))
    if isinstance(b, _Const):
        a, b = b, a
    if isinstance(a, _Const) and isinstance(b, _Product) and isinstance(b.factors[0], _Const):
        lead = _fold(_Product((a, b.factors[0]), (False, False)))
        if isinstance(lead, _Const):
            if _is_value(lead, 1.0) and len(b.factors) == 2 and not b.divide[1]:
                return b.factors[1]
            return _Product((lead, *b.factors[1:]), b.divide)
    if isinstance(a, _Const) and isinstance(b, _Product):
        return _Product((a, *b.factors), (False, *b.divide))
    if isinstance(a, _Product):
        return _Product((*a.factors, b), (*a.divide, False))
    return _Product((a, b), (False, False))


def _div(a: _Node, b: _Node) -> _Node:
    if _is_value(b, 1.0):
        return a
    if _is_value(a, 0.0):
        return _ZERO
    if _all_const(a, b):
        return _fold(_Product((a, b), (False, True)))
    if isinstance(a, _Neg):
        return _neg(_div(a.arg, b))
    if isinstance(a, _Product):
        return _Product((*a.factors, b), (*a.divide, True))
    return _Product((a, b), (False, True))


def _pow(a: _Node, b: _Node) -> _Node:
    if _is_value(b, 1.0):
        return a
    if _is_value(b, 0.0):
        return _ONE
    return _maybe_fold(_Power(a, b), a, b)


def _call(name: str, *args: _Node) -> _Node:
    return _maybe_fold(_Call(name, args), *args)


def _select(op: str, a: _Node, b: _Node, p: _Node, q: _Node) -> _Node:
    if isinstance(p, _Const) and isinstance(q, _Const) and p.value == q.value:
        return p
    return _Select(op, a, b, p, q)


def _sq(u: _Node) -> _Node:
    return _pow(u, _Const(2.0))


# Outer derivative rules: f(u)' as a function of u and u'.
_DIFF1: dict[str, Callable[[_Node, _Node], _Node]] = {
    "sin": lambda u, du: _mul(du, _call("cos", u)),
    "cos": lambda u, du: _neg(_mul(du, _call("sin", u))),
    "tan": lambda u, du: _mul(du, _add(_ONE, _sq(_call("tan", u)))),
    "arcsin": lambda u, du: _div(du, _call("sqrt", _sub(_ONE, _sq(u)))),
    "arccos": lambda u, du: _neg(_div(du, _call("sqrt", _sub(_ONE, _sq(u))))),
    "arctan": lambda u, du: _div(du, _add(_ONE, _sq(u))),
    "sinh": lambda u, du: _mul(du, _call("cosh", u)),
    "cosh": lambda u, du: _mul(du, _call("sinh", u)),
    "tanh": lambda u, du: _mul(du, _sub(_ONE, _sq(_call("tanh", u)))),
    "arcsinh": lambda u, du: _div(du, _call("sqrt", _add(_sq(u), _ONE))),
    "arccosh": lambda u, du: _div(du, _call("sqrt", _sub(_sq(u), _ONE))),
    "arctanh": lambda u, du: _div(du, _sub(_ONE, _sq(u))),
    "exp": lambda u, du: _mul(du, _call("exp", u)),
    "log": lambda u, du: _div(du, u),
    "log10": lambda u, du: _div(du, _mul(_Const(np.log(10.0)), u)),
    "sqrt": lambda u, du: _div(du, _mul(_Const(2.0), _call("sqrt", u))),
    "abs": lambda u, du: _mul(du, _Call("sign", (u,))),
}


def _diff_call2(name: str, a: _Node, b: _Node) -> _Node:
    da, db = a.diff(), b.diff()
    if name == "arctan2":
        # d atan2(y, x) = (x*y' - y*x') / (x^2 + y^2)
        return _div(_sub(_mul(b, da), _mul(a, db)), _add(_sq(b), _sq(a)))
    if name == "hypot":
        return _div(_add(_mul(a, da), _mul(b, db)), _call("hypot", a, b))
    return _select("<=" if name == "min" else ">=", a, b, da, db)


# --------------------------------------------------------------------------
# Parser
# --------------------------------------------------------------------------


class _Parser:
    """Recursive-descent parser over the token list of one formula."""

    def __init__(self, text: str, variable: str) -> None:
        self.text = text
        self.variable = variable
        self.tokens = _tokenize(text, self.error)
        self.index = 0
        self.depth = 0

    # -- helpers -----------------------------------------------------------

    def error(self, message: str) -> FormulaError:
        return FormulaError(f"formula {_quote(self.text)}: {message}")

    @property
    def tok(self) -> _Token:
        return self.tokens[self.index]

    def advance(self) -> _Token:
        tok = self.tokens[self.index]
        self.index += 1
        return tok

    def at_op(self, *ops: str) -> bool:
        tok = self.tokens[self.index]
        return tok.kind == _OP and tok.text in ops

    def enter(self, tok: _Token) -> None:
        self.depth += 1
        if self.depth > MAX_NESTING:
            raise self.error(
                f"nesting deeper than {MAX_NESTING} levels at '{tok.text}' at position "
                f"{tok.pos}; simplify the formula"
            )

    def expected_operand(self, tok: _Token) -> FormulaError:
        what = f"expected a number, {self.variable}, a function or '('"
        if tok.kind == _END:
            return self.error(f"unexpected end of formula at position {tok.pos}; {what}")
        return self.error(f"unexpected '{tok.text}' at position {tok.pos}; {what}")

    def unknown_name(self, tok: _Token) -> FormulaError:
        called = self.tokens[self.index + 1].text == "("
        names = list(_ALIASES) if called else [self.variable, *_CONSTANTS]
        close = []
        if called or tok.text not in _VARIABLE_NAMES:
            close = difflib.get_close_matches(tok.text, names, n=1)
            if not close and tok.text.lower() in names:
                close = [tok.text.lower()]
        hint = f" (did you mean '{close[0]}'?)" if close else ""
        if not called:
            hint += f"; the variable here is {self.variable}"
        return self.error(
            f"unknown name '{tok.text}' at position {tok.pos}{hint}; allowed: {_allowed_names(self.variable)}"
        )

    def after_operand(self, open_tok: _Token | None) -> FormulaError:
        """Explain a token that cannot follow a complete operand."""
        tok = self.tok
        if tok.kind == _END:
            assert open_tok is not None
            return self.error(
                f"missing ')' to close the '(' at position {open_tok.pos}; the formula "
                f"ends at position {tok.pos}"
            )
        if tok.text == ")":
            return self.error(f"unmatched ')' at position {tok.pos}; no '(' is open there")
        if tok.text == ",":
            return self.error(
                f"unexpected ',' at position {tok.pos}; a comma only separates the "
                f"arguments of {_TWO_ARG_LIST}"
            )
        if tok.kind == _NAME and not self.is_known(tok.text):
            return self.unknown_name(tok)
        if tok.kind in (_NUM, _NAME) or tok.text == "(":
            prev = self.tokens[self.index - 1]
            left = prev.text if prev.kind in (_NUM, _NAME) else "(...)"
            right = tok.text if tok.kind in (_NUM, _NAME) else "(...)"
            return self.error(
                f"unexpected '{tok.text}' at position {tok.pos} (write {left}*{right}: "
                "implicit multiplication is not allowed)"
            )
        return self.error(f"unexpected '{tok.text}' at position {tok.pos}")  # pragma: no cover

    def is_known(self, name: str) -> bool:
        return name == self.variable or name in _CONSTANTS or name in _ALIASES

    # -- grammar -----------------------------------------------------------

    def parse(self) -> _Node:
        if self.tok.kind == _END:
            raise self.error(
                f"empty formula at position 0; expected an expression in {self.variable}, "
                f"e.g. 0.3 + 0.05*cos(3*{self.variable})"
            )
        node = self.sum()
        if self.tok.kind != _END:
            raise self.after_operand(None)
        return node

    def sum(self) -> _Node:
        terms = [self.product()]
        subtract = [False]
        while self.at_op("+", "-"):
            subtract.append(self.advance().text == "-")
            terms.append(self.product())
        return _make_chain(_Sum, terms, subtract)

    def product(self) -> _Node:
        factors = [self.unary()]
        divide = [False]
        while self.at_op("*", "/"):
            divide.append(self.advance().text == "/")
            factors.append(self.unary())
        return _make_chain(_Product, factors, divide)

    def unary(self) -> _Node:
        if self.at_op("+", "-"):
            op = self.advance()
            self.enter(op)
            operand = self.unary()
            self.depth -= 1
            return operand if op.text == "+" else _parse_neg(operand)
        return self.power()

    def power(self) -> _Node:
        base = self.primary()
        if self.at_op("^", "**"):
            op = self.advance()
            self.enter(op)
            exponent = self.unary()
            self.depth -= 1
            return _maybe_fold(_Power(base, exponent), base, exponent)
        return base

    def primary(self) -> _Node:
        tok = self.tok
        if tok.kind == _NUM:
            self.advance()
            return _Const(float(tok.text))
        if tok.kind == _NAME:
            if tok.text == self.variable:
                self.advance()
                return _Var()
            if tok.text in _CONSTANTS:
                self.advance()
                return _Const(_CONSTANTS[tok.text])
            if tok.text in _ALIASES:
                return self.call()
            raise self.unknown_name(tok)
        if tok.text == "(":
            self.advance()
            self.enter(tok)
            node = self.sum()
            if not self.at_op(")"):
                raise self.after_operand(tok)
            self.advance()
            self.depth -= 1
            return node
        raise self.expected_operand(tok)

    def call(self) -> _Node:
        name_tok = self.advance()
        name = _ALIASES[name_tok.text]
        arity = 2 if name in _FUNCS2 else 1
        usage = name_tok.text + _SIGNATURES.get(name, "(u)")
        paren = self.tok
        if not self.at_op("("):
            found = "the end" if paren.kind == _END else f"'{paren.text}'"
            raise self.error(
                f"function '{name_tok.text}' at position {name_tok.pos} must be followed by "
                f"its argument in parentheses, as in {usage}; found {found} at position "
                f"{paren.pos}"
            )
        self.advance()
        self.enter(paren)
        args: list[_Node] = []
        if not self.at_op(")"):
            while True:
                args.append(self.sum())
                if self.at_op(","):
                    self.advance()
                    continue
                if self.at_op(")"):
                    break
                raise self.after_operand(paren)
        self.advance()
        self.depth -= 1
        if len(args) != arity:
            plural = "argument" if arity == 1 else "arguments"
            raise self.error(
                f"function '{name_tok.text}' at position {name_tok.pos} takes exactly "
                f"{arity} {plural}, as in {usage}; got {len(args)}"
            )
        return _maybe_fold(_Call(name, tuple(args)), *args)


def _check_variable(variable: object) -> str:
    if not isinstance(variable, str):
        raise FormulaError(
            f"formula variable must be a name such as 'x' or 'phi', got "
            f"{type(variable).__name__} {variable!r}"
        )
    if not re.fullmatch(r"[A-Za-z][A-Za-z0-9_]*", variable, flags=re.ASCII):
        raise FormulaError(
            f"formula variable {variable!r} is not a valid name; use letters, digits and "
            "'_', starting with a letter (e.g. 'x' or 'phi')"
        )
    if variable in _RESERVED:
        raise FormulaError(
            f"formula variable {variable!r} is reserved for a constant or function; "
            "choose another name such as 'x' or 'phi'"
        )
    return variable


def _parse_tree(text: object, variable: str) -> _Node:
    if not isinstance(text, str):
        shown = repr(text)
        shown = shown if len(shown) <= 60 else shown[:57] + "..."
        raise FormulaError(
            f"formula {shown}: a formula must be text (str), got {type(text).__name__}; "
            f'write e.g. "0.3 + 0.05*cos(3*{variable})"'
        )
    if len(text) > MAX_FORMULA_LENGTH:
        raise FormulaError(
            f"formula {_quote(text[:60])}: too long ({len(text)} characters); at most "
            f"{MAX_FORMULA_LENGTH} characters are allowed"
        )
    return _Parser(text, variable).parse()


# --------------------------------------------------------------------------
# Public API
# --------------------------------------------------------------------------


@record
class Formula:
    """A parsed formula in one variable, evaluated vectorised with numpy.

    Two formulas are equal (and hash equal) when their text and variable are.

    Parameters
    ----------
    text : str
        The formula, e.g. ``"0.3 + 0.05*cos(3*phi)"``. For a formula returned
        by :meth:`derivative` this is the generated text of the derivative.
    variable : str, optional
        The single variable name the formula may use (default ``"x"``).

    Raises
    ------
    FormulaError
        If the text is not a well-formed formula in ``variable``.

    See Also
    --------
    parse : Build a formula from text.

    Examples
    --------
    >>> import numpy as np
    >>> f = Formula("0.3 + 0.05*cos(3*phi)", "phi")
    >>> f(np.array([0.0, np.pi / 3]))
    array([0.35, 0.25])
    """

    text: str
    variable: str = "x"
    _tree: _Node | None = field(default=None, init=False, repr=False, compare=False)
    _program: tuple = field(default=(), init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        """Validate and parse the text."""
        tree = _parse_tree(self.text, _check_variable(self.variable))
        object.__setattr__(self, "_tree", tree)
        object.__setattr__(self, "_program", _compile(tree))

    @classmethod
    def _from_tree(cls, text: str, variable: str, tree: _Node) -> Formula:
        """Build a formula from an existing tree (used for derivatives)."""
        self = object.__new__(cls)
        for name, value in (("text", text), ("variable", variable), ("_tree", tree)):
            object.__setattr__(self, name, value)
        object.__setattr__(self, "_program", _compile(tree))
        return self

    def __call__(self, values: Any) -> Any:
        """Evaluate the formula.

        Parameters
        ----------
        values : array_like of float
            Values of the variable; any shape.

        Returns
        -------
        numpy.ndarray or numpy.float64
            Float64 values of the formula with the shape of ``values``
            (a constant formula is broadcast); a scalar for scalar input.
            Out-of-domain points give ``nan`` or ``inf`` silently.

        Raises
        ------
        InputError
            If ``values`` cannot be read as real numbers.
        """
        if np.iscomplexobj(values):
            raise InputError(
                f"formula {_quote(self.text)}: {self.variable} values must be real, got complex numbers"
            )
        try:
            arr = np.asarray(values, dtype=np.float64)
        except (TypeError, ValueError) as exc:
            raise InputError(
                f"formula {_quote(self.text)}: {self.variable} values must be real "
                f"numbers, got {type(values).__name__} ({exc})"
            ) from None
        with np.errstate(all="ignore"):
            out = _run(self._program, arr)
        if out is arr:
            out = arr.copy()
        out = np.asarray(out, dtype=np.float64)
        if out.shape != arr.shape:
            out = np.full(arr.shape, out, dtype=np.float64)
        if out.ndim == 0:
            return out[()]
        return out

    def derivative(self) -> Formula:
        """Differentiate symbolically with respect to the variable.

        Returns
        -------
        Formula
            The derivative, itself callable and differentiable. Its text
            (``str()``) is generated; it can be parsed again unless the
            formula used ``abs``, ``min`` or ``max``, whose derivatives are
            written with ``sign(...)`` and ``where(...)``.

        Raises
        ------
        FormulaError
            If the formula is nested too deeply to differentiate.
        """
        assert self._tree is not None
        try:
            tree = self._tree.diff()
            size = _expanded_size(tree, {})
            if size > _MAX_DERIVATIVE_NODES:
                raise FormulaError(
                    f"formula {_quote(self.text)}: derivative too large ({size} operations; "
                    f"at most {_MAX_DERIVATIVE_NODES}); simplify the formula"
                )
            text = tree.render(self.variable)[0]
        except RecursionError:
            raise FormulaError(f"formula {_quote(self.text)}: nested too deeply to differentiate") from None
        return Formula._from_tree(text, self.variable, tree)

    def __str__(self) -> str:
        """Return the formula text."""
        return self.text


def parse(text: str, variable: str = "x") -> Formula:
    """Parse formula text into a :class:`Formula`.

    Parameters
    ----------
    text : str
        Formula such as ``"0.3 + 0.05*cos(3*phi)"``. Allowed: numbers
        (``2``, ``0.5``, ``.5``, ``1e-3``), the variable, ``pi``, ``e``,
        ``+ - * /``, ``^`` or ``**`` for powers, parentheses, the one-argument
        functions sin cos tan arcsin arccos arctan (asin acos atan) sinh cosh
        tanh arcsinh arccosh arctanh (asinh acosh atanh) exp log log10 sqrt
        abs, and ``atan2(y, x)`` (``arctan2``), ``min(a, b)``, ``max(a, b)``,
        ``hypot(a, b)``. At most :data:`MAX_FORMULA_LENGTH` characters and
        :data:`MAX_NESTING` levels of nesting.
    variable : str, optional
        The only variable name the formula may use (default ``"x"``).

    Returns
    -------
    Formula
        The parsed formula.

    Raises
    ------
    FormulaError
        With a one-line message quoting the formula and naming the offending
        token, its 0-based position and what is allowed.

    Examples
    --------
    >>> f = parse("0.5*cos(2*x)")
    >>> float(f(0.0))
    0.5
    """
    return Formula(text, variable)
