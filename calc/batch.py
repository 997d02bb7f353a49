"""Batches: many worksheets, or one worksheet over the rows of a table of values.

Each item is analysed exactly as ``beamtone solve`` analyses a worksheet (the front door,
:func:`calc.analysis.analyse`, every direction), and one :class:`BatchRow` keeps what a
screening table needs: the governing mode and its direction, the depth-plane frequencies,
the verdict where the worksheet has excitations, and the message where an item could not be
solved (a bad item never stops the batch).  The work runs on the engines of
:mod:`calc.engines` (this process, local processes, a dask cluster); rows come back in the
order given.

A table is CSV text: a header of key paths (the ones ``--vary`` takes, and support
stiffnesses), optionally a ``name`` column, one row per variant.  A cell is a quantity
with its unit (``"52 mm"``), or a plain number where the header gives the unit in
brackets (``member.section.wall [mm]``); every cell is read by the schema's parser for
its key.
"""

from __future__ import annotations

import csv
import io
import math
import os
import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace

from beamtone.calc.engines import map_chunks, split
from beamtone.calc.errors import InputError
from beamtone.calc.tolerances import Design, nominal_value, vary
from beamtone.calc.worksheet import Worksheet

__all__ = ["BatchRow", "BatchResult", "TableRow", "read_table", "solve_files", "solve_table"]

MAX_ROWS = 1_000_000
_HEADER = re.compile(r"^\s*(?P<key>[^\[\]]+?)\s*(?:\[(?P<unit>[^\[\]]+)\])?\s*$")
_IN_PROCESS = 20  # "auto" runs batches up to this size here


@dataclass(frozen=True)
class TableRow:
    """One row of a table of values.

    Attributes
    ----------
    name : str
        The ``name`` cell, else ``"row N"`` (N from 1, the header not counted).
    values : dict of str to float
        Key path -> value [SI].
    written : dict of str to str
        Key path -> the cell as written (with the header's unit).
    """

    name: str
    values: dict[str, float]
    written: dict[str, str] = field(default_factory=dict)


@dataclass(frozen=True)
class BatchRow:
    """What one item of a batch gave.

    Attributes
    ----------
    name : str
        The file, or the table row's name.
    written : dict of str to str
        The table row's cells (empty for a file).
    frequencies_hz : tuple of float
        Depth-plane natural frequencies [Hz] (empty where the item failed).
    estimated_error : float
        The largest estimated relative error of those [-].
    governing_hz : float or None
        The lowest mode of every computed direction [Hz].
    governing_direction : str or None
    member_mass_kg : float or None
    clear : bool or None
        The verdict over the worksheet's excitations; None without excitations.
    error : str or None
        Why the item could not be solved.
    """

    name: str
    written: dict[str, str]
    frequencies_hz: tuple[float, ...] = ()
    estimated_error: float = math.nan
    governing_hz: float | None = None
    governing_direction: str | None = None
    member_mass_kg: float | None = None
    clear: bool | None = None
    error: str | None = None


@dataclass(frozen=True)
class BatchResult:
    """The rows of a batch, in the order given.

    Attributes
    ----------
    rows : tuple of BatchRow
    keys : tuple of str
        The table's key paths (empty for a batch of files).
    engine : str
        Where the work ran.
    """

    rows: tuple[BatchRow, ...]
    keys: tuple[str, ...]
    engine: str

    @property
    def failed(self) -> int:
        """Items that could not be solved."""
        return sum(1 for r in self.rows if r.error is not None)


def read_table(sheet: Worksheet, text: str) -> list[TableRow]:
    """The rows of a CSV table of values for ``sheet``.

    Raises
    ------
    InputError
        Keyed ``table`` for a table without rows or a header that names no quantity of the
        worksheet; keyed ``table row N: KEY`` for a cell that is not a value of its key.
    """
    from beamtone.calc import schema

    reader = csv.reader(io.StringIO(text))
    try:
        header = next(reader)
    except StopIteration:
        raise InputError(
            "table", "", "a CSV header of key paths, then one row per variant"
        ) from None
    columns: list[tuple[str, str | None]] = []
    design = Design.of(sheet)
    for cell in header:
        m = _HEADER.match(cell)
        if not m:
            raise InputError("table", cell, "a key path, optionally with [unit]")
        key, unit = m.group("key"), m.group("unit")
        if key != "name":
            try:
                nominal_value(design, key)  # a quantity this worksheet has
            except InputError as exc:
                raise InputError(
                    "table", cell, "a header of key paths of this worksheet's quantities",
                    exc.hint or exc.expected,
                ) from None  # fmt: skip
        columns.append((key, unit))
    if not any(k != "name" for k, _ in columns):
        raise InputError("table", ",".join(header), "at least one column with a key path")
    rows: list[TableRow] = []
    for n, cells in enumerate(reader, start=1):
        if not any(c.strip() for c in cells):
            continue
        if len(cells) != len(columns):
            raise InputError(f"table row {n}", ",".join(cells), f"{len(columns)} cells")
        if len(rows) >= MAX_ROWS:
            raise InputError("table", f"over {MAX_ROWS} rows", f"at most {MAX_ROWS:,} rows")
        name = f"row {n}"
        values: dict[str, float] = {}
        written: dict[str, str] = {}
        for (key, unit), cell in zip(columns, cells, strict=True):
            if key == "name":
                name = cell.strip() or name
                continue
            shown = f"{cell.strip()} {unit}" if unit else cell.strip()
            where = f"table row {n}: {key}"
            entry = schema.entry(key)
            values[key] = entry.parse(shown, where)
            written[key] = shown
        rows.append(TableRow(name, values, written))
    if not rows:
        raise InputError("table", text[:40], "at least one row of values under the header")
    return rows


