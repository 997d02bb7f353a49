"""Excitations, separation margins, the margin table and the verdict.

An excitation is a frequency or a running speed (or a range of either, for a variable-speed
drive) together with the orders that excite: harmonics 1, 2, ... or, for example, a blade
or vane count.  Each order makes an excitation *line*; every computed mode of every
computed direction must stay outside the *band* around every line:

    band = [f_low * (1 - below), f_high * (1 + above)]

where ``f_low``, ``f_high`` are the line's ends (equal for a single speed) and ``below``,
``above`` the required separation on each side as fractions of the line frequency.  A
criterion that allows no mode below a line (a support treated as rigid, the octave rule)
has ``below = 1``: its band reaches down to 0 Hz.

The separation of a mode from a line is signed: ``(f - f_high) / f_high`` above the line,
``(f - f_low) / f_low`` below it (negative), 0 within a range.  A mode is *clear* of a
line only when its whole interval ``f * (1 +/- estimated error)`` lies outside the closed
band, so a mode on a band edge is never clear.

Separation margins are common practice; their size is the user's to set, and the applicable
code or the client's specification governs.  The built-in :data:`CRITERIA` name a few
common ones with the document and clause each comes from, as recalled: check each against
the current edition before relying on it.
"""

from __future__ import annotations

import math
import re
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from beamtone.calc.errors import InputError

__all__ = [
    "CAUTION",
    "CRITERIA",
    "DIRECTIONS",
    "Criterion",
    "Excitation",
    "Line",
    "MarginRow",
    "MarginTable",
    "ModeRef",
    "Verdict",
    "check_member",
    "criterion",
    "lines",
    "margin_table",
    "mode_refs",
    "read_fraction",
    "read_frequencies",
    "read_orders",
]

DIRECTIONS = ("depth", "width", "torsion", "axial")

CAUTION = (
    "Separation margins are common practice, not physics: the margin is yours to set, and "
    "the applicable code, the machine maker's data and a licensed engineer govern. A clear "
    "verdict covers only the modes and directions computed, against the excitations given."
)

# A mode this close to a band edge (relative) is on the edge even where its estimated
# error is smaller: ten digits is all a worksheet value carries.
_EDGE = 1e-9


@dataclass(frozen=True)
class Criterion:
    """A named separation criterion and where it comes from.

    Attributes
    ----------
    name : str
        The name a worksheet uses (``criterion = "..."``).
    applies_to : str
        What kind of member it is written for.
    below, above : float
        Required separation below and above each excitation line, as fractions of the line
        frequency [-]; ``below = 1`` allows no mode below a line.
    minimum_hz : float or None
        A lower frequency limit every mode must also meet [Hz], where the criterion has one.
    document : str
        The document it comes from (or "common practice" where none is one source).
    clause : str
        Where in that document, as recalled.
    from_memory : bool
        True where the value was recalled rather than read from the document at hand.
    """

    name: str
    applies_to: str
    below: float
    above: float
    minimum_hz: float | None
    document: str
    clause: str
    from_memory: bool = True

    @property
    def source(self) -> str:
        """Document and clause, with the advice to check the current edition."""
        memo = "; value recalled from memory" if self.from_memory else ""
        return f"{self.document}, {self.clause}{memo}; check against the current edition"


