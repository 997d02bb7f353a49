"""The project's single unit registry, and the one guarded way to read unit text.

Every quantity a user writes is a string ``"number unit"``, and every unit (a worksheet
entry, ``--between``, ``--target``, ``beamtone groups NAME=UNIT``, the app's groups
calculator) is read here: checked against a small grammar first (so pint never sees text
that could make it build huge numbers), then parsed by the one pint registry, refused where
it is a logarithmic level (dB, Np, octave, decade), an offset temperature or an ambiguous
name (``ton``, ``B``), checked against the dimension its field needs, and handed on as a
plain SI float.  The numerical core never sees units.

pint's answers are kept in this process only: nothing about units is read from disk, and
the registry is built without pint's own definition cache (which unpickles its files).
"""

from __future__ import annotations

import math
import re
import tokenize
from dataclasses import dataclass
from functools import cache, lru_cache
from typing import TYPE_CHECKING

from beamtone.calc.errors import InputError

if TYPE_CHECKING:  # pragma: no cover
    import pint

__all__ = [
    "Dimension",
    "LENGTH",
    "MASS",
    "DENSITY",
    "PRESSURE",
    "AREA",
    "SECOND_MOMENT",
    "MASS_PER_LENGTH",
    "FORCE",
    "STIFFNESS",
    "ROTATIONAL_STIFFNESS",
    "ROTARY_INERTIA",
    "FREQUENCY",
    "WARPING_CONSTANT",
    "registry",
    "parse_quantity",
    "parse_unit",
    "parse_frequency",
    "convert_from_si",
]


@dataclass(frozen=True)
class Dimension:
    """A physical dimension a field needs.

    Attributes
    ----------
    name : str
        Plain-words name used in messages (``"a length"``).
    pint_dimension : str
        The dimension in pint's notation, e.g. ``"[mass] / [length] ** 3"``.
    si_unit : str
        The SI unit the core works in, e.g. ``"kg/m^3"``.
    example : str
        A valid example entry for messages.
    limits : tuple of float
        Smallest and largest magnitude accepted, in the SI unit (zero is governed apart).
    """

    name: str
    pint_dimension: str
    si_unit: str
    example: str
    limits: tuple[float, float] = (0.0, math.inf)


# Limits are the magnitudes, in SI, that any real member stays well inside; beyond them a
# value is far more likely a slip of the unit than a design, and the arithmetic suffers.
LENGTH = Dimension("a length", "[length]", "m", '"1.2 m" or "48 in"', (1e-9, 1e6))
MASS = Dimension("a mass", "[mass]", "kg", '"2.5 kg" or "5.5 lb"', (1e-12, 1e9))
DENSITY = Dimension("a density (mass per volume)", "[mass] / [length] ** 3", "kg/m^3",
                    '"7850 kg/m^3" or "0.284 lb/in^3"', (1e-3, 1e6))  # fmt: skip
PRESSURE = Dimension("a modulus (force per area)", "[mass] / [length] / [time] ** 2", "Pa",
                     '"200 GPa" or "29000 ksi"', (1e3, 1e13))  # fmt: skip
AREA = Dimension("an area", "[length] ** 2", "m^2", '"450 mm^2" or "0.7 in^2"', (1e-18, 1e6))
SECOND_MOMENT = Dimension("a second moment of area", "[length] ** 4", "m^4",
                          '"1.2e6 mm^4" or "2.9 in^4"', (1e-36, 1e8))  # fmt: skip
MASS_PER_LENGTH = Dimension("a mass per length", "[mass] / [length]", "kg/m",
                            '"0.8 kg/m" or "0.5 lb/ft"', (1e-12, 1e9))  # fmt: skip
FORCE = Dimension("a force", "[mass] * [length] / [time] ** 2", "N", '"2 kN" or "450 lbf"',
                  (1e-9, 1e12))  # fmt: skip
STIFFNESS = Dimension("a stiffness (force per length)", "[mass] / [time] ** 2", "N/m",
                      '"40 kN/m" or "200 lbf/in"', (1e-9, 1e18))  # fmt: skip
ROTATIONAL_STIFFNESS = Dimension("a rotational stiffness (moment per radian)",
                                 "[mass] * [length] ** 2 / [time] ** 2", "N*m/rad",
                                 '"2 kN*m/rad" or "1500 lbf*in/rad"', (1e-12, 1e18))  # fmt: skip
