"""The calculation record's content for every direction: the governing mode, what each
support holds in each direction, the section properties each direction uses, a table of
modes per direction with its cross-check, and what the direction model leaves out.

:func:`blocks` gives the blocks that follow the depth plane's in the report's "Results"
(:mod:`calc.report` places them); :func:`assumptions` the items added to "Assumptions".
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from beamtone.calc.directions import LABELS
from beamtone.calc.sections import TORSION_NOTES

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis
    from beamtone.calc.report import Block

__all__ = ["blocks", "assumptions"]

_UNITS = {"depth": "kg", "width": "kg", "torsion": "kg m^2", "axial": "kg"}


def _maybe(value: float | None) -> str:
    from beamtone.calc.report import number

    return "not given" if value is None else number(value)


def assumptions(analysis: Analysis) -> tuple[str, ...]:
    """The direction model's assumptions, for the report's list."""
    if analysis.directions is None:
        return ()
    return (
        "Every direction: bending in the depth plane and in the width plane (Euler-Bernoulli "
        "in each principal plane), Saint-Venant torsion (with warping stiffness E Cw where "
        "the section is open and every segment has one G J) and axial motion, each solved "
        "on its own.",
        *(n[0].upper() + n[1:] + "." for n in analysis.directions.notes),
    )


def blocks(analysis: Analysis) -> tuple[Block, ...]:
    """The report's blocks for every direction (empty where directions were not solved)."""
    from beamtone.calc.report import Bullets, Paragraph, Table, number

    dirs = analysis.directions
    if dirs is None:
        return ()
    gov = dirs.governing
    out: list[Block] = [
        Paragraph(
            "Every direction. The table above is the depth plane's (bending as drawn); the "
            "width plane, torsion and axial motion follow."
        )
    ]
    if gov is None:
        out.append(Paragraph("No mode was computed in any direction."))
    else:
        out.append(
            Paragraph(
                f"Governing mode: {number(gov.frequency_hz)} Hz, {LABELS[gov.direction]} mode "
                f"{gov.number}, the lowest natural frequency of all directions computed."
            )
        )
    missing = [d for d in dirs.directions if not d.computed]
    if missing:
        out.append(
            Bullets(
                tuple(
                    f"{LABELS[d.name]}: not computed, {d.reason}; it may be lower" for d in missing
                )
            )
        )
    member = analysis.sheet.member
    out.append(Paragraph("Section properties each direction uses (SI units):"))
    out.append(
        Table(
            (
                "segment",
                "I depth [m^4]",
                "I width [m^4]",
                "J [m^4]",
                "Cw [m^6]",
                "Ip [m^4]",
                "G [Pa]",
                "torsion constants",
            ),
            tuple(
                (
                    str(i + 1),
                    number(s.section.second_moment),
                    _maybe(s.section.second_moment_width),
                    _maybe(s.section.torsion_constant),
                    _maybe(s.section.warping_constant),
                    _maybe(s.section.polar_moment),
                    _maybe(s.material.shear_modulus_or_none),
                    TORSION_NOTES.get(s.section.shape, ""),
                )
                for i, s in enumerate(member.segments)
            ),
        )  # fmt: skip
    )
    out.append(
        Table(
            ("direction", "what the supports hold (left, right, inner)"),
            tuple((LABELS[d.name], ", ".join(d.supports)) for d in dirs.directions),
        )
    )
    for d in dirs.directions[1:]:
        if not d.computed:
            continue
        ref = d.reference_hz
        header = ("direction", "mode", "f [Hz]", "est. rel. error",
                  f"eff. [{_UNITS[d.name]}]", "eff. fraction", "reference [Hz]")  # fmt: skip
        rows = tuple(
            (
                LABELS[d.name],
                str(m.number),
                number(m.frequency_hz),
                f"{m.estimated_error:.1e}",
                number(m.effective) if m.effective_fraction > 1e-12 else "0",
                f"{100 * m.effective_fraction:.1f} %",
                number(ref[i]) if ref is not None else "-",
            )
            for i, m in enumerate(d.modes)
        )
        out.append(Table(header, rows))
        ref_case = d.handbook or d.closed_form
        items = []
        if d.rigid_body_modes:
            items.append(f"{d.rigid_body_modes} rigid-body mode (counted, not listed)")
        if d.same_as:
            items.append(f"the same modes as the {LABELS[d.same_as]}: two physical modes each")
        if ref_case is not None:
            items.append(f"reference: {ref_case.case} ({ref_case.source})")
        if d.estimate is not None and d.lower_bound is not None and d.bracket is not None:
            low = d.lower_bound.frequency_hz
            items.append(
                f"Rayleigh {number(d.estimate.frequency_hz)} Hz (upper bound, static deflection "
                "shape); "
                + (f"Dunkerley {number(low)} Hz (lower bound)" if low is not None
                   else f"no Dunkerley bound: {d.lower_bound.reason}")
                + f"; {d.bracket.message}"
            )  # fmt: skip
        pair = d.theories
        if pair is not None and pair.timoshenko is not None and not d.same_as:
            items.append(
                f"{'Timoshenko' if pair.theory == 'timoshenko' else 'Euler-Bernoulli'} theory; "
                "Euler-Bernoulli [Hz] (what the reference and the bounds check): "
                + ", ".join(number(m.frequency_hz) for m in pair.euler_bernoulli.modes)
                + "; shear and rotary inertia: "
                + ", ".join(f"{100 * x:+.2f} %" for x in pair.differences)
            )
        items += list(d.notes)
        if items:
            out.append(Bullets(tuple(items)))
    return tuple(out)
