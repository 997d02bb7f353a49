"""Excitation margins, the verdict and the forced response as terminal text and JSON."""

from __future__ import annotations

from typing import Any

from beamtone.calc.excitation import CAUTION, CRITERIA, Excitation, Line, MarginRow, MarginTable
from beamtone.calc.response import DAMPING_CAUTION, ForcedResponse

__all__ = [
    "margin_lines",
    "margins_json",
    "practical_json",
    "response_json",
    "response_lines",
    "row_json",
    "verdict_json",
]


def _hz(value: float) -> str:
    return f"{value:.5g}"


def _line(row: MarginRow) -> str:
    if row.line_high_hz > row.line_low_hz:
        return f"{_hz(row.line_low_hz)}-{_hz(row.line_high_hz)}"
    return _hz(row.line_low_hz)


def _order(row: MarginRow) -> str:
    return "limit" if row.order is None else f"{row.order:g}"


def margin_lines(table: MarginTable, excitations: tuple[Excitation, ...] = ()) -> list[str]:
    """The margin table, the sources of named criteria, the start-up passages and the verdict."""
    header = [
        "excitation",
        "order",
        "line [Hz]",
        "mode",
        "natural [Hz]",
        "separation",
        "required",
        "",
    ]
    rows = [header]
    for r in table.rows:
        rows.append(
            [
                r.excitation, _order(r), _line(r), f"{r.direction} {r.mode}",
                _hz(r.frequency_hz), f"{100 * r.separation:+.1f} %", f"{100 * r.required:.1f} %",
                "clear" if r.clear else "INSIDE",
            ]
        )  # fmt: skip
    widths = [max(len(row[c]) for row in rows) for c in range(len(header))]
    out = ["  excitation margins (every line against every computed mode)"]
    for ln in table.lines:
        at = (
            f"{ln.low_hz:.4g}-{ln.high_hz:.4g} Hz"
            if ln.high_hz > ln.low_hz
            else f"{ln.low_hz:.4g} Hz"
        )
        what = "lower limit" if ln.order is None else f"order {ln.order:g}"
        out.append(
            f"  {ln.excitation} {what} at {at}: band to keep clear {ln.band_low_hz:.4g}-"
            f"{ln.band_high_hz:.4g} Hz, {_inside(table, ln)}"
        )
    for row in rows:
        cells = [row[0].ljust(widths[0])] + [row[c].rjust(widths[c]) for c in range(1, 7)]
        out.append("  " + "   ".join(cells) + ("   " + row[7] if row[7] else ""))
    for e in excitations:
        if e.criterion is not None:
            c = CRITERIA[e.criterion]
            out.append(f"  {e.name}: criterion {c.name} ({c.applies_to}); {c.source}")
    passages = [r for r in table.passages if r.clear]
    if passages:
        first = min(passages, key=lambda r: (r.frequency_hz, r.line_low_hz))
        out.append(
            f"  start-up  {len(passages)} line{'s' if len(passages) > 1 else ''} above a mode: "
            f"e.g. {first.direction} mode {first.mode} ({_hz(first.frequency_hz)} Hz) under "
            f"{first.excitation} order {_order(first)} ({_line(first)} Hz); the member passes "
            "through resonance whenever the source runs up from rest and down to it"
        )
    out.append(f"  verdict   {table.verdict.text}")
    out += [f"            not covered: {note}" for note in table.verdict.unchecked]
    out.append(f"            {CAUTION}")
    return out


def row_json(row: MarginRow) -> dict[str, Any]:
    """One margin row as JSON (``line_hz``, or ``line_range_hz`` for a range)."""
    line: dict[str, Any] = (
        {"line_range_hz": [row.line_low_hz, row.line_high_hz]}
        if row.line_high_hz > row.line_low_hz
        else {"line_hz": row.line_low_hz}
    )
    return {
        "excitation": row.excitation,
        "order": row.order,
        **line,
        "mode": row.mode,
        "direction": row.direction,
        "frequency_hz": row.frequency_hz,
        "separation": row.separation,
        "required": row.required,
        "clear": row.clear,
    }


