"""Sizing: the value of one worksheet quantity that meets a frequency target or clears an
excitation, and sweeps of the modes against that quantity.

A variation changes one quantity of the worksheet (any key path the schema marks variable:
``member.length``, ``member.section.depth``, ``mass[0].mass``, ``supports.inner[0].at``,
...) on the immutable model with :func:`dataclasses.replace` (the value checked against the
schema's limits, the section rebuilt, the member validated again) and solves it by finite
elements.  Text is written only when a value is applied (:meth:`Variation.rewrite`).
Roots are found by scanning the range, then bracketing with Brent's method, since a
frequency need not be monotonic in the variable.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from beamtone.calc import fe, schema, similitude
from beamtone.calc.design_values import (
    PracticalChoice,
    practical_values,
    read_sizes,
    read_step,
)
from beamtone.calc.directions import (
    DEFAULT_SIZING_DIRECTION,
    LABELS,
    SIZING_DIRECTIONS,
    column_mode,
    frequency_columns,
    lowest,
    solve_directions,
)
from beamtone.calc.errors import InputError
from beamtone.calc.excitation import (
    DIRECTIONS,
    Excitation,
    MarginTable,
    ModeRef,
    Verdict,
    lines,
    margin_table,
    mode_refs,
)
from beamtone.calc.model import Member, Segment
from beamtone.calc.sections import build_section
from beamtone.calc.units import (
    LENGTH,
    Dimension,
    convert_from_si,
    parse_frequency,
    parse_quantity,
)
from beamtone.calc.worksheet import (
    MAX_MODES,
    Worksheet,
    find_value,
    key_path,
    point_mass,
    spring,
)

__all__ = [
    "Variation",
    "Solution",
    "SizingResult",
    "ExcitationLine",
    "MarginCheck",
    "SweepResult",
    "variation",
    "size_for_target",
    "size_for_excitation",
    "margins",
    "sweep",
    "quantity_keys",
    "sweep2",
    "Sweep2Result",
    "parse_margin",
    "parse_harmonics",
    "SizingRequest",
    "read_request",
    "set_value",
    "read_value",
    "run_request",
]

_SCAN = 17
MAX_HARMONICS = 16
"""Most excitation orders in one sizing run (100 orders took 50 s)."""
MAX_GRID = 40_000
"""Most points of a two-way sweep's table (200 x 200; 300 x 300 took 7 s of processor time)."""
_REFINE = 2  # rounds of extra scan points around interior extrema
_DIRECT_SWEEP = 64  # sweeps of more points interpolate between verified solves
_NODES = 9  # Chebyshev nodes per sweep interval
_SWEEP_TOLERANCE = 3e-7  # interpolation error allowed, relative (under a third of the FE accuracy)
_MAX_DEPTH = 7
_MASS_TOLERANCE = 1e-9  # interpolated member mass, relative
_NUMBER = re.compile(r"^\s*[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?\s*")
_XTOL = 1e-10  # relative, on the variable


@dataclass(frozen=True)
class Variation:
    """One worksheet quantity made variable.

    Attributes
    ----------
    sheet : Worksheet
    key : str
        Its key path.
    dimension : Dimension
    unit : str
        The unit the worksheet uses for it (values are written back in it).
    value : float
        Its current value [SI].
    """

    sheet: Worksheet
    key: str
    dimension: Dimension
    unit: str
    value: float

    def text(self, value: float) -> str:
        """The value as the worksheet would write it, in the worksheet's unit."""
        number = convert_from_si(value, self.unit)
        return f"{number:.10g} {self.unit}"

    def member(self, value: float, *others: tuple[Variation, float]) -> Member:
        """The member with the quantity set to ``value`` [SI] (and other variations set to
        theirs), made with :func:`dataclasses.replace` on the loaded model and checked as the
        loader checks it (the schema's limits, the section's geometry, positions on the
        member)."""
        from beamtone.calc.tolerances import Design, vary

        design = Design.of(self.sheet)  # support stiffnesses are varied on the design
        for var, v in ((self, value), *others):
            try:
                design = vary(design, {var.key: v}, {var.key: var.text(v)})
            except InputError as exc:
                raise InputError(
                    "--between",
                    var.text(v),
                    f"values of {var.key} the worksheet accepts ({exc.key}: {exc.expected})",
                ) from None
        return design.solved_member()

    def rewrite(self, text: str, value: float) -> str:
        """Worksheet text with the quantity set to ``value`` [SI] in the worksheet's unit,
        comments and layout kept; masses and springs at the right end follow a change of
        length, exactly as the solves did.  The result is checked to load."""
        import tomlkit

        from beamtone.calc.worksheet import loads

        document = tomlkit.parse(text)
        node: Any = document
        parts = key_path(self.key)
        for part in parts[:-1]:
            node = node[part]
        node[parts[-1]] = self.text(value)
        if parts[-1] == "length":
            self._follow_the_end_in_text(document, value)
        result = tomlkit.dumps(document)
        loads(result)
        return result

    def _follow_the_end_in_text(self, data: dict[str, Any], value: float) -> None:
        """Masses and springs at the right end stay at the end when a length changes (in
        worksheet data, as :func:`_follow_the_end` does on the model)."""
        old = self.sheet.member.length
        new = old + (value - self.value)
        for table in ("mass", "spring"):
            items = data.get(table, [])
            for item in items if isinstance(items, list) else []:
                text = item.get("at")
                if not isinstance(text, str):
                    continue
                at = parse_quantity(text, LENGTH, "at", allow_zero=True, minimum=False)
                if abs(at - old) <= 1e-9 * old:
                    match = _NUMBER.match(text)
                    unit = (text[match.end() :] if match else "m").strip() or "m"
                    item["at"] = f"{convert_from_si(new, unit):.10g} {unit}"


