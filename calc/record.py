"""The calculation record: stored results in a worksheet, and their verification.

``beamtone solve FILE --record`` (and saving from the app) writes a ``[record]`` table into
the worksheet, keeping the user's comments and layout (tomlkit on the original text, written
atomically).  It holds the tool version, the date, a digest of the inputs and the key results
with every digit (shortest round-trip floats).  ``beamtone verify FILE`` solves the worksheet
again and compares.

The digest is the SHA-256 of the worksheet's data without the ``[record]`` table, as
canonical JSON (sorted keys, no spaces): reformatting, reordering keys or editing comments
leaves it unchanged, while any change of a value as entered (``"2.5 kg"`` to ``"2.50 kg"``
included) changes it.

Tolerances of the comparison (relative unless stated):

- natural frequencies: ``max(1e-6, 2 * e)`` with ``e`` the current estimated error of that
  mode: two solutions each within ``e`` of the exact value differ by at most ``2 e``;
- estimated errors: equal within a factor of 10, or both at or below the accuracy target;
- Rayleigh estimate and Rayleigh-Ritz bounds: 1e-6; Dunkerley's bound: ``max(1e-6, 2 u)``
  with ``u`` its round-off uncertainty;
- the equivalent single-DOF model: 1e-3 on mass and stiffness and 1e-3 of the length on its
  point (it comes from a mode shape at one point, which converges more slowly than the
  frequency);
- counts, flags (rigid-body modes, bracket inside, inside-band flags): exactly.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from beamtone.calc.errors import InputError

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis
    from beamtone.calc.sizing import MarginCheck
    from beamtone.calc.worksheet import Worksheet

__all__ = [
    "FREQUENCY_TOLERANCE",
    "EQUIVALENT_TOLERANCE",
    "StoredMargins",
    "StoredResults",
    "Record",
    "Comparison",
    "Verification",
    "inputs_digest",
    "tool_version",
    "build_record",
    "read_record",
    "with_record",
    "compare",
    "save_record",
    "verify",
]

FREQUENCY_TOLERANCE = 1e-6
"""Smallest relative tolerance on a reproduced frequency (the solver's accuracy target)."""

EQUIVALENT_TOLERANCE = 1e-3
"""Relative tolerance on the equivalent single-DOF model (from a mode shape at a point)."""

_HEX = re.compile(r"^[0-9a-f]{64}$")
_NOTE = (
    "Written by beamtone solve --record: the results of the inputs above.",
    "beamtone verify solves again and compares; edit the inputs, not this table.",
)
_MAX_ELEMENTS = 200_000


# --- the stored data -----------------------------------------------------------------------------


@dataclass(frozen=True)
class StoredMargins:
    """An excitation check kept with the results.

    Attributes
    ----------
    excitation_hz : float
        Excitation frequency [Hz] (running speed, blade pass, ...).
    harmonics : tuple of int
        Orders checked.
    margin : float
        Band half-width as a fraction of each line [-].
    inside : tuple of tuple of bool
        inside[i][j]: mode i lies in the band of line j.
    """

    excitation_hz: float
    harmonics: tuple[int, ...]
    margin: float
    inside: tuple[tuple[bool, ...], ...]

    @property
    def clear(self) -> bool:
        """No mode in any band."""
        return not any(any(row) for row in self.inside)


@dataclass(frozen=True)
class StoredResults:
    """The key results of a solve, as stored.

    Attributes
    ----------
    rigid_body_modes : int
    frequencies_hz : tuple of float
        Finite-element natural frequencies of the flexible modes [Hz].
    estimated_errors : tuple of float
        Their estimated relative errors [-].
    rayleigh_hz : float
        Rayleigh's estimate of the fundamental (an upper bound) [Hz].
    rayleigh_shape : str
        The assumed shape it used.
    dunkerley_hz : float or None
        Dunkerley's lower bound [Hz]; None where the member has rigid-body freedom.
    bracket_inside : bool
        Whether the FE fundamental lies in the Dunkerley-Rayleigh bracket.
    ritz_hz : tuple of float or None
        Rayleigh-Ritz upper bounds [Hz], where the worksheet asks for them.
    equivalent : tuple of float
        Equivalent single-DOF model: (point [m], effective mass [kg], stiffness [N/m]).
    margins : StoredMargins or None
        The excitation check, where one was recorded.  Sizing margins go here: the
        worksheet holds no excitation yet, so ``solve --record`` stores none.
    """

    rigid_body_modes: int
    frequencies_hz: tuple[float, ...]
    estimated_errors: tuple[float, ...]
    rayleigh_hz: float
    rayleigh_shape: str
    dunkerley_hz: float | None
    bracket_inside: bool
    ritz_hz: tuple[float, ...] | None
    equivalent: tuple[float, float, float]
    margins: StoredMargins | None = None


@dataclass(frozen=True)
class Record:
    """A worksheet's ``[record]`` table.

    Attributes
    ----------
    version : str
        beamtone version that wrote it.
    written : str
        When, UTC, ISO 8601 (``2026-12-01T19:38:33Z``).
    inputs_sha256 : str
        Digest of the inputs (see :func:`inputs_digest`).
    modes : int
        How many modes were solved.
    elements : int or None
        The forced mesh (``solve --elements``), None for the automatic one.
    results : StoredResults
    """

    version: str
    written: str
    inputs_sha256: str
    modes: int
    elements: int | None
    results: StoredResults


# --- digest and version --------------------------------------------------------------------------


def _canonical(value: object) -> object:
    if isinstance(value, _dt.datetime | _dt.date | _dt.time):
        return value.isoformat()
    raise TypeError(f"not worksheet data: {type(value).__name__}")


def inputs_digest(data: Mapping[str, Any]) -> str:
    """SHA-256 of the worksheet's inputs: its data without ``[record]``, as canonical JSON.

    Parameters
    ----------
    data : mapping
        The worksheet as plain data (``Worksheet.data``, or unwrapped tomlkit).

    Returns
    -------
    str
        64 lowercase hexadecimal digits.

    Examples
    --------
    >>> a = inputs_digest({"format": 1, "member": {"length": "1 m"}})
    >>> a == inputs_digest({"member": {"length": "1 m"}, "format": 1, "record": {"x": 1}})
    True
    >>> a == inputs_digest({"format": 1, "member": {"length": "1.0 m"}})
    False
    """
    inputs = {k: v for k, v in data.items() if k != "record"}
    text = json.dumps(
        inputs, sort_keys=True, separators=(",", ":"), ensure_ascii=False, default=_canonical
    )
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def tool_version() -> str:
    """The installed beamtone version; in an uninstalled checkout, the one its pyproject names."""
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version("beamtone")
    except PackageNotFoundError:
        pass
    import tomllib

    try:
        with (Path(__file__).resolve().parents[1] / "pyproject.toml").open("rb") as handle:
            found = tomllib.load(handle).get("project", {}).get("version")
    except (OSError, tomllib.TOMLDecodeError):
        found = None
    return str(found) if found else "unknown"


# --- building and writing ------------------------------------------------------------------------


def build_record(
    analysis: Analysis,
    *,
    elements: int | None = None,
    margins: MarginCheck | None = None,
    now: _dt.datetime | None = None,
) -> Record:
    """The record of an analysis.

    Parameters
    ----------
    analysis : Analysis
        The solved worksheet.
    elements : int, optional
        The forced mesh the analysis was solved with (None: automatic).
    margins : MarginCheck, optional
        An excitation check to keep with the results (see :func:`calc.sizing.margins`).
        Its excitation, orders and margin must be those it was computed with: the excitation
        is taken from the first line, the margin from that line's band.
    now : datetime, optional
        The date to state (default: the current time, UTC).

    Returns
    -------
    Record
    """
    when = (now or _dt.datetime.now(_dt.UTC)).astimezone(_dt.UTC).replace(microsecond=0)
    modes = analysis.modes.modes
    ritz = analysis.ritz
    eq = analysis.equivalent
    low = analysis.lower_bound.frequency_hz
    stored_margins = None
    if margins is not None and margins.lines:
        first = margins.lines[0]
        base = first.frequency_hz / first.harmonic
        stored_margins = StoredMargins(
            float(base),
            tuple(line.harmonic for line in margins.lines),
            float((first.high_hz - first.frequency_hz) / first.frequency_hz),
            tuple(tuple(bool(x) for x in row) for row in margins.inside),
        )
    results = StoredResults(
        rigid_body_modes=int(analysis.modes.rigid_body_modes),
        frequencies_hz=tuple(float(m.frequency_hz) for m in modes),
        estimated_errors=tuple(float(m.estimated_error) for m in modes),
        rayleigh_hz=float(analysis.estimate.frequency_hz),
        rayleigh_shape=analysis.estimate.shape,
        dunkerley_hz=None if low is None else float(low),
        bracket_inside=bool(analysis.bracket.inside),
        ritz_hz=None if ritz is None else tuple(float(f) for f in ritz.frequencies_hz),
        equivalent=(float(eq.at_m), float(eq.mass_kg), float(eq.stiffness_n_per_m)),
        margins=stored_margins,
    )
    return Record(
        version=tool_version(),
        written=when.strftime("%Y-%m-%dT%H:%M:%SZ"),
        inputs_sha256=inputs_digest(analysis.sheet.data),
        modes=len(modes),
        elements=elements,
        results=results,
    )


def _table(record: Record) -> Any:
    import tomlkit

    res = record.results
    table = tomlkit.table()
    for line in _NOTE:
        table.add(tomlkit.comment(line))
    table.add("version", record.version)
    table.add(
        "written",
        _dt.datetime.strptime(record.written, "%Y-%m-%dT%H:%M:%SZ").replace(tzinfo=_dt.UTC),
    )
    table.add("inputs_sha256", record.inputs_sha256)
    table.add("modes", record.modes)
    if record.elements is not None:
        table.add("elements", record.elements)
    results = tomlkit.table()
    results.add("rigid_body_modes", res.rigid_body_modes)
    results.add("frequencies_hz", _array(res.frequencies_hz))
    results.add("estimated_errors", _array(res.estimated_errors))
    results.add("rayleigh_hz", res.rayleigh_hz)
    results.add("rayleigh_shape", res.rayleigh_shape)
    if res.dunkerley_hz is not None:
        results.add("dunkerley_hz", res.dunkerley_hz)
    results.add("bracket_inside", res.bracket_inside)
    if res.ritz_hz is not None:
        results.add("ritz_hz", _array(res.ritz_hz))
    equivalent = tomlkit.inline_table()
    equivalent.update(
        {
            "at_m": res.equivalent[0],
            "mass_kg": res.equivalent[1],
            "stiffness_n_per_m": res.equivalent[2],
        }
    )
    results.add("equivalent", equivalent)
    if res.margins is not None:
        margins = tomlkit.table()
        margins.add("excitation_hz", res.margins.excitation_hz)
        margins.add("harmonics", list(res.margins.harmonics))
        margins.add("margin", res.margins.margin)
        margins.add("inside", [list(row) for row in res.margins.inside])
        results.add("margins", margins)
    table.add("results", results)
    return table


def _array(values: tuple[float, ...]) -> Any:
    import tomlkit

    array = tomlkit.array()
    array.extend(values)
    return array.multiline(len(values) > 1)


def with_record(text: str, record: Record) -> str:
    """Worksheet text with its ``[record]`` table written or replaced, all else kept.

    Parameters
    ----------
    text : str
        The worksheet as written (comments and layout are kept).
    record : Record

    Returns
    -------
    str
        The new text; it is checked to load, and to have the same inputs digest.

    Raises
    ------
    InputError
        Keyed ``"file"`` where the text's inputs are not the ones the record was built from
        (the worksheet changed while it was being solved).
    """
    import tomlkit

    from beamtone.calc.worksheet import loads

    document = tomlkit.parse(text)
    if inputs_digest(document.unwrap()) != record.inputs_sha256:
        raise InputError(
            "file",
            "the worksheet",
            "the inputs that were solved",
            "the worksheet changed while it was being solved; solve it again",
        )
    if "record" in document:
        del document["record"]
    newline = "\r\n" if "\r\n" in text else "\n"  # keep the file's line endings
    added = "\n\n" + tomlkit.dumps({"record": _table(record)})
    out = tomlkit.dumps(document).rstrip() + added.replace("\n", newline)
    check = loads(out)
    if inputs_digest(check.data) != record.inputs_sha256:  # pragma: no cover - a tomlkit fault
        raise InputError("file", "the worksheet", "a record that leaves the inputs unchanged")
    return out


def save_record(
    path: str | Path,
    analysis: Analysis,
    *,
    elements: int | None = None,
    margins: MarginCheck | None = None,
) -> Record:
    """Write the record of an analysis into its worksheet file, atomically, comments kept.

    Parameters
    ----------
    path : str or Path
        The worksheet the analysis was loaded from.
    analysis : Analysis
    elements : int, optional
        The forced mesh it was solved with.
    margins : MarginCheck, optional
        An excitation check to keep with it.

    Returns
    -------
    Record
        What was written.

    Raises
    ------
    InputError
        Keyed ``"file"`` where the file cannot be read or written, or changed meanwhile;
        the file is then untouched.
    """
    from beamtone.calc.files import read_limited
    from beamtone.calc.worksheet import MAX_BYTES, write_atomic

    target = Path(path)
    raw = read_limited(target, MAX_BYTES)
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise InputError("file", str(target), "a TOML text file in UTF-8") from None
    bom = "\ufeff" if text.startswith("\ufeff") else ""
    record = build_record(analysis, elements=elements, margins=margins)
    write_atomic(target, bom + with_record(text.removeprefix(bom), record), expected=raw)
    return record


# --- reading -------------------------------------------------------------------------------------

_AGAIN = "the record is written by beamtone solve --record: write it again"


def _bad(key: str, value: object, expected: str) -> InputError:
    return InputError(f"record.{key}", value, expected, _AGAIN)


def _number(table: Mapping[str, Any], name: str, key: str, *, optional: bool = False) -> Any:
    if name not in table:
        if optional:
            return None
        raise _bad(f"{key}{name}", None, "a number (it is missing)")
    value = table[name]
    if isinstance(value, bool) or not isinstance(value, int | float) or not math.isfinite(value):
        raise _bad(f"{key}{name}", value, "a finite number")
    return float(value)


def _numbers(table: Mapping[str, Any], name: str, key: str, *, optional: bool = False) -> Any:
    if name not in table:
        if optional:
            return None
        raise _bad(f"{key}{name}", None, "a list of numbers (it is missing)")
    value = table[name]
    if (
        not isinstance(value, list)
        or not value
        or any(isinstance(v, bool) or not isinstance(v, int | float) for v in value)
        or not all(math.isfinite(v) for v in value)
    ):
        raise _bad(f"{key}{name}", value, "a list of finite numbers")
    return tuple(float(v) for v in value)


def _integer(table: Mapping[str, Any], name: str, key: str, low: int, high: int) -> int:
    value = table.get(name)
    if isinstance(value, bool) or not isinstance(value, int) or not low <= value <= high:
        raise _bad(f"{key}{name}", value, f"a whole number from {low} to {high}")
    return value


def _flag(table: Mapping[str, Any], name: str, key: str) -> bool:
    value = table.get(name)
    if not isinstance(value, bool):
        raise _bad(f"{key}{name}", value, "true or false")
    return value


def _text(table: Mapping[str, Any], name: str, key: str) -> str:
    value = table.get(name)
    if not isinstance(value, str) or not value.strip():
        raise _bad(f"{key}{name}", value, "a text")
    return value


def _written(value: object) -> str:
    if isinstance(value, str):
        try:
            value = _dt.datetime.fromisoformat(value)
        except ValueError:
            raise _bad("written", value, "a UTC date and time, e.g. 2026-12-01T19:38:33Z") from None
    if not isinstance(value, _dt.datetime) or value.tzinfo is None:
        raise _bad("written", value, "a UTC date and time, e.g. 2026-12-01T19:38:33Z")
    return value.astimezone(_dt.UTC).strftime("%Y-%m-%dT%H:%M:%SZ")


def _margins(value: object, modes: int) -> StoredMargins:
    key = "results.margins."
    if not isinstance(value, Mapping):
        raise _bad("results.margins", value, "a table of the excitation check")
    excitation = _number(value, "excitation_hz", key)
    if excitation <= 0.0:
        raise _bad(f"{key}excitation_hz", excitation, "a positive frequency [Hz]")
    orders = value.get("harmonics")
    if (
        not isinstance(orders, list)
        or not orders
        or any(isinstance(h, bool) or not isinstance(h, int) or not 1 <= h <= 100 for h in orders)
    ):
        raise _bad(f"{key}harmonics", orders, "a list of orders from 1 to 100")
    margin = _number(value, "margin", key)
    if not 0.0 < margin < 1.0:
        raise _bad(f"{key}margin", margin, "a fraction between 0 and 1")
    inside = value.get("inside")
    if (
        not isinstance(inside, list)
        or len(inside) != modes
        or any(
            not isinstance(row, list)
            or len(row) != len(orders)
            or any(not isinstance(x, bool) for x in row)
            for row in inside
        )
    ):
        raise _bad(f"{key}inside", inside, f"{modes} rows of {len(orders)} true/false flags")
    return StoredMargins(excitation, tuple(orders), margin, tuple(tuple(r) for r in inside))


def read_record(sheet: Worksheet) -> Record | None:
    """The worksheet's ``[record]``, or None where it has none.

    Raises
    ------
    InputError
        Keyed ``record.…``, for a record that is not as beamtone writes it.
    """
    from beamtone.calc.worksheet import MAX_MODES

    table = sheet.data.get("record")
    if table is None:
        return None
    if not isinstance(table, Mapping):
        raise _bad("", table, "a table")
    digest = table.get("inputs_sha256")
    if not isinstance(digest, str) or not _HEX.match(digest):
        raise _bad("inputs_sha256", digest, "64 hexadecimal digits")
    modes = _integer(table, "modes", "", 1, MAX_MODES)
    elements = None
    if "elements" in table:
        elements = _integer(table, "elements", "", 1, _MAX_ELEMENTS)
    results = table.get("results")
    if not isinstance(results, Mapping):
        raise _bad("results", results, "a table of results")
    key = "results."
    freqs = _numbers(results, "frequencies_hz", key)
    errors = _numbers(results, "estimated_errors", key)
    if len(freqs) != modes or len(errors) != modes:
        raise _bad(f"{key}frequencies_hz", freqs, f"{modes} frequencies and estimated errors")
    eq = results.get("equivalent")
    if not isinstance(eq, Mapping):
        raise _bad(f"{key}equivalent", eq, "a table with at_m, mass_kg and stiffness_n_per_m")
    equivalent = tuple(
        _number(eq, n, f"{key}equivalent.") for n in ("at_m", "mass_kg", "stiffness_n_per_m")
    )
    margins = None
    if "margins" in results:
        margins = _margins(results["margins"], modes)
    stored = StoredResults(
        rigid_body_modes=_integer(results, "rigid_body_modes", key, 0, 2),
        frequencies_hz=freqs,
        estimated_errors=errors,
        rayleigh_hz=_number(results, "rayleigh_hz", key),
        rayleigh_shape=_text(results, "rayleigh_shape", key),
        dunkerley_hz=_number(results, "dunkerley_hz", key, optional=True),
        bracket_inside=_flag(results, "bracket_inside", key),
        ritz_hz=_numbers(results, "ritz_hz", key, optional=True),
        equivalent=(equivalent[0], equivalent[1], equivalent[2]),
        margins=margins,
    )
    return Record(
        version=_text(table, "version", ""),
        written=_written(table.get("written")),
        inputs_sha256=digest,
        modes=modes,
        elements=elements,
        results=stored,
    )


# --- verification --------------------------------------------------------------------------------


@dataclass(frozen=True)
class Comparison:
    """One stored quantity against its value now.

    Attributes
    ----------
    quantity : str
        What it is, e.g. ``"mode 1 frequency"``.
    key : str
        Its key in the record, e.g. ``"results.frequencies_hz[0]"``.
    unit : str
        Unit of the values (``"Hz"``, ``"kg"``, ``""`` for flags and counts).
    stored, now : float, int, bool or None
        None where the quantity is absent on that side.
    relative : float or None
        |now - stored| / |stored| (None for flags, counts and absent values).
    tolerance : float or None
        The relative tolerance applied (None where another rule applies).
    ok : bool
    rule : str
        The rule in words: ``"1e-06"`` (relative), ``"equal"``, ``"within x10"``,
        ``"1e-03 of L"``.
    """

    quantity: str
    key: str
    unit: str
    stored: float | int | bool | None
    now: float | int | bool | None
    relative: float | None
    tolerance: float | None
    ok: bool
    rule: str = "equal"


@dataclass(frozen=True)
class Verification:
    """The outcome of verifying a stored record.

    Attributes
    ----------
    record : Record
    version_now : str
        The beamtone version that verified it.
    digest_now : str
        Digest of the worksheet's inputs now.
    comparisons : tuple of Comparison
    """

    record: Record
    version_now: str
    digest_now: str
    comparisons: tuple[Comparison, ...]

    @property
    def inputs_unchanged(self) -> bool:
        """Whether the inputs are those the record was written for."""
        return self.digest_now == self.record.inputs_sha256

    @property
    def reproduced(self) -> bool:
        """Whether every stored result agrees with its value now within tolerance."""
        return all(c.ok for c in self.comparisons)

    @property
    def passed(self) -> bool:
        """Inputs unchanged and every result reproduced."""
        return self.inputs_unchanged and self.reproduced

    @property
    def failures(self) -> tuple[Comparison, ...]:
        """The comparisons outside tolerance."""
        return tuple(c for c in self.comparisons if not c.ok)

    @property
    def message(self) -> str:
        """One sentence on the outcome."""
        when = f"written {self.record.written} with beamtone {self.record.version}"
        if not self.inputs_unchanged:
            text = f"the inputs changed since the record was written on {self.record.written}"
            if self.failures:
                n = len(self.failures)
                return f"{text}, and {n} stored result{'s' if n > 1 else ''} no longer reproduce"
            return f"{text}; the stored results still reproduce, but describe other inputs"
        if self.failures:
            n = len(self.failures)
            return (
                f"{n} stored result{'s do' if n > 1 else ' does'} not reproduce within "
                f"tolerance (record {when})"
            )
        return f"every stored result reproduces within tolerance (record {when})"


def _relative(stored: float, now: float) -> float:
    if stored == now:
        return 0.0
    return abs(now - stored) / max(abs(stored), 1e-300)


def _value(
    quantity: str, key: str, unit: str, stored: float | None, now: float | None, tolerance: float
) -> Comparison:
    rule = f"{tolerance:.0e}"
    if stored is None or now is None:
        return Comparison(quantity, key, unit, stored, now, None, tolerance, stored is now, rule)
    rel = _relative(stored, now)
    return Comparison(quantity, key, unit, stored, now, rel, tolerance, rel <= tolerance, rule)


def _exact(quantity: str, key: str, stored: object, now: object) -> Comparison:
    return Comparison(quantity, key, "", stored, now, None, None, stored == now)  # type: ignore[arg-type]


def _error_agrees(stored: float, now: float) -> bool:
    from beamtone.calc.fe import ACCURACY

    if stored <= ACCURACY and now <= ACCURACY:
        return True
    low, high = sorted((abs(stored), abs(now)))
    return high <= 10.0 * low


def compare(record: Record, analysis: Analysis) -> tuple[Comparison, ...]:
    """Every stored result of ``record`` against ``analysis`` (see the module's tolerances)."""
    res = record.results
    out: list[Comparison] = []
    out.append(
        _exact(
            "rigid-body modes",
            "results.rigid_body_modes",
            res.rigid_body_modes,
            analysis.modes.rigid_body_modes,
        )
    )
    now_modes = analysis.modes.modes
    for i in range(max(len(res.frequencies_hz), len(now_modes))):
        stored_f = res.frequencies_hz[i] if i < len(res.frequencies_hz) else None
        mode = now_modes[i] if i < len(now_modes) else None
        tol = (
            FREQUENCY_TOLERANCE
            if mode is None
            else max(FREQUENCY_TOLERANCE, 2.0 * mode.estimated_error)
        )
        out.append(
            _value(
                f"mode {i + 1} frequency",
                f"results.frequencies_hz[{i}]",
                "Hz",
                stored_f,
                None if mode is None else mode.frequency_hz,
                tol,
            )
        )
        stored_e = res.estimated_errors[i] if i < len(res.estimated_errors) else None
        now_e = None if mode is None else mode.estimated_error
        ok = stored_e is not None and now_e is not None and _error_agrees(stored_e, now_e)
        out.append(
            Comparison(
                f"mode {i + 1} estimated error",
                f"results.estimated_errors[{i}]",
                "",
                stored_e,
                now_e,
                None,
                None,
                ok,
                "within x10",
            )
        )
    est = analysis.estimate
    out.append(
        _value(
            "Rayleigh estimate",
            "results.rayleigh_hz",
            "Hz",
            res.rayleigh_hz,
            est.frequency_hz,
            FREQUENCY_TOLERANCE,
        )
    )
    out.append(_exact("Rayleigh shape", "results.rayleigh_shape", res.rayleigh_shape, est.shape))
    low = analysis.lower_bound
    out.append(
        _value(
            "Dunkerley bound",
            "results.dunkerley_hz",
            "Hz",
            res.dunkerley_hz,
            low.frequency_hz,
            max(FREQUENCY_TOLERANCE, 2.0 * low.uncertainty),
        )
    )
    out.append(
        _exact(
            "bracket holds", "results.bracket_inside", res.bracket_inside, analysis.bracket.inside
        )
    )
    ritz_now = None if analysis.ritz is None else tuple(analysis.ritz.frequencies_hz)
    if res.ritz_hz is not None or ritz_now is not None:
        stored_r, now_r = res.ritz_hz or (), ritz_now or ()
        for i in range(max(len(stored_r), len(now_r))):
            out.append(
                _value(
                    f"Ritz bound {i + 1}",
                    f"results.ritz_hz[{i}]",
                    "Hz",
                    stored_r[i] if i < len(stored_r) else None,
                    now_r[i] if i < len(now_r) else None,
                    FREQUENCY_TOLERANCE,
                )
            )
    eq = analysis.equivalent
    length = analysis.sheet.member.length
    at_stored, at_now = res.equivalent[0], eq.at_m
    shift = abs(at_now - at_stored) / length
    out.append(
        Comparison(
            "1-DOF point",
            "results.equivalent.at_m",
            "m",
            at_stored,
            at_now,
            None,
            EQUIVALENT_TOLERANCE,
            shift <= EQUIVALENT_TOLERANCE,
            f"{EQUIVALENT_TOLERANCE:.0e} of L",
        )
    )
    out.append(
        _value(
            "1-DOF effective mass",
            "results.equivalent.mass_kg",
            "kg",
            res.equivalent[1],
            eq.mass_kg,
            EQUIVALENT_TOLERANCE,
        )
    )
    out.append(
        _value(
            "1-DOF effective stiffness",
            "results.equivalent.stiffness_n_per_m",
            "N/m",
            res.equivalent[2],
            eq.stiffness_n_per_m,
            EQUIVALENT_TOLERANCE,
        )
    )
    if res.margins is not None:
        from beamtone.calc.sizing import margins

        m = res.margins
        check = margins(analysis.modes.frequencies_hz, m.excitation_hz, m.harmonics, m.margin)
        for i, row in enumerate(m.inside):
            now_row = check.inside[i] if i < len(check.inside) else None
            for j, flag in enumerate(row):
                now_flag = None if now_row is None else bool(now_row[j])
                out.append(
                    _exact(
                        f"mode {i + 1} in the band of {m.harmonics[j]}x excitation",
                        f"results.margins.inside[{i}][{j}]",
                        flag,
                        now_flag,
                    )
                )
    return tuple(out)


def verify(sheet: Worksheet, analysis: Analysis | None = None) -> Verification | None:
    """Solve a worksheet again and compare with its stored record.

    Parameters
    ----------
    sheet : Worksheet
    analysis : Analysis, optional
        An analysis of ``sheet`` already solved with the record's mode count and mesh (see
        ``Record.modes`` and ``Record.elements``); by default it is solved here.

    Returns
    -------
    Verification or None
        None where the worksheet has no record.

    Raises
    ------
    InputError
        For a malformed record, and for a worksheet that cannot be solved.
    """
    record = read_record(sheet)
    if record is None:
        return None
    if analysis is None:
        from beamtone.calc.analysis import analyse

        analysis = analyse(sheet, record.modes, record.elements)
    return Verification(
        record=record,
        version_now=tool_version(),
        digest_now=inputs_digest(sheet.data),
        comparisons=compare(record, analysis),
    )
