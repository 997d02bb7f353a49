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
- counts, flags (rigid-body modes, bracket inside, inside-band flags): exactly;
- the width plane's, torsion's and axial frequencies as the natural frequencies, and the
  governing direction exactly; a record written before they were stored is not compared on
  them;
- the excitation verdict (clear, not clear, not shown clear) and the governing mode and line
  (from the worksheet's ``[[excitation]]`` tables): exactly; a record written before they were
  stored is not compared on them;
- each mode's tolerance band (``[[record.results.bands]]``, every direction, where the
  worksheet has tolerances): its low and high ends as that mode's frequency (``max(1e-6,
  2 e)``), how it was found exactly, and for every input its elasticity within 1e-3 and its
  contribution within ``max(1e-3 |c|, 2 e f)`` (derivatives and the plane through the check
  solves converge more slowly than the frequencies); a record written before bands were
  stored is not compared on them.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
import math
import re
from collections.abc import Callable, Mapping
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
    "SENSITIVITY_TOLERANCE",
    "StoredMargins",
    "StoredBand",
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

SENSITIVITY_TOLERANCE = 1e-3
"""Tolerance on a stored elasticity (absolute) and contribution (relative)."""

_HEX = re.compile(r"^[0-9a-f]{64}$")
_NOTE = (
    "Written by beamtone solve --record: the results of the inputs above.",
    "beamtone verify solves again and compares; edit the inputs, not this table.",
)
_MAX_ELEMENTS = 20_000  # as solve --elements: 200,000 made verify take a minute


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
class StoredBand:
    """One mode's tolerance band and sensitivities, as stored.

    Attributes
    ----------
    direction : str
        ``"depth"``, ``"width"``, ``"torsion"`` or ``"axial"``.
    mode : int
        The direction's mode number (1 for its first flexible mode).
    low_hz, high_hz : float
        The band [Hz].
    method : str
        How it was found (``calc.band``: first order, corners, corners and sampling).
    keys : tuple of str
        The toleranced inputs, largest contribution first.
    elasticities : tuple of float
        Percent per percent [-] (NaN where the input's value is zero).
    contributions_hz : tuple of float
        Change of the frequency across each input's range [Hz].
    """

    direction: str
    mode: int
    low_hz: float
    high_hz: float
    method: str
    keys: tuple[str, ...]
    elasticities: tuple[float, ...]
    contributions_hz: tuple[float, ...]


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
        A single-excitation check given to :func:`build_record` (``margins=``), where one was
        recorded; the worksheet's own excitations are stored as ``verdict`` and
        ``governing_pair``.
    governing : str or None
        The direction of the governing mode (the lowest of every direction).
    width_hz, torsion_hz, axial_hz : tuple of float or None
        Natural frequencies of the width plane, torsion and axial motion [Hz], where computed.
    verdict : str or None
        The excitation verdict (``"clear"``, ``"not clear"``, ``"not shown clear"``), where
        the worksheet has ``[[excitation]]`` tables.
    governing_pair : str or None
        The mode and excitation line that govern the verdict, in words.
    bands : tuple of StoredBand or None
        Each mode's band over the worksheet's tolerances (every direction), where it has any.
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
    governing: str | None = None
    width_hz: tuple[float, ...] | None = None
    torsion_hz: tuple[float, ...] | None = None
    axial_hz: tuple[float, ...] | None = None
    verdict: str | None = None
    governing_pair: str | None = None
    bands: tuple[StoredBand, ...] | None = None


# --- the table of stored results -----------------------------------------------------------------
#
# One row per stored result drives writing (:func:`_table`), reading (:func:`read_record`) and
# verifying (:func:`compare`).  A new key result is one row here (and its field in
# StoredResults); the tolerances are stated in the module docstring.