def margins_json(table: MarginTable) -> list[dict[str, Any]]:
    """Every row of the margin table as JSON."""
    return [row_json(r) for r in table.rows]


def verdict_json(table: MarginTable) -> dict[str, Any]:
    """``{clear, governing}``; ``governing`` is the row with the least headroom."""
    g = table.verdict.governing
    return {"clear": table.verdict.clear, "governing": None if g is None else row_json(g)}


def response_lines(resp: ForcedResponse) -> list[str]:
    """The forced response: amplification per mode and amplitudes per excitation line."""
    out = [
        f"  forced response, damping ratio {100 * resp.damping_ratio:g} % of critical in every "
        f"mode (assumed), {resp.modes_used} modes superposed",
        f"            {DAMPING_CAUTION}",
    ]
    for ln in resp.lines:
        span = (
            f"{_hz(ln.low_hz)}-{_hz(ln.high_hz)} Hz"
            if ln.high_hz > ln.low_hz
            else f"{_hz(ln.low_hz)} Hz"
        )
        amps = ", ".join(f"{a:.3g}" for a in ln.amplification)
        out.append(f"  {ln.excitation} order {ln.order:g} ({span}): amplification by mode {amps}")
        for p in ln.points:
            out.append(
                f"            at {p.name} ({p.at:.4g} m): displacement {p.displacement:.3e} m, "
                f"velocity {p.velocity:.3e} m/s, acceleration {p.acceleration:.3e} m/s^2"
                + (f" (at {_hz(p.frequency_hz)} Hz)" if ln.high_hz > ln.low_hz else "")
            )
        if ln.points:
            out.append(
                f"            the highest mode adds {100 * ln.last_mode_share:.2g} % at the "
                "forcing point (a guide to truncation, not a bound)"
            )
    out += [f"            note: {n}" for n in resp.notes]
    return out


def response_json(resp: ForcedResponse) -> dict[str, Any]:
    """The forced response as JSON."""
    return {
        "damping_ratio": resp.damping_ratio,
        "modes_used": resp.modes_used,
        "lines": [
            {
                "excitation": ln.excitation,
                "order": ln.order,
                **(
                    {"line_range_hz": [ln.low_hz, ln.high_hz]}
                    if ln.high_hz > ln.low_hz
                    else {"line_hz": ln.low_hz}
                ),
                "amplification": list(ln.amplification),
                "force_n": ln.force,
                "force_at_m": ln.force_at,
                "points": [
                    {
                        "name": p.name,
                        "at_m": p.at,
                        "displacement_m": p.displacement,
                        "velocity_m_s": p.velocity,
                        "acceleration_m_s2": p.acceleration,
                        "frequency_hz": p.frequency_hz,
                    }
                    for p in ln.points
                ],
                "last_mode_share": ln.last_mode_share,
            }
            for ln in resp.lines
        ],
        "notes": list(resp.notes),
        "caution": DAMPING_CAUTION,
    }


def practical_json(result: Any) -> dict[str, Any]:
    """An excitation sizing's rounded values (``practical``), and at the recommended one its
    ``margin_table`` and ``verdict``."""
    p = result.practical
    unit = f" {result.unit}"
    out: dict[str, Any] = {
        "practical": {
            "candidates": [
                {
                    "value": c.text + unit,
                    "clear": c.clear,
                    "member_mass_kg": c.mass,
                    "passes_through_resonance": bool(c.table.passages),
                }
                for c in p.candidates
            ],
            "recommended": None if p.recommended is None else p.recommended.text + unit,
            "stiff_alternative": None if p.stiff is None else p.stiff.text + unit,
            "stiff_alternative_mass_kg": None if p.stiff is None else p.stiff.mass,
            "message": p.message,
        }
    }
    if result.table is not None:
        out["margin_table"] = margins_json(result.table)
        out["verdict"] = verdict_json(result.table)
    return out


def _inside(table: MarginTable, line: Line) -> str:
    """How many computed modes lie inside one line's band, in words."""
    count = sum(
        1
        for r in table.rows
        if not r.clear and r.excitation == line.excitation and r.order == line.order
    )
    return "every computed mode clear of it" if count == 0 else f"{count} mode(s) INSIDE"
