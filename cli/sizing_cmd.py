"""``beamtone size`` and ``beamtone sweep``."""

from __future__ import annotations

import argparse
import csv
import sys
from pathlib import Path
from typing import Any

from beamtone.calc.errors import InputError
from beamtone.cli.output import CAUTION, write_json
from beamtone.render.margins import margin_lines, practical_json

__all__ = ["size", "sweep"]

MARGIN_NOTE = (
    "Separation margins around excitation frequencies are common practice; the margin is "
    "yours to set, and the applicable code or client specification governs."
)


def _range(args: argparse.Namespace, var: Any) -> tuple[float, float]:
    from beamtone.calc.sizing import read_value

    low_text, high_text = args.between
    return read_value(var, low_text, "--between"), read_value(var, high_text, "--between")


def _direction(args: argparse.Namespace) -> str:
    """The direction asked for, or calc's default (the governing mode)."""
    from beamtone.calc.directions import DEFAULT_SIZING_DIRECTION

    return args.direction if args.direction is not None else DEFAULT_SIZING_DIRECTION


def _followed(direction: str) -> str:
    """What a sweep's table follows, in words."""
    from beamtone.calc.directions import LABELS

    if direction == "governing":
        return (
            "modes: the lowest of all directions together (--direction governing, the "
            "default; depth, width, torsion or axial follows one)"
        )
    return f"modes: {LABELS[direction]} only (--direction {direction})"


def size(args: argparse.Namespace) -> int:
    """Run ``beamtone size``."""
    from beamtone.calc import sizing
    from beamtone.calc.files import read_limited
    from beamtone.calc.worksheet import MAX_BYTES, load, write_atomic

    path = Path(args.file)
    original = read_limited(path, MAX_BYTES) if args.apply else None  # what --apply rewrites
    sheet = load(path)
    request = sizing.read_request(
        sheet, args.vary, *args.between, target=args.target, excitation=args.excitation,
        mode=args.mode, harmonics=args.harmonics, margin=args.margin, step=args.step,
        sizes=args.sizes, direction=_direction(args),
    )  # fmt: skip
    var = request.variation
    result = sizing.run_request(request)
    applied = None
    if args.apply and result.recommended is not None:
        chosen = result.solutions[result.recommended]
        assert original is not None
        text = original.decode("utf-8")  # load() accepted these bytes as UTF-8
        # refused if the file changed since it was read (another run applied a value)
        write_atomic(path, var.rewrite(text, chosen.value_si), expected=original)
        applied = chosen.value
    if args.json:
        obj: dict[str, Any] = {
            "variable": result.variable,
            "target_hz": result.target_hz,
            "mode": result.mode,
            "direction": request.direction,
            "solutions": [
                {
                    "value": s.value,
                    "value_si": s.value_si,
                    "frequency_hz": s.frequency_hz,
                    "member_mass_kg": s.member_mass_kg,
                    "above": s.above,
                }
                for s in result.solutions
            ],
            "recommended": result.recommended,
            "message": result.message,
            "applied": applied,
        }
        if result.margins is not None:
            obj["margins"] = _margins_json(result.margins)
        if result.practical is not None:
            obj["intervals"] = [list(i) for i in result.intervals]
            obj["note"] = MARGIN_NOTE
            obj.update(practical_json(result))
        write_json(obj)
        return 0
    lines = [f"beamtone size: {sheet.title}", "", f"  {result.message}", ""]
    if result.solutions:
        last = "higher f" if result.target_hz is not None else "where"
        head = f"  {'':2}{args.vary:>30}   {'f1 [Hz]':>12}   {'member mass':>12}   {last}"
        lines.append(head)
        for i, s in enumerate(result.solutions):
            mark = "->" if i == result.recommended else "  "
            side = {"above": "for larger values", "below": "for smaller values"}.get(
                s.above, s.above
            )
            lines.append(
                f"  {mark}{s.value:>30}   {s.frequency_hz:12.6g}   {s.member_mass_kg:9.4g} kg   "
                f"{side}"
            )
    if result.table is not None:
        lines += ["", *margin_lines(result.table)]
    elif result.margins is not None:
        lines += ["", *_margin_lines(result.margins), "", f"  {MARGIN_NOTE}"]
    if args.apply:
        lines.append("")
        lines.append(
            f"  applied: {args.vary} = {applied!r} written to {path}"
            if applied
            else "  nothing applied: no practical value in range keeps every mode clear"
        )
    lines += ["", CAUTION]
    sys.stdout.write("\n".join(lines) + "\n")
    return 0


def _margins_json(check: Any) -> dict[str, Any]:
    return {
        "lines": [
            {
                "harmonic": ln.harmonic,
                "frequency_hz": ln.frequency_hz,
                "band_hz": [ln.low_hz, ln.high_hz],
            }
            for ln in check.lines
        ],
        "frequencies_hz": list(check.frequencies_hz),
        "inside": [list(row) for row in check.inside],
        "clear": check.clear,
    }