@dataclass(frozen=True)
class _Stored:
    """One stored result.

    name : its key in ``[record.results]``; ``parent.leaf`` for a value of an inline table.
    quantity : what it is, in words; ``{n}`` is the mode or bound number in a list.
    unit : unit of the values ("" for counts, flags, texts and estimated errors).
    kind : how it is stored: "count", "number", "numbers", "text", "flag" or "margins".
    rule : how it is verified: "exact", "relative", "error" (within x10), "point" (of L)
        or "margins" (the flags of the stored excitation check, worked out again).
    now : its value for an analysis (what is written, and what is compared); None for the
        margins, which come with the excitation check.
    tolerance : the relative tolerance of the "relative" rule, for an analysis and the index
        in a list.
    optional : absent where the analysis has none (Dunkerley without a bound, Ritz bounds
        not asked for, no excitation check).
    per_mode : one value per mode; lists of this kind are verified side by side, mode by mode,
        and must hold ``modes`` values.
    many : the per-mode values in words, plural (for the message on a short list).
    new : added after the first records were written; a record without it is not compared
        on it (it keeps verifying), one with it is.
    """

    name: str
    quantity: str
    unit: str
    kind: str
    rule: str
    now: Callable[[Analysis], Any] | None
    tolerance: Callable[[Analysis, int], float] | None = None
    optional: bool = False
    per_mode: bool = False
    many: str = ""
    new: bool = False

    @property
    def parent(self) -> str:
        """The field of :class:`StoredResults` (and the key in the table) holding it."""
        return self.name.split(".")[0]

    @property
    def leaf(self) -> str:
        """Its key inside its parent's inline table (its name where it has no parent)."""
        return self.name.split(".")[-1]


def _frequency_tolerance(analysis: Analysis, i: int) -> float:
    modes = analysis.modes.modes
    if i >= len(modes):
        return FREQUENCY_TOLERANCE
    return max(FREQUENCY_TOLERANCE, 2.0 * modes[i].estimated_error)


def _floats(values: Any) -> tuple[float, ...]:
    return tuple(float(v) for v in values)


def _direction_hz(analysis: Analysis, name: str) -> tuple[float, ...] | None:
    """Frequencies of one direction [Hz]; None where it was not computed."""
    if analysis.directions is None or not analysis.directions[name].modes:
        return None
    return _floats(m.frequency_hz for m in analysis.directions[name].modes)


def _direction_tolerance(analysis: Analysis, name: str, i: int) -> float:
    if analysis.directions is None:
        return FREQUENCY_TOLERANCE
    modes = analysis.directions[name].modes
    if i >= len(modes):
        return FREQUENCY_TOLERANCE
    return max(FREQUENCY_TOLERANCE, 2.0 * modes[i].estimated_error)


_RESULTS = (
    _Stored(
        "rigid_body_modes", "rigid-body modes", "", "count", "exact",
        lambda a: int(a.modes.rigid_body_modes),
    ),
    _Stored(
        "frequencies_hz", "mode {n} frequency", "Hz", "numbers", "relative",
        lambda a: _floats(m.frequency_hz for m in a.modes.modes),
        _frequency_tolerance, per_mode=True, many="frequencies",
    ),
    _Stored(
        "estimated_errors", "mode {n} estimated error", "", "numbers", "error",
        lambda a: _floats(m.estimated_error for m in a.modes.modes),
        per_mode=True, many="estimated errors",
    ),
    _Stored(
        "rayleigh_hz", "Rayleigh estimate", "Hz", "number", "relative",
        lambda a: float(a.estimate.frequency_hz), lambda a, i: FREQUENCY_TOLERANCE,
    ),
    _Stored(
        "rayleigh_shape", "Rayleigh shape", "", "text", "exact", lambda a: a.estimate.shape
    ),
    _Stored(
        "dunkerley_hz", "Dunkerley bound", "Hz", "number", "relative",
        lambda a: None if a.lower_bound.frequency_hz is None else float(a.lower_bound.frequency_hz),
        lambda a, i: max(FREQUENCY_TOLERANCE, 2.0 * a.lower_bound.uncertainty), optional=True,
    ),
    _Stored(
        "bracket_inside", "bracket holds", "", "flag", "exact", lambda a: bool(a.bracket.inside)
    ),
    _Stored(
        "ritz_hz", "Ritz bound {n}", "Hz", "numbers", "relative",
        lambda a: None if a.ritz is None else _floats(a.ritz.frequencies_hz),
        lambda a, i: FREQUENCY_TOLERANCE, optional=True,
    ),
    _Stored(
        "equivalent.at_m", "1-DOF point", "m", "number", "point",
        lambda a: float(a.equivalent.at_m),
    ),
    _Stored(
        "equivalent.mass_kg", "1-DOF effective mass", "kg", "number", "relative",
        lambda a: float(a.equivalent.mass_kg), lambda a, i: EQUIVALENT_TOLERANCE,
    ),
    _Stored(
        "equivalent.stiffness_n_per_m", "1-DOF effective stiffness", "N/m", "number", "relative",
        lambda a: float(a.equivalent.stiffness_n_per_m), lambda a, i: EQUIVALENT_TOLERANCE,
    ),
    _Stored("margins", "", "", "margins", "margins", None, optional=True),
    _Stored(
        "governing", "governing direction", "", "text", "exact",
        lambda a: None if a.directions is None or a.directions.governing is None
        else a.directions.governing.direction, optional=True, new=True,
    ),
    *(
        _Stored(
            f"{name}_hz", f"{name} mode {{n}}", "Hz", "numbers", "relative",
            lambda a, name=name: _direction_hz(a, name),
            lambda a, i, name=name: _direction_tolerance(a, name, i), optional=True, new=True,
        )
        for name in ("width", "torsion", "axial")
    ),
    _Stored(
        "verdict", "excitation verdict", "", "text", "exact",
        lambda a: None if a.margins is None else _verdict_word(a.margins.verdict),
        optional=True, new=True,
    ),
    _Stored(
        "governing_pair", "governing mode and line", "", "text", "exact",
        lambda a: None if a.margins is None else _pair(a.margins.verdict.governing),
        optional=True, new=True,
    ),
    _Stored("bands", "band", "Hz", "bands", "bands", lambda a: _bands_now(a), optional=True,
            new=True),  # last: an array of tables closes the results table
)  # fmt: skip


