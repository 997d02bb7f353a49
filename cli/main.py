"""The ``beamtone`` command line: argument parsing and the one catch-all.

The commands are thin: they load a worksheet through ``calc.worksheet``, call
``calc`` and print what it returns.  Bad input exits with status 2 and one
message on stderr; nothing the user wrote is modified.
"""

from __future__ import annotations

import argparse
import math
import sys
from collections.abc import Callable, Sequence

__all__ = ["main", "run"]

EXIT_OK = 0
EXIT_FAILED = 1
EXIT_INPUT = 2

_DESCRIPTION = (
    "Natural frequencies of beam-like members, early in design: a finite-element "
    "eigen solution with handbook cross-checks, from a unit-checked TOML worksheet."
)


class _Parser(argparse.ArgumentParser):
    """argparse with beamtone's exit status and message style for bad arguments."""

    def error(self, message: str) -> None:  # type: ignore[override]
        self.print_usage(sys.stderr)
        sys.stderr.write(f"beamtone: error: {message}\n")
        raise SystemExit(EXIT_INPUT)


def _positive_int(limit: int, what: str) -> Callable[[str], int]:
    def parse(text: str) -> int:
        try:
            value = int(text)
        except ValueError:
            msg = f"expected a whole number of {what}, got {text!r}"
            raise argparse.ArgumentTypeError(msg) from None
        if not 1 <= value <= limit:
            raise argparse.ArgumentTypeError(f"expected 1 to {limit} {what}, got {value}")
        return value

    return parse


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of every command."""
    parser = _Parser(prog="beamtone", description=_DESCRIPTION)
    parser.add_argument("--version", action="store_true", help="print the version and exit")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    solve = commands.add_parser(
        "solve",
        help="natural frequencies of a worksheet's member",
        description="Solve a worksheet: finite-element modes, rigid-body count, handbook check.",
    )
    solve.add_argument("file", metavar="FILE", help="worksheet (TOML)")
    solve.add_argument(
        "--modes", type=_positive_int(50, "modes"), help="number of modes (default: worksheet's)"
    )
    solve.add_argument(
        "--elements",
        type=_positive_int(200_000, "elements"),
        help="force a mesh of about N elements instead of the automatic one",
    )
    solve.add_argument("--json", action="store_true", help="print one JSON object")

    groups = commands.add_parser(
        "groups",
        help="dimensionless groups of a variable list or of a worksheet's member",
        description=(
            "Buckingham-Pi groups.  Give variables as NAME=UNIT (e.g. f=Hz L=m EI=N*m^2 "
            "m=kg/m), or one worksheet FILE for its member's groups and their values."
        ),
    )
    groups.add_argument("items", nargs="+", metavar="NAME=UNIT|FILE")
    groups.add_argument("--repeat", metavar="A,B,C", help="repeating variables (names)")
    groups.add_argument("--like", metavar="OTHER", help="compare with another worksheet")
    groups.add_argument("--sweep", metavar="GROUP", help="tabulate Omega against one group")
    groups.add_argument("--from", dest="start", type=_finite_float("--from"), metavar="A")
    groups.add_argument("--to", dest="stop", type=_finite_float("--to"), metavar="B")
    groups.add_argument(
        "--points", type=_positive_int(10_000, "points"), default=21, help="default 21"
    )
    groups.add_argument("--json", action="store_true", help="print one JSON object")
    return parser


def _finite_float(what: str) -> Callable[[str], float]:
    def parse(text: str) -> float:
        try:
            value = float(text)
        except ValueError:
            raise argparse.ArgumentTypeError(
                f"expected a number for {what}, got {text!r}"
            ) from None
        if not math.isfinite(value):
            raise argparse.ArgumentTypeError(f"expected a finite number for {what}, got {text!r}")
        return value

    return parse


def _solve(args: argparse.Namespace) -> int:
    from calc.analysis import analyse
    from calc.worksheet import load
    from cli import output

    analysis = analyse(load(args.file), args.modes, args.elements)
    if args.json:
        output.write_json(output.solve_json(analysis))
    else:
        sys.stdout.write(output.solve_text(analysis))
    return EXIT_OK


def _groups(args: argparse.Namespace) -> int:
    from cli import groups_cmd

    return groups_cmd.run(args)


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.version:
        from importlib.metadata import version

        print(f"beamtone {version('beamtone')}")
        return EXIT_OK
    if args.command is None:
        parser.print_help()
        return EXIT_OK
    from calc.errors import InputError

    handlers = {"solve": _solve, "groups": _groups}
    try:
        return handlers[args.command](args)
    except InputError as exc:
        sys.stderr.write(f"beamtone: {exc.message}\n")
        return EXIT_INPUT
    except KeyboardInterrupt:
        sys.stderr.write("beamtone: interrupted\n")
        return 130
    except BrokenPipeError:
        return EXIT_OK
    except Exception as exc:  # the outermost layer: never show a traceback
        sys.stderr.write(
            f"beamtone: internal error, please report it with your worksheet: "
            f"{type(exc).__name__}: {exc}\n"
        )
        return EXIT_FAILED


def run() -> None:
    """Console-script entry point."""
    raise SystemExit(main())


if __name__ == "__main__":
    run()
