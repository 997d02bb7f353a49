"""Bands over the tolerances and the ranked sensitivities, as text and JSON.

Every mode of a worksheet with tolerances carries ``band: {low_hz, high_hz, method}`` and
``sensitivities: [{key, elasticity, contribution_hz}]`` (largest contribution first).
"""

from __future__ import annotations

from typing import Any

from beamtone.calc.band import BandResult
from beamtone.calc.tolerances import COMPLIANCE

__all__ = ["band_lines", "with_bands", "TOLERANCE_CAUTION"]

TOLERANCE_CAUTION = (
    "Tolerances and support stiffnesses are yours: the band covers only the inputs given, "
    "over the ranges given."
)
_SHOWN = 3  # sensitivities shown per mode in the text


def _label(direction: str) -> str:
    return {"depth": "depth plane", "width": "width plane"}.get(direction, direction)


def band_lines(result: BandResult) -> list[str]:
    """The bands section of ``beamtone solve``'s text."""
    lines = ["  tolerances"]
    for t in result.tolerances:
        what = t.written or f"{t.low:.6g} to {t.high:.6g}"
        if t.measure == COMPLIANCE:
            what += " (varied as its compliance, rigid at one end)"
        lines.append(f"  - {t.key} = {what}")
    lines.append("")
    rows = [["direction", "mode", "f [Hz]", "low [Hz]", "high [Hz]", "band", "first to pin down"]]
    for b in result.modes:
        top = ", ".join(
            f"{e.key} {e.contribution_hz:+.3g} Hz" for e in b.effects[:_SHOWN] if e.contribution_hz
        )
        rows.append([
            _label(b.direction), str(b.number), f"{b.frequency_hz:.6g}", f"{b.low_hz:.6g}",
            f"{b.high_hz:.6g}", b.method, top or "-",
        ])  # fmt: skip
    widths = [max(len(r[c]) for r in rows) for c in range(6)]
    for r in rows:
        cells = [r[c].rjust(widths[c]) if c in (1, 2, 3, 4) else r[c].ljust(widths[c])
                 for c in range(6)]  # fmt: skip
        lines.append("  " + "   ".join(cells) + "   " + r[6])
    lines.append("")
    lines.append("  elasticities (% change of the mode per % of the input, depth plane)")
    depth = [b for b in result.modes if b.direction == "depth"]
    for b in depth[:2]:
        parts = [f"{e.key} {e.elasticity:+.3g}" for e in b.effects if e.elasticity is not None]
        lines.append(f"  - mode {b.number}: " + (", ".join(parts) or "-"))
    lines += [f"  - {n}" for n in result.notes]
    for t in result.tighten:
        lines.append(f"  ! {t}")
    lines.append(f"  {TOLERANCE_CAUTION}")
    return lines


def _entry(band: Any) -> dict[str, Any]:
    return band.as_dict()


def with_bands(analysis: Any, out: dict[str, Any]) -> dict[str, Any]:
    """``out`` (the solve JSON) with each mode's band and sensitivities, every direction,
    plus ``tolerances``, ``band_notes`` and ``tighten``; unchanged without tolerances."""
    result: BandResult | None = getattr(analysis, "bands", None)
    if result is None:
        return out
    found = {(b.direction, b.number): _entry(b) for b in result.modes}
    for m in out.get("modes", []):
        m.update(found.get(("depth", m["number"]), {}))
    for m in out.get("all_modes", []):
        m.update(found.get((m.get("direction"), m.get("number")), {}))
    for name, d in (out.get("directions") or {}).items():
        for m in d.get("modes", []):
            m.update(found.get((name, m.get("number")), {}))
    out["tolerances"] = [
        {"key": t.key, "nominal": t.nominal, "low": t.low, "high": t.high,
         "measure": t.measure, "written": t.written}
        for t in result.tolerances
    ]  # fmt: skip
    out["band_notes"] = list(result.notes)
    out["tighten"] = list(result.tighten)
    return out