def _bands_now(analysis: Analysis) -> tuple[StoredBand, ...] | None:
    """Each mode's band of an analysis with tolerances, as stored."""
    if analysis.bands is None:
        return None
    return tuple(
        StoredBand(
            b.direction, int(b.number), float(b.low_hz), float(b.high_hz), b.method,
            tuple(e.key for e in b.effects),
            tuple(math.nan if e.elasticity is None else float(e.elasticity) for e in b.effects),
            tuple(float(e.contribution_hz) for e in b.effects),
        )
        for b in analysis.bands.modes
    )  # fmt: skip


def _verdict_word(verdict: Any) -> str:
    """``"clear"``, ``"not clear"`` (a mode inside a band) or ``"not shown clear"``."""
    if verdict.clear:
        return "clear"
    g = verdict.governing
    return "not shown clear" if g is not None and g.clear else "not clear"


def _pair(row: Any) -> str | None:
    """The governing mode and excitation line in words (``"depth mode 2, pump order 1"``)."""
    if row is None:
        return None
    line = "lower limit" if row.order is None else f"order {row.order:g}"
    return f"{row.direction} mode {row.mode}, {row.excitation} {line}"


def _groups(entries: tuple[_Stored, ...]) -> list[tuple[_Stored, ...]]:
    """The rows in order, those of one inline table together and the per-mode lists together."""
    out: list[tuple[_Stored, ...]] = []
    for entry in entries:
        previous = out[-1][-1] if out else None
        if previous is not None and (
            ("." in entry.name and previous.parent == entry.parent)
            or (entry.per_mode and previous.per_mode)
        ):
            out[-1] = (*out[-1], entry)
        else:
            out.append((entry,))
    return out


def _stored_results(values: Mapping[str, Any]) -> StoredResults:
    """StoredResults from the value of every row (an inline table's rows give one tuple)."""
    fields: dict[str, Any] = {}
    for entry in _RESULTS:
        value = values.get(entry.name)
        if "." in entry.name:
            fields[entry.parent] = (*fields.get(entry.parent, ()), value)
        else:
            fields[entry.name] = value
    return StoredResults(**fields)


def _stored_value(results: StoredResults, entry: _Stored) -> Any:
    value = getattr(results, entry.parent)
    if "." in entry.name:
        children = [e for e in _RESULTS if e.parent == entry.parent]
        return value[children.index(entry)]
    return value


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
    theory : str
        The beam theory the results were solved with.  The table states it where it is
        ``"timoshenko"``; a record without a ``theory`` key is Euler-Bernoulli (every record
        written before beamtone had the choice is).
    """

    version: str
    written: str
    inputs_sha256: str
    modes: int
    elements: int | None
    results: StoredResults
    theory: str = "euler-bernoulli"


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
    values = {e.name: e.now(analysis) for e in _RESULTS if e.now is not None}
    values["margins"] = _stored_margins(margins)
    return Record(
        version=tool_version(),
        written=when.strftime("%Y-%m-%dT%H:%M:%SZ"),
        inputs_sha256=inputs_digest(analysis.sheet.data),
        modes=len(analysis.modes.modes),
        elements=elements,
        results=_stored_results(values),
        theory=analysis.theory,
    )


def _stored_margins(margins: MarginCheck | None) -> StoredMargins | None:
    """What is kept of an excitation check: the excitation from its first line, the margin
    from that line's band, the orders and the inside-band flags."""
    if margins is None or not margins.lines:
        return None
    first = margins.lines[0]
    return StoredMargins(
        float(first.frequency_hz / first.harmonic),
        tuple(line.harmonic for line in margins.lines),
        float((first.high_hz - first.frequency_hz) / first.frequency_hz),
        tuple(tuple(bool(x) for x in row) for row in margins.inside),
    )


