"""Dimensionless groups of any list of physical variables (Buckingham's Pi theorem).

A list of n variables whose dimension matrix (base dimensions x variables) has rank r is
governed by n - r independent dimensionless groups (Buckingham's Pi theorem; e.g. F. M. White,
*Fluid Mechanics*, chapter 5).  The groups are built by the method of repeating variables:
r dimensionally independent variables are chosen, and each of the other variables, times
powers of the repeating ones, makes one group.  All exponents are exact rationals.

Unit text is read through the project's one guarded unit parser
(:func:`calc.units.parse_unit`) and never evaluated as code; sympy is used only through its
constructors.  pint and sympy are imported on first use, so importing this module stays cheap.
"""

from __future__ import annotations

import difflib
import math
from dataclasses import dataclass
from fractions import Fraction
from typing import TYPE_CHECKING, Any

from beamtone.calc.errors import InputError

if TYPE_CHECKING:  # pragma: no cover
    import sympy

__all__ = [
    "Variable",
    "Group",
    "GroupsResult",
    "parse_variables",
    "variable",
    "pi_groups",
    "variable_groups",
    "formula",
]

# Base dimensions in the order the dimension matrix lists them; others follow alphabetically.
_BASE_ORDER = (
    "[mass]",
    "[length]",
    "[time]",
    "[temperature]",
    "[current]",
    "[substance]",
    "[luminosity]",
)
_MAX_EXPONENT = 100  # largest |exponent| of a base dimension accepted from a unit
_MAX_DENOMINATOR = 100  # fractional unit powers are read as fractions with this denominator
_DIMENSIONLESS_TOLERANCE = 1e-9  # float exponents left over in the pint check
_SUPERSCRIPTS = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")
_ROOTS = {2: "√", 3: "∛", 4: "∜"}
_NAME_RULE = "letters, digits and underscores, starting with a letter"


@dataclass(frozen=True)
class Variable:
    """One physical variable of a dimensional analysis.

    Attributes
    ----------
    name : str
        Symbol of the variable, e.g. ``"f"``, ``"EI"`` or ``"rho"``.
    unit : str
        The unit text as given, e.g. ``"Hz"`` or ``"N*m^2"``.
    dimension : dict[str, int | sympy.Rational]
        Base dimension (pint notation, e.g. ``"[length]"``) to exponent; zeros omitted.
        Built by :func:`variable`, the exponents are exact sympy Rationals.
    """

    name: str
    unit: str
    dimension: dict[str, int | sympy.Rational]


@dataclass(frozen=True)
class Group:
    """One dimensionless group.

    Attributes
    ----------
    symbol : str
        ``"Π1"``, ``"Π2"``, ...
    exponents : dict[str, sympy.Rational]
        Variable name to exact exponent, zeros omitted; the group's own (non-repeating)
        variable comes first with exponent 1, the others follow in input order.
    expression : str
        Readable formula, e.g. ``"f·L²·√(m/EI)"``.
    value : float or None
        Numerical value of the group when values of its variables were given.
    """

    symbol: str
    exponents: dict[str, sympy.Rational]
    expression: str
    value: float | None = None


@dataclass(frozen=True)
class GroupsResult:
    """The dimensionless groups of a variable list.

    Attributes
    ----------
    variables : tuple[Variable, ...]
        The variables, in input order.
    rank : int
        Rank of the dimension matrix (the number of repeating variables).
    repeating : tuple[str, ...]
        Names of the repeating variables, in the order given or chosen.
    groups : tuple[Group, ...]
        One group per non-repeating variable, in input order.
    """

    variables: tuple[Variable, ...]
    rank: int
    repeating: tuple[str, ...]
    groups: tuple[Group, ...]


# --- parsing ---------------------------------------------------------------------------------


def _valid_name(name: str) -> bool:
    if not name or not name[0].isalpha():
        return False
    return all(ch.isalpha() or ch in "0123456789_" for ch in name)