ROTARY_INERTIA = Dimension("a rotary inertia (mass times length squared)",
                           "[mass] * [length] ** 2", "kg*m^2", '"0.004 kg*m^2"',
                           (1e-24, 1e12))  # fmt: skip
FREQUENCY = Dimension("a frequency", "1 / [time]", "Hz", '"60 Hz"', (1e-9, 1e12))
WARPING_CONSTANT = Dimension("a warping constant", "[length] ** 6", "m^6",
                             '"1.3e10 mm^6" or "120 in^6"', (1e-54, 1e12))  # fmt: skip

# A number, then a unit expression made of unit names, powers, products and quotients.
_NUMBER = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,3})?"
_QUANTITY = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")
_UNIT_TOKEN = re.compile(
    r"\s*(?:(?P<name>[A-Za-zµμΩ°][A-Za-zµμΩ°_]*)|(?P<power>\*\*|\^)|(?P<op>[*/·])"
    r"|(?P<open>\()|(?P<close>\))|(?P<number>[+-]?\d+(?:\.\d+)?))"
)
_MAX_TEXT = 80
_MAX_UNIT_DEPTH = 4
_MAX_UNIT_POWER = 12

# Weight-based units given where a mass-based one belongs: name them and say what to give.
_WEIGHT_IN_PLACE_OF = {
    "[mass]": ("a weight (force)", "a mass, e.g. 5.5 lb or 2.5 kg (lb is pound-mass)"),
    "[mass] / [length] ** 3": (
        "a weight density (force per volume)",
        "a mass density, e.g. 0.284 lb/in^3 or 7850 kg/m^3 (divide a weight density by g)",
    ),
    "[mass] / [length]": (
        "a weight per length (force per length)",
        "a mass per length, e.g. 0.5 lb/ft or 0.8 kg/m (divide by g)",
    ),
}


@cache
def registry() -> pint.UnitRegistry:
    """Return the project's one pint registry (created on first use).

    Returns
    -------
    pint.UnitRegistry
        The shared registry; ``lb`` is the pound-mass and ``lbf`` the pound-force.
    """
    import pint

    # No disk cache: pint's cache folder holds pickles that pint loads back, so a file
    # placed there would run code; building the definitions costs about a tenth of a second.
    return pint.UnitRegistry(cache_folder=None)


@cache
def _dimensionality(pint_dimension: str) -> object:
    return registry().get_dimensionality(pint_dimension)


def _expected(dim: Dimension) -> str:
    return f"{dim.name} as a number and a unit, e.g. {dim.example}"


def _canonical_units(text: str) -> str | None:
    """Check a unit expression against a small grammar; return it in pint's notation or None.

    unit := term (("*" | "/" | "·" | juxtaposition) term)* ; term := atom [("^" | "**") power] ;
    atom := name | "1" | "(" unit ")" ; power := number | "(" number ")" |
    "(" number "/" number ")", a signed number of at most 12 in size.
    One power per term and a bounded nesting keep pint from building huge numbers.
    """
    tokens: list[tuple[str, str]] = []
    pos = 0
    while pos < len(text):
        match = _UNIT_TOKEN.match(text, pos)
        if match is None or match.end() == pos:
            if text[pos:].strip() == "":
                break
            return None
        kind = match.lastgroup or ""
        tokens.append((kind, match.group(kind)))
        pos = match.end()
    out: list[str] = []
    index = 0

    def peek() -> str:
        return tokens[index][0] if index < len(tokens) else ""

    def atom(depth: int) -> bool:
        nonlocal index
        kind = peek()
        if kind == "name":
            out.append(tokens[index][1])
            index += 1
        elif kind == "number" and tokens[index][1] == "1":
            out.append("1")
            index += 1
        elif kind == "open" and depth < _MAX_UNIT_DEPTH:
            out.append("(")
            index += 1
            if not unit(depth + 1) or peek() != "close":
                return False
            out.append(")")
            index += 1
        else:
            return False
        if peek() == "power":
            index += 1
            power = exponent()
            if power is None:
                return False
            out.append(f"**{power}")
        return True

    def exponent() -> str | None:
        """A power: a number, or a number or a fraction of two numbers in parentheses."""
        nonlocal index
        kinds = [kind for kind, _ in tokens[index : index + 5]]
        if kinds[:1] == ["number"]:
            text, index = tokens[index][1], index + 1
        elif kinds[:3] == ["open", "number", "close"]:
            text, index = tokens[index + 1][1], index + 3
        elif kinds == ["open", "number", "op", "number", "close"] and tokens[index + 2][1] == "/":
            numerator, denominator = tokens[index + 1][1], tokens[index + 3][1]
            if float(denominator) == 0.0:
                return None
            text, index = f"({numerator}/{denominator})", index + 5
            if abs(float(numerator) / float(denominator)) > _MAX_UNIT_POWER:
                return None
            return text
        else:
            return None
        return text if abs(float(text)) <= _MAX_UNIT_POWER else None

    def unit(depth: int) -> bool:
        nonlocal index
        if not atom(depth):
            return False
        while peek() in ("op", "name", "open"):
            if peek() == "op":
                out.append("/" if tokens[index][1] == "/" else "*")
                index += 1
            else:
                out.append("*")
            if not atom(depth):
                return False
        return True

    if not tokens or not unit(0) or index != len(tokens):
        return None
    return "".join(out)


