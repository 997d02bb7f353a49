"""The command line's text and JSON objects of dimensionless groups: of a variable list, of a
worksheet's member (with a comparison to another), and of a master curve."""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.groups import GroupsResult
    from beamtone.calc.similitude import MasterCurve, MemberGroups, WorksheetGroups

__all__ = [
    "group_json",
    "master_curve_json",
    "master_curve_text",
    "member_groups_json",
    "variables_json",
    "variables_text",
    "worksheet_json",
    "worksheet_text",
]


def _dimension(dimension: dict[str, Any]) -> str:
    parts = [f"{k}^{v}" if v != 1 else k for k, v in dimension.items() if v != 0]
    return " ".join(parts) if parts else "dimensionless"


def _exponent_text(value: Any) -> str:
    p, q = int(value.numerator), int(value.denominator)
    return str(p) if q == 1 else f"{p}/{q}"


def _finite(value: float) -> float | None:
    return value if math.isfinite(value) else None


def group_json(group: Any) -> dict[str, Any]:
    """One group as JSON: symbol, expression, exponents (as exact fractions), and its value
    and meaning where it has them."""
    out = {
        "symbol": group.symbol,
        "expression": group.expression,
        "exponents": {k: _exponent_text(v) for k, v in group.exponents.items()},
    }
    value = getattr(group, "value", None)
    if value is not None:
        out["value"] = value
    meaning = getattr(group, "meaning", None)
    if meaning is not None:
        out["meaning"] = meaning
    return out


def member_groups_json(groups: MemberGroups) -> list[dict[str, Any]]:
    """The JSON list of a member's groups (also in ``solve --json``)."""
    return [group_json(g) for g in groups.groups]


def variables_json(result: GroupsResult) -> dict[str, Any]:
    """The groups of a variable list as one JSON object."""
    return {
        "variables": [
            {"name": v.name, "unit": v.unit, "dimension": _dimension(v.dimension)}
            for v in result.variables
        ],
        "rank": result.rank,
        "repeating": list(result.repeating),
        "groups": [group_json(g) for g in result.groups],
    }


def variables_text(result: GroupsResult) -> str:
    """The groups of a variable list as aligned text."""
    lines = [
        f"variables   {', '.join(f'{v.name} [{v.unit}]' for v in result.variables)}",
        f"rank        {result.rank} (dimension matrix), so {len(result.groups)} group"
        + ("s" if len(result.groups) != 1 else ""),
        f"repeating   {', '.join(result.repeating)}",
        "",
    ]
    lines += [f"  {g.symbol} = {g.expression}" for g in result.groups]
    return "\n".join(lines) + "\n"


def master_curve_json(curve: MasterCurve) -> dict[str, Any]:
    """A master curve as one JSON object."""
    return {
        "group": curve.group,
        "points": [
            {"value": v, "omega": list(row)}
            for v, row in zip(curve.values, curve.omegas, strict=True)
        ],
    }


def master_curve_text(curve: MasterCurve) -> str:
    """A master curve as an aligned table."""
    head = [curve.group] + [f"Omega{i + 1}" for i in range(len(curve.omegas[0]))]
    lines = [
        "Omega_i = omega_i L^2 sqrt(m/EI) against one group, all other groups held;",
        "valid for every member with the same groups.",
        "",
        "  ".join(h.rjust(12) for h in head),
    ]
    for v, row in zip(curve.values, curve.omegas, strict=True):
        lines.append("  ".join(f"{x:12.6g}" for x in (v, *row)))
    return "\n".join(lines) + "\n"


def worksheet_json(found: WorksheetGroups) -> dict[str, Any]:
    """A worksheet's groups (and the comparison with another, where made) as one JSON object."""
    obj: dict[str, Any] = {
        "title": found.title,
        "variables": [{"name": n, "unit": u, "value": v} for n, u, v in found.variables],
        "rank": len(found.repeating),
        "repeating": list(found.repeating),
        "groups": member_groups_json(found.groups),
    }
    like = found.like
    if like is not None:
        obj["like"] = {
            "similar": like.similar,
            "scale": like.scale,
            "predicted_hz": list(like.predicted_hz),
            "differences": [
                {"group": e, "this": a, "other": b, "relative_difference": _finite(d)}
                for e, a, b, d in like.differences
            ],
        }
    return obj


def worksheet_text(found: WorksheetGroups, other: str | None = None) -> str:
    """A worksheet's groups as aligned text; ``other`` names the worksheet compared with."""
    groups = found.groups
    lines = [
        f"beamtone groups: {found.title}",
        "",
        f"  repeating  L = {groups.length:.6g} m, EI = {groups.bending_stiffness:.6g} N*m^2, "
        f"m = {groups.mass_per_length:.6g} kg/m (first segment)",
        "",
    ]
    width = max((len(g.expression) for g in groups.groups), default=10)
    for g in groups.groups:
        lines.append(f"  {g.symbol:>4} = {g.expression:<{width}} = {g.value:12.6g}   {g.meaning}")
    lines += ["", "  f_i = Omega_i / (2 pi L^2) * sqrt(EI/m), Omega_i = omega_i L^2 sqrt(m/EI)"]
    like = found.like
    if like is not None:
        lines.append("")
        if like.similar:
            lines.append(f"  like {other}: similar; frequencies scale by {like.scale:.8g}")
            lines += [
                f"    mode {i}: {f:.6g} Hz predicted" for i, f in enumerate(like.predicted_hz, 1)
            ]
        else:
            lines.append(f"  like {other}: not similar; these groups differ:")
            for e, a, b, d in like.differences:
                if e == "supports":
                    lines.append("    the supports differ")
                else:
                    lines.append(f"    {e}: {a:.6g} here, {b:.6g} there ({100 * d:.3g} %)")
    return "\n".join(lines) + "\n"