def parse_variables(items: list[str]) -> list[tuple[str, str]]:
    """Parse ``"NAME=UNIT"`` items from the command line.

    Parameters
    ----------
    items : list[str]
        Items such as ``["f=Hz", "L=m", "EI=N*m^2", "m=kg/m"]``.  Spaces around the name
        and the unit are ignored; write ``1`` as the unit of a dimensionless variable.

    Returns
    -------
    list[tuple[str, str]]
        ``(name, unit text)`` pairs in input order.

    Raises
    ------
    InputError
        Naming the item on bad syntax, an empty name or unit, or a name that is not made of
        letters, digits and underscores starting with a letter; naming the name when it is
        given twice.
    """
    if isinstance(items, str) or not isinstance(items, list | tuple):
        raise InputError("variables", items, 'a list of "NAME=UNIT" items, e.g. "L=m"')
    pairs: list[tuple[str, str]] = []
    seen: set[str] = set()
    for item in items:
        expected = 'an item "NAME=UNIT", e.g. "L=m" or "EI=N*m^2"'
        if not isinstance(item, str):
            raise InputError("variables", item, expected, "each item must be a string")
        if item.count("=") != 1:
            hint = "the '=' is missing" if "=" not in item else "give one '=' per item"
            raise InputError(item, item, expected, hint)
        name, unit = (part.strip() for part in item.split("="))
        if not name:
            raise InputError(item, item, expected, "the name is empty")
        if not _valid_name(name):
            raise InputError(item, item, expected, f"a name is made of {_NAME_RULE}")
        if not unit:
            raise InputError(item, item, expected, 'the unit is empty; write "1" if dimensionless')
        if name in seen:
            raise InputError(name, item, "each variable named once", f"{name} is given twice")
        seen.add(name)
        pairs.append((name, unit))
    return pairs


def _exact(value: object, name: str, unit: str) -> sympy.Rational:
    import sympy

    expected = "a unit whose powers are modest whole numbers or simple fractions"
    number = float(value)  # pint keeps exponents as int or float
    if not math.isfinite(number) or abs(number) > _MAX_EXPONENT:
        raise InputError(name, unit, expected, f"a power of {value} is out of range")
    fraction = Fraction(number).limit_denominator(_MAX_DENOMINATOR)
    if abs(float(fraction) - number) > 1e-12 * max(1.0, abs(number)):
        raise InputError(name, unit, expected, f"a power of {value} is not a simple fraction")
    return sympy.Rational(fraction.numerator, fraction.denominator)


def _base_key(dimension: str) -> tuple[int, str]:
    if dimension in _BASE_ORDER:
        return (_BASE_ORDER.index(dimension), "")
    return (len(_BASE_ORDER), dimension)


def _parse_unit(name: str, unit: str) -> Any:
    from beamtone.calc.units import parse_unit

    expected = 'a unit, e.g. "m", "kg/m^3", "N*m^2" or "1" for a dimensionless variable'
    return parse_unit(unit, name, expected)


def _units(text: str) -> Any:
    return _parse_unit("unit", text)


def variable(name: str, unit: str) -> Variable:
    """Build a variable from its name and unit text.

    Parameters
    ----------
    name : str
        Symbol of the variable: letters, digits and underscores, starting with a letter
        (Greek letters are letters: ``"ρ"``, ``"Δp"``).
    unit : str
        Unit text read by the project's pint registry, e.g. ``"N*m^2"``; ``"1"`` for a
        dimensionless variable.  Offset temperature units (``degC``) are refused.

    Returns
    -------
    Variable
        With the dimension as base dimension -> exact sympy Rational exponent.

    Raises
    ------
    InputError
        ``key=name`` on a bad name, an unknown unit, text that is not a unit, an offset
        unit, or a power that is not a modest simple fraction.
    """
    if not isinstance(name, str) or not _valid_name(name):
        raise InputError(
            name if isinstance(name, str) else "variables",
            name,
            f"a variable name made of {_NAME_RULE}",
        )
    parsed = _parse_unit(name, unit)
    dims = parsed.dimensionality
    exponents = {key: _exact(dims[key], name, unit) for key in sorted(dims, key=_base_key)}
    return Variable(name, unit, {key: e for key, e in exponents.items() if e != 0})


# --- formatting ------------------------------------------------------------------------------


def _power(name: str, exponent: int) -> str:
    return name if exponent == 1 else name + str(exponent).translate(_SUPERSCRIPTS)


def _product(factors: list[str]) -> str:
    return "·".join(factors) if factors else "1"


def _fraction(numerator: list[str], denominator: list[str]) -> str:
    top = _product(numerator)
    if not denominator:
        return top
    bottom = _product(denominator)
    return f"{top}/({bottom})" if len(denominator) > 1 else f"{top}/{bottom}"


def _root(index: int, inner: str, bare: bool) -> str:
    sign = _ROOTS.get(index, str(index).translate(_SUPERSCRIPTS) + "√")
    return sign + (inner if bare else f"({inner})")