def _table(record: Record) -> Any:
    import tomlkit

    table = tomlkit.table()
    for line in _NOTE:
        table.add(tomlkit.comment(line))
    table.add("version", record.version)
    table.add(
        "written",
        _dt.datetime.strptime(record.written, "%Y-%m-%dT%H:%M:%SZ").replace(tzinfo=_dt.UTC),
    )
    table.add("inputs_sha256", record.inputs_sha256)
    if record.theory != "euler-bernoulli":  # no theory key: Euler-Bernoulli, as ever since
        table.add("theory", record.theory)
    table.add("modes", record.modes)
    if record.elements is not None:
        table.add("elements", record.elements)
    table.add("results", _results_table(record.results))
    return table


def _results_table(res: StoredResults) -> Any:
    import tomlkit

    results = tomlkit.table()
    for group in _groups(_RESULTS):
        first = group[0]
        if "." in first.name:
            inline = tomlkit.inline_table()
            inline.update({e.leaf: _stored_value(res, e) for e in group})
            results.add(first.parent, inline)
            continue
        for entry in group:
            value = _stored_value(res, entry)
            if value is not None:  # an optional result the analysis did not have
                results.add(entry.name, _WRITE.get(entry.kind, _same)(value))
    return results


def _same(value: Any) -> Any:
    return value


def _margins_table(margins: StoredMargins) -> Any:
    import tomlkit

    table = tomlkit.table()
    table.add("excitation_hz", margins.excitation_hz)
    table.add("harmonics", list(margins.harmonics))
    table.add("margin", margins.margin)
    table.add("inside", [list(row) for row in margins.inside])
    return table


def _array(values: tuple[float, ...]) -> Any:
    import tomlkit

    array = tomlkit.array()
    array.extend(values)
    return array.multiline(len(values) > 1)


def _bands_tables(bands: tuple[StoredBand, ...]) -> Any:
    import tomlkit

    out = tomlkit.aot()
    for b in bands:
        table = tomlkit.table()
        table.add("direction", b.direction)
        table.add("mode", b.mode)
        table.add("low_hz", b.low_hz)
        table.add("high_hz", b.high_hz)
        table.add("method", b.method)
        table.add("keys", _array(b.keys))
        table.add("elasticities", _array(b.elasticities))
        table.add("contributions_hz", _array(b.contributions_hz))
        out.append(table)
    return out


_WRITE: dict[str, Callable[[Any], Any]] = {
    "numbers": _array,
    "margins": _margins_table,
    "bands": _bands_tables,
}


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


def _bands(value: object) -> tuple[StoredBand, ...]:
    key = "results.bands"
    if not isinstance(value, list) or not value:
        raise _bad(key, value, "an array of [[record.results.bands]] tables")
    out = []
    for i, row in enumerate(value):
        where = f"{key}[{i}]."
        if not isinstance(row, Mapping):
            raise _bad(f"{key}[{i}]", row, "a table of one mode's band")
        direction = _text(row, "direction", where)
        if direction not in ("depth", "width", "torsion", "axial"):
            raise _bad(f"{where}direction", direction, "depth, width, torsion or axial")
        mode = _integer(row, "mode", where, 1, 10_000)
        keys = row.get("keys")
        if not isinstance(keys, list) or not all(isinstance(k, str) for k in keys):
            raise _bad(f"{where}keys", keys, "a list of key paths")
        numbers = []
        for name in ("elasticities", "contributions_hz"):
            got = row.get(name)
            if (
                not isinstance(got, list)
                or len(got) != len(keys)
                or any(isinstance(v, bool) or not isinstance(v, int | float) for v in got)
            ):
                raise _bad(f"{where}{name}", got, f"{len(keys)} numbers, one per key")
            numbers.append(tuple(float(v) for v in got))
        out.append(
            StoredBand(direction, mode, _number(row, "low_hz", where),
                       _number(row, "high_hz", where), _text(row, "method", where),
                       tuple(keys), numbers[0], numbers[1])
        )  # fmt: skip
    return tuple(out)