def _margin_lines(check: Any) -> list[str]:
    head = "  mode      f [Hz]   " + "   ".join(
        f"{ln.harmonic}x {ln.frequency_hz:.4g} Hz ({ln.low_hz:.4g}-{ln.high_hz:.4g})"
        for ln in check.lines
    )
    lines = [head]
    for i, (f, row) in enumerate(zip(check.frequencies_hz, check.inside, strict=True), start=1):
        flags = "   ".join(("INSIDE BAND" if hit else "clear").ljust(24) for hit in row)
        lines.append(f"  {i:>4}  {f:10.5g}   {flags}")
    return lines


def sweep(args: argparse.Namespace) -> int:
    """Run ``beamtone sweep``."""
    from beamtone.calc import sizing
    from beamtone.calc.worksheet import load

    sheet = load(args.file)
    var = sizing.variation(sheet, args.vary)
    low, high = _range(args, var)
    if args.vary2 is not None:
        return _sweep2(args, sheet, var, low, high)
    if args.between2 is not None:
        raise InputError("--between2", " ".join(args.between2), "--vary2 KEY as well")
    direction = _direction(args)
    result = sizing.sweep(sheet, args.vary, low, high, args.points, args.modes,
                          direction=direction)  # fmt: skip
    if args.json:
        write_json(
            {
                "variable": result.variable,
                "direction": direction,
                "unit": result.unit,
                "points": [
                    {
                        "value": var.text(float(v)),
                        "value_si": float(v),
                        "frequencies_hz": [float(f) for f in row],
                        "member_mass_kg": float(m),
                    }
                    for v, row, m in zip(
                        result.values_si, result.frequencies_hz, result.member_mass_kg, strict=True
                    )
                ],
                "solved": result.solved,
            }
        )
        return 0
    modes = result.frequencies_hz.shape[1]
    header = [f"{args.vary} [{result.unit}]"] + [f"f{i} [Hz]" for i in range(1, modes + 1)]
    header.append("member mass [kg]")
    rows = [
        [var.text(float(v)).split()[0], *(f"{f:.8g}" for f in row), f"{m:.6g}"]
        for v, row, m in zip(
            result.values_si, result.frequencies_hz, result.member_mass_kg, strict=True
        )
    ]
    if args.csv:
        writer = csv.writer(sys.stdout, lineterminator="\n")
        writer.writerow(header)
        writer.writerows(rows)
        return 0
    widths = [max(len(r[c]) for r in [header, *rows]) for c in range(len(header))]
    out = ["   ".join(h.rjust(w) for h, w in zip(header, widths, strict=True))]
    out += ["   ".join(c.rjust(w) for c, w in zip(r, widths, strict=True)) for r in rows]
    out.append(
        f"({result.solved} finite-element solves; other points scaled exactly by the groups "
        "or interpolated between solves, checked against further solves)"
    )
    out.append(_followed(direction))
    sys.stdout.write("\n".join(out) + "\n")
    return 0


def _sweep2(args: argparse.Namespace, sheet: Any, var: Any, low: float, high: float) -> int:
    from beamtone.calc import sizing

    if args.between2 is None:
        raise InputError("--vary2", args.vary2, "a range for it too: --between2 LOW HIGH")
    var2 = sizing.variation(sheet, args.vary2)
    low2, high2 = (sizing.read_value(var2, t, "--between2") for t in args.between2)
    result = sizing.sweep2(
        sheet, (args.vary, low, high, args.points), (args.vary2, low2, high2, args.points2),
        args.modes, direction=_direction(args),
    )  # fmt: skip
    g1, g2 = result.values_si
    modes = result.frequencies_hz.shape[2]
    if args.json:
        write_json(
            {
                "variables": list(result.variables),
                "direction": _direction(args),
                "units": list(result.units),
                "points": [
                    {
                        "values_si": [float(g1[i]), float(g2[j])],
                        "frequencies_hz": [float(f) for f in result.frequencies_hz[i, j]],
                        "member_mass_kg": float(result.member_mass_kg[i, j]),
                    }
                    for i in range(len(g1))
                    for j in range(len(g2))
                ],
                "solved": result.solved,
            }
        )
        return 0
    header = [f"{args.vary} [{var.unit}]", f"{args.vary2} [{var2.unit}]"]
    header += [f"f{i} [Hz]" for i in range(1, modes + 1)] + ["member mass [kg]"]
    writer = csv.writer(sys.stdout, lineterminator="\n")
    writer.writerow(header)
    for i in range(len(g1)):
        for j in range(len(g2)):
            writer.writerow(
                [var.text(float(g1[i])).split()[0], var2.text(float(g2[j])).split()[0]]
                + [f"{f:.8g}" for f in result.frequencies_hz[i, j]]
                + [f"{result.member_mass_kg[i, j]:.6g}"]
            )
    return 0
