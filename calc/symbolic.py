"""What sympy can tell about a shape formula, worked out once per formula and kept on disk.

An expression shape needs algebra in three places: the checks that refuse a formula (it
divides by zero, is not real, or does not vary with x), the exact end conditions of the
admissibility check, and the closed-form Rayleigh quotient of a uniform member.  All three
depend on the text of the formula alone, not on the member.  They are found with sympy the
first time a formula is met and stored, keyed by that text and by the sympy version, in a
small JSON file in the user's cache folder (see :mod:`calc.diskcache`).  Every later solve,
in this process or another, reads them back without importing sympy, which is most of a
cold start otherwise.

The closed-form integrals are stored as small trees of whitelisted operations (numbers,
``L``, ``pi``, ``e``, sums, products, powers and the shape functions), evaluated here with
plain floats; each is checked against sympy's own value before it is stored.  A cache file
that is missing, unreadable, damaged or written by another version is simply ignored (and
rebuilt); nothing in it is ever executed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction
from functools import lru_cache
from typing import Any

from beamtone.calc import diskcache
from beamtone.calc.errors import InputError

__all__ = ["ShapeFacts", "EndValue", "shape_facts", "integral_values"]

_CACHE = "shapes"
_MAX_ENTRIES = diskcache.MAX_ENTRIES
_SYMBOLIC_NODES = 80  # sympy operations beyond which no closed form is attempted
_CHECK_LENGTH = 1.7  # [m] a length at which stored integrals are checked against sympy
_FUNCTIONS = {
    "sin": math.sin,
    "cos": math.cos,
    "tan": math.tan,
    "sinh": math.sinh,
    "cosh": math.cosh,
    "tanh": math.tanh,
    "exp": math.exp,
    "log": math.log,
}

EndValue = str
"""``"zero"`` (exactly), ``"nonzero"`` (a number that is not zero) or ``"unknown"``."""


@dataclass(frozen=True)
class ShapeFacts:
    """What sympy found about a shape formula.

    Attributes
    ----------
    expression : str
        The formula as sympy writes it after its automatic simplification.
    refusal : str or None
        Why the formula cannot be a shape (the hint of the error), or None.
    kink : bool
        Whether the slope jumps somewhere (sympy's curvature holds a Dirac delta, from abs).
    ends : dict of str to str
        ``"k@0"`` and ``"k@L"`` for k = 0..3: whether the k-th derivative at that end is
        exactly zero (``"zero"``), a non-zero number (``"nonzero"``) or undecided
        (``"unknown"``, left to a numeric check).
    integrals : tuple of three trees, or None
        The integrals over 0..L of w''^2, w'^2 and w^2 as functions of L, where sympy finds
        them in closed form (evaluated by :func:`integral_values`).
    integral_texts : tuple of three str, or None
        The same integrals as sympy prints them.
    c_squared : str or None
        L^4 times the first integral over the third, as sympy prints it.
    c_squared_value : float or None
        Its value, where it is a pure number.
    """

    expression: str
    refusal: str | None
    kink: bool
    ends: dict[str, EndValue]
    integrals: tuple[Any, Any, Any] | None
    integral_texts: tuple[str, str, str] | None
    c_squared: str | None
    c_squared_value: float | None


def shape_facts(text: str, key: str = "estimate.shape") -> ShapeFacts:
    """The symbolic facts of a shape formula: from the cache, or found with sympy and stored.

    Parameters
    ----------
    text : str
        The formula, already accepted by :func:`calc.expressions.parse_formula`.
    key : str
        Key named in the error.

    Returns
    -------
    ShapeFacts

    Raises
    ------
    InputError
        If the formula divides by zero, is not real-valued, or does not vary with x (the
        same refusals as :func:`calc.expressions.parse_shape`).
    """
    facts = _facts(text)
    if facts.refusal is not None:
        from beamtone.calc.expressions import _EXPECTED

        raise InputError(key, text, _EXPECTED, facts.refusal)
    return facts


@lru_cache(maxsize=256)
def _facts(text: str) -> ShapeFacts:
    version = diskcache.library_version("sympy")
    entry = diskcache.read(_CACHE, version).get(text)
    if entry is not None:
        facts = _from_json(entry)
        if facts is not None:
            return facts
    facts = _derive(text)
    diskcache.store(_CACHE, version, text, _to_json(facts), _MAX_ENTRIES)
    return facts


# --- deriving with sympy -------------------------------------------------------------------


def _derive(text: str) -> ShapeFacts:
    import sympy

    from beamtone.calc.expressions import parse_shape, symbols

    try:
        expr = parse_shape(text)
    except InputError as exc:
        return ShapeFacts(str(text), exc.hint or "not a shape", False, {}, None, None, None, None)
    x, L_sym = symbols()
    d1 = sympy.diff(expr, x)
    d2 = sympy.diff(d1, x)
    d3 = sympy.diff(d2, x)
    kink = bool(d2.has(sympy.DiracDelta) or d1.has(sympy.DiracDelta))
    ends: dict[str, EndValue] = {}
    for order, f in enumerate((expr, d1, d2, d3)):
        for name, at in (("0", sympy.Integer(0)), ("L", L_sym)):
            ends[f"{order}@{name}"] = _end_value(f, x, at)
    integrals = texts = c2_text = None
    c2_value = None
    if not kink:
        closed = _closed_form(expr, d1, d2, x, L_sym)
        if closed is not None:
            integrals, texts, c2_text, c2_value = closed
    return ShapeFacts(str(expr), None, kink, ends, integrals, texts, c2_text, c2_value)


def _end_value(f: Any, x: Any, at: Any) -> EndValue:
    import sympy

    try:
        value = sympy.simplify(f.subs(x, at))
        if value == 0:
            return "zero"
        if value.is_number:
            return "zero" if abs(complex(value)) == 0.0 else "nonzero"
    except (TypeError, ValueError, RecursionError, ZeroDivisionError, OverflowError):
        pass
    return "unknown"


def _closed_form(
    expr: Any, d1: Any, d2: Any, x: Any, L_sym: Any
) -> tuple[tuple[Any, Any, Any], tuple[str, str, str], str, float | None] | None:
    """The three integrals in closed form, as checked trees, or None."""
    import sympy

    if not _integrable(expr, x):
        return None
    values = []
    for f in (d2**2, d1**2, expr**2):
        value = sympy.integrate(sympy.expand(f), (x, 0, L_sym))
        if value.has(sympy.Integral):
            return None
        values.append(sympy.simplify(value))
    trees = []
    for value in values:
        tree = _tree(value, L_sym)
        if tree is None:
            return None
        try:
            exact = float(value.subs(L_sym, _CHECK_LENGTH))
            mine = _evaluate(tree, _CHECK_LENGTH)
        except (ValueError, TypeError, OverflowError, ZeroDivisionError):
            return None
        if not math.isclose(mine, exact, rel_tol=1e-12, abs_tol=1e-300):
            return None
        trees.append(tree)
    I2, _, I0 = values
    c2 = sympy.simplify(L_sym**4 * I2 / I0)
    c2_value = None if c2.free_symbols else float(c2)
    texts = tuple(sympy.sstr(v) for v in values)
    return (trees[0], trees[1], trees[2]), texts, sympy.sstr(c2), c2_value  # type: ignore[return-value]


def _integrable(expr: Any, x: Any) -> bool:
    """Shapes sympy integrates quickly: polynomials times sin/cos/sinh/cosh/exp of a*x + b."""
    import sympy

    if sympy.count_ops(expr) > _SYMBOLIC_NODES:
        return False
    allowed = (sympy.sin, sympy.cos, sympy.sinh, sympy.cosh, sympy.exp)
    for node in sympy.preorder_traversal(expr):
        if isinstance(node, sympy.Function):
            if not isinstance(node, allowed):
                return False
            arg = node.args[0]
            if not arg.is_polynomial(x) or sympy.degree(arg, x) > 1:
                return False
        elif (
            isinstance(node, sympy.Pow)
            and node.base.has(x)
            and not (node.exp.is_Integer and node.exp >= 0)
        ):
            return False
    return True


def _tree(value: Any, L_sym: Any) -> Any:
    """A sympy expression in L as nested lists of whitelisted operations, or None."""
    import sympy

    if value.is_Rational:
        return ["num", int(value.p), int(value.q)]
    if value is sympy.pi:
        return ["pi"]
    if value is sympy.E:
        return ["e"]
    if value == L_sym:
        return ["L"]
    if value.is_Add or value.is_Mul:
        args = [_tree(arg, L_sym) for arg in value.args]
        if any(a is None for a in args):
            return None
        return ["add" if value.is_Add else "mul", *args]
    if value.is_Pow:
        base, exponent = (_tree(arg, L_sym) for arg in value.args)
        if base is None or exponent is None:
            return None
        return ["pow", base, exponent]
    name = type(value).__name__
    if name in _FUNCTIONS and len(value.args) == 1:
        arg = _tree(value.args[0], L_sym)
        return None if arg is None else ["fn", name, arg]
    return None


def _evaluate(tree: Any, L: float) -> float:
    """Value of a stored integral tree at length L [m]; ValueError on anything unknown."""
    if not isinstance(tree, list) or not tree:
        raise ValueError("not an integral tree")
    kind = tree[0]
    if kind == "num" and len(tree) == 3:
        p, q = tree[1], tree[2]
        if not (isinstance(p, int) and isinstance(q, int)) or q == 0:
            raise ValueError("bad number")
        return float(Fraction(p, q))
    if kind == "L":
        return L
    if kind == "pi":
        return math.pi
    if kind == "e":
        return math.e
    if kind == "add":
        return math.fsum(_evaluate(arg, L) for arg in tree[1:])
    if kind == "mul":
        return math.prod(_evaluate(arg, L) for arg in tree[1:])
    if kind == "pow" and len(tree) == 3:
        return float(_evaluate(tree[1], L) ** _evaluate(tree[2], L))
    if kind == "fn" and len(tree) == 3 and tree[1] in _FUNCTIONS:
        return _FUNCTIONS[tree[1]](_evaluate(tree[2], L))
    raise ValueError(f"unknown node {kind!r}")


def integral_values(facts: ShapeFacts, L: float) -> tuple[float, float, float] | None:
    """The closed-form integrals of w''^2, w'^2 and w^2 over the length L [m].

    Parameters
    ----------
    facts : ShapeFacts
    L : float
        Member length [m].

    Returns
    -------
    tuple of float or None
        In [1/m^3], [1/m] and [m] for a shape without units; None where there is no closed
        form or it cannot be evaluated at this length.
    """
    if facts.integrals is None:
        return None
    try:
        values = tuple(_evaluate(tree, L) for tree in facts.integrals)
    except (ValueError, TypeError, OverflowError, ZeroDivisionError):
        return None
    if not all(math.isfinite(v) for v in values):
        return None
    return values  # type: ignore[return-value]


# --- the cache file -------------------------------------------------------------------------


def _to_json(facts: ShapeFacts) -> dict[str, Any]:
    return {
        "expression": facts.expression,
        "refusal": facts.refusal,
        "kink": facts.kink,
        "ends": facts.ends,
        "integrals": list(facts.integrals) if facts.integrals is not None else None,
        "integral_texts": list(facts.integral_texts) if facts.integral_texts else None,
        "c_squared": facts.c_squared,
        "c_squared_value": facts.c_squared_value,
    }


def _from_json(entry: Any) -> ShapeFacts | None:
    """Facts from a cache entry, or None if the entry is not exactly what is written."""
    try:
        ends = entry["ends"]
        integrals = entry["integrals"]
        texts = entry["integral_texts"]
        refusal = entry["refusal"]
        c2_value = entry["c_squared_value"]
        ok = (
            isinstance(entry["expression"], str)
            and (refusal is None or isinstance(refusal, str))
            and isinstance(entry["kink"], bool)
            and isinstance(ends, dict)
            and all(v in ("zero", "nonzero", "unknown") for v in ends.values())
            and (refusal is not None or len(ends) == 8)
            and (integrals is None or (isinstance(integrals, list) and len(integrals) == 3))
            and (texts is None or (isinstance(texts, list) and len(texts) == 3))
            and (c2_value is None or isinstance(c2_value, float))
            and (entry["c_squared"] is None or isinstance(entry["c_squared"], str))
        )
        if not ok:
            return None
        facts = ShapeFacts(
            entry["expression"],
            refusal,
            entry["kink"],
            {str(k): str(v) for k, v in ends.items()},
            tuple(integrals) if integrals is not None else None,  # type: ignore[arg-type]
            tuple(texts) if texts is not None else None,  # type: ignore[arg-type]
            entry["c_squared"],
            c2_value,
        )
        if facts.integrals is not None and integral_values(facts, _CHECK_LENGTH) is None:
            return None
        return facts
    except (KeyError, TypeError, AttributeError, ValueError, RecursionError):
        return None
