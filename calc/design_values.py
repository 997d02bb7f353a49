"""Design values that keep their margin: rounding to a step or to available sizes.

Sizing finds where a mode meets a band edge; that exact value is never a design value (a
mode on the edge is not clear, and nobody buys a 176.7650483 mm section).  Here the value is
rounded to a step of the key's unit (or chosen from the sizes the user has), every rounded
candidate is solved again, and only candidates whose fresh solve is clear are kept.  A
candidate on a band edge is not clear (see :mod:`beamtone.calc.excitation`), so it is never
recommended.

Among the clear candidates, the recommended one has the least member mass.  Where it has a
mode below an excitation line, the member passes through resonance whenever the source runs
up from rest or down to it; the *stiff alternative* (every computed mode above every band) is
given beside it with its mass.

The module is unit-agnostic: values are in the user's unit for the key, and the caller's
``evaluate`` turns one into a solved margin table and a mass.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass

from beamtone.calc.errors import InputError
from beamtone.calc.excitation import MarginTable
from beamtone.calc.units import Dimension, convert_from_si, parse_quantity

__all__ = [
    "Candidate",
    "PracticalChoice",
    "default_step",
    "grid_text",
    "practical_values",
    "read_sizes",
    "read_step",
]

_PER_EDGE = 3  # grid points tried inward of every interval edge
_MAX_SIZES = 500


def default_step(value: float) -> float:
    """A sensible rounding step for ``value`` in its own unit: three significant figures.

    The step is a power of ten, 10**(floor(log10|value|) - 2): 176.77 mm -> 1 mm,
    6.02 m -> 0.01 m, 2.47 kg -> 0.01 kg, 40.3 kN/m -> 0.1 kN/m.

    Examples
    --------
    >>> default_step(176.7650483), default_step(6.02), default_step(0.8)
    (1.0, 0.01, 0.001)
    """
    if not math.isfinite(value) or value == 0.0:
        raise InputError("--step", value, "a nonzero value to take a step from")
    exponent = math.floor(math.log10(abs(value))) - 2
    return float(f"1e{exponent}")


def grid_text(value: float, step: float) -> str:
    """``value`` written with the decimals of ``step`` (no float noise: 6.01, not 6.0100001)."""
    decimals = 0
    while decimals < 12 and abs(step * 10**decimals - round(step * 10**decimals)) > 1e-6:
        decimals += 1
    return f"{value:.{decimals}f}"


_NUMBER = re.compile(r"^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,3})?\s*$")
_MAX_SIZES_FILE = 65_536  # bytes


def _in_unit(text: str, dimension: Dimension, unit: str, key: str) -> float:
    """``"number unit"`` (or a bare number, already in ``unit``) as a value in ``unit``."""
    if _NUMBER.match(text):
        value = float(text)
    else:
        si = parse_quantity(text, dimension, key, allow_zero=True, allow_negative=True,
                            minimum=False)  # fmt: skip
        value = convert_from_si(si, unit)
    if not math.isfinite(value):
        raise InputError(key, text, f"a finite value, e.g. {dimension.example}")
    return value


def read_step(text: str, dimension: Dimension, unit: str, key: str = "--step") -> float:
    """A rounding step as written (``"1 mm"``, or ``"1"`` in ``unit``), in ``unit``.

    Raises
    ------
    InputError
        Keyed ``key``, for anything but a positive quantity of ``dimension``.
    """
    step = _in_unit(text, dimension, unit, key)
    if not step > 0.0:
        raise InputError(key, text, f"a step above zero, e.g. {dimension.example}")
    return step


def read_sizes(
    text: str, dimension: Dimension, unit: str, key: str = "--sizes"
) -> tuple[float, ...]:
    """Available sizes as written, in ``unit``, sorted.

    ``text`` is a list separated by commas (``"150 mm, 160 mm, 180 mm"``; a unit after the
    last value only applies to all: ``"150, 160, 180 mm"``; bare numbers alone are in
    ``unit``), or ``@FILE``: a small text file with the same, one or more per line, ``#``
    starting a comment.

    Raises
    ------
    InputError
        Keyed ``key``: an empty list, a value of the wrong dimension, an unreadable file.
    """
    if text.startswith("@"):
        from beamtone.calc.files import read_limited

        raw = read_limited(text[1:], _MAX_SIZES_FILE, "a list of sizes")
        try:
            body = raw.decode("utf-8")
        except UnicodeDecodeError:
            raise InputError(key, text, "a text file of sizes (UTF-8)") from None
        body = "\n".join(line.split("#", 1)[0] for line in body.splitlines())
    else:
        body = text
    items = [p.strip() for p in re.split(r"[,\n]", body) if p.strip()]
    expected = 'sizes separated by commas, e.g. "150 mm, 160 mm" or "150, 160 mm"'
    if not items or len(items) > _MAX_SIZES:
        raise InputError(key, text, f"1 to {_MAX_SIZES} {expected}")
    bare = [bool(_NUMBER.match(i)) for i in items]
    if all(bare[:-1]) and not bare[-1] and len(items) > 1:
        tail = _QUANTITY_UNIT.match(items[-1])
        assert tail is not None
        items = [f"{i} {tail.group(1)}" for i in items[:-1]] + [items[-1]]
    return tuple(sorted({_in_unit(i, dimension, unit, key) for i in items}))


_QUANTITY_UNIT = re.compile(r"^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,3})?\s*(.*?)\s*$")


@dataclass(frozen=True)
class Candidate:
    """One practical value, solved again.

    Attributes
    ----------
    value : float
        In the user's unit for the key.
    text : str
        As it would be written (``"177"``).
    mass : float
        Member mass at this value [kg].
    table : MarginTable
        The margin table of the fresh solve.
    """

    value: float
    text: str
    mass: float
    table: MarginTable

    @property
    def clear(self) -> bool:
        """The fresh solve is clear of every band."""
        return self.table.verdict.clear

    @property
    def stiff(self) -> bool:
        """Clear, with no computed mode below any excitation line."""
        return self.clear and not self.table.passages

    @property
    def achieved(self) -> float:
        """The governing pair's headroom: separation beyond the required margin [-]."""
        g = self.table.verdict.governing
        return g.headroom if g is not None else math.inf