# Each value below carries its source beside it.  None of these documents was at hand when
# the list was written: every value is recalled from memory and says so.
CRITERIA: dict[str, Criterion] = {
    c.name: c
    for c in (
        # Foundations and supports of rotating machinery: keep every structural frequency at
        # least 20 % away from the operating speed and its significant orders.  ACI 351.3R
        # "Foundations for Dynamic Equipment" (American Concrete Institute), chapter on design
        # criteria (frequency ratio / resonance avoidance); from memory.
        Criterion(
            "machine-support-20",
            "machine supports, skids and pump structures",
            0.20,
            0.20,
            None,
            "ACI 351.3R, Foundations for Dynamic Equipment",
            "design criteria, resonance avoidance (20 % separation)",
        ),
        # A support counts as rigid when its first natural frequency is at least 25 % above
        # the main excitation: a rule of the trade for equipment supports; no single
        # document is the source (common practice, from memory).
        Criterion(
            "rigid-support-25",
            "a support to be treated as rigid",
            1.0,
            0.25,
            None,
            "common practice (no single document)",
            "first natural frequency at least 1.25 x the main excitation",
        ),
        # The octave rule for equipment brackets and mounts: the bracket's fundamental at
        # least twice (an octave above) the highest excitation it carries.  Common practice
        # in equipment mounting, from memory; no single document.
        Criterion(
            "bracket-octave",
            "brackets and mounts carrying equipment",
            1.0,
            1.0,
            None,
            "common practice (no single document)",
            "fundamental at least one octave (2 x) above the excitation",
        ),
        # Footbridges: EN 1990:2002/A1:2005 Annex A2, A2.4.3.2(2): a comfort verification is
        # needed where the deck's fundamental is below 5 Hz vertically (2.5 Hz laterally and
        # in torsion).  Here the 5 Hz limit is applied to every computed direction, the
        # stricter reading.  From memory.
        Criterion(
            "footbridge-comfort",
            "footbridges under walking (pair with walking pace, e.g. 1.8-2.2 Hz, orders 1-3)",
            0.0,
            0.0,
            5.0,
            "EN 1990:2002/A1:2005, Annex A2 (bridges)",
            "A2.4.3.2(2): comfort check below 5 Hz vertical, 2.5 Hz lateral and torsional",
        ),
        # Residential timber floors: EN 1995-1-1:2004, 7.3.3(2): a floor with a fundamental
        # below 8 Hz needs a special investigation.  From memory.
        Criterion(
            "timber-floor-8hz",
            "residential timber floors",
            0.0,
            0.0,
            8.0,
            "EN 1995-1-1:2004, Eurocode 5",
            "7.3.3(2): special investigation for a fundamental below 8 Hz",
        ),
    )
}


def criterion(name: str, key: str = "criterion") -> Criterion:
    """The built-in criterion ``name``; InputError naming ``key`` with the choices otherwise."""
    found = CRITERIA.get(name.strip().lower()) if isinstance(name, str) else None
    if found is None:
        import difflib

        close = difflib.get_close_matches(str(name), list(CRITERIA), n=1)
        hint = f'did you mean "{close[0]}"?' if close else None
        raise InputError(key, name, "one of " + ", ".join(CRITERIA), hint)
    return found


_PERCENT = re.compile(r"^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,3})?)\s*%\s*$")


def read_fraction(value: object, key: str, what: str) -> float:
    """A percentage as written (``"20 %"``) or a plain fraction (0.2), as a fraction [-].

    Raises
    ------
    InputError
        Keyed ``key``, for anything else, or a value outside 0 to 1000 %.
    """
    expected = f'{what} as a percentage such as "20 %", or a fraction such as 0.2'
    if isinstance(value, bool) or not isinstance(value, int | float | str):
        raise InputError(key, value, expected)
    if isinstance(value, str):
        match = _PERCENT.match(value)
        if match is None:
            raise InputError(key, value, expected)
        fraction = float(match.group(1)) / 100.0
    else:
        fraction = float(value)
    if not (math.isfinite(fraction) and 0.0 <= fraction <= 10.0):
        raise InputError(key, value, f"{what} from 0 % to 1000 %")
    return fraction


def read_frequencies(value: object, key: str) -> tuple[float, float]:
    """A frequency or speed (``"1480 rpm"``), or a range of two, as (low, high) [Hz]."""
    from beamtone.calc.units import parse_frequency

    if isinstance(value, list):
        if len(value) != 2:
            raise InputError(key, value, 'one value, or a range of two: ["900 rpm", "1800 rpm"]')
        low = parse_frequency(value[0], f"{key}[0]")
        high = parse_frequency(value[1], f"{key}[1]")
        if not high > low:
            raise InputError(key, value, "a range from the lower value to the higher one")
        return low, high
    f = parse_frequency(value, key)
    return f, f


def read_orders(value: object, key: str) -> tuple[float, ...]:
    """Orders as written: one number or a list (harmonics ``[1, 2]``, a blade count ``[5]``)."""
    items = value if isinstance(value, list) else [value]
    expected = "orders above 0 and at most 1000: a number or a list such as [1, 2]"
    if not items or len(items) > 100:
        raise InputError(key, value, expected)
    for i, h in enumerate(items):
        if isinstance(h, bool) or not isinstance(h, int | float) or not 0.0 < h <= 1000.0:
            raise InputError(f"{key}[{i}]" if isinstance(value, list) else key, h, expected)
    return tuple(sorted({float(h) for h in items}))


