"""Studies as text, CSV and JSON: scatter percentiles with a terminal histogram, batch tables."""

from __future__ import annotations

import csv
import io
from typing import Any

import numpy as np

from beamtone.calc.batch import BatchResult
from beamtone.calc.directions import LABELS
from beamtone.calc.scatter import PERCENTILES, ScatterResult, chance_words, histogram

__all__ = [
    "scatter_text",
    "scatter_json",
    "scatter_csv",
    "batch_text",
    "batch_json",
    "batch_csv",
    "histogram_lines",
    "histogram_strip",
]

_BAR = 40


def histogram_lines(values: Any, bins: int = 12) -> list[str]:
    """A horizontal histogram of one mode's samples, one line per bin."""
    values = np.asarray(values, dtype=float)
    counts, edges = histogram(values[np.isfinite(values)], bins)
    top = max(int(counts.max()), 1)
    lines = []
    for n, a, b in zip(counts, edges[:-1], edges[1:], strict=True):
        bar = "#" * round(_BAR * int(n) / top)
        lines.append(f"  {a:10.5g} - {b:<10.5g} {bar} {int(n)}")
    return lines


_LEVELS = " .:-=+*#%@"  # a one-line histogram: empty to fullest bin


def histogram_strip(values: Any, bins: int = 12) -> str:
    """One mode's histogram on one line: its range and a character per bin, darker where
    more samples fell (``11.09 |.:=*#%@%#*=-:.| 17.21``)."""
    counts, edges = histogram(values[np.isfinite(values)], bins)
    top = max(int(counts.max()), 1)
    marks = "".join(
        _LEVELS[0 if n == 0 else max(1, round((len(_LEVELS) - 1) * int(n) / top))] for n in counts
    )
    return f"{edges[0]:.5g} |{marks}| {edges[-1]:.5g}"


def _distinct(result: ScatterResult) -> list[str]:
    """The directions shown in full (one that equals another is named beside it)."""
    return [d for d in result.directions if d not in result.same_as]


def scatter_text(result: ScatterResult, title: str = "", bins: int = 12) -> str:
    """Percentiles and a one-line histogram of every mode of every direction, the full
    histogram of the lowest mode, the band chances and notes."""
    lines = [f"beamtone scatter: {title}" if title else "beamtone scatter", ""]
    lines.append(
        f"  {result.samples} samples ({result.method}) of {', '.join(result.keys)}; "
        f"solved in {result.engine}"
    )
    header = ["mode", "nominal [Hz]", *(f"p{p:g} [Hz]" for p in PERCENTILES),
              f"histogram ({bins} bins) [Hz]"]  # fmt: skip
    for name in _distinct(result):
        alike = [LABELS[d] for d, same in result.same_as.items() if same == name]
        lines.append("")
        lines.append(
            f"  {LABELS[name]}" + (f" (and {', '.join(alike)}: the same)" if alike else "")
        )
        rows = [header]
        freqs = result.sampled_hz[name]
        percentiles = result.percentiles_of(name)
        for j in range(freqs.shape[1]):
            if not np.any(np.isfinite(freqs[:, j])):
                continue
            rows.append(
                [str(j + 1), f"{result.nominal_by_direction[name][j]:.6g}",
                 *(f"{v:.6g}" for v in percentiles[:, j]), histogram_strip(freqs[:, j], bins)]
            )  # fmt: skip
        widths = [max(len(r[c]) for r in rows) for c in range(len(header))]
        lines += ["  " + "   ".join(r[c].rjust(widths[c]) if c < len(r) - 1 else r[c]
                                    for c in range(len(r))) for r in rows]  # fmt: skip
    for name, why in result.not_computed:
        lines.append("")
        lines.append(f"  {LABELS[name]}: not computed ({why})")
    lowest = _lowest(result)
    if lowest is not None:
        name, j = lowest
        lines.append("")
        lines.append(f"  {LABELS[name]} mode {j + 1}, the lowest mode [Hz]")
        lines += histogram_lines(result.sampled_hz[name][:, j], bins)
    if result.lines:
        lines.append("")
        lines.append("  chance of a mode of any direction in an excitation band")
        for c in result.lines:
            order = f"order {c.order:g}" if c.order is not None else "lower limit"
            lines.append(
                f"  - {c.excitation} {order} ({c.band_low_hz:.4g}-{c.band_high_hz:.4g} Hz): "
                + chance_words(c.probability, c.standard_error, result.samples)
            )
        assert result.any_in_band is not None
        lines.append("  - any band: " + chance_words(result.any_in_band, None, result.samples))
    lines.append("")
    lines += [f"  - {n}" for n in result.notes]
    if result.individually_solved:
        lines.append(f"  - {result.individually_solved} samples solved one by one (layout)")
    return "\n".join(lines) + "\n"


def _lowest(result: ScatterResult) -> tuple[str, int] | None:
    """The direction and mode index of the lowest nominal mode of every direction."""
    found = [(float(result.nominal_by_direction[d][0]), i, d)
             for i, d in enumerate(result.directions)
             if np.isfinite(result.nominal_by_direction[d][0])]  # fmt: skip
    return (min(found)[2], 0) if found else None