def set_value(
    sheet: Worksheet, member: Member, key: str, value: float, written: object = None
) -> Member:
    """``member`` (a member of ``sheet``) with the quantity at ``key`` set to ``value`` [SI].

    The one way to vary a worksheet quantity on the model: :func:`dataclasses.replace`, the
    value checked against the schema's limits, a section rebuilt (its geometry checked),
    masses and springs at the right end carried along by a change of length, the member
    validated again, exactly as the loader checks the same value written.

    Parameters
    ----------
    sheet : Worksheet
        The worksheet ``member`` came from (which segments inherit ``[member]`` keys).
    member : Member
    key : str
        A key path the schema marks variable (``member.section.depth``, ``mass[0].at``).
    value : float
        The new value [SI unit of the key's dimension].
    written : object, optional
        The value as shown in messages (default: the SI number and unit).

    Raises
    ------
    InputError
        Keyed by the entry that refuses the value (``key`` itself, ``member.length`` for
        stepped members that also give it, ``mass[0].mass`` for a point mass of nothing...).
    """
    entry = schema.find(key)
    if entry is None or entry.kind != schema.QUANTITY or not entry.variable:
        raise InputError(key, value, "a quantity of the worksheet, such as member.length")
    assert entry.dimension is not None
    shown = written if written is not None else f"{value:g} {entry.dimension.si_unit}"
    entry.check(value, key, str(shown))
    parts = key_path(key)
    head, name = parts[0], parts[-1]
    if head in ("mass", "spring"):  # model fields are named as the worksheet's keys
        i = int(parts[1])
        rows = member.masses if head == "mass" else member.springs
        new = replace(rows[i], **{str(name): value})
        check = "mass" if head == "mass" else "stiffness"  # the key its message names
        said = shown if name == check else _written(sheet, f"{head}[{i}].{check}")
        if head == "mass":
            point_mass(new.at, new.mass, new.rotary_inertia, f"mass[{i}]", said)
        else:
            spring(new.at, new.stiffness, new.rotational_stiffness, f"spring[{i}]", said)
        rows = (*rows[:i], new, *rows[i + 1 :])
        return replace(member, **{"masses" if head == "mass" else "springs": rows})
    if head == "supports":
        i = int(parts[2])
        inner = member.inner_supports
        moved = replace(inner[i], at=value)
        return replace(member, inner_supports=(*inner[:i], moved, *inner[i + 1 :]))
    if parts == ["member", "axial_force"]:
        return replace(member, axial_force=value)
    return _set_segments(sheet, member, key, parts, value, shown)


def _written(sheet: Worksheet, key: str) -> object:
    """What the worksheet wrote at ``key`` (for messages)."""
    try:
        return find_value(sheet.data, key)
    except InputError:
        return None


def _set_segments(
    sheet: Worksheet, member: Member, key: str, parts: list[str | int], value: float,
    shown: object,
) -> Member:  # fmt: skip
    """A quantity of ``[member]`` (for every segment that inherits it) or of one
    ``[[member.segment]]``."""
    table = sheet.data["member"]
    rows = table.get("segment")
    stepped = rows is not None
    if stepped and not isinstance(rows, list):
        rows = [rows]
    if parts[1] == "segment":
        which = [int(parts[2])]
        rest = parts[3:]
    else:
        rest = parts[1:]
        owner = str(rest[0])
        which = [i for i in range(len(member.segments))
                 if not stepped or owner not in rows[i]]  # fmt: skip
    name = str(rest[-1])
    segments = list(member.segments)
    if name == "length" and len(rest) == 1:
        if stepped and "length" in table:  # the loader's check of member.length
            given = sum(s.length for s in member.segments)
            raise InputError(
                "member.length",
                shown if parts[1] != "segment" else table["length"],
                f"the sum of the segment lengths ({given:.6g} m), or no member.length at all",
            )
        for i in which:
            segments[i] = replace(segments[i], length=value)
        return _follow_the_end(member, tuple(segments), member.length)
    for i in which:
        seg = segments[i]
        if rest[0] == "added_mass":
            segments[i] = replace(seg, added_mass=value)
        elif rest[0] == "material":
            segments[i] = replace(seg, material=replace(seg.material, **{name: value}))
        else:  # a section dimension: rebuilt, so its geometry is checked as the loader does
            dims = {**seg.section.dimensions, name: value}
            where = key.rsplit(".", 1)[0]
            segments[i] = replace(seg, section=build_section(seg.section.shape, dims, where))
    return replace(member, segments=tuple(segments))


def _follow_the_end(member: Member, segments: tuple[Segment, ...], old_length: float) -> Member:
    """``member`` with new ``segments``: masses and springs at the old right end [m] stay at
    the new end."""
    new = sum(s.length for s in segments)

    def moved(at: float) -> float:
        return new if abs(at - old_length) <= 1e-9 * old_length else at

    return replace(
        member,
        segments=segments,
        masses=tuple(replace(m, at=moved(m.at)) for m in member.masses),
        springs=tuple(replace(k, at=moved(k.at)) for k in member.springs),
    )


def variation(sheet: Worksheet, key: str) -> Variation:
    """Make the worksheet quantity at ``key`` variable.

    Raises
    ------
    InputError
        Keyed ``--vary``, for a key that is not a quantity of this worksheet.
    """
    value = find_value(sheet.data, key)
    found = schema.find(key)
    if found is not None and found.kind == schema.QUANTITY and isinstance(value, list):
        raise InputError(
            "--vary", key, "a support stiffness written as one quantity, e.g. \"2 MN*m/rad\"",
            "here it is a range to rigid, a tolerance that beamtone scatter samples",
        )  # fmt: skip
    if found is None or found.kind != schema.QUANTITY or not found.variable or (
        not isinstance(value, str)
    ):  # fmt: skip
        raise InputError(
            "--vary", key, "a quantity of the worksheet, such as member.length or mass[0].mass"
        )
    dimension = found.dimension
    assert dimension is not None
    si = parse_quantity(value, dimension, key, allow_zero=True, allow_negative=True, minimum=False)
    match = _NUMBER.match(value)
    unit = value[match.end() :] if match else value
    return Variation(sheet, key, dimension, unit.strip(), si)


# --- results -------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Solution:
    """A value of the variable that meets the target.

    Attributes
    ----------
    value : str
        In the worksheet's unit.
    value_si : float
    frequency_hz : float
        The chosen mode's frequency there [Hz].
    member_mass_kg : float
        Mass of the member itself there [kg].
    above : str
        ``"above"`` or ``"below"``: on which side of this value the frequency exceeds the target.
    """

    value: str
    value_si: float
    frequency_hz: float
    member_mass_kg: float
    above: str


