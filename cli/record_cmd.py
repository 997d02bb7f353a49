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
from typing import TYPE_CHECKING, Any

from beamtone.calc.errors import InputError
from beamtone.cli.output import CAUTION, write_json

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis
    from beamtone.calc.record import Comparison, Verification

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
    from beamtone.calc import record
    from beamtone.calc.worksheet import load

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
        write_json(_verify_json(result))
    else:
        sys.stdout.write(_verify_text(sheet.title, result))
    return EXIT_OK if result.passed else EXIT_FAILED


def _show(value: object) -> str:
    if value is None:
        return "(absent)"
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return f"{value:.12g}"
    return str(value)


def _verify_text(title: str, result: Verification) -> str:
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


def _verify_json(result: Verification) -> dict[str, Any]:
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
    from beamtone.calc import record
    from beamtone.calc.analysis import analyse
    from beamtone.calc.worksheet import load
    from beamtone.render import report as document

    worksheet = Path(args.file)
    sheet = load(worksheet)
    out = _output(args, worksheet)
    figure = out.with_name(out.stem + "-modes.svg")
    for target in (out, figure):
        if _same(target, worksheet):
            raise InputError("-o", str(target), "a file other than the worksheet itself")
    excitation = _excitation(args)
    stored = record.read_record(sheet)
    modes, elements = args.modes, args.elements
    as_recorded = stored is not None and modes is None and elements is None
    if as_recorded:
        assert stored is not None
        modes, elements = stored.modes, stored.elements
    analysis = analyse(sheet, modes, elements)
    check = None
    if excitation is not None:
        from beamtone.calc.sizing import margins

        check = margins(analysis.modes.frequencies_hz, *excitation)
    verification = None
    if stored is not None:
        verification = record.verify(sheet, analysis if as_recorded else None)
    doc = document.build(
        analysis, caution=CAUTION, source=args.file, margins=check, verification=verification
    )
    if args.html:
        files = [(out, doc.html())]
    else:
        shown = figure if doc.figure_svg is not None else None
        files = [(out, doc.markdown(shown.name if shown else None))]
        if shown is not None and doc.figure_svg is not None:
            files.append((shown, doc.figure_svg))
    for target, text in reversed(files):  # the figure first: never a reference to a missing file
        _write(target, text)
    written = [str(target) for target, _ in files]
    sys.stdout.write(f"report written: {', '.join(written)}\n")
    if doc.figure_svg is None:
        sys.stdout.write(f"note: {doc.figure_note}\n")
    if verification is not None and not verification.passed:
        sys.stdout.write(f"note: the stored record does not verify: {verification.message}\n")
    return EXIT_OK
