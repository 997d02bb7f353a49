"""What sympy can tell about a shape formula, worked out once per formula, within a budget.

An expression shape needs algebra in three places: the checks that refuse a formula (it
divides by zero, is not real, or does not vary with x), the exact end conditions of the
admissibility check, and the closed-form Rayleigh quotient of a uniform member.  All three
depend on the text of the formula alone, not on the member.

Where the facts come from, in this order:

1. the built-in shapes' facts shipped with the package (``shape_facts.json``, made by
   :func:`builtin_entries` and checked against sympy by the tests; not a cache);
2. the user's cache (:mod:`calc.diskcache`, keyed by beamtone's and sympy's versions);
3. sympy.  The refusals come from :func:`calc.expressions.parse_shape` in this process;
   the end values and the closed-form integrals are worked out in a helper process with a
   fixed hash seed (so the result never depends on this process's seed), within
   :data:`BUDGET_SECONDS` of processor time (so a busy machine does not change the
   outcome; elapsed time is capped too).  Past the budget the helper is stopped,
   undecided end values are left to the numeric checks and the quotient is integrated
   numerically, with a note.

Whatever comes from 1 or 2 is checked before it is used, without sympy: the printed
expression, end values (orders 0 to 2) and integrals are compared with the formula's own
forward derivatives (:func:`calc.expressions.derivatives`) and a Gauss-Legendre
quadrature at a test length; an entry that disagrees is not used (and is derived again).
Printed texts that cannot be read back (a small walker over Python's syntax tree in
floats, whitelisted names only) are not shown.  Nothing read is
ever executed: integrals are stored as small trees of whitelisted operations (numbers,
``L``, ``pi``, ``e``, sums, products, powers and the shape functions), evaluated with plain
floats.  Inside :func:`calc.diskcache.bypassed` (``verify``) the user's cache is neither
read nor written, and only facts derived in that same check are reused.
"""

from __future__ import annotations

import ast
import json
import math
import os
import selectors
import subprocess
import sys
import threading
import time
from collections.abc import Callable
from dataclasses import dataclass, replace
from fractions import Fraction
from functools import cache, lru_cache
from typing import Any

import numpy as np

from beamtone.calc import diskcache
from beamtone.calc.errors import InputError

__all__ = [
    "ShapeFacts",
    "EndValue",
    "BUDGET_SECONDS",
    "shape_facts",
    "integral_values",
    "builtin_entries",
]

