"""``beamtone groups``: dimensionless groups of a variable list, or of a worksheet's member."""

from __future__ import annotations

import argparse
import math
import sys
from pathlib import Path
from typing import Any

from beamtone.calc.errors import InputError
from beamtone.cli.output import write_json

__all__ = ["run", "groups_json"]


def run(args: argparse.Namespace) -> int:
    """Run the command; return the exit status."""
    items: list[str] = args.items
    if len(items) == 1 and "=" not in items[0]:
        path = Path(items[0])
        if not path.exists():
            raise InputError(
                "file", items[0], "an existing worksheet file, or variables as NAME=UNIT"
            )
        return _worksheet(args, path)
    for flag in ("like", "sweep"):
        if getattr(args, flag):
            raise InputError(f"--{flag}", getattr(args, flag), "a worksheet FILE to work on")
    return _variables(args, items)


def _variables(args: argparse.Namespace, items: list[str]) -> int:
    from beamtone.calc.groups import parse_variables, pi_groups, variable

    pairs = parse_variables(items)
    variables = [variable(name, unit) for name, unit in pairs]
    repeat = None
    if args.repeat:
        repeat = [n.strip() for n in args.repeat.split(",") if n.strip()]
    result = pi_groups(variables, repeat)
    if args.json:
        write_json(
            {
                "variables": [
                    {"name": v.name, "unit": v.unit, "dimension": _dimension(v.dimension)}
                    for v in result.variables
                ],
                "rank": result.rank,
                "repeating": list(result.repeating),
                "groups": [_group_json(g) for g in result.groups],
            }
        )
        return 0
    lines = [
        f"variables   {', '.join(f'{v.name} [{v.unit}]' for v in result.variables)}",
        f"rank        {result.rank} (dimension matrix), so {len(result.groups)} group"
        + ("s" if len(result.groups) != 1 else ""),
        f"repeating   {', '.join(result.repeating)}",
        "",
    ]
    lines += [f"  {g.symbol} = {g.expression}" for g in result.groups]
    sys.stdout.write("\n".join(lines) + "\n")
    return 0


def _dimension(dimension: dict[str, Any]) -> str:
    parts = [f"{k}^{v}" if v != 1 else k for k, v in dimension.items() if v != 0]
    return " ".join(parts) if parts else "dimensionless"


def _exponent_text(value: Any) -> str:
    p, q = int(value.numerator), int(value.denominator)
    return str(p) if q == 1 else f"{p}/{q}"


def _group_json(group: Any) -> dict[str, Any]:
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


def groups_json(groups: Any) -> list[dict[str, Any]]:
    """The JSON list of a member's groups (also used by ``solve --json``)."""
    return [_group_json(g) for g in groups.groups]


def _worksheet(args: argparse.Namespace, path: Path) -> int:
    from beamtone.calc import fe, similitude
    from beamtone.calc.worksheet import load

    if args.repeat:
        raise InputError(
            "--repeat", args.repeat, "no --repeat with a worksheet: its groups use L, EI and m"
        )
    sheet = load(path)
    member = sheet.member
    if args.sweep:
        if args.start is None or args.stop is None:
            raise InputError("--sweep", args.sweep, "a range too: --from A --to B")
        curve = similitude.master_curve(
            member, args.sweep, args.start, args.stop, args.points, min(sheet.modes, 3)
        )
        if args.json:
            write_json(
                {
                    "group": curve.group,
                    "points": [
                        {"value": v, "omega": list(row)}
                        for v, row in zip(curve.values, curve.omegas, strict=True)
                    ],
                }
            )
            return 0
        head = [curve.group] + [f"Omega{i + 1}" for i in range(len(curve.omegas[0]))]
        lines = [
            "Omega_i = omega_i L^2 sqrt(m/EI) against one group, all other groups held;",
            "valid for every member with the same groups.",
            "",
            "  ".join(h.rjust(12) for h in head),
        ]
        for v, row in zip(curve.values, curve.omegas, strict=True):
            lines.append("  ".join(f"{x:12.6g}" for x in (v, *row)))
        sys.stdout.write("\n".join(lines) + "\n")
        return 0
    result = fe.solve(member, sheet.modes)
    omegas = [m.omega for m in result.modes]
    groups = similitude.member_groups(member, omegas)
    variables = similitude.variables_with_units(member)
    like = None
    if args.like:
        other = load(args.like)
        like = similitude.compare(member, other.member, tuple(result.frequencies_hz))
    if args.json:
        obj: dict[str, Any] = {
            "title": sheet.title,
            "variables": [{"name": n, "unit": u, "value": v} for n, u, v in variables],
            "rank": 3,
            "repeating": ["L", "EI", "m"],
            "groups": groups_json(groups),
        }
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
        write_json(obj)
        return 0
    lines = [
        f"beamtone groups: {sheet.title}",
        "",
        f"  repeating  L = {groups.length:.6g} m, EI = {groups.bending_stiffness:.6g} N*m^2, "
        f"m = {groups.mass_per_length:.6g} kg/m (first segment)",
        "",
    ]
    width = max((len(g.expression) for g in groups.groups), default=10)
    for g in groups.groups:
        lines.append(f"  {g.symbol:>4} = {g.expression:<{width}} = {g.value:12.6g}   {g.meaning}")
    lines += ["", "  f_i = Omega_i / (2 pi L^2) * sqrt(EI/m), Omega_i = omega_i L^2 sqrt(m/EI)"]
    if like is not None:
        lines.append("")
        if like.similar:
            lines.append(f"  like {args.like}: similar; frequencies scale by {like.scale:.8g}")
            lines += [
                f"    mode {i}: {f:.6g} Hz predicted" for i, f in enumerate(like.predicted_hz, 1)
            ]
        else:
            lines.append(f"  like {args.like}: not similar; these groups differ:")
            for e, a, b, d in like.differences:
                if e == "supports":
                    lines.append("    the supports differ")
                else:
                    lines.append(f"    {e}: {a:.6g} here, {b:.6g} there ({100 * d:.3g} %)")
    sys.stdout.write("\n".join(lines) + "\n")
    return 0


def _finite(value: float) -> float | None:
    return value if math.isfinite(value) else None