def parse_quantity(
    text: object,
    dim: Dimension,
    key: str,
    *,
    allow_zero: bool = False,
    allow_negative: bool = False,
    minimum: bool = True,
) -> float:
    """Parse a ``"number unit"`` string into an SI float of the given dimension.

    Parameters
    ----------
    text : object
        What the user wrote; anything but a string is refused.
    dim : Dimension
        The dimension the field needs.
    key : str
        Key path named in any error, e.g. ``"member.section.wall"``.
    allow_zero, allow_negative : bool
        Whether zero and negative values are acceptable.
    minimum : bool
        Whether a non-zero magnitude below the dimension's lower limit is refused
        (False for positions, where tiny values are simply zero).

    Returns
    -------
    float
        The value in the SI unit of ``dim`` (``dim.si_unit``).

    Raises
    ------
    InputError
        On a non-string, a bad number, an unknown unit, a wrong dimension, a
        non-finite value, or a sign the field does not allow.
    """
    if isinstance(text, str) and len(text) <= _MAX_TEXT:
        # repeated solves (sizing, sweeps, the app) parse the same texts again and again
        return _parse_cached(text, dim, key, allow_zero, allow_negative, minimum)
    return _parse_quantity(text, dim, key, allow_zero=allow_zero,
                           allow_negative=allow_negative, minimum=minimum)  # fmt: skip


@lru_cache(maxsize=4096)
def _parse_cached(
    text: str, dim: Dimension, key: str, allow_zero: bool, allow_negative: bool, minimum: bool
) -> float:
    return _parse_quantity(text, dim, key, allow_zero=allow_zero,
                           allow_negative=allow_negative, minimum=minimum)  # fmt: skip


def _parse_quantity(
    text: object,
    dim: Dimension,
    key: str,
    *,
    allow_zero: bool = False,
    allow_negative: bool = False,
    minimum: bool = True,
) -> float:
    """The uncached work of :func:`parse_quantity` (same arguments and result)."""
    expected = _expected(dim)
    if isinstance(text, bool) or not isinstance(text, str):
        hint = f"a {type(text).__name__} is not a quantity: write it as a quoted string"
        if isinstance(text, int | float) and not isinstance(text, bool):
            hint = f'a bare number has no unit: write it as a string, e.g. "{text} {dim.si_unit}"'
        raise InputError(key, text, f"a string giving {dim.name}, e.g. {dim.example}", hint)
    if len(text) > _MAX_TEXT:
        raise InputError(key, text, expected, f"longer than {_MAX_TEXT} characters")
    match = _QUANTITY.match(text)
    if not match:
        lowered = text.strip().lower()
        if lowered.lstrip("+-").startswith(("nan", "inf")):
            raise InputError(key, text, f"a finite number with a unit, e.g. {dim.example}")
        raise InputError(key, text, expected)
    number = float(match.group(1))
    if not math.isfinite(number):
        raise InputError(key, text, f"a finite number with a unit, e.g. {dim.example}")
    value = number * _si_factor(match.group(2), key, text, dim)
    if not math.isfinite(value):
        raise InputError(key, text, f"a finite value; this one overflows in {dim.si_unit}")
    if value == 0.0 and not allow_zero:
        raise InputError(key, text, f"a non-zero {dim.name.removeprefix('a ')}")
    if value < 0.0 and not allow_negative:
        sign = "zero or positive" if allow_zero else "positive"
        raise InputError(key, text, f"a {sign} {dim.name.removeprefix('a ').removeprefix('an ')}")
    low, high = dim.limits
    size = abs(value)
    if size > high or (minimum and 0.0 < size < low):
        what = dim.name.split(" (")[0]
        zero = "zero or " if allow_zero else ""
        span = f"{low:g} {dim.si_unit} to {high:g} {dim.si_unit}" if minimum else f"up to {high:g}"
        raise InputError(key, text, f"{zero}{what} of {span}", f"this is {size:.3g} {dim.si_unit}")
    return value