@dataclass(frozen=True)
class PracticalChoice:
    """Rounded values that keep their margin.

    Attributes
    ----------
    candidates : tuple of Candidate
        Every rounded value tried, solved again, in increasing value.
    recommended : Candidate or None
        The clear candidate with the least member mass.
    stiff : Candidate or None
        The clear candidate with the least mass among those with every mode above every
        band; None where none was found in range.
    message : str
        What was chosen and why, including the start-up passage where there is one.
    """

    candidates: tuple[Candidate, ...]
    recommended: Candidate | None
    stiff: Candidate | None
    message: str


def _step_points(
    intervals: Sequence[tuple[float, float]], low: float, high: float, step: float
) -> list[float]:
    """Grid points in each interval, the few nearest each of its edges (a point on an edge is
    kept: solving it again decides, and a mode on a band edge is not clear)."""
    points: set[int] = set()
    for a, b in intervals:
        first = math.ceil(a / step - 1e-9)
        last = math.floor(b / step + 1e-9)
        if first > last:
            continue
        points.update(range(first, min(first + _PER_EDGE, last + 1)))
        points.update(range(max(last - _PER_EDGE + 1, first), last + 1))
    lo, hi = min(low, high), max(low, high)
    return sorted(k * step for k in points if lo - 1e-9 * abs(lo) <= k * step <= hi * (1 + 1e-9))


