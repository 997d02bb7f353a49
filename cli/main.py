"""The ``beamtone`` command line: argument parsing and the one catch-all.

The commands are thin: they load a worksheet and call the computation library's front door
(``beamtone.calc``), have ``beamtone.render`` turn what it returns into text, and print it.
Bad input exits with status 2 and one message on stderr; nothing the user wrote is modified.
"""

from __future__ import annotations

import argparse
import math
import os
import re
import sys

# The matrices here are small and banded: threaded BLAS only adds overhead (measured in
# benchmarks/run.py).  Set before numpy loads; the user's own setting wins.
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")
from collections.abc import Callable, Sequence

__all__ = ["main", "run"]

EXIT_OK = 0
EXIT_FAILED = 1
EXIT_INPUT = 2
EXIT_NOT_CLEAR = 3  # solve --fail-unless-clear: the member is not shown clear

_DESCRIPTION = (
    "Natural frequencies of beam-like members, early in design: a finite-element "
    "eigen solution with handbook cross-checks, from a unit-checked TOML worksheet."
)


class _Parser(argparse.ArgumentParser):
    """argparse with beamtone's exit status and message style for bad arguments."""

    def error(self, message: str) -> None:  # type: ignore[override]
        # one line naming the option, not the whole usage: "argument --modes: ..." -> "--modes: ..."
        message = re.sub(r"^argument ([^:]+): ", r"\1: ", " ".join(message.split()))
        sys.stderr.write(f"beamtone: error: {message} (see {self.prog} --help)\n")
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
        type=_positive_int(20_000, "elements"),
        help="force a mesh of about N elements instead of the automatic one",
    )
    solve.add_argument("--json", action="store_true", help="print one JSON object")
    solve.add_argument(
        "--record", action="store_true",
        help="store the results in the worksheet's [record] table (comments kept)",
    )  # fmt: skip
    solve.add_argument(
        "--fail-unless-clear", action="store_true",
        help="exit with status 3 unless the verdict on the worksheet's excitations is clear",
    )  # fmt: skip

    verify = commands.add_parser(
        "verify",
        help="solve again and check the results stored by solve --record",
        description=(
            "Solve a worksheet again and compare with its [record]: exit 0 when every stored "
            "result reproduces within tolerance and the inputs are unchanged, 1 when not (or "
            "when there is no record), 2 on bad input."
        ),
    )
    verify.add_argument("file", metavar="FILE")
    verify.add_argument("--json", action="store_true", help="print one JSON object")

    report = commands.add_parser(
        "report",
        help="write a calculation record for the design file (Markdown, or one HTML file)",
        description=(
            "Write a calculation record of a worksheet: inputs, methods and formulas, results, "
            "cross-checks, groups, a figure of the first mode shapes, warnings and references."
        ),
    )
    report.add_argument("file", metavar="FILE")
    report.add_argument("-o", "--output", required=True, metavar="NAME.md", help="file to write")
    report.add_argument("--html", action="store_true", help="one self-contained HTML file")
    report.add_argument("--excitation", metavar="FREQ", help='add margins, e.g. "1480 rpm"')
    report.add_argument("--harmonics", metavar="1,2", help="excitation orders (default 1)")
    report.add_argument("--margin", metavar="PCT", help="band half-width (default 20%%)")
    report.add_argument("--modes", type=_positive_int(50, "modes"), help="default: worksheet's")
    report.add_argument("--elements", type=_positive_int(20_000, "elements"), metavar="N")
    report.add_argument("--scatter", type=_positive_int(1_000_000, "samples"), metavar="N",
                        help="add a sampled study of the tolerances (histogram)")  # fmt: skip

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

    size = commands.add_parser(
        "size",
        help="the value of one quantity that meets a frequency target or clears an excitation",
        description=(
            "Vary one worksheet quantity (any key path, e.g. member.section.depth, mass[0].mass, "
            "supports.inner[0].at) over a range and find where the chosen mode meets --target, "
            "or where every mode stays outside the bands around an --excitation (or the "
            "worksheet's [[excitation]] tables, where neither is given); an excitation sizing "
            "recommends a rounded value that keeps its margin."
        ),
    )
    size.add_argument("file", metavar="FILE")
    _range_arguments(size)
    goal = size.add_mutually_exclusive_group()
    goal.add_argument("--target", metavar="FREQ", help='target frequency, e.g. "60 Hz"')
    goal.add_argument("--excitation", metavar="FREQ", help='running speed, e.g. "1480 rpm"')
    size.add_argument("--harmonics", default="1", metavar="1,2", help="excitation orders")
    size.add_argument("--margin", default="20%", metavar="PCT", help="band half-width (20%%)")
    size.add_argument("--mode", type=_positive_int(50, "mode"), default=1, help="default 1")
    size.add_argument("--direction", help=_DIRECTION_HELP)
    size.add_argument("--step", metavar="STEP", help='round to this step, e.g. "1 mm"')
    size.add_argument(
        "--sizes", metavar="LIST", help='available sizes, e.g. "150, 160, 180 mm", or @FILE'
    )
    size.add_argument("--apply", action="store_true", help="write the recommended value")
    size.add_argument("--json", action="store_true", help="print one JSON object")

    sweep = commands.add_parser(
        "sweep",
        help="tabulate the first modes and the member mass against one quantity",
        description="Tabulate the first modes and the member mass against one quantity.",
    )
    sweep.add_argument("file", metavar="FILE")
    _range_arguments(sweep)
    sweep.add_argument("--points", type=_positive_int(20_000, "points"), default=21)
    sweep.add_argument("--vary2", metavar="KEY", help="a second quantity, for a two-way table")
    sweep.add_argument("--between2", nargs=2, metavar=("LOW", "HIGH"), help="its range")
    sweep.add_argument("--points2", type=_positive_int(2_000, "points"), default=21)
    sweep.add_argument("--modes", type=_positive_int(50, "modes"), help="default: worksheet's")
    sweep.add_argument("--direction", help=_DIRECTION_HELP)
    out = sweep.add_mutually_exclusive_group()
    out.add_argument("--json", action="store_true", help="print one JSON object")
    out.add_argument("--csv", action="store_true", help="print comma-separated values")

    from beamtone.cli import study_cmd

    study_cmd.add_parsers(commands, _positive_int)
    return parser