_FACTORS: dict[tuple[str, Dimension], float] = {}
"""Factors the guarded parser found in this process, by unit text and dimension (memory only:
nothing on disk could change them).  A worksheet of thousands of entries writes a handful of
unit texts; each is parsed once (5,000 entries took 1.5-4 s, nearly all of it unit parsing)."""
_FACTORS_LIMIT = 4096


def _si_factor(unit_text: str, key: str, given: str, dim: Dimension) -> float:
    """What one of ``unit_text`` is in the SI unit of ``dim`` (pint's answer, kept in memory).

    Only an accepted unit text is remembered; a refused one goes through the guarded parser
    every time, so its message names the key at hand.
    """
    known = _FACTORS.get((unit_text, dim))
    if known is not None:
        return known
    factor = _si_factor_parsed(unit_text, key, given, dim)
    if len(_FACTORS) < _FACTORS_LIMIT:
        _FACTORS[(unit_text, dim)] = factor
    return factor


def _si_factor_parsed(unit_text: str, key: str, given: str, dim: Dimension) -> float:
    """The guarded parser's work for :func:`_si_factor`."""
    expected = _expected(dim)
    if not unit_text:
        raise InputError(key, given, expected, "the unit is missing")
    units = _guarded_units(unit_text, key, given, expected)
    quantity = 1.0 * units
    if quantity.dimensionality != _dimensionality(dim.pint_dimension):
        hint = f"{unit_text!r} is {_describe(quantity.dimensionality)}"
        weight = _WEIGHT_IN_PLACE_OF.get(dim.pint_dimension)
        if weight is not None:
            force_dim = registry().get_dimensionality(
                dim.pint_dimension + " * [length] / [time] ** 2"
            )
            if quantity.dimensionality == force_dim:
                raise InputError(key, given, weight[1], f"{unit_text!r} gives {weight[0]}")
        raise InputError(key, given, expected, hint)
    try:
        return float(quantity.to(dim.si_unit).magnitude)
    except (OverflowError, ZeroDivisionError):
        return math.inf


# Names pint reads in a way a user rarely means: the unit pint resolves them to -> why.
_AMBIGUOUS = {
    "ton": (
        "'{name}' is read as the US short ton (907.18 kg), not the metric tonne: "
        "write t or tonne for 1000 kg, or short_ton if the US ton is meant"
    ),
    "byte": (
        "'{name}' is read as a byte (an amount of information), not a bel or any "
        "mechanical unit: write the unit out in full"
    ),
}
_SPELLED_OUT = {"ton": "short_ton", "byte": "byte"}


def parse_unit(text: object, key: str, expected: str) -> pint.Unit:
    """Read a unit expression through the project's guarded parser.

    The text is checked against a small grammar (names, products, quotients, one bounded
    power per term, bounded nesting) before pint sees it; logarithmic levels (dB, Np,
    octave, decade), offset temperatures (degC) and the ambiguous names ``ton`` and ``B``
    are refused with the reason.

    Parameters
    ----------
    text : object
        The unit as written, e.g. ``"N*m^2"``; anything but a string is refused.
    key : str
        Key or option named in any error.
    expected : str
        What the field expects, for the message.

    Returns
    -------
    pint.Unit
        The unit in the project's registry.

    Raises
    ------
    InputError
        Naming ``key``, on anything that is not an acceptable unit expression.
    """
    if not isinstance(text, str):
        raise InputError(key, text, expected, "the unit must be a string")
    stripped = text.strip()
    if not stripped:
        raise InputError(key, text, expected, 'the unit is empty; write "1" if dimensionless')
    if len(stripped) > _MAX_TEXT:
        raise InputError(key, text, expected, f"longer than {_MAX_TEXT} characters")
    return _guarded_units(stripped, key, text, expected)