@dataclass(frozen=True)
class ExcitationLine:
    """An excitation frequency and the band the modes must stay out of [Hz]."""

    harmonic: int
    frequency_hz: float
    low_hz: float
    high_hz: float


@dataclass(frozen=True)
class MarginCheck:
    """Modes against excitation lines.

    Attributes
    ----------
    lines : tuple of ExcitationLine
    frequencies_hz : tuple of float
    inside : tuple of tuple of bool
        inside[i][j]: mode i lies in the band of line j.
    clear : bool
        No mode in any band.
    """

    lines: tuple[ExcitationLine, ...]
    frequencies_hz: tuple[float, ...]
    inside: tuple[tuple[bool, ...], ...]

    @property
    def clear(self) -> bool:
        return not any(any(row) for row in self.inside)


@dataclass(frozen=True)
class SizingResult:
    """The outcome of a sizing run.

    Attributes
    ----------
    variable : str
        Key path varied.
    unit : str
    target_hz : float or None
        The target (None for an excitation check).
    mode : int
    solutions : tuple of Solution
    recommended : int or None
        Index into ``solutions`` of the acceptable value with the least member mass.
    message : str
    margins : MarginCheck or None
        At the recommended value, for an excitation check.
    intervals : tuple of (str, str)
        For an excitation check: the ranges of the variable where every mode clears every
        band, in the worksheet's unit.
    table : excitation.MarginTable or None
        For an excitation check: the margin table at the recommended (rounded) value.
    practical : design_values.PracticalChoice or None
        For an excitation check: the rounded values tried, solved again, the recommended
        one and the stiff alternative (see :mod:`calc.design_values`).
    """

    variable: str
    unit: str
    target_hz: float | None
    mode: int
    solutions: tuple[Solution, ...]
    recommended: int | None
    message: str
    margins: MarginCheck | None = None
    intervals: tuple[tuple[str, str], ...] = ()
    table: MarginTable | None = None
    practical: PracticalChoice | None = None


@dataclass(frozen=True)
class SweepResult:
    """Modes and member mass against the variable.

    Attributes
    ----------
    variable : str
    unit : str
    values_si : ndarray
    frequencies_hz : ndarray, shape (points, modes)
    member_mass_kg : ndarray
    solved : int
        How many points needed a finite-element solve (the rest scaled exactly by groups).
    """

    variable: str
    unit: str
    values_si: np.ndarray
    frequencies_hz: np.ndarray
    member_mass_kg: np.ndarray
    solved: int


# --- evaluation ----------------------------------------------------------------------------------


class _Evaluator:
    """Solves the member at values of the variable, remembering what it solved.

    Calling it gives the frequencies followed (for ``"governing"`` the lowest ``modes`` of
    every direction); ``columns`` gives each direction's modes side by side, each smooth in
    the variable, for interpolation (:func:`calc.directions.frequency_columns`)."""

    def __init__(
        self, var: Variation, modes: int, direction: str = DEFAULT_SIZING_DIRECTION
    ) -> None:
        self.var = var
        self.modes = modes
        self.direction = direction
        self.cache: dict[float, tuple[np.ndarray, float]] = {}
        self.solved = 0
        self._reference: tuple[similitude.MemberGroups, np.ndarray] | None = None

    def __call__(self, value: float) -> tuple[np.ndarray, float]:
        cols, mass = self.columns(value)
        return self.reduce(cols), mass

    def reduce(self, columns: np.ndarray) -> np.ndarray:
        """The frequencies followed, from columns (one row or a table of rows)."""
        return lowest(columns, self.modes) if self.direction == "governing" else columns

    def named(self, value: float, mode: int) -> str:
        """Which direction's mode is followed mode ``mode`` at ``value`` ("" unless
        ``"governing"``)."""
        if self.direction != "governing":
            return ""
        return column_mode(self.columns(value)[0], self.modes, mode)

    def columns(self, value: float) -> tuple[np.ndarray, float]:
        hit = self.cache.get(value)
        if hit is not None:
            return hit
        member = self.var.member(value)
        freqs = self._scaled(member) if self.direction == "depth" else None
        if freqs is None:
            freqs = frequency_columns(member, self.modes, self.direction)
            self.solved += 1
            if self._reference is None:
                self._reference = (similitude.member_groups(member), freqs)
        out = (freqs, member.member_mass)
        self.cache[value] = out
        return out

    def _scaled(self, member: Member) -> np.ndarray | None:
        """Frequencies by exact similitude with the first solved point, where groups match.

        The member's groups are those of Euler-Bernoulli bending: under Timoshenko theory the
        frequencies depend on the slenderness too (a free-free titanium bar scaled from 1 m to
        0.3 m came out 0.5 % high), so nothing is scaled there."""
        if self._reference is None or member.theory == "timoshenko":
            return None
        groups, freqs = self._reference
        mine = similitude.member_groups(member)
        if len(mine.groups) != len(groups.groups):
            return None
        for a, b in zip(mine.groups, groups.groups, strict=True):
            if a.variable != b.variable or not math.isclose(a.value, b.value, rel_tol=1e-13):
                return None
        return freqs * (mine.frequency_scale / groups.frequency_scale)


def _mode_words(mode: int, direction: str) -> str:
    """How messages name the mode sizing follows."""
    if direction == "governing":
        return f"mode {mode} of all directions"
    return f"mode {mode}" if direction == "depth" else f"{LABELS[direction]} mode {mode}"


def _check_range(var: Variation, low: float, high: float) -> tuple[float, float]:
    if not (math.isfinite(low) and math.isfinite(high)) or low == high:
        raise InputError("--between", f"{low} {high}", "two different finite values")
    return (low, high) if low < high else (high, low)