_DIRECTION_HELP = (
    "whose modes: governing (default: the lowest of every direction together), or one "
    "direction: depth (the plane as drawn), width, torsion, axial"
)


def _range_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--vary", required=True, metavar="KEY", help="key path, e.g. member.length")
    parser.add_argument(
        "--between", required=True, nargs=2, metavar=("LOW", "HIGH"),
        help='range in any unit of the key, e.g. --between "40 mm" "120 mm"',
    )  # fmt: skip


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
    from beamtone.calc import analyse, load
    from beamtone.calc.errors import InputError
    from beamtone.cli.output import write_json
    from beamtone.render.text import solve_json, solve_text

    try:
        analysis = analyse(load(args.file), args.modes, args.elements)
    except InputError as exc:
        if args.elements is not None and "on the forced mesh" in exc.expected:
            # the forced mesh, not the worksheet's mode count, is what the user set here
            raise InputError("--elements", args.elements, exc.expected, exc.hint) from None
        raise
    note = None
    if args.record:
        from beamtone.cli import record_cmd

        note = record_cmd.store(args.file, analysis, args.elements)
    if args.json:
        write_json(solve_json(analysis))
    else:
        sys.stdout.write(solve_text(analysis))
    if note:
        (sys.stderr if args.json else sys.stdout).write(f"{note}\n")
    if args.fail_unless_clear and (analysis.margins is None or not analysis.margins.verdict.clear):
        if analysis.margins is None:
            sys.stderr.write("--fail-unless-clear: the worksheet has no [[excitation]] tables\n")
        return EXIT_NOT_CLEAR
    return EXIT_OK


def _groups(args: argparse.Namespace) -> int:
    from beamtone.cli import groups_cmd

    return groups_cmd.run(args)


def _size(args: argparse.Namespace) -> int:
    from beamtone.cli import sizing_cmd

    return sizing_cmd.size(args)


def _sweep(args: argparse.Namespace) -> int:
    from beamtone.cli import sizing_cmd

    return sizing_cmd.sweep(args)


def _verify(args: argparse.Namespace) -> int:
    from beamtone.cli import record_cmd

    return record_cmd.verify(args)


def _report(args: argparse.Namespace) -> int:
    from beamtone.cli import record_cmd

    return record_cmd.report(args)


_COMMANDS = ("solve", "groups", "size", "sweep", "verify", "report", "scatter", "batch")


def _scatter(args: argparse.Namespace) -> int:
    from beamtone.cli import study_cmd

    return study_cmd.scatter(args)


def _batch(args: argparse.Namespace) -> int:
    from beamtone.cli import study_cmd

    return study_cmd.batch(args)


def _app(path: str | None) -> int:
    """Open the terminal app, on a worksheet file or (without one) on a new one."""
    from beamtone.calc.errors import InputError

    first = None
    if path is not None and sys.stdin.isatty() and sys.stdout.isatty():
        from beamtone.tui.early import start, worksheet_text

        # an existing file's first solve starts now, in a process of its own where a
        # processor is spare, while the app's interface is imported and drawn
        first = start(worksheet_text(path))
    if path is not None:
        from beamtone.tui.document import TEMPLATES, Document

        try:
            # refuse a file that cannot be read as TOML before the screen is taken over; a
            # worksheet with entries to fix opens with them marked, a new path starts one
            Document.open_or_new(path, TEMPLATES[0])
        except InputError as exc:
            if first is not None:
                first.cancel()
            sys.stderr.write(f"beamtone: {exc.message}\n")
            return EXIT_INPUT
    if not sys.stdin.isatty() or not sys.stdout.isatty():
        sys.stderr.write(
            "beamtone: the app needs a terminal; use a command such as "
            "'beamtone solve FILE' (see 'beamtone --help')\n"
        )
        return EXIT_INPUT
    from beamtone.tui.app import run

    run(path, first)
    return EXIT_OK


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status.

    With no arguments the terminal app opens on a new worksheet; with one argument that
    is not a command, the app opens that worksheet.
    """
    arguments = list(sys.argv[1:] if argv is None else argv)
    if not arguments:
        return _app(None)
    if len(arguments) == 1 and arguments[0] not in _COMMANDS and not arguments[0].startswith("-"):
        return _app(arguments[0])
    from beamtone.cli.terminal import clean_output

    with clean_output():  # no control character from a file reaches the terminal
        return _commands(arguments)


def _commands(arguments: list[str]) -> int:
    parser = build_parser()
    args = parser.parse_args(arguments)
    if args.version:
        from beamtone.calc.record import tool_version

        print(f"beamtone {tool_version()}")
        return EXIT_OK
    if args.command is None:
        parser.print_help()
        return EXIT_OK
    from beamtone.calc.errors import InputError

    handlers = {
        "solve": _solve, "groups": _groups, "size": _size, "sweep": _sweep,
        "verify": _verify, "report": _report, "scatter": _scatter, "batch": _batch,
    }  # fmt: skip
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