@dataclass(frozen=True)
class Excitation:
    """One source of excitation, in SI.

    Attributes
    ----------
    name : str
    low_hz, high_hz : float
        The fundamental frequency of the source [Hz]; a range for a variable-speed drive,
        ``low_hz == high_hz`` for a single one.
    orders : tuple of float
        The multiples of the fundamental that excite (harmonics 1, 2, ... or a blade count).
    below, above : float
        Required separation below and above each line, fractions of the line frequency [-].
    minimum_hz : float or None
        A lower frequency limit every mode must also meet [Hz] (from a criterion).
    criterion : str or None
        The named criterion the margins come from, where one was named.
    as_speed : bool
        True where the source was given as a running speed (rpm); the chart's axis.
    force : float or None
        Amplitude of a harmonic force the source applies at every line [N].
    force_at : float or None
        Where that force acts, from the left end [m].
    """

    name: str
    low_hz: float
    high_hz: float
    orders: tuple[float, ...] = (1.0,)
    below: float = 0.2
    above: float = 0.2
    minimum_hz: float | None = None
    criterion: str | None = None
    as_speed: bool = False
    force: float | None = None
    force_at: float | None = None

    def __post_init__(self) -> None:
        key = f"excitation[{self.name}]"
        if not (math.isfinite(self.low_hz) and self.low_hz > 0.0):
            raise InputError(f"{key}.frequency", self.low_hz, "a frequency above 0 Hz")
        if not (math.isfinite(self.high_hz) and self.high_hz >= self.low_hz):
            raise InputError(
                f"{key}.frequency", self.high_hz, "a range from the lower to the higher value"
            )
        if not self.orders or any(not (0.0 < h <= 1000.0) for h in self.orders):
            raise InputError(f"{key}.orders", self.orders, "orders above 0, at most 1000")
        if not 0.0 <= self.below <= 1.0:
            raise InputError(f"{key}.margin", self.below, "a margin below from 0 % to 100 %")
        if not 0.0 <= self.above <= 10.0:
            raise InputError(f"{key}.margin", self.above, "a margin above from 0 % to 1000 %")

    @property
    def is_range(self) -> bool:
        """True for a range of speeds or frequencies."""
        return self.high_hz > self.low_hz


@dataclass(frozen=True)
class Line:
    """One excitation line and the band around it [Hz].

    Attributes
    ----------
    excitation : str
    order : float or None
        None for a criterion's lower frequency limit.
    low_hz, high_hz : float
        The line (equal ends for a single speed) [Hz].
    band_low_hz, band_high_hz : float
        The band no mode may enter [Hz].
    below, above : float
        Required separation on each side [-].
    """

    excitation: str
    order: float | None
    low_hz: float
    high_hz: float
    band_low_hz: float
    band_high_hz: float
    below: float
    above: float


def lines(excitation: Excitation) -> tuple[Line, ...]:
    """The lines of one excitation: one per order, plus its lower limit where it has one."""
    out = [
        Line(
            excitation.name,
            h,
            h * excitation.low_hz,
            h * excitation.high_hz,
            h * excitation.low_hz * (1.0 - excitation.below),
            h * excitation.high_hz * (1.0 + excitation.above),
            excitation.below,
            excitation.above,
        )
        for h in excitation.orders
    ]
    if excitation.minimum_hz is not None:
        f = excitation.minimum_hz
        out.append(Line(excitation.name, None, f, f, 0.0, f, 1.0, 0.0))
    return tuple(out)


@dataclass(frozen=True)
class ModeRef:
    """A computed mode as the margin table sees it.

    Attributes
    ----------
    direction : str
        ``"depth"`` (today's bending plane), ``"width"``, ``"torsion"`` or ``"axial"``.
    number : int
        Mode number within its direction, 1 for the lowest.
    frequency_hz : float
        Natural frequency [Hz].
    estimated_error : float
        Its estimated relative error [-].
    band_low_hz, band_high_hz : float or None
        Its band over the worksheet's tolerances [Hz] (:mod:`calc.band`), where given: the
        mode is clear of a line only when the whole band is.
    """

    direction: str
    number: int
    frequency_hz: float
    estimated_error: float = 0.0
    band_low_hz: float | None = None
    band_high_hz: float | None = None

    def __post_init__(self) -> None:
        if self.direction not in DIRECTIONS:
            raise InputError("direction", self.direction, "one of " + ", ".join(DIRECTIONS))