def _scan(ev: _Evaluator, low: float, high: float) -> tuple[np.ndarray, np.ndarray]:
    """Frequencies on a grid over [low, high], refined around interior extrema so that a
    frequency that rises and falls again shows both crossings."""
    grid = list(np.linspace(low, high, _SCAN))
    for _ in range(_REFINE + 1):
        table = np.array([ev(float(v))[0] for v in grid])
        extra: list[float] = []
        for i in range(1, len(grid) - 1):
            turning = (table[i] - table[i - 1]) * (table[i + 1] - table[i]) < 0.0
            if np.any(turning):
                extra += [0.5 * (grid[i - 1] + grid[i]), 0.5 * (grid[i] + grid[i + 1])]
        if not extra:
            break
        grid = sorted(set(grid) | set(extra))
    table = np.array([ev(float(v))[0] for v in grid])
    return np.asarray(grid), table


def _roots(g: Any, grid: np.ndarray, values: np.ndarray) -> list[float]:
    roots = []
    for i in range(len(grid) - 1):
        a, b = values[i], values[i + 1]
        if a == 0.0:
            roots.append(float(grid[i]))
        elif a * b < 0.0:
            from scipy.optimize import brentq  # on first use: keeps start-up light

            x = brentq(g, grid[i], grid[i + 1], xtol=_XTOL * abs(grid[i + 1]), rtol=1e-12)
            roots.append(float(x))
    if values[-1] == 0.0:
        roots.append(float(grid[-1]))
    return roots


def size_for_target(
    sheet: Worksheet,
    key: str,
    low: float,
    high: float,
    target_hz: float,
    mode: int = 1,
    *,
    direction: str = DEFAULT_SIZING_DIRECTION,
) -> SizingResult:
    """Every value of ``key`` in [low, high] at which mode ``mode`` has frequency ``target_hz``.

    Parameters
    ----------
    sheet : Worksheet
    key : str
        Key path of the quantity to vary.
    low, high : float
        The range [SI unit of the key].
    target_hz : float
        Target frequency [Hz].
    mode : int
        Which flexible mode (1 = fundamental).
    direction : str
        Whose mode ``mode`` is: ``"governing"`` (default: mode ``mode`` of all directions
        together, lowest first; the message names the direction's mode it is), or one
        direction: ``"depth"`` (the plane as drawn, the default before every direction was
        solved), ``"width"``, ``"torsion"``, ``"axial"``.

    Returns
    -------
    SizingResult
        Solutions in ascending order of value; the recommended one is the acceptable value
        (frequency at or above target) with the least member mass.
    """
    var = variation(sheet, key)
    low, high = _check_range(var, low, high)
    ev = _Evaluator(var, mode, direction)
    named = _mode_words(mode, direction)

    def g(v: float) -> float:
        return float(ev(v)[0][mode - 1] - target_hz)

    grid, table = _scan(ev, low, high)
    values = table[:, mode - 1] - target_hz
    roots = _roots(g, grid, values)
    solutions = []
    for r in roots:
        freqs, mass = ev(r)
        step = max(abs(r) * 1e-6, (high - low) * 1e-9)
        side = "above" if g(min(r + step, high)) > g(max(r - step, low)) else "below"
        solutions.append(Solution(var.text(r), r, float(freqs[mode - 1]), mass, side))
    if solutions:
        best = min(range(len(solutions)), key=lambda i: solutions[i].member_mass_kg)
        s = solutions[best]
        where = "larger" if s.above == "above" else "smaller"
        message = (
            f"{named} equals {target_hz:.6g} Hz at {len(solutions)} value"
            f"{'s' if len(solutions) > 1 else ''} of {key}; least member mass at {s.value} "
            f"({s.member_mass_kg:.4g} kg); {where} values give a higher frequency"
        )
        message += _target_note(direction, ev.named(s.value_si, mode))
        return SizingResult(key, var.unit, target_hz, mode, tuple(solutions), best, message)
    # no crossing: the best value in range
    acceptable = values >= 0.0
    if np.all(acceptable):
        masses = [ev(v)[1] for v in grid]
        i = int(np.argmin(masses))
        message = (
            f"{named} stays above {target_hz:.6g} Hz over the whole range; least member "
            f"mass at {var.text(float(grid[i]))}"
        )
    else:
        i = int(np.argmax(values))
        message = (
            f"{named} stays below {target_hz:.6g} Hz over the whole range; the highest is "
            f"{values[i] + target_hz:.6g} Hz at {var.text(float(grid[i]))}"
        )
    v = float(grid[i])
    freqs, mass = ev(v)
    best_in_range = Solution(var.text(v), v, float(freqs[mode - 1]), mass, "none")
    message += _target_note(direction, ev.named(v, mode))
    return SizingResult(key, var.unit, target_hz, mode, (best_in_range,), None, message)


def _target_note(direction: str, which: str = "") -> str:
    """What the sizing followed: the governing mode's direction there, or the one plane."""
    if direction == "governing":
        return f"; there it is the {which}" if which else ""
    if direction != "depth":
        return ""
    return "; depth-plane bending only (--direction governing follows every direction)"


def margins(
    frequencies_hz: tuple[float, ...] | np.ndarray,
    excitation_hz: float,
    harmonics: tuple[int, ...] = (1,),
    margin: float = 0.2,
) -> MarginCheck:
    """Which modes fall inside the band around each excitation line.

    A mode is inside the band of line h when |f - h f_e| < margin * h f_e: the separation
    margin is common practice, and its size is the user's to set (codes and clients give
    their own).

    Returns
    -------
    MarginCheck
    """
    lines = tuple(
        ExcitationLine(h, h * excitation_hz, h * excitation_hz * (1 - margin),
                       h * excitation_hz * (1 + margin))
        for h in harmonics
    )  # fmt: skip
    inside = tuple(tuple(line.low_hz < f < line.high_hz for line in lines) for f in frequencies_hz)
    return MarginCheck(lines, tuple(float(f) for f in frequencies_hz), inside)