@lru_cache(maxsize=1024)
def _checked_units(canonical: str) -> tuple[pint.Unit | None, str | None]:
    """pint's unit for a canonical expression, or the reason it is refused (None: not a unit)."""
    import pint

    ureg = registry()
    try:
        units = ureg.parse_units(canonical)
    except pint.errors.UndefinedUnitError as exc:
        names = exc.unit_names if isinstance(exc.unit_names, str) else ", ".join(exc.unit_names)
        return None, f"unknown unit {names!r}"
    except (pint.errors.PintError, ValueError, TypeError, SyntaxError, AttributeError,
            KeyError, IndexError, ZeroDivisionError, OverflowError, AssertionError,
            tokenize.TokenError):  # fmt: skip
        # pint's own parser fails in several ways on odd text; all of them mean the same here
        return None, None
    for name in _UNIT_NAME.findall(canonical):
        try:
            resolved = ureg.parse_unit_name(name)[0][1]
        except (IndexError, pint.errors.PintError, ValueError, KeyError):
            continue
        if resolved in _AMBIGUOUS and _SPELLED_OUT[resolved] not in name:
            return None, _AMBIGUOUS[resolved].format(name=name)
        definition = getattr(ureg, "_units", {}).get(resolved)
        if getattr(definition, "is_logarithmic", False):
            return None, (
                f"'{name}' is a logarithmic unit (a level or a ratio on a log scale), not a "
                "physical quantity: give the quantity in a linear unit"
            )
        if definition is not None and not getattr(definition, "is_multiplicative", True):
            return None, (
                f"'{name}' has an offset zero; give a difference unit such as K or delta_degC"
            )
    return units, None


_UNIT_NAME = re.compile(r"[A-Za-zµμΩ°][A-Za-zµμΩ°_]*")


def _guarded_units(unit_text: str, key: str, given: object, expected: str) -> pint.Unit:
    canonical = _canonical_units(unit_text)
    if canonical is None:
        raise InputError(key, given, expected, f"{unit_text!r} is not a unit expression")
    units, refusal = _checked_units(canonical)
    if units is None:
        raise InputError(key, given, expected, refusal or f"{unit_text!r} is not a unit expression")
    return units


def _is_angular(canonical: str) -> bool:
    """Whether a unit counts radians per time (rpm, rad/s)."""
    base = (1.0 * registry().parse_units(canonical)).to_base_units()
    return "radian" in str(base.units)


def parse_frequency(text: object, key: str) -> float:
    """Parse a frequency in cycles per second [Hz], from Hz, rpm, rad/s and the like.

    pint reads ``rpm`` and ``rad/s`` as angular velocities (radians per second); those are
    divided by 2 pi here, so ``"1480 rpm"`` is 24.667 Hz and ``"100 rad/s"`` is 15.92 Hz.

    Parameters
    ----------
    text : object
        What the user wrote, e.g. ``"60 Hz"`` or ``"1480 rpm"``.
    key : str
        Key named in errors.

    Returns
    -------
    float
        The frequency [Hz].
    """
    value = parse_quantity(text, FREQUENCY, key)
    match = _QUANTITY.match(str(text))
    assert match is not None  # parse_quantity accepted it
    if _is_angular(_canonical_units(match.group(2)) or ""):
        value /= 2.0 * math.pi
    return value


def _describe(dimensionality: object) -> str:
    text = str(dimensionality)
    return "dimensionless" if text == "dimensionless" else f"of dimension {text}"


def convert_from_si(value: float, unit_text: str) -> float:
    """Express an SI value in another unit of the same dimension.

    Parameters
    ----------
    value : float
        Value in SI base units.
    unit_text : str
        Target unit, e.g. ``"mm"`` (read through :func:`parse_unit`).

    Returns
    -------
    float
        The value in ``unit_text``.
    """
    units = parse_unit(unit_text, "unit", "a unit, e.g. mm")
    return value / float((1.0 * units).to_base_units().magnitude)