_READ: dict[str, Callable[[Mapping[str, Any], str, str, bool, int], Any]] = {
    "count": lambda t, n, k, optional, modes: _integer(t, n, k, 0, 2),  # rigid-body modes
    "number": lambda t, n, k, optional, modes: _number(t, n, k, optional=optional),
    "numbers": lambda t, n, k, optional, modes: _numbers(t, n, k, optional=optional),
    "text": lambda t, n, k, optional, modes: None if optional and n not in t else _text(t, n, k),
    "flag": lambda t, n, k, optional, modes: _flag(t, n, k),
    "margins": lambda t, n, k, optional, modes: _margins(t[n], modes) if n in t else None,
    "bands": lambda t, n, k, optional, modes: _bands(t[n]) if n in t else None,
}


def _read_results(results: Mapping[str, Any], modes: int) -> StoredResults:
    key = "results."
    values: dict[str, Any] = {}
    for group in _groups(_RESULTS):
        first = group[0]
        if "." in first.name:
            table = results.get(first.parent)
            if not isinstance(table, Mapping):
                names = [e.leaf for e in group]
                expected = f"a table with {', '.join(names[:-1])} and {names[-1]}"
                raise _bad(f"{key}{first.parent}", table, expected)
            for e in group:
                values[e.name] = _READ[e.kind](
                    table, e.leaf, f"{key}{e.parent}.", e.optional, modes
                )
            continue
        for e in group:
            values[e.name] = _READ[e.kind](results, e.name, key, e.optional, modes)
        if first.per_mode and any(len(values[e.name]) != modes for e in group):
            expected = f"{modes} " + " and ".join(e.many for e in group)
            raise _bad(f"{key}{first.name}", values[first.name], expected)
    return _stored_results(values)


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
    stored = _read_results(results, modes)
    theory = table.get("theory", "euler-bernoulli")  # before the choice: Euler-Bernoulli
    if theory not in ("timoshenko", "euler-bernoulli"):
        raise _bad("theory", theory, "timoshenko or euler-bernoulli")
    return Record(
        version=_text(table, "version", ""),
        written=_written(table.get("written")),
        inputs_sha256=digest,
        modes=modes,
        elements=elements,
        results=stored,
        theory=theory,
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
    theory_note : str
        Where the record was made under another beam theory than the worksheet now chooses
        (a record written before the choice existed: Euler-Bernoulli), the sentence saying it
        was verified under the record's theory; else "".
    """

    record: Record
    version_now: str
    digest_now: str
    comparisons: tuple[Comparison, ...]
    theory_note: str = ""

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
        """One sentence on the outcome (and the theory it was verified under, where that is
        not the worksheet's)."""
        text = self._outcome()
        return f"{text}; {self.theory_note}" if self.theory_note else text

    def _outcome(self) -> str:
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


def _compare(
    entry: _Stored, analysis: Analysis, stored: Any, now: Any, i: int | None
) -> Comparison:
    quantity = entry.quantity.format(n=(i or 0) + 1)
    key = f"results.{entry.name}" + ("" if i is None else f"[{i}]")
    if entry.rule == "relative":
        assert entry.tolerance is not None
        tolerance = entry.tolerance(analysis, i or 0)
        return _value(quantity, key, entry.unit, stored, now, tolerance)
    if entry.rule == "error":
        ok = stored is not None and now is not None and _error_agrees(stored, now)
        return Comparison(quantity, key, "", stored, now, None, None, ok, "within x10")
    if entry.rule == "point":
        shift = abs(now - stored) / analysis.sheet.member.length
        ok = shift <= EQUIVALENT_TOLERANCE
        rule = f"{EQUIVALENT_TOLERANCE:.0e} of L"
        return Comparison(
            quantity, key, entry.unit, stored, now, None, EQUIVALENT_TOLERANCE, ok, rule
        )
    return _exact(quantity, key, stored, now)


def _compare_margins(stored: StoredMargins | None, analysis: Analysis) -> list[Comparison]:
    """The stored inside-band flags against those worked out again for the same excitation."""
    if stored is None:
        return []
    from beamtone.calc.sizing import margins

    m = stored
    check = margins(analysis.modes.frequencies_hz, m.excitation_hz, m.harmonics, m.margin)
    out = []
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
    return out


def _compare_bands(stored: tuple[StoredBand, ...] | None, analysis: Analysis) -> list[Comparison]:
    """Each stored band against the one of the same direction and mode worked out again."""
    if stored is None:
        return []
    now = {(b.direction, b.mode): b for b in _bands_now(analysis) or ()}
    errors = {}
    if analysis.directions is not None:
        errors = {(m.direction, m.number): m.estimated_error
                  for m in analysis.directions.all_modes}  # fmt: skip
    out: list[Comparison] = []
    for i, b in enumerate(stored):
        key = f"results.bands[{i}]."
        what = f"{b.direction} mode {b.mode} band"
        fresh = now.get((b.direction, b.mode))
        e = errors.get((b.direction, b.mode), 0.0)
        tolerance = max(FREQUENCY_TOLERANCE, 2.0 * e)
        for end in ("low_hz", "high_hz"):
            value = None if fresh is None else getattr(fresh, end)
            out.append(_value(f"{what} {end[:-3]}", key + end, "Hz", getattr(b, end), value,
                              tolerance))  # fmt: skip
        out.append(_exact(f"{what} method", key + "method", b.method,
                          None if fresh is None else fresh.method))  # fmt: skip
        f = 0.5 * (b.low_hz + b.high_hz)
        for input_key, el, c in zip(b.keys, b.elasticities, b.contributions_hz, strict=True):
            j = (
                None
                if fresh is None or input_key not in fresh.keys
                else fresh.keys.index(input_key)
            )
            el_now = None if j is None else fresh.elasticities[j]  # type: ignore[union-attr]
            c_now = None if j is None else fresh.contributions_hz[j]  # type: ignore[union-attr]
            same = el_now is not None and (
                (math.isnan(el) and math.isnan(el_now)) or abs(el - el_now) <= SENSITIVITY_TOLERANCE
            )
            out.append(Comparison(f"{what}: elasticity to {input_key}", key + "elasticities",
                                  "", el, el_now, None, None, same,
                                  f"{SENSITIVITY_TOLERANCE:.0e} absolute"))  # fmt: skip
            allowed = max(SENSITIVITY_TOLERANCE * abs(c), 2.0 * e * f)
            out.append(Comparison(f"{what}: contribution of {input_key}",
                                  key + "contributions_hz", "Hz", c, c_now, None, None,
                                  c_now is not None and abs(c - c_now) <= allowed,
                                  f"{SENSITIVITY_TOLERANCE:.0e} relative or 2 e f"))  # fmt: skip
    return out


def compare(record: Record, analysis: Analysis) -> tuple[Comparison, ...]:
    """Every stored result of ``record`` against ``analysis`` (see the module's tolerances).

    Lists are compared entry by entry (the per-mode lists side by side, mode by mode); an
    entry present on one side only does not agree.
    """
    res = record.results
    out: list[Comparison] = []
    for group in _groups(_RESULTS):
        if all(e.new and _stored_value(res, e) is None for e in group):
            continue  # a record written before this result was stored
        if group[0].kind == "numbers":
            stored = [_stored_value(res, e) or () for e in group]
            now = [(e.now(analysis) if e.now else None) or () for e in group]
            if all(e.new for e in group):  # N per direction: compared on the record's N
                stored = [v[: record.modes] for v in stored]
                now = [v[: record.modes] for v in now]
            for i in range(max(len(v) for v in (*stored, *now))):
                for e, s, n in zip(group, stored, now, strict=True):
                    s_i = s[i] if i < len(s) else None
                    n_i = n[i] if i < len(n) else None
                    out.append(_compare(e, analysis, s_i, n_i, i))
            continue
        for e in group:
            if e.rule == "margins":
                out += _compare_margins(res.margins, analysis)
            elif e.rule == "bands":
                out += _compare_bands(res.bands, analysis)
            elif e.now is not None:
                out.append(_compare(e, analysis, _stored_value(res, e), e.now(analysis), None))
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
    note = ""
    if record.theory != sheet.member.theory:
        # solved again as the record was made: its results mean that theory's numbers
        from dataclasses import replace

        note = (
            f"verified under the {record.theory} theory the record was made with (the "
            f"worksheet now solves by the {sheet.member.theory} theory; solve --record writes "
            "a record of that)"
        )
        sheet = replace(sheet, member=replace(sheet.member, theory=record.theory))
        analysis = None
    if analysis is None:
        from beamtone.calc.analysis import analyse

        analysis = analyse(sheet, record.modes, record.elements)
    return Verification(
        record=record,
        version_now=tool_version(),
        digest_now=inputs_digest(sheet.data),
        comparisons=compare(record, analysis),
        theory_note=note,
    )