def size_for_excitation(
    sheet: Worksheet,
    key: str,
    low: float,
    high: float,
    excitation_hz: float | None = None,
    harmonics: tuple[int, ...] = (1,),
    margin: float = 0.2,
    modes: int | None = None,
    *,
    excitations: tuple[Excitation, ...] | None = None,
    step: float | None = None,
    sizes: tuple[float, ...] | None = None,
    direction: str = DEFAULT_SIZING_DIRECTION,
) -> SizingResult:
    """Values of ``key`` that keep every computed mode outside every excitation band, and a
    practical (rounded) value that keeps its margin.

    Parameters
    ----------
    sheet : Worksheet
    key : str
    low, high : float
        The range [SI unit of the key].
    excitation_hz, harmonics, margin
        One excitation as the command line gives it [Hz, orders, fraction]; or
    excitations : tuple of Excitation, optional
        The excitations (the worksheet's): used instead of the three above.
    modes : int, optional
    step : float, optional
        Rounding step in the worksheet's unit of the key (default: three significant
        figures, :func:`calc.design_values.default_step`).
    sizes : tuple of float, optional
        Available sizes in the worksheet's unit of the key, instead of a step.

    Returns
    -------
    SizingResult
        ``solutions`` are the edges of the acceptable intervals found in the range (where a
        mode meets a band edge), plus the range ends where acceptable; then the rounded
        value recommended, solved again (never one on a band edge).  Every computed mode of
        every direction is checked under ``direction="governing"`` (the default); otherwise
        that direction's alone, and the message and the verdict say so.
    """
    if excitations is None:
        if excitation_hz is None:
            raise InputError("--excitation", None, "an excitation, or [[excitation]] tables")
        if not 0.0 < margin < 1.0:
            raise InputError("--margin", margin, "a margin between 0 % and 100 %")
        excitations = (
            Excitation("excitation", excitation_hz, excitation_hz,
                       tuple(float(h) for h in harmonics), margin, margin, as_speed=True),
        )  # fmt: skip
    if not excitations:
        raise InputError("--excitation", None, "an excitation, or [[excitation]] tables")
    var = variation(sheet, key)
    low, high = _check_range(var, low, high)
    count = modes or sheet.modes
    ev = _Evaluator(var, count, direction)
    bands = tuple(
        ExcitationLine(int(line.order or 0), line.low_hz, line.band_low_hz, line.band_high_hz)
        for e in excitations
        for line in lines(e)
    )
    edges = sorted({e for b in bands for e in (b.low_hz, b.high_hz) if e > 0.0})
    grid, _ = _scan(ev, low, high)
    # every computed mode of what is followed (each direction's, under "governing")
    table = np.array([ev.columns(float(v))[0] for v in grid])
    candidates: set[float] = set()
    for m in range(table.shape[1]):
        for e in edges:

            def g(v: float, m: int = m, e: float = e) -> float:
                return float(ev.columns(v)[0][m] - e)

            candidates.update(_roots(g, grid, table[:, m] - e))
    candidates.update((low, high))
    points = sorted(candidates)
    solutions = []
    for v in points:
        freqs, mass = ev(v)
        if _clear(ev.columns(v)[0], bands, tolerance=1e-9):
            side = "range end" if v in (low, high) else "band edge"
            solutions.append(Solution(var.text(v), v, float(freqs[0]), mass, side))
    spans_si: list[tuple[float, float]] = []
    for a, b in zip(points[:-1], points[1:], strict=True):
        if _clear(ev.columns(0.5 * (a + b))[0], bands, tolerance=0.0):
            if spans_si and spans_si[-1][1] == a:
                spans_si[-1] = (spans_si[-1][0], b)
            else:
                spans_si.append((a, b))
    intervals = tuple((var.text(a), var.text(b)) for a, b in spans_si)
    if not solutions:
        message = (
            f"no value of {key} in range keeps every mode outside the excitation bands; "
            "widen the range or change the member"
        )
        return SizingResult(key, var.unit, None, 1, (), None, message)
    per_unit = convert_from_si(1.0, var.unit)  # the worksheet's unit per SI unit

    def evaluate(value: float) -> tuple[MarginTable, float]:
        member = var.member(value / per_unit)
        return margin_table(excitations, _refs(member, count, direction)), member.member_mass

    practical = practical_values(
        evaluate, [(a * per_unit, b * per_unit) for a, b in spans_si], low * per_unit,
        high * per_unit, step=step, sizes=sizes, unit=var.unit,
    )  # fmt: skip
    spans = ", ".join(f"{a} to {b}" for a, b in intervals) or "isolated values only"
    message = f"every mode clears the bands for {key} in: {spans}; {practical.message}"
    message += _checked_words(direction)
    chosen = practical.recommended
    if chosen is None:
        return SizingResult(
            key, var.unit, None, 1, tuple(solutions), None, message, None, intervals,
            None, practical,
        )  # fmt: skip
    v = chosen.value / per_unit
    freqs, mass = ev(v)
    solutions.append(Solution(var.text(v), v, float(freqs[0]), mass, "rounded"))
    check = MarginCheck(
        bands, tuple(float(f) for f in freqs),
        tuple(tuple(bool(b.low_hz < f < b.high_hz) for b in bands) for f in freqs),
    )  # fmt: skip
    table = chosen.table
    if direction != "governing":  # the displayed verdict names what this sizing left out
        others = ", ".join(LABELS.get(d, d) for d in DIRECTIONS if d != direction)
        note = f"{others} modes were not checked (--direction governing checks them)"
        verdict = Verdict(False, table.verdict.governing, (*table.verdict.unchecked, note))
        table = MarginTable(table.lines, table.rows, verdict)
    return SizingResult(
        key, var.unit, None, 1, tuple(solutions), len(solutions) - 1, message, check,
        intervals, table, practical,
    )  # fmt: skip


def _refs(member: Member, count: int, direction: str) -> tuple[ModeRef, ...]:
    """The modes an excitation sizing checks, each named by its direction."""
    if direction == "depth":
        return mode_refs(fe.solve(member, count))
    dirs = solve_directions(member, count, checks=False)
    chosen = dirs.all_modes if direction == "governing" else dirs[direction].modes
    return tuple(ModeRef(m.direction, m.number, m.frequency_hz, m.estimated_error) for m in chosen)


def _checked_words(direction: str) -> str:
    if direction == "depth":
        return "; only the depth-plane bending modes were checked"
    if direction == "governing":
        return "; every mode of every direction computed was checked"
    return f"; only the {LABELS[direction]} modes were checked"