_CACHE = "shapes"
_BUILTIN = "shape_facts.json"
_MAX_ENTRIES = diskcache.MAX_ENTRIES
_SYMBOLIC_NODES = 80  # sympy operations beyond which no closed form is attempted
_RESULT_NODES = 400  # an integral larger than this is not kept as a closed form
_CHECK_LENGTH = 1.7  # [m] a length at which stored integrals are checked
BUDGET_SECONDS = 8.0
"""Processor time allowed to sympy for one formula's end values and integrals [s]."""
_WALL_FACTOR = 6.0  # elapsed time allowed, in budgets, however busy the machine is
_START_SECONDS = 90.0  # for the helper process to start (Python and sympy imports)
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
    note : str or None
        Why sympy's work was cut short (its budget ran out), or None.
    """

    expression: str
    refusal: str | None
    kink: bool
    ends: dict[str, EndValue]
    integrals: tuple[Any, Any, Any] | None
    integral_texts: tuple[str, str, str] | None
    c_squared: str | None
    c_squared_value: float | None
    note: str | None = None


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


def _facts(text: str) -> ShapeFacts:
    shipped = _builtin().get(text)  # part of the package, not a cache; checked all the same
    if shipped is not None:
        facts = _trusted(text, _from_json(shipped))
        if facts is not None:
            return facts
    if not diskcache.enabled():
        return _fresh(text)  # verify: nothing read from a cache or remembered from one
    return _remembered(text)


@lru_cache(maxsize=64)
def _fresh(text: str) -> ShapeFacts:
    return _derive(text)


@lru_cache(maxsize=256)
def _remembered(text: str) -> ShapeFacts:
    version = diskcache.version_key("sympy")
    entry = diskcache.read(_CACHE, version).get(text)
    if entry is not None:
        facts = _trusted(text, _from_json(entry))
        if facts is not None:
            return facts
    facts = _derive(text)
    if facts.note is None:  # a cut-short result is not kept: the next run tries again
        diskcache.store(_CACHE, version, text, _to_json(facts), _MAX_ENTRIES)
    return facts


def _clear() -> None:
    _remembered.cache_clear()
    _fresh.cache_clear()


_facts.cache_clear = _clear  # type: ignore[attr-defined]


@cache
def _builtin() -> dict[str, Any]:
    """The shipped facts of the built-in shapes (empty if the file is missing or damaged)."""
    from importlib import resources

    try:
        data = json.loads(resources.files("beamtone.calc").joinpath(_BUILTIN).read_text("utf-8"))
    except (OSError, ValueError, ModuleNotFoundError):
        return {}
    entries = data.get("entries") if isinstance(data, dict) else None
    return entries if isinstance(entries, dict) else {}


def builtin_entries() -> dict[str, Any]:
    """The facts of every built-in shape text, derived afresh with sympy (for the data file).

    Returns
    -------
    dict
        Formula text -> its facts as stored in ``shape_facts.json``.
    """
    from beamtone.calc.rayleigh import NAMED_SHAPES

    texts = []
    for pair in NAMED_SHAPES.values():
        for template in pair:
            texts += [template.replace("X", "(x/L)"), template.replace("X", "(1 - x/L)")]
    entries = {}
    with diskcache.bypassed():
        for text in dict.fromkeys(texts):
            facts = _derive(text, budget=600.0)
            if facts.note is not None:  # pragma: no cover - a shipped shape sympy cannot do
                raise RuntimeError(f"sympy did not finish the built-in shape {text!r}")
            entries[text] = _to_json(facts)
    return entries


# --- checking facts read back, without sympy -------------------------------------------------

_GAUSS = np.polynomial.legendre.leggauss(12)
_PANELS = 32


_PRINTED = {
    "sin": math.sin, "cos": math.cos, "tan": math.tan, "sinh": math.sinh, "cosh": math.cosh,
    "tanh": math.tanh, "exp": math.exp, "log": math.log, "sqrt": math.sqrt, "Abs": abs,
}  # fmt: skip
_PRINTED_OPERATORS = {
    ast.Add: lambda a, b: a + b,
    ast.Sub: lambda a, b: a - b,
    ast.Mult: lambda a, b: a * b,
    ast.Div: lambda a, b: a / b,
    ast.Pow: math.pow,
}


def _printed_value(text: object, x: float, L: float) -> float | None:
    """The value of a text as sympy prints it, at x and L [m], walked in floats; or None.

    Only numbers, ``x``, ``L``, ``pi``, ``E``, the four arithmetic operations, powers and the
    shape functions are understood; anything else (or any overflow) gives None.
    """
    if not isinstance(text, str) or len(text) > 4000:
        return None
    names = {"x": x, "L": L, "pi": math.pi, "E": math.e}

    def walk(node: ast.AST) -> float:
        if isinstance(node, ast.Constant) and type(node.value) in (int, float):
            return float(node.value)
        if isinstance(node, ast.Name) and node.id in names:
            return names[node.id]
        if isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.USub | ast.UAdd):
            value = walk(node.operand)
            return -value if isinstance(node.op, ast.USub) else value
        if isinstance(node, ast.BinOp) and type(node.op) in _PRINTED_OPERATORS:
            return _PRINTED_OPERATORS[type(node.op)](walk(node.left), walk(node.right))
        if (
            isinstance(node, ast.Call) and isinstance(node.func, ast.Name)
            and node.func.id in _PRINTED and len(node.args) == 1 and not node.keywords
        ):  # fmt: skip
            return float(_PRINTED[node.func.id](walk(node.args[0])))
        raise ValueError("not a printed formula")

    try:
        value = walk(ast.parse(text, mode="eval").body)
    except (SyntaxError, ValueError, TypeError, OverflowError, ZeroDivisionError,
            RecursionError, MemoryError):  # fmt: skip
        return None
    return value if math.isfinite(value) else None


def _trusted(text: str, facts: ShapeFacts | None) -> ShapeFacts | None:
    """The facts if they agree with the formula itself (see the module docstring), else None.

    Printed texts that cannot be read back are dropped (the formula as written is shown
    instead, and the quotient is then integrated numerically).
    """
    from beamtone.calc.expressions import derivatives, parse_formula

    if facts is None or facts.refusal is not None:
        return facts
    try:
        formula = parse_formula(text, "cache")
    except InputError:
        return None
    L = _CHECK_LENGTH
    nodes, weights = _GAUSS
    edges = np.linspace(0.0, L, _PANELS + 1)
    half = np.diff(edges) / 2.0
    xs = (edges[:-1, None] + half[:, None] * (nodes[None, :] + 1.0)).ravel()
    ws = (half[:, None] * weights[None, :]).ravel()
    with np.errstate(all="ignore"):
        jets = derivatives(formula, xs, L)
        ends = derivatives(formula, np.array([0.0, L]), L)
        sample = xs[:: max(1, len(xs) // 24)]
        shown = [_printed_value(facts.expression, float(x), L) for x in sample]
        reference = derivatives(formula, sample, L)[0]
        if any(v is None for v in shown):
            facts = replace(facts, expression=text)
        elif not _close(np.array(shown, dtype=float), reference, 1e-9):
            return None
        for order in (0, 1, 2):
            values = jets[order] * L**order
            scale = float(np.nanmax(np.abs(np.where(np.isfinite(values), values, np.nan))))
            if not (math.isfinite(scale) and scale > 0.0):
                continue
            for end, value in zip(("0", "L"), ends[order] * L**order, strict=True):
                state = facts.ends.get(f"{order}@{end}", "unknown")
                if state == "unknown" or not math.isfinite(value):
                    continue
                if (state == "zero") != (abs(value) <= 1e-9 * scale):
                    return None
        if facts.integrals is None:
            return facts
        stored = integral_values(facts, L)
        quadrature = [float(np.sum(ws * jets[k] ** 2)) for k in (2, 1, 0)]
    if stored is None or not all(
        math.isclose(a, b, rel_tol=1e-7, abs_tol=0.0)
        for a, b in zip(stored, quadrature, strict=True)
    ):
        return None
    return _texts_checked(facts, stored)


def _close(a: np.ndarray, b: np.ndarray, rtol: float) -> bool:
    finite = np.isfinite(a) & np.isfinite(b)
    if not np.array_equal(np.isfinite(a), np.isfinite(b)) or not finite.any():
        return False
    scale = float(np.max(np.abs(b[finite])))
    return bool(np.all(np.abs(a[finite] - b[finite]) <= rtol * scale + 1e-300))


def _texts_checked(facts: ShapeFacts, stored: tuple[float, float, float]) -> ShapeFacts | None:
    """Check the printed integrals and C^2 against the checked integral values."""

    L = _CHECK_LENGTH
    I2, _, I0 = stored
    c2 = L**4 * I2 / I0
    if facts.c_squared_value is not None and not math.isclose(
        facts.c_squared_value, c2, rel_tol=1e-9
    ):
        return None
    texts = (*(facts.integral_texts or ()), facts.c_squared)
    values = [_printed_value(t, L / 2.0, L) for t in texts]
    if facts.integral_texts is None or any(v is None for v in values):
        return replace(facts, integral_texts=None, c_squared=None, c_squared_value=None)
    if not all(
        math.isclose(a, b, rel_tol=1e-9) for a, b in zip(values, (*stored, c2), strict=True)
    ):
        return None
    return facts


# --- deriving with sympy -------------------------------------------------------------------


def _derive(text: str, budget: float | None = None) -> ShapeFacts:
    """Facts found afresh: refusals here, end values and integrals in the helper process."""
    import sympy

    from beamtone.calc.expressions import parse_shape, symbols

    try:
        expr = parse_shape(text)
    except InputError as exc:
        return ShapeFacts(str(text), exc.hint or "not a shape", False, {}, None, None, None, None)
    x, _ = symbols()
    d1 = sympy.diff(expr, x)
    d2 = sympy.diff(d1, x)
    kink = bool(d2.has(sympy.DiracDelta) or d1.has(sympy.DiracDelta))
    seconds = BUDGET_SECONDS if budget is None else budget
    # a formula that overflows along the member has no usable closed form: spare sympy
    answer = _HELPER.ask(text, seconds) if _finite_inside(text) else {"done": True}
    ends = answer.get("ends")
    if not (isinstance(ends, dict) and len(ends) == 8):
        ends = {f"{k}@{e}": "unknown" for k in range(4) for e in ("0", "L")}
    integrals = texts = c2_text = c2_value = None
    closed = answer.get("closed")
    if not kink and isinstance(closed, list) and len(closed) == 4:
        integrals, texts, c2_text, c2_value = closed
        integrals, texts = tuple(integrals), tuple(texts)
    note = None
    if not answer.get("done"):
        note = (
            f"sympy did not finish with this formula within {seconds:g} s of processor time: "
            "its end conditions were checked numerically and the quotient integrated numerically"
        )
    facts = ShapeFacts(str(expr), None, kink, ends, integrals, texts, c2_text, c2_value, note)
    return _trusted(text, facts) or replace(
        facts, integrals=None, integral_texts=None, c_squared=None, c_squared_value=None
    )


def _finite_inside(text: str) -> bool:
    """Whether the shape and its two derivatives are finite inside a test length."""
    from beamtone.calc.expressions import derivatives, parse_formula

    xs = np.linspace(0.0, _CHECK_LENGTH, 65)[1:-1]
    with np.errstate(all="ignore"):
        jets = derivatives(parse_formula(text, "cache"), xs, _CHECK_LENGTH)
    return all(bool(np.all(np.isfinite(j))) for j in jets)


def _helper_stages(text: str) -> Any:
    """In the helper process: the end values, then the closed form, as JSON-ready values."""
    import sympy

    from beamtone.calc.expressions import parse_shape, symbols

    expr = parse_shape(text)
    x, L_sym = symbols()
    d1 = sympy.diff(expr, x)
    d2 = sympy.diff(d1, x)
    d3 = sympy.diff(d2, x)
    ends: dict[str, EndValue] = {}
    for order, f in enumerate((expr, d1, d2, d3)):
        for name, at in (("0", sympy.Integer(0)), ("L", L_sym)):
            ends[f"{order}@{name}"] = _end_value(f, x, at)
    yield {"ends": ends}
    kink = bool(d2.has(sympy.DiracDelta) or d1.has(sympy.DiracDelta))
    closed = None if kink else _closed_form(expr, d1, d2, x, L_sym)
    yield {"closed": list(closed) if closed is not None else None}


def _serve() -> None:  # pragma: no cover - runs in the helper process
    """The helper process: one formula per line in, one JSON line per stage out."""
    import sympy  # noqa: F401 - imported before "ready", so the budget is sympy's work alone

    out = sys.stdout
    out.write("ready\n")
    out.flush()
    for line in sys.stdin:
        try:
            text = json.loads(line)
            for stage in _helper_stages(text):
                out.write(json.dumps(stage) + "\n")
                out.flush()
        except Exception as exc:  # noqa: BLE001 - any failure only means fewer facts
            out.write(json.dumps({"failed": type(exc).__name__}) + "\n")
        out.write(json.dumps({"done": True}) + "\n")
        out.flush()


class _Helper:
    """One helper process, started on first use and stopped when a formula runs too long."""

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self._process: subprocess.Popen[bytes] | None = None
        self._buffer = b""

    def ask(self, text: str, budget: float) -> dict[str, Any]:
        """What the helper finds about ``text`` within ``budget`` seconds (stages merged)."""
        with self._lock:
            answer: dict[str, Any] = {}
            process = self._started()
            if process is None or process.stdin is None:
                return answer
            try:
                process.stdin.write((json.dumps(text) + "\n").encode())
                process.stdin.flush()
            except OSError:
                self._stop()
                return answer
            start = _cpu_seconds(process.pid)
            deadline = time.monotonic() + _WALL_FACTOR * budget
            while True:
                line = self._line(deadline, lambda: _cpu_seconds(process.pid) - start > budget)
                if line is None:
                    self._stop()  # too long, or the helper died: keep what arrived
                    return answer
                try:
                    stage = json.loads(line)
                except ValueError:
                    continue
                if isinstance(stage, dict):
                    answer.update(stage)
                    if stage.get("done"):
                        return answer

    def _started(self) -> subprocess.Popen[bytes] | None:
        if self._process is not None and self._process.poll() is None:
            return self._process
        env = {**os.environ, "PYTHONHASHSEED": "0", "OPENBLAS_NUM_THREADS": "1"}
        code = "from beamtone.calc.symbolic import _serve; _serve()"
        try:
            self._process = subprocess.Popen(
                [sys.executable, "-c", code], stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                stderr=subprocess.DEVNULL, env=env,
            )  # fmt: skip
        except OSError:
            self._process = None
            return None
        self._buffer = b""
        if self._line(time.monotonic() + _START_SECONDS, lambda: False) != "ready":
            self._stop()
            return None
        return self._process

    def _line(self, deadline: float, spent: Callable[[], bool]) -> str | None:
        """The next line from the helper; None at the deadline, when ``spent()``, at its end."""
        process = self._process
        if process is None or process.stdout is None:
            return None
        fd = process.stdout.fileno()
        with selectors.DefaultSelector() as selector:
            selector.register(fd, selectors.EVENT_READ)
            while b"\n" not in self._buffer:
                left = deadline - time.monotonic()
                if left <= 0.0 or spent():
                    return None
                if not selector.select(min(left, 0.2)):
                    continue
                chunk = os.read(fd, 1 << 16)
                if not chunk:
                    return None
                self._buffer += chunk
        line, _, self._buffer = self._buffer.partition(b"\n")
        return line.decode("utf-8", "replace").strip()

    def _stop(self) -> None:
        process, self._process = self._process, None
        if process is not None:
            process.kill()
            process.wait()
            for stream in (process.stdin, process.stdout):
                if stream is not None:
                    stream.close()


_HELPER = _Helper()


def _cpu_seconds(pid: int) -> float:
    """Processor time a process has used [s] (Linux /proc); elapsed time where unknown."""
    try:
        with open(f"/proc/{pid}/stat", encoding="ascii") as handle:
            fields = handle.read().rsplit(")", 1)[1].split()
        return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")
    except (OSError, ValueError, IndexError):
        return time.monotonic()


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
        value = sympy.simplify(value)
        if sympy.count_ops(value) > _RESULT_NODES:
            return None
        values.append(value)
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
