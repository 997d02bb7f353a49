"""``beamtone verify``, ``beamtone report``, and the ``--record`` part of ``beamtone solve``.

Thin: the record and the report are built by ``calc.record`` and ``calc.report``; this
module reads the arguments, writes files and prints.
"""

from __future__ import annotations

import argparse
import contextlib
import os
import sys
from pathlib import Path
from typing import TYPE_CHECKING

from beamtone.calc.errors import InputError
from beamtone.cli.output import write_json

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis

__all__ = ["store", "verify", "report"]

EXIT_OK = 0
EXIT_FAILED = 1

_SUFFIXES = {"markdown": (".md", ".markdown"), "html": (".html", ".htm")}


def store(path: str, analysis: Analysis, elements: int | None) -> str:
    """Write the ``[record]`` of a solve into its worksheet; return the line to print."""
    from beamtone.calc.record import save_record

    record = save_record(path, analysis, elements=elements)
    return (
        f"record written to {path} ({record.written}, beamtone {record.version}, "
        f"inputs sha256 {record.inputs_sha256[:12]}...); check it later with beamtone verify"
    )


# --- verify --------------------------------------------------------------------------------------


def verify(args: argparse.Namespace) -> int:
    """Run ``beamtone verify``: 0 when the record reproduces, 1 when not or when there is none."""
    from beamtone.calc import diskcache, record
    from beamtone.calc.worksheet import load
    from beamtone.render.verify import verify_json, verify_text

    with diskcache.bypassed():  # a check reads no cache: every fact is found afresh
        sheet = load(args.file)
        result = record.verify(sheet)
    if result is None:
        from beamtone.calc.analysis import analyse

        analyse(sheet)  # bad input is bad input (exit 2), record or not
        message = (
            f"no record to verify: {args.file} has no [record] table; write one with "
            f"beamtone solve {args.file} --record"
        )
        if args.json:
            write_json({"verified": False, "record": None, "message": message})
        else:
            sys.stdout.write(f"beamtone verify: {message}\n")
        return EXIT_FAILED
    if args.json:
        write_json(verify_json(result))
    else:
        sys.stdout.write(verify_text(sheet.title, result))
    return EXIT_OK if result.passed else EXIT_FAILED


# --- report --------------------------------------------------------------------------------------


def _output(args: argparse.Namespace, worksheet: Path) -> Path:
    kind = "html" if args.html else "markdown"
    out = Path(args.output)
    if out.suffix.lower() not in _SUFFIXES[kind]:
        expected = (
            "a file name ending in .html (with --html)"
            if args.html
            else "a file name ending in .md (or .html with --html)"
        )
        hint = "add --html for an HTML file" if out.suffix.lower() in _SUFFIXES["html"] else None
        raise InputError("-o", args.output, expected, hint)
    if out.is_dir():
        raise InputError("-o", args.output, "a file name, not a folder")
    if not out.parent.is_dir():
        raise InputError("-o", args.output, "a file in an existing folder")
    return out


def _same(a: Path, b: Path) -> bool:
    try:
        return a.exists() and b.exists() and a.samefile(b)
    except OSError:
        return a.resolve() == b.resolve()


def _write(path: Path, text: str) -> None:
    """Write a report file atomically (the caller has checked it is not the worksheet)."""
    from beamtone.calc.worksheet import write_atomic

    existed = path.exists()
    try:
        write_atomic(path, text)
    except InputError as exc:
        raise InputError("-o", str(path), "a file in a folder you may write", exc.hint) from None
    if not existed:  # a new file gets the usual permissions, not the temporary file's
        mask = os.umask(0)
        os.umask(mask)
        with contextlib.suppress(OSError):
            os.chmod(path, 0o666 & ~mask)


def _excitation(args: argparse.Namespace) -> tuple[float, tuple[int, ...], float] | None:
    """(excitation [Hz], orders, margin) from --excitation, --harmonics, --margin; or None."""
    from beamtone.calc.sizing import parse_harmonics, parse_margin
    from beamtone.calc.units import parse_frequency

    if args.excitation is None:
        for flag, value in (("--harmonics", args.harmonics), ("--margin", args.margin)):
            if value is not None:
                raise InputError(flag, value, "an --excitation to go with it")
        return None
    excitation = parse_frequency(args.excitation, "--excitation")
    return excitation, parse_harmonics(args.harmonics or "1"), parse_margin(args.margin or "20%")


def report(args: argparse.Namespace) -> int:
    """Run ``beamtone report``: write the calculation record (Markdown or one HTML file)."""
    from beamtone.calc.report import report_data
    from beamtone.calc.worksheet import load
    from beamtone.render.report import render

    worksheet = Path(args.file)
    sheet = load(worksheet)
    out = _output(args, worksheet)
    figure = out.with_name(out.stem + "-modes.svg")
    chart = out.with_name(out.stem + "-chart.svg")
    for target in (out, figure, chart):
        if _same(target, worksheet):
            raise InputError("-o", str(target), "a file other than the worksheet itself")
    content = report_data(
        sheet,
        modes=args.modes,
        elements=args.elements,
        excitation=_excitation(args),
        source=args.file,
        samples=getattr(args, "scatter", None),
    )
    doc = render(content)
    if args.html:
        files = [(out, doc.html())]
    else:
        shown = figure if doc.figure_svg is not None else None
        files = [(out, doc.markdown(shown.name if shown else None, chart.name))]
        if shown is not None and doc.figure_svg is not None:
            files.append((shown, doc.figure_svg))
        if doc.chart_svg is not None:
            files.append((chart, doc.chart_svg))
    for target, text in reversed(files):  # the figure first: never a reference to a missing file
        _write(target, text)
    written = [str(target) for target, _ in files]
    sys.stdout.write(f"report written: {', '.join(written)}\n")
    if doc.figure_svg is None:
        sys.stdout.write(f"note: {doc.figure_note}\n")
    verification = content.verification
    if verification is not None and not verification.passed:
        sys.stdout.write(f"note: the stored record does not verify: {verification.message}\n")
    return EXIT_OK