def _clear(freqs: np.ndarray, lines: tuple[ExcitationLine, ...], tolerance: float) -> bool:
    for f in freqs:
        for line in lines:
            if line.low_hz * (1 + tolerance) < f < line.high_hz * (1 - tolerance):
                return False
    return True


def sweep(
    sheet: Worksheet,
    key: str,
    low: float,
    high: float,
    points: int,
    modes: int | None = None,
    *,
    direction: str = DEFAULT_SIZING_DIRECTION,
) -> SweepResult:
    """Tabulate the first modes and the member mass against one quantity.

    Points whose dimensionless groups equal those of an already solved point are scaled
    exactly instead of solved again (a uniform member without attachments, varied in length
    or material, needs one solve in all).  Sweeps of more than 64 points interpolate between
    solves at Chebyshev points, each interval verified by direct solves to a tenth of the
    finite-element accuracy and halved where it misses.  ``direction`` chooses whose modes are
    tabulated: ``"governing"`` (default: the lowest modes of every direction together; each
    direction's modes are interpolated and the lowest taken afterwards, so that modes of
    different directions crossing do not defeat the interpolation), or one direction;
    scaling by similitude applies to the depth plane alone.

    Returns
    -------
    SweepResult
    """
    if points < 2:
        raise InputError("--points", points, "at least 2 points")
    var = variation(sheet, key)
    low, high = _check_range(var, low, high)
    count = modes or sheet.modes
    ev = _Evaluator(var, count, direction)
    grid = np.linspace(low, high, points)
    freqs = np.empty((points, len(ev.columns(float(grid[0]))[0])))
    mass = np.empty(points)
    if points <= _DIRECT_SWEEP:
        for i, v in enumerate(grid):
            freqs[i], mass[i] = ev.columns(float(v))
    else:
        _interpolate(ev, grid, 0, points - 1, freqs, mass, 0)
    return SweepResult(key, var.unit, grid, ev.reduce(freqs), mass, ev.solved)


def _interpolate(
    ev: _Evaluator,
    grid: np.ndarray,
    first: int,
    last: int,
    freqs: np.ndarray,
    mass: np.ndarray,
    depth: int,
) -> None:
    """Fill grid[first..last] by Chebyshev interpolation between solves, verified by solves.

    Frequencies and member mass are interpolated through solves at Chebyshev points of the
    interval, then checked by direct solves at two further points; an interval that misses
    the tolerance (a mode crossing, a change of character) is halved, down to direct solves.
    """
    from scipy.interpolate import BarycentricInterpolator

    count = last - first + 1
    a, b = float(grid[first]), float(grid[last])
    if depth >= _MAX_DEPTH or count <= 2 * _NODES:
        for i in range(first, last + 1):
            freqs[i], mass[i] = ev.columns(float(grid[i]))
        return
    k = np.arange(_NODES)
    nodes = 0.5 * (a + b) + 0.5 * (b - a) * np.cos(np.pi * k / (_NODES - 1))
    values = [ev.columns(float(v)) for v in nodes]
    f_nodes = np.array([v[0] for v in values])
    m_nodes = np.array([v[1] for v in values])
    f_fit = BarycentricInterpolator(nodes, f_nodes)
    m_fit = BarycentricInterpolator(nodes, m_nodes)
    ok = True
    for t in (0.31, 0.77):
        v = a + t * (b - a)
        f_true, m_true = ev.columns(v)
        f_err = np.nanmax(np.abs(f_fit(v) - f_true) / np.abs(f_true))
        m_err = abs(float(m_fit(v)) - m_true) / max(abs(m_true), 1e-300)
        if f_err > _SWEEP_TOLERANCE or m_err > _MASS_TOLERANCE:
            ok = False
            break
    if not ok:
        middle = (first + last) // 2
        _interpolate(ev, grid, first, middle, freqs, mass, depth + 1)
        _interpolate(ev, grid, middle, last, freqs, mass, depth + 1)
        return
    xs = grid[first : last + 1]
    freqs[first : last + 1] = f_fit(xs)
    mass[first : last + 1] = m_fit(xs)


@dataclass(frozen=True)
class Sweep2Result:
    """Modes and member mass over two quantities.

    Attributes
    ----------
    variables : tuple of str
    units : tuple of str
    values_si : tuple of ndarray
        The two grids.
    frequencies_hz : ndarray, shape (points1, points2, modes)
    member_mass_kg : ndarray, shape (points1, points2)
    solved : int
        Finite-element solves made.
    """

    variables: tuple[str, str]
    units: tuple[str, str]
    values_si: tuple[np.ndarray, np.ndarray]
    frequencies_hz: np.ndarray
    member_mass_kg: np.ndarray
    solved: int


def sweep2(
    sheet: Worksheet,
    first: tuple[str, float, float, int],
    second: tuple[str, float, float, int],
    modes: int | None = None,
    *,
    direction: str = DEFAULT_SIZING_DIRECTION,
) -> Sweep2Result:
    """Tabulate the first modes and the member mass over two quantities at once.

    Each of ``first`` and ``second`` is (key, low, high, points).  Patches of the grid are
    interpolated (tensor-product Chebyshev) between solves and verified by direct solves to a
    tenth of the finite-element accuracy; a patch that misses is split in four, down to
    direct solves.

    Returns
    -------
    Sweep2Result
    """
    key1, low1, high1, n1 = first
    key2, low2, high2, n2 = second
    if key1 == key2:
        raise InputError("--vary2", key2, "a second quantity, not the first one again")
    if n1 < 2 or n2 < 2:
        raise InputError("--points", min(n1, n2), "at least 2 points along each quantity")
    if n1 * n2 > MAX_GRID:  # a 100,000 x 2,000 table asked for 7.5 GiB
        raise InputError("--points2", f"{n1} x {n2}", f"a table of at most {MAX_GRID:,} "
                         "points in all (e.g. 200 x 200), so that it runs in seconds")  # fmt: skip
    var1, var2 = variation(sheet, key1), variation(sheet, key2)
    low1, high1 = _check_range(var1, low1, high1)
    low2, high2 = _check_range(var2, low2, high2)
    count = modes or sheet.modes
    g1, g2 = np.linspace(low1, high1, n1), np.linspace(low2, high2, n2)
    mass = np.empty((n1, n2))
    cache: dict[tuple[float, float], tuple[np.ndarray, float]] = {}

    def ev(a: float, b: float) -> tuple[np.ndarray, float]:
        """Each direction's modes side by side under "governing" (see sweep)."""
        hit = cache.get((a, b))
        if hit is None:
            member = var1.member(a, (var2, b))
            hit = (frequency_columns(member, count, direction), member.member_mass)
            cache[(a, b)] = hit
        return hit

    freqs = np.empty((n1, n2, len(ev(float(g1[0]), float(g2[0]))[0])))
    _patch(ev, g1, g2, (0, n1 - 1), (0, n2 - 1), freqs, mass, 0)
    if direction == "governing":
        freqs = lowest(freqs, count)
    return Sweep2Result((key1, key2), (var1.unit, var2.unit), (g1, g2), freqs, mass, len(cache))