def formula(terms: list[tuple[str, Any]]) -> str:
    """Readable product of powers: whole powers as a fraction, the rest under one root.

    Parameters
    ----------
    terms : list of (str, rational)
        Variable names and exact exponents (sympy Rational or fractions.Fraction).

    Returns
    -------
    str
        E.g. ``"f·L²·√(m/EI)"``.
    """
    terms = [(name, e) for name, e in terms if e != 0]
    if not terms:
        return "1"
    index = math.lcm(*(int(e.denominator) for _, e in terms))
    numerator: list[str] = []
    denominator: list[str] = []
    under_num: list[str] = []
    under_den: list[str] = []
    for name, e in terms:
        p, q = int(e.numerator), int(e.denominator)
        whole = p // q if e >= 0 else -(-p // q)
        rest = int((e - whole) * index)
        if whole > 0:
            numerator.append(_power(name, whole))
        elif whole < 0:
            denominator.append(_power(name, -whole))
        if rest > 0:
            under_num.append(_power(name, rest))
        elif rest < 0:
            under_den.append(_power(name, -rest))
    if under_num:
        bare = not under_den and len(under_num) == 1 and under_num[0] in dict(terms)
        numerator.append(_root(index, _fraction(under_num, under_den), bare))
    elif under_den:
        bare = len(under_den) == 1 and under_den[0] in dict(terms)
        denominator.append(_root(index, _product(under_den), bare))
    return _fraction(numerator, denominator)


def _did_you_mean(name: str, names: list[str]) -> str | None:
    same = [n for n in names if n.casefold() == name.casefold()]
    close = same or difflib.get_close_matches(name, names, n=1)
    return f"did you mean {close[0]}?" if close else None


def _and(names: list[str]) -> str:
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]


# --- the engine ------------------------------------------------------------------------------


def _checked_variables(variables: list[Variable]) -> list[Variable]:
    if isinstance(variables, str | Variable) or not isinstance(variables, list | tuple):
        raise InputError("variables", variables, "a list of variables")
    seen: set[str] = set()
    for item in variables:
        if not isinstance(item, Variable):
            raise InputError("variables", item, "a Variable, e.g. variable('L', 'm')")
        if item.name in seen:
            raise InputError(
                item.name, item.name, "each variable named once", f"{item.name} is given twice"
            )
        seen.add(item.name)
        rebuilt = variable(item.name, item.unit)
        given = {key: e for key, e in item.dimension.items() if e != 0}
        if given != rebuilt.dimension:
            raise InputError(
                item.name,
                item.unit,
                f"a dimension matching {item.unit!r}",
                f"the dimension given, {given}, is not that of the unit",
            )
    return list(variables)


def _dimension_matrix(variables: list[Variable]) -> tuple[list[str], sympy.Matrix]:
    import sympy

    rows = sorted({key for v in variables for key in v.dimension}, key=_base_key)
    matrix = sympy.Matrix(
        len(rows),
        len(variables),
        lambda i, j: sympy.Rational(variables[j].dimension.get(rows[i], 0)),
    )
    return rows, matrix


def _rank(matrix: sympy.Matrix) -> int:
    return 0 if matrix.rows == 0 or matrix.cols == 0 else int(matrix.rank())


def _columns(matrix: sympy.Matrix, indices: list[int]) -> sympy.Matrix:
    import sympy

    if not indices:
        return sympy.zeros(matrix.rows, 0)
    return matrix.extract(list(range(matrix.rows)), indices)


def _solve(basis: sympy.Matrix, target: sympy.Matrix) -> list[sympy.Rational] | None:
    """Exact coefficients c with basis * c = target (basis of full column rank), or None."""
    if basis.cols == 0:
        return [] if all(x == 0 for x in target) else None
    try:
        solution, params = basis.gauss_jordan_solve(target)
    except ValueError:  # inconsistent system
        return None
    if params.shape[0] != 0:  # pragma: no cover - the basis has full column rank
        raise RuntimeError("internal inconsistency: repeating variables not independent")
    return list(solution)


def _dependence_reason(names: list[str], matrix: sympy.Matrix, index: dict[str, int]) -> str:
    """Say which chosen variable is a power product of the ones before it."""
    basis: list[str] = []
    for name in names:
        column = matrix.col(index[name]) if matrix.rows else None
        if column is None or all(x == 0 for x in column):
            return f"{name} is dimensionless and cannot be a repeating variable"
        coefficients = _solve(_columns(matrix, [index[b] for b in basis]), column)
        if coefficients is None:
            basis.append(name)
            continue
        terms = [(b, c) for b, c in zip(basis, coefficients, strict=True) if c != 0]
        involved = [b for b, _ in terms] + [name]
        return f"{_and(involved)} are not independent: {name} has the dimension of {formula(terms)}"
    raise RuntimeError("internal inconsistency: no dependent repeating variable found")


