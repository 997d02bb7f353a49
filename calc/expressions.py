"""Assumed mode shapes ``w(x)`` typed by the user, parsed through a whitelist.

A shape is a short formula in ``x``, the position from the left end [m], and ``L``, the total
length of the member [m], for example ``"1 - cos(pi*x/(2*L))"`` or ``"(x/L)^2*(3 - x/L)"``.

The text is read by this module's own tokenizer and recursive-descent parser; no part of it is
ever handed to a Python or sympy string reader. Only these pieces are understood:

- numbers: ``2``, ``0.5``, ``.5``, ``1e-3``, ``2.5E2`` (converted exactly to rationals);
- the names ``x``, ``L``, ``pi`` and ``e`` (Euler's number);
- the functions ``sin cos tan sinh cosh tanh exp log sqrt abs``, each applied to one
  parenthesised argument (``log`` is the natural logarithm);
- the operators ``+ - * /`` and ``**`` (also written ``^``), with unary ``+`` and ``-``,
  parentheses and spaces.

Powers bind tighter than a unary minus (``-x**2`` is ``-(x**2)``). Exponents must be plain
numbers such as ``2``, ``-1``, ``0.5`` or ``(1/3)``. Multiplication is always explicit: ``2x``
is refused with the hint ``write 2*x``.

Every size is bounded before any costly work: the length of the text, the nesting depth, the
number of tree nodes, the magnitude of numbers and exponents, and conservative estimates of the
number of digits and of the polynomial degree sympy could produce while simplifying
automatically. Anything else raises :class:`calc.errors.InputError`.

sympy is imported when a function here is first called, not when the module is imported.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass
from fractions import Fraction
from functools import cache, reduce
from typing import TYPE_CHECKING, Any, NoReturn

import numpy as np

from beamtone.calc.errors import InputError

if TYPE_CHECKING:  # pragma: no cover
    import sympy

__all__ = [
    "MAX_DEPTH",
    "MAX_EXPONENT",
    "MAX_LENGTH",
    "MAX_NODES",
    "Formula",
    "derivatives",
    "evaluate",
    "parse_formula",
    "parse_shape",
    "symbols",
]

MAX_LENGTH = 200
"""Longest accepted shape text [characters]."""

MAX_DEPTH = 12
"""Deepest accepted nesting of parentheses, function calls, unary signs and exponents."""

MAX_NODES = 150
"""Most nodes (numbers, names, operations, calls) in one parsed shape."""

MAX_EXPONENT = 12
"""Largest accepted magnitude of a numeric exponent after ``**`` or ``^``."""

# Further bounds, internal because they follow from the ones above in any sensible formula.
_MAX_EXPONENT_DENOMINATOR = 1000  # x**0.001 is accepted, x**0.0001 is not
_MAX_NUMBER = 10**12  # largest magnitude of a number as written
_MIN_NUMBER = Fraction(1, 10**12)  # smallest non-zero magnitude of a number as written
_MAX_MANTISSA_DIGITS = 30
_MAX_EXPONENT_FIELD_DIGITS = 3  # the "12" in 1e12
_MAX_DIGITS = 400.0  # bound on log10 of any rational sympy might form while building
_MAX_DEGREE = 48.0  # bound on the total degree in x, L, pi and e
_MAX_LOG_COEFFICIENT_DIGITS = 3.0  # exp(c*log(a)) becomes a**c in sympy: bound c

_FUNCTIONS = ("sin", "cos", "tan", "sinh", "cosh", "tanh", "exp", "log", "sqrt", "abs")
_CONSTANTS = ("x", "L", "pi", "e")
# Functions that sympy (or a later simplification) can turn into powers of a logarithm's
# argument, e.g. exp(12*log(x)) -> x**12.
_LOG_SENSITIVE = ("exp", "sinh", "cosh", "tanh")
_SUGGESTIONS = {"ln": "log", "l": "L", "X": "x", "E": "e", "PI": "pi", "Pi": "pi", "pI": "pi"}

_ASCII_DIGITS = frozenset("0123456789")
_ASCII_LETTERS = frozenset("abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ")
_SPACES = frozenset(" \t")
_SINGLE = frozenset("+-/^()")

_EXPECTED = (
    "a formula in x and L (position and total length, m) made of numbers, + - * / ** (or ^), "
    "parentheses, pi, e and the functions sin cos tan sinh cosh tanh exp log sqrt abs, "
    'e.g. "1 - cos(pi*x/(2*L))"'
)


@dataclass(frozen=True)
class _Token:
    """One token: ``kind`` is "num", "name", "func", "op", "(", ")" or "end"."""

    kind: str
    text: str
    pos: int
    value: Fraction | None = None


@dataclass(frozen=True)
class _Node:
    """One node of the parsed tree, with size bounds of what sympy may build from it.

    Attributes
    ----------
    kind : str
        "num", "name", "neg", "add", "sub", "mul", "div", "pow" or "call".
    args : tuple of _Node
        Operands.
    value : Fraction or str or None
        The number ("num"), the exponent ("pow"), the name ("name") or function ("call").
    digits : float
        Upper bound on log10 of the numerators and denominators of rationals formed.
    degree : float
        Upper bound on the total degree in the names.
    has_log : bool
        Whether a logarithm occurs in the subtree.
    """

    kind: str
    args: tuple[_Node, ...]
    value: Fraction | str | None
    digits: float
    degree: float
    has_log: bool


def symbols() -> tuple[sympy.Symbol, sympy.Symbol]:
    """Return the symbols of a shape, created once.

    Returns
    -------
    tuple of sympy.Symbol
        ``(x, L)``: position from the left end [m] and total length [m], both positive and
        real.
    """
    return _symbols()


@cache
def _symbols() -> tuple[sympy.Symbol, sympy.Symbol]:
    import sympy

    return (
        sympy.Symbol("x", positive=True, real=True),
        sympy.Symbol("L", positive=True, real=True),
    )


@dataclass(frozen=True)
class Formula:
    """A shape as parsed by the whitelist parser, before (and without) sympy.

    Attributes
    ----------
    text : str
        The formula as written.
    tree : _Node
        Its parsed tree, within every size bound.
    """

    text: str
    tree: _Node


def parse_formula(text: str, key: str = "estimate.shape") -> Formula:
    """Parse a shape through the whitelist and its size bounds, without sympy.

    The checks that need algebra (division by zero, real values, dependence on x) are
    :func:`parse_shape`'s; see :func:`calc.symbolic.shape_facts`.

    Parameters
    ----------
    text : str
        The formula, e.g. ``"1 - cos(pi*x/(2*L))"``.
    key : str, optional
        Dotted key path named in error messages.

    Returns
    -------
    Formula

    Raises
    ------
    InputError
        If the text is not a string, is empty or too long, contains anything outside the
        whitelist or exceeds a size bound.
    """
    if not isinstance(text, str):
        raise InputError(key, text, _EXPECTED, "the shape must be given as text")
    if len(text) > MAX_LENGTH:
        raise InputError(
            key, text, _EXPECTED, f"{len(text)} characters; at most {MAX_LENGTH} are allowed"
        )
    if not text.strip(" \t"):
        raise InputError(key, text, _EXPECTED, "the formula is empty")
    tokens = _tokenize(text, key)
    return Formula(text, _Parser(text, key, tokens).parse())


def derivatives(
    formula: Formula, x: np.ndarray, L: float
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """A shape and its first two derivatives in x, evaluated together with numpy.

    The parsed tree is walked once, carrying value, slope and curvature through every
    operation by the chain and product rules (forward differentiation, exact up to
    rounding); no symbolic algebra is involved.

    Parameters
    ----------
    formula : Formula
    x : numpy.ndarray
        Positions from the left end [m].
    L : float
        Total length [m].

    Returns
    -------
    w, dw, d2w : numpy.ndarray
        The shape [-], its slope [1/m] and its curvature [1/m^2] at ``x``.  Where the
        formula is undefined the values are nan or inf (with numpy's usual warnings).
    """
    positions = np.asarray(x, dtype=float)
    out = _jet(formula.tree, positions, float(L))
    shape = positions.shape
    return tuple(  # type: ignore[return-value]
        np.array(np.broadcast_to(np.asarray(part, dtype=float), shape), dtype=float) for part in out
    )


_Jet = tuple[Any, Any, Any]  # value, first and second derivative in x (floats or arrays)

# f(u) -> (f, f', f'') of the whitelist functions, for the chain rule
_JET_FUNCTIONS: dict[str, Callable[[Any], _Jet]] = {
    "sin": lambda u: (np.sin(u), np.cos(u), -np.sin(u)),
    "cos": lambda u: (np.cos(u), -np.sin(u), -np.cos(u)),
    "tan": lambda u: (lambda t: (t, 1.0 + t * t, 2.0 * t * (1.0 + t * t)))(np.tan(u)),
    "sinh": lambda u: (np.sinh(u), np.cosh(u), np.sinh(u)),
    "cosh": lambda u: (np.cosh(u), np.sinh(u), np.cosh(u)),
    "tanh": lambda u: (lambda t: (t, 1.0 - t * t, -2.0 * t * (1.0 - t * t)))(np.tanh(u)),
    "exp": lambda u: (lambda e: (e, e, e))(np.exp(u)),
    "log": lambda u: (np.log(u), 1.0 / u, -1.0 / (u * u)),
    "sqrt": lambda u: (lambda r: (r, 0.5 / r, -0.25 / (r * r * r)))(np.sqrt(u)),
}
_JET_NAMES = {"pi": math.pi, "e": math.e}


def _jet(node: _Node, x: np.ndarray, L: float) -> _Jet:
    kind = node.kind
    if kind == "num":
        assert isinstance(node.value, Fraction)
        return _fraction_float(node.value), 0.0, 0.0
    if kind == "name":
        if node.value == "x":
            return x, 1.0, 0.0
        if node.value == "L":
            return L, 0.0, 0.0
        return _JET_NAMES[str(node.value)], 0.0, 0.0
    if kind == "neg":
        a0, a1, a2 = _jet(node.args[0], x, L)
        return -a0, -a1, -a2
    if kind == "call":
        u0, u1, u2 = _jet(node.args[0], x, L)
        if node.value == "abs":
            # where the argument is zero, the slope from the right (x increases): sympy keeps
            # abs only where it cannot rule out a kink, which refuses the shape, and else
            # drops it (abs(x) is x), so this is the slope of what sympy keeps
            sign = np.where(np.asarray(u0) != 0.0, np.sign(u0), np.sign(u1))
            return np.abs(u0), sign * u1, sign * u2
        g0, g1, g2 = _JET_FUNCTIONS[str(node.value)](u0)
        return g0, g1 * u1, g2 * u1 * u1 + g1 * u2
    if kind == "pow":
        assert isinstance(node.value, Fraction)
        return _jet_power(_jet(node.args[0], x, L), node.value)
    (a0, a1, a2), (b0, b1, b2) = (_jet(arg, x, L) for arg in node.args)
    if kind == "add":
        return a0 + b0, a1 + b1, a2 + b2
    if kind == "sub":
        return a0 - b0, a1 - b1, a2 - b2
    if kind == "mul":
        return a0 * b0, a1 * b0 + a0 * b1, a2 * b0 + 2.0 * a1 * b1 + a0 * b2
    q0 = a0 / b0
    q1 = (a1 - q0 * b1) / b0
    return q0, q1, (a2 - 2.0 * q1 * b1 - q0 * b2) / b0


def _jet_power(base: _Jet, p: Fraction) -> _Jet:
    """u**p with its derivatives; integer powers stay exact for a negative base."""
    u0, u1, u2 = base
    if p.denominator == 1:
        n = int(p)
        if n == 0:
            return 1.0 + 0.0 * u0, 0.0, 0.0
        value = np.power(np.asarray(u0, dtype=float), n)
        first = n * np.power(np.asarray(u0, dtype=float), n - 1)
        second = 0.0 if n == 1 else n * (n - 1) * np.power(np.asarray(u0, dtype=float), n - 2)
    else:
        q = float(p)
        if p.denominator == 2:
            root = np.sqrt(np.asarray(u0, dtype=float))
            value = np.power(root, p.numerator)
            first = q * np.power(root, p.numerator - 2)
            second = q * (q - 1.0) * np.power(root, p.numerator - 4)
        else:
            value = np.power(np.asarray(u0, dtype=float), q)
            first = q * np.power(np.asarray(u0, dtype=float), q - 1.0)
            second = q * (q - 1.0) * np.power(np.asarray(u0, dtype=float), q - 2.0)
    return value, first * u1, second * u1 * u1 + first * u2


def _fraction_float(value: Fraction) -> float:
    try:
        return float(value)
    except OverflowError:
        return math.inf if value > 0 else -math.inf


def parse_shape(text: str, key: str = "estimate.shape") -> sympy.Expr:
    """Parse an assumed mode shape into a sympy expression.

    Parameters
    ----------
    text : str
        The formula, e.g. ``"1 - cos(pi*x/(2*L))"``; see the module documentation for what is
        understood.
    key : str, optional
        Dotted key path named in error messages.

    Returns
    -------
    sympy.Expr
        The shape, in the symbols returned by :func:`symbols`. It depends on ``x``.

    Raises
    ------
    InputError
        If the text is not a string, is empty or too long, contains anything outside the
        whitelist, exceeds a size bound, divides by zero, is not real, or does not depend
        on ``x``.
    """
    return _build(parse_formula(text, key).tree, text, key)


def evaluate(expr: sympy.Expr, x: np.ndarray, L: float) -> np.ndarray:
    """Evaluate a shape, or one of its derivatives, with numpy.

    The sympy tree is walked node by node; no code is generated. Understood are sums,
    products, powers, rational and floating-point numbers, ``pi``, ``e``, the symbols of
    :func:`symbols`, the functions of the whitelist and those their derivatives bring in
    (``sec csc cot sech csch coth sign``).

    Parameters
    ----------
    expr : sympy.Expr
        The expression, e.g. from :func:`parse_shape` or ``sympy.diff`` of it.
    x : numpy.ndarray
        Positions from the left end [m].
    L : float
        Total length [m].

    Returns
    -------
    numpy.ndarray
        Float values of the shape, of the shape of ``x``. Points where the formula is
        undefined give nan or inf (with numpy's usual warnings).

    Raises
    ------
    ValueError
        If the expression contains anything not understood, including other symbols,
        imaginary or infinite numbers and ``DiracDelta`` (the curvature of a kink).
    """
    positions = np.asarray(x, dtype=float)
    value = _Evaluator(positions, float(L)).value(expr)
    if np.ndim(value) == 0:
        return np.full_like(positions, float(value), dtype=float)
    return np.array(np.broadcast_to(value, positions.shape), dtype=float)


# --------------------------------------------------------------------------------------------
# Tokenizer


def _fail(key: str, text: str, hint: str) -> InputError:
    return InputError(key, text, _EXPECTED, hint)


def _tokenize(text: str, key: str) -> list[_Token]:
    tokens: list[_Token] = []
    i = 0
    n = len(text)
    while i < n:
        ch = text[i]
        if ch in _SPACES:
            i += 1
        elif ch in _ASCII_DIGITS or (ch == "." and i + 1 < n and text[i + 1] in _ASCII_DIGITS):
            token, i = _number(text, i, key)
            tokens.append(token)
        elif ch in _ASCII_LETTERS:
            start = i
            while i < n and text[i] in _ASCII_LETTERS:
                i += 1
            tokens.append(_name(text, start, i, key))
        elif ch == "*":
            if i + 1 < n and text[i + 1] == "*":
                tokens.append(_Token("op", "**", i))
                i += 2
            else:
                tokens.append(_Token("op", "*", i))
                i += 1
        elif ch in _SINGLE:
            kind = ch if ch in "()" else "op"
            tokens.append(_Token(kind, ch, i))
            i += 1
        else:
            raise _fail(key, text, _unexpected_character(ch, i))
    tokens.append(_Token("end", "", n))
    return tokens


def _unexpected_character(ch: str, i: int) -> str:
    hint = f"unexpected {ch!r} at character {i + 1}"
    if ch in "\n\r":
        hint += "; the formula must be on one line"
    elif ch == ".":
        hint += "; a point is allowed only inside a number"
    elif not ch.isascii():
        hint += "; only plain ASCII letters, digits and operators are allowed"
    return hint


def _number(text: str, start: int, key: str) -> tuple[_Token, int]:
    n = len(text)
    i = start
    mantissa_digits = 0
    while i < n and text[i] in _ASCII_DIGITS:
        i += 1
        mantissa_digits += 1
    if i < n and text[i] == ".":
        i += 1
        while i < n and text[i] in _ASCII_DIGITS:
            i += 1
            mantissa_digits += 1
    if i < n and text[i] in "eE":
        j = i + 1
        if j < n and text[j] in "+-":
            j += 1
        if j < n and text[j] in _ASCII_DIGITS:
            field_start = j
            while j < n and text[j] in _ASCII_DIGITS:
                j += 1
            if j - field_start > _MAX_EXPONENT_FIELD_DIGITS:
                raise _fail(
                    key, text, f"number {text[start:j]!r} at character {start + 1} is out of range"
                )
            i = j
    literal = text[start:i]
    where = f"at character {start + 1}"
    if i < n and (text[i] == "." or text[i] in _ASCII_DIGITS):
        raise _fail(key, text, f"malformed number {text[start : i + 1]!r} {where}")
    if mantissa_digits > _MAX_MANTISSA_DIGITS:
        raise _fail(
            key,
            text,
            f"number {where} has more than {_MAX_MANTISSA_DIGITS} digits",
        )
    value = Fraction(literal)  # a checked decimal literal; Fraction reads it without eval
    if abs(value) > _MAX_NUMBER or (value != 0 and abs(value) < _MIN_NUMBER):
        raise _fail(
            key,
            text,
            f"number {literal!r} {where} is out of range; numbers must lie between 1e-12 and "
            "1e12 in magnitude",
        )
    return _Token("num", literal, start, value), i


def _name(text: str, start: int, stop: int, key: str) -> _Token:
    word = text[start:stop]
    if word in _FUNCTIONS:
        return _Token("func", word, start)
    if word in _CONSTANTS:
        return _Token("name", word, start)
    hint = f"unknown name {word!r} at character {start + 1}"
    suggestion = _SUGGESTIONS.get(word)
    if suggestion is None:
        for known in _FUNCTIONS + _CONSTANTS:
            if known.lower() == word.lower():
                suggestion = known
                break
    if suggestion is not None:
        hint += f"; did you mean {suggestion!r}?"
    else:
        hint += "; known names are x, L, pi, e and " + ", ".join(_FUNCTIONS)
    raise _fail(key, text, hint)


# --------------------------------------------------------------------------------------------
# Parser


class _Parser:
    """Recursive descent over the token list, building bounded ``_Node`` trees.

    Grammar::

        expr    := term (("+" | "-") term)*
        term    := unary (("*" | "/") unary)*
        unary   := ("+" | "-") unary | power
        power   := primary (("**" | "^") unary)?
        primary := NUMBER | NAME | FUNC "(" expr ")" | "(" expr ")"
    """

    def __init__(self, text: str, key: str, tokens: list[_Token]) -> None:
        self._text = text
        self._key = key
        self._tokens = tokens
        self._index = 0
        self._depth = 0
        self._nodes = 0

    def parse(self) -> _Node:
        """Parse the whole token list."""
        node = self._expr()
        token = self._peek()
        if token.kind == ")":
            self._error(f"unmatched ')' at character {token.pos + 1}")
        if token.kind != "end":
            self._error(self._unexpected(token))
        return node

    # -- helpers ---------------------------------------------------------------------------

    def _error(self, hint: str) -> NoReturn:
        raise _fail(self._key, self._text, hint)

    def _peek(self) -> _Token:
        return self._tokens[self._index]

    def _advance(self) -> _Token:
        token = self._tokens[self._index]
        if token.kind != "end":
            self._index += 1
        return token

    def _unexpected(self, token: _Token) -> str:
        if token.kind == "end":
            previous = self._tokens[self._index - 1] if self._index else None
            if previous is not None and previous.kind in ("op", "("):
                return (
                    f"the formula ends after {previous.text!r}; a number, name or '(' must follow"
                )
            return "the formula ends too early"
        return f"unexpected {token.text!r} at character {token.pos + 1}"

    @contextmanager
    def _nested(self, token: _Token) -> Iterator[None]:
        self._depth += 1
        if self._depth > MAX_DEPTH:
            self._error(f"nested more than {MAX_DEPTH} levels deep at character {token.pos + 1}")
        try:
            yield
        finally:
            self._depth -= 1

    def _make(
        self, kind: str, args: tuple[_Node, ...], value: Fraction | str | None, token: _Token
    ) -> _Node:
        self._nodes += 1
        if self._nodes > MAX_NODES:
            self._error(f"more than {MAX_NODES} numbers, names and operations")
        digits, degree, has_log = _bounds(kind, args, value)
        if kind == "call" and has_log and value in _LOG_SENSITIVE:
            if args[0].digits > _MAX_LOG_COEFFICIENT_DIGITS:
                self._error(
                    f"{value}() of a logarithm with large numbers at character {token.pos + 1}"
                )
            factor = 10.0 ** args[0].digits
            digits = args[0].digits * (factor + 1.0)
            degree = max(args[0].degree, 1.0) * factor
        if digits > _MAX_DIGITS:
            self._error(f"numbers grow too large at character {token.pos + 1}")
        if degree > _MAX_DEGREE:
            self._error(
                f"the degree of the formula exceeds {_MAX_DEGREE:g} at character {token.pos + 1}"
            )
        return _Node(kind, args, value, digits, degree, has_log)

    # -- grammar ---------------------------------------------------------------------------

    def _expr(self) -> _Node:
        node = self._term()
        while True:
            token = self._peek()
            if token.kind == "op" and token.text in "+-":
                self._advance()
                right = self._term()
                node = self._make("add" if token.text == "+" else "sub", (node, right), None, token)
            else:
                return node

    def _term(self) -> _Node:
        node = self._unary()
        while True:
            token = self._peek()
            if token.kind == "op" and token.text in ("*", "/"):
                self._advance()
                right = self._unary()
                if token.text == "/" and right.kind == "num" and right.value == 0:
                    self._error(f"division by zero at character {token.pos + 1}")
                node = self._make("mul" if token.text == "*" else "div", (node, right), None, token)
            elif token.kind in ("num", "name", "func", "("):
                self._error(self._implicit(token))
            else:
                return node

    def _implicit(self, token: _Token) -> str:
        previous = self._tokens[self._index - 1]
        left = "(...)" if previous.kind == ")" else previous.text
        right = {"(": "(...)", "func": f"{token.text}(...)"}.get(token.kind, token.text)
        return (
            f"missing operator before {token.text!r} at character {token.pos + 1}: "
            f"write {left}*{right}"
        )

    def _unary(self) -> _Node:
        token = self._peek()
        if token.kind == "op" and token.text in "+-":
            self._advance()
            with self._nested(token):
                operand = self._unary()
            if token.text == "+":
                return operand
            return self._make("neg", (operand,), None, token)
        return self._power()

    def _power(self) -> _Node:
        base = self._primary()
        token = self._peek()
        if not (token.kind == "op" and token.text in ("**", "^")):
            return base
        self._advance()
        with self._nested(token):
            exponent = self._unary()
        value = self._exponent(exponent, token)
        return self._make("pow", (base,), value, token)

    def _exponent(self, node: _Node, token: _Token) -> Fraction:
        where = f"at character {token.pos + 1}"
        value = _constant(node)
        if value is None:
            self._error(
                f"the exponent after {token.text!r} {where} must be a number such as 2, -1, 0.5 "
                "or (1/3)"
            )
        if isinstance(value, str):
            self._error(f"division by zero in the exponent {where}")
        assert isinstance(value, Fraction)
        if abs(value) > MAX_EXPONENT:
            self._error(f"exponent {value} {where} exceeds {MAX_EXPONENT} in magnitude")
        if value.denominator > _MAX_EXPONENT_DENOMINATOR:
            self._error(f"exponent {where} is too fine; write a simple fraction such as (1/3)")
        return value

    def _primary(self) -> _Node:
        token = self._advance()
        if token.kind == "num":
            return self._make("num", (), token.value, token)
        if token.kind == "name":
            return self._make("name", (), token.text, token)
        if token.kind == "func":
            opening = self._peek()
            if opening.kind != "(":
                self._error(
                    f"expected '(' after {token.text!r} at character {opening.pos + 1}: "
                    f"write {token.text}(...)"
                )
            self._advance()
            with self._nested(opening):
                argument = self._expr()
                self._close(opening)
            return self._make("call", (argument,), token.text, token)
        if token.kind == "(":
            with self._nested(token):
                inner = self._expr()
                self._close(token)
            return inner
        return self._error(self._unexpected(token))

    def _close(self, opening: _Token) -> None:
        token = self._peek()
        if token.kind == ")":
            self._advance()
            return
        if token.kind == "end":
            self._error(f"the '(' at character {opening.pos + 1} is never closed")
        self._error(self._unexpected(token))


def _constant(node: _Node, allow_division: bool = True) -> Fraction | str | None:
    """Value of a numeric exponent: a signed number or one division of two; "zero" for x/0."""
    if node.kind == "num":
        assert isinstance(node.value, Fraction)
        return node.value
    if node.kind == "neg":
        inner = _constant(node.args[0], allow_division)
        return -inner if isinstance(inner, Fraction) else inner
    if node.kind == "div" and allow_division:
        top = _constant(node.args[0], False)
        bottom = _constant(node.args[1], False)
        if not isinstance(top, Fraction) or not isinstance(bottom, Fraction):
            return None
        return "zero" if bottom == 0 else top / bottom
    return None


def _log10(value: int) -> float:
    return math.log10(value) if value > 1 else 0.0


def _bounds(
    kind: str, args: tuple[_Node, ...], value: Fraction | str | None
) -> tuple[float, float, bool]:
    """Digits and degree bounds and the logarithm flag of a new node (see ``_Node``)."""
    has_log = any(arg.has_log for arg in args) or (kind == "call" and value == "log")
    if kind == "num":
        assert isinstance(value, Fraction)
        return max(_log10(abs(value.numerator)), _log10(value.denominator)), 0.0, False
    if kind == "name":
        return 0.0, 1.0, False
    if kind in ("add", "sub"):
        left, right = args
        return left.digits + right.digits + math.log10(2.0), max(left.degree, right.degree), has_log
    if kind in ("mul", "div"):
        left, right = args
        return left.digits + right.digits, left.degree + right.degree, has_log
    if kind == "pow":
        assert isinstance(value, Fraction)
        (base,) = args
        power = max(abs(value.numerator), 1)
        return base.digits * power, base.degree * float(abs(value)), has_log
    if kind == "call":
        (argument,) = args
        return argument.digits, max(argument.degree, 1.0), has_log
    # "neg"
    return args[0].digits, args[0].degree, has_log


# --------------------------------------------------------------------------------------------
# sympy construction


def _build(tree: _Node, text: str, key: str) -> sympy.Expr:
    import sympy

    x, L = _symbols()
    names = {"x": x, "L": L, "pi": sympy.pi, "e": sympy.E}
    functions: dict[str, Callable[[sympy.Expr], sympy.Expr]] = {
        "sin": sympy.sin,
        "cos": sympy.cos,
        "tan": sympy.tan,
        "sinh": sympy.sinh,
        "cosh": sympy.cosh,
        "tanh": sympy.tanh,
        "exp": sympy.exp,
        "log": sympy.log,
        "sqrt": sympy.sqrt,
        "abs": sympy.Abs,
    }

    def build(node: _Node) -> sympy.Expr:
        if node.kind == "num":
            assert isinstance(node.value, Fraction)
            return sympy.Rational(node.value.numerator, node.value.denominator)
        if node.kind == "name":
            assert isinstance(node.value, str)
            return names[node.value]
        if node.kind == "call":
            assert isinstance(node.value, str)
            return functions[node.value](build(node.args[0]))
        if node.kind == "pow":
            assert isinstance(node.value, Fraction)
            exponent = sympy.Rational(node.value.numerator, node.value.denominator)
            return sympy.Pow(build(node.args[0]), exponent)
        if node.kind == "neg":
            return -build(node.args[0])
        left, right = (build(arg) for arg in node.args)
        if node.kind == "add":
            return left + right
        if node.kind == "sub":
            return left - right
        if node.kind == "mul":
            return left * right
        return left / right

    expr = build(tree)
    if expr.has(sympy.zoo, sympy.nan, sympy.oo, -sympy.oo):
        raise _fail(
            key, text, "the formula divides by zero or is infinite, e.g. 1/0, log(0), tan(pi/2)"
        )
    if _imaginary(expr):
        raise _fail(key, text, "the formula is not real-valued, e.g. sqrt(-x) or log(-x)")
    if x not in expr.free_symbols:
        raise _fail(key, text, "a shape must vary with x; this formula is a constant")
    return expr


def _imaginary(expr: sympy.Expr) -> bool:
    """Whether sympy can tell that the expression, or a root or logarithm in it, is not real."""
    import sympy

    if expr.has(sympy.I) or expr.is_extended_real is False:
        return True
    for sub in sympy.preorder_traversal(expr):
        if sub.is_Pow and not sub.exp.is_integer and sub.base.is_extended_negative:
            return True
        if isinstance(sub, sympy.log) and sub.args[0].is_extended_negative:
            return True
    return False


# --------------------------------------------------------------------------------------------
# numpy evaluation


@cache
def _numpy_functions() -> dict[Any, Callable[[Any], Any]]:
    import sympy

    return {
        sympy.sin: np.sin,
        sympy.cos: np.cos,
        sympy.tan: np.tan,
        sympy.sinh: np.sinh,
        sympy.cosh: np.cosh,
        sympy.tanh: np.tanh,
        sympy.exp: np.exp,
        sympy.log: np.log,
        sympy.Abs: np.abs,
        sympy.sign: np.sign,
        sympy.sec: lambda u: 1.0 / np.cos(u),
        sympy.csc: lambda u: 1.0 / np.sin(u),
        sympy.cot: lambda u: np.cos(u) / np.sin(u),
        sympy.sech: lambda u: 1.0 / np.cosh(u),
        sympy.csch: lambda u: 1.0 / np.sinh(u),
        sympy.coth: lambda u: 1.0 / np.tanh(u),
    }


class _Evaluator:
    """Walk a sympy tree and compute it with numpy at given positions."""

    def __init__(self, x: np.ndarray, L: float) -> None:
        import sympy

        self._sympy = sympy
        self._x_symbol, self._L_symbol = _symbols()
        self._x = x
        self._L = L
        self._functions = _numpy_functions()

    def value(self, expr: Any) -> Any:
        """Float scalar or array of ``expr``; ValueError for anything not understood."""
        sympy = self._sympy
        if not isinstance(expr, sympy.Basic):
            raise ValueError(f"not a sympy expression: {expr!r}")
        if expr.is_Rational or expr.is_Float:
            return _float(expr)
        if expr is sympy.pi:
            return math.pi
        if expr is sympy.E:
            return math.e
        if expr.is_Symbol:
            if expr == self._x_symbol:
                return self._x
            if expr == self._L_symbol:
                return self._L
            raise ValueError(f"unknown symbol {expr} (only x and L are understood)")
        if expr.is_Add:
            return reduce(np.add, (self.value(arg) for arg in expr.args))
        if expr.is_Mul:
            return reduce(np.multiply, (self.value(arg) for arg in expr.args))
        if expr.is_Pow:
            return self._power(*expr.args)
        if isinstance(expr, sympy.DiracDelta):
            raise ValueError(
                "DiracDelta cannot be evaluated: the shape has a kink (e.g. from abs) whose "
                "derivative is concentrated at a point"
            )
        function = self._functions.get(expr.func)
        if function is not None and len(expr.args) == 1:
            return function(self.value(expr.args[0]))
        raise ValueError(f"cannot evaluate {type(expr).__name__} in {expr}")

    def _power(self, base: Any, exponent: Any) -> Any:
        if base is self._sympy.E:
            return np.exp(self.value(exponent))
        value = np.asarray(self.value(base), dtype=float)
        if exponent.is_Integer:
            return np.power(value, int(exponent))
        if exponent.is_Rational and exponent.q == 2 and abs(exponent.p) == 1:
            root = np.sqrt(value)
            return root if exponent.p == 1 else 1.0 / root
        return np.power(value, self.value(exponent))


def _float(number: Any) -> float:
    try:
        return float(number)
    except OverflowError:
        return math.inf if bool(number > 0) else -math.inf
