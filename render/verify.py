"""The command line's text and JSON object of ``beamtone verify``: each stored result
against its value now, with the rule it was held to."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from beamtone.calc.caution import CAUTION

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.record import Comparison, Verification

__all__ = ["verify_json", "verify_text"]


def _show(value: object) -> str:
    if value is None:
        return "(absent)"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return f"{value:.12g}"
    return str(value)


def verify_text(title: str, result: Verification) -> str:
    """The outcome of verifying a stored record, as aligned text (the caution last)."""
    rec = result.record
    lines = [f"beamtone verify: {title}" if title else "beamtone verify", ""]
    lines.append(
        f"  record    written {rec.written} with beamtone {rec.version}; "
        f"verified with beamtone {result.version_now}"
    )
    if result.inputs_unchanged:
        lines.append(f"  inputs    unchanged since the record (sha256 {rec.inputs_sha256[:16]}...)")
    else:
        lines.append(
            f"  inputs    CHANGED since the record was written on {rec.written} "
            f"(sha256 stored {rec.inputs_sha256[:16]}..., now {result.digest_now[:16]}...)"
        )
    lines.append("")
    rows = [("quantity", "stored", "now", "rel. diff", "tolerance", "")]
    rows += [_row(c) for c in result.comparisons]
    widths = [max(len(r[i]) for r in rows) for i in range(6)]
    for r in rows:
        cells = [r[0].ljust(widths[0])] + [r[i].rjust(widths[i]) for i in range(1, 5)] + [r[5]]
        lines.append(("  " + "   ".join(cells)).rstrip())
    lines.append("")
    verdict = "VERIFIED" if result.passed else "NOT VERIFIED"
    lines.append(f"  {verdict}: {result.message}")
    if result.failures:
        lines.append("  differences:")
        for c in result.failures:
            lines.append(
                f"  - {c.quantity} (record.{c.key}): stored {_show(c.stored)}, now "
                f"{_show(c.now)}"
                + (f", relative difference {c.relative:.2e}" if c.relative is not None else "")
            )
    lines += ["", CAUTION]
    return "\n".join(lines) + "\n"


def _row(c: Comparison) -> tuple[str, str, str, str, str, str]:
    quantity = f"{c.quantity} [{c.unit}]" if c.unit else c.quantity
    rel = "" if c.relative is None else ("0" if c.relative == 0 else f"{c.relative:.1e}")
    return (quantity, _show(c.stored), _show(c.now), rel, c.rule, "ok" if c.ok else "DIFFERS")


def verify_json(result: Verification) -> dict[str, Any]:
    """The outcome of verifying a stored record, as one JSON object."""
    rec = result.record
    return {
        "verified": result.passed,
        "inputs_unchanged": result.inputs_unchanged,
        "reproduced": result.reproduced,
        "message": result.message,
        "record": {
            "version": rec.version,
            "written": rec.written,
            "inputs_sha256": rec.inputs_sha256,
            "modes": rec.modes,
            "elements": rec.elements,
        },
        "inputs_sha256_now": result.digest_now,
        "version_now": result.version_now,
        "comparisons": [
            {
                "quantity": c.quantity,
                "key": f"record.{c.key}",
                "unit": c.unit,
                "stored": c.stored,
                "now": c.now,
                "relative_difference": c.relative,
                "tolerance": c.tolerance,
                "rule": c.rule,
                "ok": c.ok,
            }
            for c in result.comparisons
        ],
    }