def mode_refs(result: object, direction: str = "depth") -> tuple[ModeRef, ...]:
    """The modes of a finite-element result (anything with ``modes``) in one direction."""
    modes = result.modes  # type: ignore[attr-defined]
    return tuple(
        ModeRef(direction, m.number, m.frequency_hz, float(m.estimated_error)) for m in modes
    )


def check_member(
    excitations: Sequence[Excitation],
    result: object,
    directions: object | None = None,
    bands: object | None = None,
) -> MarginTable | None:
    """The margin table of a solved member, every computed direction included.

    Parameters
    ----------
    excitations : sequence of Excitation
    result : fe.FEResult
        The depth-plane solve.
    directions : directions.Directions, optional
        Every direction, where solved; without it only the depth plane is checked and the
        verdict names the directions it does not cover.
    bands : band.BandResult, optional
        The modes' bands over the tolerances: a mode is clear only where its whole band is.

    Returns
    -------
    MarginTable or None
        None where there are no excitations.
    """
    if not excitations:
        return None
    if directions is None:
        modes = mode_refs(result, "depth")
        unchecked = ["the width plane, torsion and axial modes were not computed"]
    else:
        every = directions.all_modes  # type: ignore[attr-defined]
        modes = tuple(
            ModeRef(m.direction, m.number, m.frequency_hz, float(m.estimated_error)) for m in every
        )
        unchecked = [
            f"{d.name} modes not computed ({d.reason})"
            for d in directions.directions  # type: ignore[attr-defined]
            if not d.computed
        ]
    if bands is not None:
        ranges = {
            (b.direction, b.number): (b.low_hz, b.high_hz)
            for b in bands.modes  # type: ignore[attr-defined]
        }
        modes = tuple(
            ModeRef(m.direction, m.number, m.frequency_hz, m.estimated_error,
                    *ranges.get((m.direction, m.number), (None, None)))
            for m in modes
        )  # fmt: skip
    return margin_table(excitations, modes, unchecked)


@dataclass(frozen=True)
class MarginRow:
    """One mode against one excitation line.

    Attributes
    ----------
    excitation : str
    order : float or None
        None for a lower frequency limit.
    line_low_hz, line_high_hz : float
        The line [Hz] (equal ends for a single speed).
    mode : int
    direction : str
    frequency_hz : float
    separation : float
        Signed separation from the nearest end of the line, fraction of it [-]: positive
        above, negative below, 0 within a range.
    required : float
        The separation required on the mode's side [-].
    clear : bool
        The mode with its estimated error lies wholly outside the closed band.
    """

    excitation: str
    order: float | None
    line_low_hz: float
    line_high_hz: float
    mode: int
    direction: str
    frequency_hz: float
    separation: float
    required: float
    clear: bool

    @property
    def headroom(self) -> float:
        """|separation| - required [-]: negative inside the band."""
        return abs(self.separation) - self.required

    @property
    def below_line(self) -> bool:
        """The mode lies below the line's lower end."""
        return self.frequency_hz < self.line_low_hz


@dataclass(frozen=True)
class Verdict:
    """Clear or not, and the pair that governs.

    Attributes
    ----------
    clear : bool
        Every computed mode clears every band, and no band reaches above the highest
        computed mode of a direction (where uncomputed modes could sit), and every
        direction named as not computed is listed in ``unchecked``.
    governing : MarginRow or None
        The row with the least headroom (the worst one inside a band where not clear).
    unchecked : tuple of str
        What the verdict does not cover, in words (directions not computed, bands above the
        highest computed mode).
    """

    clear: bool
    governing: MarginRow | None
    unchecked: tuple[str, ...] = ()

    @property
    def text(self) -> str:
        """One line: clear or not, with the governing mode, line and margin."""
        g = self.governing
        if g is None:
            return "no excitation lines to check"
        pair = (
            f"{g.direction} mode {g.mode} at {g.frequency_hz:.4g} Hz against "
            f"{_line_text(g)}: separation {_pct(g.separation)}, required {100 * g.required:.1f} %"
        )
        if self.clear:
            return f"CLEAR: every computed mode clears every band; governing: {pair}"
        if g.clear:
            return f"NOT SHOWN CLEAR: {self.unchecked[0]}; closest: {pair}"
        return f"NOT CLEAR: {pair}"