def _mode_json(result: ScatterResult, name: str, j: int, bins: int) -> dict[str, Any]:
    freqs = result.sampled_hz[name][:, j]
    counts, edges = histogram(freqs[np.isfinite(freqs)], bins)
    return {
        "direction": name,
        "number": j + 1,
        "nominal_hz": float(result.nominal_by_direction[name][j]),
        "percentiles_hz": {f"p{p:g}": float(v) for p, v in
                           zip(PERCENTILES, result.percentiles_of(name)[:, j], strict=True)},
        "histogram": {"counts": [int(c) for c in counts], "edges_hz": [float(e) for e in edges]},
    }  # fmt: skip


def scatter_json(result: ScatterResult, bins: int = 12) -> dict[str, Any]:
    """The study as one JSON object: ``modes`` (the depth plane's, as before) and
    ``directions`` (every direction: its modes' percentiles and histograms)."""

    def modes(name: str) -> list[dict[str, Any]]:
        freqs = result.sampled_hz[name]
        return [_mode_json(result, name, j, bins) for j in range(freqs.shape[1])
                if np.any(np.isfinite(freqs[:, j]))]  # fmt: skip

    return {
        "samples": result.samples,
        "method": result.method,
        "engine": result.engine,
        "keys": list(result.keys),
        "modes": modes("depth"),
        "directions": [
            {"direction": name, "same_as": result.same_as.get(name), "modes": modes(name)}
            for name in result.directions
        ],
        "not_computed": [{"direction": n, "reason": why} for n, why in result.not_computed],
        "any_in_band": result.any_in_band,
        "bands": [
            {
                "excitation": c.excitation,
                "order": c.order,
                "band_low_hz": c.band_low_hz,
                "band_high_hz": c.band_high_hz,
                "probability": c.probability,
                "standard_error": c.standard_error,
            }
            for c in result.lines
        ],  # fmt: skip
        "checked_difference": result.checked_difference,
        "individually_solved": result.individually_solved,
        "notes": list(result.notes),
    }


def scatter_csv(result: ScatterResult) -> str:
    """One row per sample: the inputs [SI] and every mode of every direction [Hz]."""
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    columns = [(name, j) for name in result.directions
               for j in range(result.sampled_hz[name].shape[1])]  # fmt: skip
    w.writerow([*result.keys, *(f"{name} mode {j + 1} [Hz]" for name, j in columns)])
    for i, p in enumerate(result.points):
        w.writerow([*(f"{v:.10g}" for v in p),
                    *(f"{result.sampled_hz[name][i, j]:.10g}" for name, j in columns)])  # fmt: skip
    return out.getvalue()


def _row_cells(keys: tuple[str, ...], row: Any, modes: int) -> list[str]:
    freqs = [f"{f:.6g}" for f in row.frequencies_hz] + [""] * (modes - len(row.frequencies_hz))
    return [
        row.name,
        *(row.written.get(k, "") for k in keys),
        *freqs,
        "" if row.governing_hz is None else f"{row.governing_hz:.6g}",
        row.governing_direction or "",
        "" if row.member_mass_kg is None else f"{row.member_mass_kg:.6g}",
        "" if row.clear is None else ("clear" if row.clear else "NOT CLEAR"),
        row.error or "",
    ]


def _modes(result: BatchResult) -> int:
    return max((len(r.frequencies_hz) for r in result.rows), default=0)


def _header(result: BatchResult) -> list[str]:
    n = _modes(result)
    return ["name", *result.keys, *(f"mode {j + 1} [Hz]" for j in range(n)),
            "governing [Hz]", "direction", "mass [kg]", "verdict", "error"]  # fmt: skip


def batch_csv(result: BatchResult) -> str:
    """One row per item."""
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(_header(result))
    n = _modes(result)
    for row in result.rows:
        w.writerow(_row_cells(result.keys, row, n))
    return out.getvalue()


def batch_text(result: BatchResult) -> str:
    """An aligned table of the items, then where it ran and how many failed."""
    n = _modes(result)
    rows = [_header(result)] + [_row_cells(result.keys, r, n) for r in result.rows]
    last = len(rows[0]) - 1
    widths = [max(len(r[c]) for r in rows) for c in range(last)]
    lines = ["  " + "  ".join(r[c].ljust(widths[c]) for c in range(last)) + "  " + r[last]
             for r in rows]  # fmt: skip
    lines.append("")
    lines.append(f"  {len(result.rows)} items, {result.failed} not solved; ran in {result.engine}")
    return "\n".join(lines) + "\n"


def batch_json(result: BatchResult) -> dict[str, Any]:
    """The batch as one JSON object."""
    return {
        "engine": result.engine,
        "keys": list(result.keys),
        "failed": result.failed,
        "rows": [
            {
                "name": r.name,
                "values": r.written,
                "frequencies_hz": list(r.frequencies_hz),
                "estimated_error": r.estimated_error,
                "governing_hz": r.governing_hz,
                "governing_direction": r.governing_direction,
                "member_mass_kg": r.member_mass_kg,
                "clear": r.clear,
                "error": r.error,
            }
            for r in result.rows
        ],  # fmt: skip
    }