def _lagrange_matrix(nodes: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Matrix of the Lagrange basis of ``nodes`` evaluated at ``points``."""
    from scipy.interpolate import BarycentricInterpolator

    return BarycentricInterpolator(nodes, np.eye(len(nodes)))(points)


def _patch(
    ev: Any,
    g1: np.ndarray,
    g2: np.ndarray,
    span1: tuple[int, int],
    span2: tuple[int, int],
    freqs: np.ndarray,
    mass: np.ndarray,
    depth: int,
) -> None:
    (i0, i1), (j0, j1) = span1, span2
    n1, n2 = i1 - i0 + 1, j1 - j0 + 1
    if depth >= _MAX_DEPTH or n1 * n2 <= _NODES * _NODES:
        for i in range(i0, i1 + 1):
            for j in range(j0, j1 + 1):
                freqs[i, j], mass[i, j] = ev(float(g1[i]), float(g2[j]))
        return
    k = np.arange(_NODES)
    cheb = np.cos(np.pi * k / (_NODES - 1))
    a1, b1, a2, b2 = float(g1[i0]), float(g1[i1]), float(g2[j0]), float(g2[j1])
    x1 = 0.5 * (a1 + b1) + 0.5 * (b1 - a1) * cheb if n1 > _NODES else g1[i0 : i1 + 1]
    x2 = 0.5 * (a2 + b2) + 0.5 * (b2 - a2) * cheb if n2 > _NODES else g2[j0 : j1 + 1]
    values = [[ev(float(u), float(v)) for v in x2] for u in x1]
    F = np.array([[cell[0] for cell in row] for row in values])  # (len x1, len x2, modes)
    Mm = np.array([[cell[1] for cell in row] for row in values])

    def at(u: np.ndarray, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        A, B = _lagrange_matrix(x1, u), _lagrange_matrix(x2, v)
        return np.einsum("ia,abm,jb->ijm", A, F, B), A @ Mm @ B.T

    ok = True
    for t1, t2 in ((0.31, 0.69), (0.77, 0.23), (0.52, 0.47)):
        u, v = a1 + t1 * (b1 - a1), a2 + t2 * (b2 - a2)
        f_true, m_true = ev(u, v)
        f_fit, m_fit = at(np.array([u]), np.array([v]))
        if np.nanmax(np.abs(f_fit[0, 0] - f_true) / np.abs(f_true)) > _SWEEP_TOLERANCE or (
            abs(m_fit[0, 0] - m_true) > _MASS_TOLERANCE * abs(m_true)
        ):
            ok = False
            break
    if not ok:
        mid1, mid2 = (i0 + i1) // 2, (j0 + j1) // 2
        halves1 = ((i0, mid1), (mid1, i1)) if n1 > _NODES else ((i0, i1),)
        halves2 = ((j0, mid2), (mid2, j1)) if n2 > _NODES else ((j0, j1),)
        for h1 in halves1:
            for h2 in halves2:
                _patch(ev, g1, g2, h1, h2, freqs, mass, depth + 1)
        return
    f_grid, m_grid = at(g1[i0 : i1 + 1], g2[j0 : j1 + 1])
    freqs[i0 : i1 + 1, j0 : j1 + 1] = f_grid
    mass[i0 : i1 + 1, j0 : j1 + 1] = m_grid


def quantity_keys(data: dict[str, Any]) -> list[str]:
    """Key paths of every quantity in worksheet data that sizing can vary, in file order
    (the schema's variable quantities)."""
    return schema.quantity_keys(data)


def parse_margin(text: str) -> float:
    """A margin such as ``"20%"`` as a fraction (0.2); InputError keyed ``--margin``."""
    raw = text.strip()
    number = raw[:-1].strip() if raw.endswith("%") else raw
    try:
        value = float(number) / 100.0
    except ValueError:
        raise InputError("--margin", text, 'a percentage, e.g. "20%"') from None
    if not 0.0 < value < 1.0:
        raise InputError("--margin", text, "a percentage between 0 % and 100 %")
    return value


def parse_harmonics(text: str) -> tuple[int, ...]:
    """Excitation orders such as ``"1,2"``; InputError keyed ``--harmonics``."""
    try:
        orders = tuple(int(p) for p in text.split(",") if p.strip())
    except ValueError:
        raise InputError(
            "--harmonics", text, "whole numbers separated by commas, e.g. 1,2"
        ) from None
    if not orders or any(not 1 <= h <= 100 for h in orders):
        raise InputError("--harmonics", text, "orders from 1 to 100, e.g. 1,2")
    if len(set(orders)) > MAX_HARMONICS:  # each order's band is checked at every trial solve
        raise InputError("--harmonics", text, f"at most {MAX_HARMONICS} orders, so that "
                         "sizing runs in seconds", f"{len(set(orders))} were given")  # fmt: skip
    return tuple(sorted(set(orders)))


# --- the request, checked in one place for the command line and the app ---------------------------

_CLI_NAMES = {
    "low": "--between", "high": "--between", "target": "--target",
    "excitation": "--excitation", "mode": "--mode", "harmonics": "--harmonics",
    "margin": "--margin",
}  # fmt: skip


@dataclass(frozen=True)
class SizingRequest:
    """A checked sizing request: what to vary, over which range, towards which goal.

    Attributes
    ----------
    variation : Variation
    low, high : float
        The range [SI unit of the key].
    target_hz : float or None
        Frequency target [Hz] (None for an excitation check).
    excitation_hz : float or None
        Excitation frequency [Hz] (None for a target).
    mode : int
        Mode that must meet the target.
    harmonics : tuple of int
    margin : float
        Band half-width as a fraction.
    excitations : tuple of Excitation or None
        The worksheet's excitations, where neither a target nor an excitation was given.
    step : float or None
        Rounding step of an excitation sizing, in the worksheet's unit of the key.
    sizes : tuple of float or None
        Available sizes, in the worksheet's unit of the key.
    direction : str
        Whose modes to follow: one direction (``calc.directions``) or ``"governing"``.
    """

    variation: Variation
    low: float
    high: float
    target_hz: float | None
    excitation_hz: float | None
    mode: int = 1
    harmonics: tuple[int, ...] = (1,)
    margin: float = 0.2
    excitations: tuple[Excitation, ...] | None = None
    step: float | None = None
    sizes: tuple[float, ...] | None = None
    direction: str = DEFAULT_SIZING_DIRECTION


def read_value(var: Variation, text: str, name: str) -> float:
    """One end of a range, as written, in the variable's dimension [SI]; InputError keyed
    ``name``.  Any sign is read here: the values the member accepts are checked when solved."""
    return parse_quantity(text, var.dimension, name, allow_zero=True, allow_negative=True,
                          minimum=False)  # fmt: skip


def read_request(
    sheet: Worksheet,
    key: str,
    low: str,
    high: str,
    *,
    target: str | None = None,
    excitation: str | None = None,
    mode: int | str = 1,
    harmonics: str = "1",
    margin: str = "20%",
    names: dict[str, str] | None = None,
    step: str | None = None,
    sizes: str | None = None,
    direction: str = DEFAULT_SIZING_DIRECTION,
) -> SizingRequest:
    """Check a sizing request as the user wrote it (the command line's options, the app's
    fields) and return it in SI.

    Parameters
    ----------
    sheet : Worksheet
    key : str
        Key path to vary.
    low, high : str
        The range as ``"number unit"`` text, in the key's dimension.
    target, excitation : str or None
        At most one: a frequency target, or a running excitation (``"60 Hz"``,
        ``"1480 rpm"``); with neither, the worksheet's ``[[excitation]]`` tables.
    mode : int or str
        Mode number for a target, 1 to ``MAX_MODES``.
    harmonics, margin : str
        Excitation orders (``"1,2"``) and band half-width (``"20%"``), for an excitation.
    names : dict of str to str, optional
        What each input is called in messages (default: the command line's options).
    step, sizes : str or None
        For an excitation: a rounding step (``"1 mm"``) or available sizes (``"150, 160 mm"``
        or ``"@FILE"``), at most one (see :mod:`calc.design_values`).
    direction : str
        Whose modes to follow: ``"governing"`` (default, the lowest of every direction
        together), or one direction (``"depth"``, the default before every direction was
        solved).

    Raises
    ------
    InputError
        Keyed by the offending input's name, for the first input that is wrong.
    """
    name = {**_CLI_NAMES, **(names or {})}
    if direction not in SIZING_DIRECTIONS:
        what = name.get("direction", "--direction")
        hint = schema.hint(str(direction), SIZING_DIRECTIONS)
        raise InputError(what, direction, "one of " + ", ".join(SIZING_DIRECTIONS), hint)
    var = variation(sheet, key)
    bounds = [read_value(var, text, name[which]) for which, text in (("low", low), ("high", high))]
    if target is not None and excitation is not None:
        raise InputError(name["target"], target, "either a frequency target or an excitation")
    if target is None and excitation is None and not sheet.excitations:
        raise InputError(
            name["target"], target,
            "a frequency target, an excitation, or [[excitation]] tables in the worksheet",
        )  # fmt: skip
    if target is not None and (step is not None or sizes is not None):
        raise InputError(name.get("step", "--step"), step or sizes, "an excitation to round for")
    if step is not None and sizes is not None:
        raise InputError(name.get("step", "--step"), step, "a step or a list of sizes, not both")
    rounding = {
        "step": None if step is None else read_step(step, var.dimension, var.unit,
                                                    name.get("step", "--step")),
        "sizes": None if sizes is None else read_sizes(sizes, var.dimension, var.unit,
                                                       name.get("sizes", "--sizes")),
    }  # fmt: skip
    if target is not None:
        target_hz = parse_frequency(target, name["target"])
        if isinstance(mode, str):
            try:
                mode = int(mode)
            except ValueError:
                raise InputError(name["mode"], mode, "a mode number, 1 or more") from None
        if not 1 <= mode <= MAX_MODES:
            raise InputError(name["mode"], mode, f"a mode number from 1 to {MAX_MODES}")
        return SizingRequest(var, bounds[0], bounds[1], target_hz, None, mode,
                             direction=direction)  # fmt: skip
    if excitation is None:
        return SizingRequest(
            var, bounds[0], bounds[1], None, None, excitations=sheet.excitations,
            direction=direction, **rounding,
        )  # fmt: skip
    excitation_hz = parse_frequency(excitation, name["excitation"])
    try:
        orders = parse_harmonics(harmonics)
        fraction = parse_margin(margin)
    except InputError as exc:
        raise InputError(name[exc.key.lstrip("-")], exc.value, exc.expected, exc.hint) from None
    return SizingRequest(
        var, bounds[0], bounds[1], None, excitation_hz, 1, orders, fraction,
        direction=direction, **rounding,
    )  # fmt: skip


def run_request(request: SizingRequest) -> SizingResult:
    """Size for a checked request (:func:`size_for_target` or :func:`size_for_excitation`)."""
    var = request.variation
    if request.target_hz is not None:
        return size_for_target(
            var.sheet, var.key, request.low, request.high, request.target_hz, request.mode,
            direction=request.direction,
        )  # fmt: skip
    return size_for_excitation(
        var.sheet, var.key, request.low, request.high, request.excitation_hz,
        request.harmonics, request.margin, excitations=request.excitations,
        step=request.step, sizes=request.sizes, direction=request.direction,
    )  # fmt: skip
