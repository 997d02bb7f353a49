"""Studies as text, CSV and JSON: scatter percentiles with a terminal histogram, batch tables."""

from __future__ import annotations

import csv
import io
from typing import Any

from beamtone.calc.batch import BatchResult
from beamtone.calc.scatter import PERCENTILES, ScatterResult, histogram

__all__ = [
    "scatter_text",
    "scatter_json",
    "scatter_csv",
    "batch_text",
    "batch_json",
    "batch_csv",
    "histogram_lines",
]

_BAR = 40


def histogram_lines(values: Any, bins: int = 12) -> list[str]:
    """A horizontal histogram of one mode's samples, one line per bin."""
    counts, edges = histogram(values, bins)
    top = max(int(counts.max()), 1)
    lines = []
    for n, a, b in zip(counts, edges[:-1], edges[1:], strict=True):
        bar = "#" * round(_BAR * int(n) / top)
        lines.append(f"  {a:10.5g} - {b:<10.5g} {bar} {int(n)}")
    return lines


def scatter_text(result: ScatterResult, title: str = "", bins: int = 12) -> str:
    """Percentiles of every mode, a histogram of the first, the band chances and notes."""
    lines = [f"beamtone scatter: {title}" if title else "beamtone scatter", ""]
    lines.append(
        f"  {result.samples} samples ({result.method}) of {', '.join(result.keys)}; "
        f"solved in {result.engine}"
    )
    lines.append("")
    header = ["mode", "nominal [Hz]", *(f"p{p:g} [Hz]" for p in PERCENTILES)]
    rows = [header]
    for j in range(result.frequencies_hz.shape[1]):
        rows.append(
            [str(j + 1), f"{result.nominal_hz[j]:.6g}",
             *(f"{v:.6g}" for v in result.percentiles[:, j])]
        )  # fmt: skip
    widths = [max(len(r[c]) for r in rows) for c in range(len(header))]
    lines += ["  " + "   ".join(r[c].rjust(widths[c]) for c in range(len(r))) for r in rows]
    lines.append("")
    lines.append("  mode 1 [Hz]")
    lines += histogram_lines(result.frequencies_hz[:, 0], bins)
    if result.lines:
        lines.append("")
        lines.append("  chance of a mode in an excitation band")
        for c in result.lines:
            order = f"order {c.order:g}" if c.order is not None else "lower limit"
            lines.append(
                f"  - {c.excitation} {order} ({c.band_low_hz:.4g}-{c.band_high_hz:.4g} Hz): "
                f"{100 * c.probability:.2f} % (+/- {100 * c.standard_error:.2f} %)"
            )
        assert result.any_in_band is not None
        lines.append(f"  - any band: {100 * result.any_in_band:.2f} %")
    lines.append("")
    lines += [f"  - {n}" for n in result.notes]
    if result.individually_solved:
        lines.append(f"  - {result.individually_solved} samples solved one by one (layout)")
    return "\n".join(lines) + "\n"


def scatter_json(result: ScatterResult, bins: int = 12) -> dict[str, Any]:
    """The study as one JSON object (per mode percentiles and histogram)."""
    modes = []
    for j in range(result.frequencies_hz.shape[1]):
        counts, edges = histogram(result.frequencies_hz[:, j], bins)
        modes.append({
            "number": j + 1,
            "nominal_hz": float(result.nominal_hz[j]),
            "percentiles_hz": {f"p{p:g}": float(v) for p, v in
                               zip(PERCENTILES, result.percentiles[:, j], strict=True)},
            "histogram": {"counts": [int(c) for c in counts],
                          "edges_hz": [float(e) for e in edges]},
        })  # fmt: skip
    return {
        "samples": result.samples,
        "method": result.method,
        "engine": result.engine,
        "keys": list(result.keys),
        "modes": modes,
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
    """One row per sample: the inputs [SI] and every mode [Hz]."""
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    n = result.frequencies_hz.shape[1]
    w.writerow([*result.keys, *(f"mode {j + 1} [Hz]" for j in range(n))])
    for p, f in zip(result.points, result.frequencies_hz, strict=True):
        w.writerow([*(f"{v:.10g}" for v in p), *(f"{v:.10g}" for v in f)])
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