def _solve_item(modes: int | None, item: tuple[str, Worksheet | str, dict[str, str]]) -> BatchRow:
    from beamtone.calc.analysis import analyse
    from beamtone.calc.worksheet import loads

    name, sheet_or_text, written = item
    try:
        sheet = (
            sheet_or_text if isinstance(sheet_or_text, Worksheet) else loads(sheet_or_text, name)
        )
        result = analyse(sheet, modes)
    except InputError as exc:
        return BatchRow(name, written, error=exc.message)
    depth = result.modes
    governing_hz, direction = None, None
    if result.directions is not None and result.directions.all_modes:
        low = min(result.directions.all_modes, key=lambda m: m.frequency_hz)
        governing_hz, direction = low.frequency_hz, low.direction
    elif depth.modes:
        governing_hz, direction = depth.modes[0].frequency_hz, "depth"
    return BatchRow(
        name=name,
        written=written,
        frequencies_hz=tuple(float(m.frequency_hz) for m in depth.modes),
        estimated_error=max((float(m.estimated_error) for m in depth.modes), default=math.nan),
        governing_hz=governing_hz,
        governing_direction=direction,
        member_mass_kg=sheet.member.total_mass,
        clear=None if result.margins is None else result.margins.verdict.clear,
    )


def _solve_chunk(modes: int | None, chunk: Sequence[tuple]) -> list[BatchRow]:
    return [_solve_item(modes, item) for item in chunk]


def _run(
    items: list[tuple],
    modes: int | None,
    keys: tuple[str, ...],
    engine: str,
    workers: int | None,
    address: str | None,
    progress: Callable[[int, int], None] | None,
) -> BatchResult:
    workers = workers or os.cpu_count() or 1
    if not items:
        return BatchResult((), keys, "nothing to solve")
    if engine == "auto":
        engine = "local" if len(items) <= _IN_PROCESS or workers == 1 else "processes"
    count = len(items) if engine == "local" else 4 * workers
    results, where = map_chunks(
        _solve_chunk, modes, split(items, count), engine, workers, address, progress
    )
    return BatchResult(tuple(r for part in results for r in part), keys, where)


def solve_files(
    paths: Sequence[str],
    modes: int | None = None,
    *,
    engine: str = "auto",
    workers: int | None = None,
    address: str | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> BatchResult:
    """Analyse many worksheet files; a file that cannot be read or solved gets its message.

    The files are read here and sent as text, so a remote cluster needs no shared disk.
    """
    from pathlib import Path

    from beamtone.calc.worksheet import MAX_BYTES

    items: list[tuple] = []
    for path in paths:
        p = Path(path)
        try:
            if p.stat().st_size > MAX_BYTES:
                raise OSError(f"larger than {MAX_BYTES // 1000} kB")
            items.append((str(path), p.read_text(encoding="utf-8"), {}))
        except (OSError, UnicodeDecodeError) as exc:
            items.append((str(path), None, {}, f"file: {path}: cannot be read ({exc})"))
    if not items:
        raise InputError("FILES", "", "at least one worksheet file")
    return _merge(items, (), modes, engine, workers, address, progress)


def solve_table(
    sheet: Worksheet,
    rows: Sequence[TableRow],
    modes: int | None = None,
    *,
    engine: str = "auto",
    workers: int | None = None,
    address: str | None = None,
    progress: Callable[[int, int], None] | None = None,
) -> BatchResult:
    """Analyse one worksheet at every row of a table of values (see :func:`read_table`)."""
    design = Design.of(sheet)
    items: list[tuple] = []
    for row in rows:
        try:
            varied = vary(design, row.values).solved_member()
        except InputError as exc:
            items.append((row.name, None, row.written, exc.message))
            continue
        items.append((row.name, replace(sheet, member=varied), row.written))
    return _merge(items, _keys(rows), modes, engine, workers, address, progress)


def _merge(
    items: list[tuple],
    keys: tuple[str, ...],
    modes: int | None,
    engine: str,
    workers: int | None,
    address: str | None,
    progress: Callable[[int, int], None] | None,
) -> BatchResult:
    """Solve the items that can be solved; the others (with a fourth field, their message)
    keep their place in the rows."""
    solvable = [it for it in items if len(it) == 3]
    result = _run(solvable, modes, keys, engine, workers, address, progress)
    solved = iter(result.rows)
    rows = [next(solved) if len(it) == 3 else BatchRow(it[0], it[2], error=it[3]) for it in items]
    return replace(result, rows=tuple(rows))


def _keys(rows: Sequence[TableRow]) -> tuple[str, ...]:
    return tuple(rows[0].values) if rows else ()