def practical_values(
    evaluate: Callable[[float], tuple[MarginTable, float]],
    intervals: Sequence[tuple[float, float]],
    low: float,
    high: float,
    *,
    step: float | None = None,
    sizes: Sequence[float] | None = None,
    unit: str = "",
) -> PracticalChoice:
    """Round to a step or choose from sizes, solve each again, keep those that stay clear.

    Parameters
    ----------
    evaluate : callable
        ``evaluate(value)`` -> (margin table of a fresh solve, member mass [kg]), the value
        in the user's unit.
    intervals : sequence of (float, float)
        The ranges found clear by the continuous search, in the user's unit.
    low, high : float
        The search range, in the user's unit.
    step : float, optional
        Rounding step in the user's unit; by default :func:`default_step` of the largest
        interval edge (three significant figures there).  Not with ``sizes``.
    sizes : sequence of float, optional
        Available sizes in the user's unit; every one in range is solved.
    unit : str
        The unit, for the message.

    Returns
    -------
    PracticalChoice
    """
    if step is not None and sizes is not None:
        raise InputError("--step", step, "either a step or a list of sizes, not both")
    if sizes is not None:
        lo, hi = min(low, high), max(low, high)
        points = sorted({float(s) for s in sizes if lo <= s <= hi})
        if len(points) > _MAX_SIZES:
            raise InputError("--sizes", len(points), f"at most {_MAX_SIZES} sizes in range")
        texts = [f"{p:.10g}" for p in points]
        if not points:
            message = f"none of the sizes given lies in the range {low:g} to {high:g} {unit}"
            return PracticalChoice((), None, None, message.strip())
    else:
        if step is not None and not (math.isfinite(step) and step > 0.0):
            raise InputError("--step", step, "a step above zero in the unit of the key")
        edges = [abs(e) for ab in intervals for e in ab if e != 0.0]
        used = step if step is not None else default_step(max(edges) if edges else high)
        points = _step_points(intervals, low, high, used)
        texts = [grid_text(p, used) for p in points]
        points = [float(t) for t in texts]
    candidates = []
    for p, t in zip(points, texts, strict=True):
        table, mass = evaluate(p)
        candidates.append(Candidate(p, t, mass, table))
    clear = [c for c in candidates if c.clear]
    recommended = min(clear, key=lambda c: (c.mass, c.value), default=None)
    stiff = min((c for c in clear if c.stiff), key=lambda c: (c.mass, c.value), default=None)
    return PracticalChoice(
        tuple(candidates), recommended, stiff, _message(recommended, stiff, candidates, unit)
    )


def _message(
    recommended: Candidate | None,
    stiff: Candidate | None,
    candidates: Sequence[Candidate],
    unit: str,
) -> str:
    u = f" {unit}" if unit else ""
    if recommended is None:
        tried = len(candidates)
        return (
            f"none of the {tried} practical values tried keeps every mode clear after "
            "solving again; use a finer step, other sizes or a wider range"
        )
    g = recommended.table.verdict.governing
    parts = [f"recommended {recommended.text}{u} ({recommended.mass:.4g} kg)"]
    if g is not None:
        parts.append(
            f"achieves {100 * abs(g.separation):.1f} % separation against the "
            f"{100 * g.required:.1f} % required ({g.direction} mode {g.mode}, "
            f"{g.excitation}" + (f" order {g.order:g})" if g.order is not None else ")")
        )
    passages = recommended.table.passages
    if passages:
        p = min(passages, key=lambda r: r.line_low_hz)
        parts.append(
            f"its {p.direction} mode {p.mode} ({p.frequency_hz:.4g} Hz) lies below the "
            f"{p.excitation} line at {p.line_low_hz:.4g} Hz: the member passes through "
            "resonance whenever the source runs up from rest and down to it (start-up and "
            "shut-down)"
        )
        if stiff is not None and stiff is not recommended:
            parts.append(
                f"stiff alternative with every mode above every band: {stiff.text}{u} "
                f"({stiff.mass:.4g} kg)"
            )
        elif stiff is None:
            parts.append("no clear value in range puts every mode above every band")
    return "; ".join(parts)