def _check_repeating(
    repeating: list[str], variables: list[Variable], matrix: sympy.Matrix, rank: int
) -> list[str]:
    names = [v.name for v in variables]
    index = {name: j for j, name in enumerate(names)}
    shown = ",".join(str(x) for x in repeating) if isinstance(repeating, list | tuple) else None
    if shown is None or not all(isinstance(x, str) for x in repeating):
        raise InputError("--repeat", repeating, "a list of variable names, e.g. L,EI,m")
    for name in repeating:
        if name not in index:
            hint = _did_you_mean(name, names)
            raise InputError("--repeat", name, "one of the variables " + ", ".join(names), hint)
    for name in repeating:
        if list(repeating).count(name) > 1:
            raise InputError("--repeat", shown, "distinct names", f"{name} is given twice")
    if len(repeating) != rank:
        hint = (
            f"needs {rank} repeating variable{'s' if rank != 1 else ''}, "
            f"got {len(repeating)}: the dimension matrix has rank {rank}"
        )
        raise InputError("--repeat", shown, f"{rank} dimensionally independent variables", hint)
    if _rank(_columns(matrix, [index[n] for n in repeating])) < rank:
        reason = _dependence_reason(list(repeating), matrix, index)
        raise InputError("--repeat", shown, f"{rank} dimensionally independent variables", reason)
    return list(repeating)


def _simplicity(variable: Variable, position: int) -> tuple[int, Any, int]:
    exponents = [abs(e) for e in variable.dimension.values() if e != 0]
    return (len(exponents), sum(exponents), position)


def _choose_repeating(
    variables: list[Variable], matrix: sympy.Matrix, rank: int, preferred: tuple[str, ...]
) -> list[str]:
    names = [v.name for v in variables]
    index = {name: j for j, name in enumerate(names)}
    first = names[0] if names else None
    order = [p for p in dict.fromkeys(preferred) if p in index and p != first]
    rest = sorted(
        (j for j, n in enumerate(names) if n not in order and n != first),
        key=lambda j: _simplicity(variables[j], j),
    )
    order += [names[j] for j in rest]
    if first is not None:
        order.append(first)  # the wanted quantity, listed first, only when unavoidable
    chosen: list[str] = []
    for name in order:
        if len(chosen) == rank:
            break
        trial = chosen + [name]
        if _rank(_columns(matrix, [index[n] for n in trial])) == len(trial):
            chosen = trial
    if len(chosen) != rank:  # pragma: no cover - greedy selection always reaches the rank
        raise RuntimeError("internal inconsistency: no independent repeating set found")
    return chosen


def _check_dimensionless(exponents: dict[str, sympy.Rational], units: dict[str, str]) -> None:
    from beamtone.calc.units import registry

    ureg = registry()
    product = ureg.Quantity(1.0)
    for name, e in exponents.items():
        product = product * ureg.Quantity(1.0, _units(units[name])) ** float(e)
    left = {
        k: v for k, v in dict(product.dimensionality).items() if abs(v) > _DIMENSIONLESS_TOLERANCE
    }
    if left:
        raise RuntimeError(f"internal inconsistency: group {exponents} has dimension {left}")


def _si_values(values: dict[str, float], variables: list[Variable]) -> dict[str, float]:
    from beamtone.calc.units import registry

    if not isinstance(values, dict):
        raise InputError("values", values, "a mapping of variable name to number")
    units = {v.name: v.unit for v in variables}
    ureg = registry()
    si: dict[str, float] = {}
    for name, value in values.items():
        if name not in units:
            hint = _did_you_mean(str(name), list(units))
            raise InputError(str(name), value, "the name of a listed variable", hint)
        if isinstance(value, bool) or not isinstance(value, int | float):
            raise InputError(name, value, f"a number in {units[name]}")
        if not math.isfinite(value):
            raise InputError(name, value, f"a finite number in {units[name]}")
        quantity = ureg.Quantity(float(value), _units(units[name]))
        si[name] = float(quantity.to_base_units().magnitude)
    return si


def _group_value(
    exponents: dict[str, sympy.Rational], si: dict[str, float], given: dict[str, float]
) -> float | None:
    if not all(name in si for name in exponents):
        return None
    value = 1.0
    for name, e in exponents.items():
        x = si[name]
        if x == 0.0 and e < 0:
            raise InputError(name, given[name], "a non-zero value", f"{name} divides a group")
        if x < 0.0 and e.q != 1:
            raise InputError(
                name, given[name], "a positive value", f"a group takes {name} to the power {e}"
            )
        value *= x ** float(e)
    if not math.isfinite(value):
        raise InputError(
            "values",
            dict(given),
            "values whose groups are finite",
            f"a group over {', '.join(exponents)} overflows",
        )
    return value


