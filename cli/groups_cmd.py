"""``beamtone groups``: dimensionless groups of a variable list, or of a worksheet's member."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from beamtone.calc.errors import InputError
from beamtone.cli.output import write_json

__all__ = ["run"]


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
    from beamtone.calc import variable_groups
    from beamtone.render import groups as shown

    repeat = None
    if args.repeat:
        repeat = [n.strip() for n in args.repeat.split(",") if n.strip()]
    result = variable_groups(items, repeat)
    if args.json:
        write_json(shown.variables_json(result))
    else:
        sys.stdout.write(shown.variables_text(result))
    return 0


def _worksheet(args: argparse.Namespace, path: Path) -> int:
    from beamtone.calc import similitude
    from beamtone.calc.worksheet import load
    from beamtone.render import groups as shown

    if args.repeat:
        raise InputError(
            "--repeat", args.repeat, "no --repeat with a worksheet: its groups use L, EI and m"
        )
    sheet = load(path)
    if args.sweep:
        if args.start is None or args.stop is None:
            raise InputError("--sweep", args.sweep, "a range too: --from A --to B")
        curve = similitude.worksheet_master_curve(
            sheet, args.sweep, args.start, args.stop, args.points
        )
        if args.json:
            write_json(shown.master_curve_json(curve))
        else:
            sys.stdout.write(shown.master_curve_text(curve))
        return 0
    other = load(args.like) if args.like else None
    found = similitude.worksheet_groups(sheet, other)
    if args.json:
        write_json(shown.worksheet_json(found))
    else:
        sys.stdout.write(shown.worksheet_text(found, args.like))
    return 0
