"""``beamtone scatter`` and ``beamtone batch``: thin, calc does the work."""

from __future__ import annotations

import argparse
import sys
import time

__all__ = ["add_parsers", "scatter", "batch"]

_ENGINES = ("auto", "local", "processes", "dask")


def add_parsers(commands: argparse._SubParsersAction, positive_int) -> None:  # noqa: ANN001
    """Register both commands on the command line's subparsers."""
    sc = commands.add_parser(
        "scatter",
        help="where the modes land over the worksheet's tolerances (a sampled study)",
        description="Sample the worksheet's tolerances (uniform over each range) and solve "
        "every sample: percentiles of each mode, a histogram, the chance of landing in an "
        "excitation band.",
    )
    sc.add_argument("file", metavar="FILE")
    sc.add_argument("--samples", type=positive_int(10_000_000, "samples"), default=1000)
    sc.add_argument("--method", choices=("latin-hypercube", "monte-carlo"),
                    default="latin-hypercube")  # fmt: skip
    sc.add_argument("--seed", type=positive_int(2**31 - 1, "seed"), default=20261202)
    sc.add_argument("--modes", type=positive_int(50, "modes"), help="default: worksheet's")
    sc.add_argument("--bins", type=positive_int(200, "bins"), default=12)
    _engine_arguments(sc)
    out = sc.add_mutually_exclusive_group()
    out.add_argument("--json", action="store_true", help="print one JSON object")
    out.add_argument("--csv", action="store_true", help="print every sample as CSV")

    ba = commands.add_parser(
        "batch",
        help="solve many worksheets, or one worksheet over the rows of a CSV table",
        description="Solve many worksheets (or one over the rows of --table) as solve "
        "does; one row per item; an item that cannot be solved gets its message.",
    )
    ba.add_argument("files", metavar="FILE", nargs="+")
    ba.add_argument("--table", metavar="CSV",
                    help="rows of values for one worksheet: a header of key paths")  # fmt: skip
    ba.add_argument("--modes", type=positive_int(50, "modes"), help="default: worksheet's")
    _engine_arguments(ba)
    out = ba.add_mutually_exclusive_group()
    out.add_argument("--json", action="store_true", help="print one JSON object")
    out.add_argument("--csv", action="store_true", help="print comma-separated values")


def _engine_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("--engine", choices=_ENGINES, default="auto",
                        help="where the solves run (default: this process for small studies, "
                        "else local processes)")  # fmt: skip
    parser.add_argument("--workers", type=int, metavar="N", help="worker processes")
    parser.add_argument(
        "--address", metavar="HOST:PORT",
        help="a dask scheduler (with --engine dask; default a local cluster)",
    )  # fmt: skip


class _Progress:
    """A progress bar on stderr, where stderr is a terminal."""

    def __init__(self, what: str) -> None:
        self.what = what
        self.shown = sys.stderr.isatty()
        self.start = time.monotonic()

    def __call__(self, done: int, total: int) -> None:
        if not self.shown or total <= 0:
            return
        width = 30
        filled = round(width * done / total)
        elapsed = time.monotonic() - self.start
        sys.stderr.write(
            f"\r  {self.what} [{'#' * filled}{'.' * (width - filled)}] {done}/{total} "
            f"{elapsed:.1f} s"
        )
        if done >= total:
            sys.stderr.write("\n")
        sys.stderr.flush()


def _workers(args: argparse.Namespace) -> int | None:
    from beamtone.calc.errors import InputError

    if args.workers is not None and not 1 <= args.workers <= 1024:
        raise InputError("--workers", args.workers, "1 to 1024 worker processes")
    if args.address and args.engine != "dask":
        raise InputError("--address", args.address, "--engine dask with a scheduler address")
    return args.workers


def scatter(args: argparse.Namespace) -> int:
    """Run ``beamtone scatter``."""
    from beamtone.calc import load
    from beamtone.calc.errors import InputError
    from beamtone.calc.excitation import lines
    from beamtone.calc.scatter import scatter as study
    from beamtone.calc.tolerances import Design
    from beamtone.cli.output import write_json
    from beamtone.render.study import scatter_csv, scatter_json, scatter_text

    workers = _workers(args)
    sheet = load(args.file)
    if not sheet.tolerances:
        raise InputError(
            "tolerances", None,
            'a [tolerances] table (e.g. "member.material.youngs_modulus" = "5 %") or a '
            'support stiffness range such as left_rotational_stiffness = ["2 MN*m/rad", "rigid"]',
        )  # fmt: skip
    result = study(
        Design.of(sheet), sheet.tolerances, args.modes or sheet.modes, args.samples,
        method=args.method, seed=args.seed,
        lines=tuple(ln for e in sheet.excitations for ln in lines(e)),
        engine=args.engine, workers=workers, address=args.address,
        progress=_Progress("samples"),
    )  # fmt: skip
    if args.json:
        write_json(scatter_json(result, args.bins))
    elif args.csv:
        sys.stdout.write(scatter_csv(result))
    else:
        sys.stdout.write(scatter_text(result, sheet.title, args.bins))
    return 0


def batch(args: argparse.Namespace) -> int:
    """Run ``beamtone batch``; exit status 1 where some item could not be solved."""
    from pathlib import Path

    from beamtone.calc import load
    from beamtone.calc.batch import read_table, solve_files, solve_table
    from beamtone.calc.errors import InputError
    from beamtone.cli.output import write_json
    from beamtone.render.study import batch_csv, batch_json, batch_text

    workers = _workers(args)
    progress = _Progress("items")
    if args.table:
        if len(args.files) != 1:
            raise InputError("--table", args.table, "exactly one worksheet FILE with --table")
        try:
            text = Path(args.table).read_text(encoding="utf-8")
        except (OSError, UnicodeDecodeError) as exc:
            raise InputError("--table", args.table, "a readable CSV file", str(exc)) from None
        sheet = load(args.files[0])
        result = solve_table(
            sheet, read_table(sheet, text), args.modes, engine=args.engine, workers=workers,
            address=args.address, progress=progress,
        )  # fmt: skip
    else:
        result = solve_files(
            args.files, args.modes, engine=args.engine, workers=workers, address=args.address,
            progress=progress,
        )  # fmt: skip
    if args.json:
        write_json(batch_json(result))
    elif args.csv:
        sys.stdout.write(batch_csv(result))
    else:
        sys.stdout.write(batch_text(result))
    return 1 if result.failed else 0