@dataclass(frozen=True)
class MarginTable:
    """Every excitation line against every computed mode.

    Attributes
    ----------
    lines : tuple of Line
    rows : tuple of MarginRow
        Ordered by excitation, line, then direction and mode.
    verdict : Verdict
    """

    lines: tuple[Line, ...]
    rows: tuple[MarginRow, ...]
    verdict: Verdict

    @property
    def passages(self) -> tuple[MarginRow, ...]:
        """Rows of modes below a line: passed through whenever the source runs up from rest
        to that line (start-up and shut-down)."""
        return tuple(r for r in self.rows if r.order is not None and r.below_line)


def _pct(fraction: float) -> str:
    return f"{100.0 * fraction:+.1f} %" if fraction else "0.0 %"


def _line_text(row: MarginRow) -> str:
    if row.order is None:
        return f"the {row.excitation} lower limit {row.line_low_hz:.4g} Hz"
    span = (
        f"{row.line_low_hz:.4g}-{row.line_high_hz:.4g} Hz"
        if row.line_high_hz > row.line_low_hz
        else f"{row.line_low_hz:.4g} Hz"
    )
    return f"{row.excitation} order {row.order:g} ({span})"


def _row(line: Line, mode: ModeRef) -> MarginRow:
    f = mode.frequency_hz
    if f > line.high_hz:
        separation = (f - line.high_hz) / line.high_hz
        required = line.above
    elif f < line.low_hz:
        separation = (f - line.low_hz) / line.low_hz
        required = line.below
    else:
        separation = 0.0
        required = max(line.below, line.above)
    err = max(abs(mode.estimated_error), _EDGE)
    lowest = min(f, mode.band_low_hz if mode.band_low_hz is not None else f) * (1.0 - err)
    highest = max(f, mode.band_high_hz if mode.band_high_hz is not None else f) * (1.0 + err)
    clear = highest < line.band_low_hz or lowest > line.band_high_hz
    if line.order is None:  # a lower limit: at or above it is clear
        required = 0.0
        clear = lowest >= line.low_hz
    return MarginRow(
        line.excitation, line.order, line.low_hz, line.high_hz, mode.number, mode.direction,
        f, separation, required, clear,
    )  # fmt: skip


def margin_table(
    excitations: Iterable[Excitation],
    modes: Sequence[ModeRef],
    unchecked: Iterable[str] = (),
) -> MarginTable:
    """Every line of every excitation against every mode, and the verdict.

    Parameters
    ----------
    excitations : iterable of Excitation
    modes : sequence of ModeRef
        Every computed mode of every computed direction.
    unchecked : iterable of str
        Directions (or anything else) the caller did not compute, in words; each keeps the
        verdict from being clear.

    Returns
    -------
    MarginTable

    Examples
    --------
    >>> pump = Excitation("pump", 1480 / 60, 1480 / 60, (1.0, 2.0))
    >>> modes = [ModeRef("depth", 1, 6.5), ModeRef("depth", 2, 33.8), ModeRef("depth", 3, 76.0)]
    >>> table = margin_table([pump], modes)
    >>> table.verdict.clear
    True
    >>> table.verdict.governing.order, round(table.verdict.governing.separation, 3)
    (2.0, -0.315)
    """
    all_lines = tuple(line for e in excitations for line in lines(e))
    rows = tuple(_row(line, m) for line in all_lines for m in modes)
    notes = list(unchecked)
    # A band that reaches above the highest computed mode of a direction may hold modes
    # that were not computed.
    for direction in dict.fromkeys(m.direction for m in modes):
        top = max(
            m.frequency_hz * (1.0 - m.estimated_error) for m in modes if m.direction == direction
        )
        reach = max((line.band_high_hz for line in all_lines), default=0.0)
        if reach >= top:
            notes.append(
                f"bands reach {reach:.4g} Hz, above the highest computed {direction} mode "
                f"({top:.4g} Hz): compute more modes"
            )
    if not modes and all_lines:
        notes.append("no modes were computed")
    governing = min(rows, key=lambda r: (r.clear, r.headroom), default=None)
    clear = bool(rows) and all(r.clear for r in rows) and not notes
    return MarginTable(all_lines, rows, Verdict(clear, governing, tuple(notes)))