def pi_groups(
    variables: list[Variable],
    repeating: list[str] | None = None,
    values: dict[str, float] | None = None,
    preferred: tuple[str, ...] = ("L", "EI", "m"),
) -> GroupsResult:
    """Dimensionless groups of a variable list by the method of repeating variables.

    Parameters
    ----------
    variables : list[Variable]
        The variables, the wanted quantity first by convention (e.g. ``f`` for a frequency).
    repeating : list[str], optional
        Names of the repeating variables: exactly as many as the rank of the dimension
        matrix, and dimensionally independent.  Chosen automatically when omitted: first the
        names of ``preferred`` that are present (in that order), then the other variables,
        simplest dimension first (fewest base dimensions, then smallest total |exponent|,
        then input order), skipping any that depend on those already chosen; the first
        listed variable is used only when no independent set avoids it.
    values : dict[str, float], optional
        Magnitudes per variable name, in that variable's unit as given (SI magnitudes when
        the units are SI).  Each group whose variables all have values gets its value.
    preferred : tuple[str, ...]
        Names to prefer as repeating variables in the automatic choice.

    Returns
    -------
    GroupsResult
        The rank, the repeating variables and one group per non-repeating variable
        (``Π1``, ``Π2``, ... in input order), each normalized so that its own variable has
        exponent 1.

    Raises
    ------
    InputError
        On a repeated name (keyed by the name); a list with no dimensionless group
        (``"variables"``); a bad repeating set (``"--repeat"``): wrong count, unknown or
        repeated name, or dependent variables; bad values (keyed by the variable name).
    RuntimeError
        Only on an internal inconsistency (a group that pint does not find dimensionless).
    """
    variables = _checked_variables(variables)
    names = [v.name for v in variables]
    _, matrix = _dimension_matrix(variables)
    rank = _rank(matrix)
    if len(variables) - rank == 0:
        count = f"{len(variables)} variable{'s' if len(variables) != 1 else ''}"
        hint = (
            f"{count} with a dimension matrix of rank {rank} give {len(variables)} - "
            f"{rank} = 0 groups; add a variable whose dimension the others can form"
        )
        raise InputError(
            "variables",
            ",".join(names) or "(none)",
            "a list that admits a dimensionless group",
            hint,
        )
    if repeating is None:
        chosen = _choose_repeating(variables, matrix, rank, tuple(preferred))
    else:
        chosen = _check_repeating(repeating, variables, matrix, rank)
    si = _si_values(values, variables) if values is not None else {}
    index = {name: j for j, name in enumerate(names)}
    basis = _columns(matrix, [index[n] for n in chosen])
    units = {v.name: v.unit for v in variables}
    groups: list[Group] = []
    for name in names:
        if name in chosen:
            continue
        coefficients = _solve(basis, -matrix.col(index[name])) if matrix.rows else []
        if coefficients is None:  # pragma: no cover - the basis spans the column space
            raise RuntimeError(f"internal inconsistency: {name} outside the repeating span")
        power = dict(zip(chosen, coefficients, strict=True))
        exponents = {name: _one()}
        exponents.update({n: power[n] for n in names if n in power and power[n] != 0})
        _check_dimensionless(exponents, units)
        groups.append(
            Group(
                symbol=f"Π{len(groups) + 1}",
                exponents=exponents,
                expression=formula(list(exponents.items())),
                value=_group_value(exponents, si, values) if si else None,
            )
        )
    return GroupsResult(tuple(variables), rank, tuple(chosen), tuple(groups))


def _one() -> sympy.Rational:
    import sympy

    return sympy.Rational(1)


def variable_groups(items: list[str], repeating: list[str] | None = None) -> GroupsResult:
    """The groups of variables given as ``"NAME=UNIT"`` text (the command line's and the app's
    variable list): each item read by :func:`parse_variables` and :func:`variable`, then
    :func:`pi_groups`.

    Parameters
    ----------
    items : list of str
        ``"NAME=UNIT"`` items, the wanted variable first.
    repeating : list of str, optional
        Names of the repeating variables (default: chosen as :func:`pi_groups` does).

    Returns
    -------
    GroupsResult

    Raises
    ------
    InputError
        For an item that is not ``NAME=UNIT`` with a known unit, and for repeating variables
        that cannot repeat.
    """
    pairs = parse_variables(items)
    return pi_groups([variable(name, unit) for name, unit in pairs], repeating)
