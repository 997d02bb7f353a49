"""The command line's text and JSON objects of a solve: aligned plain text for the terminal,
and one JSON object whose keys keep their meaning across versions."""

from __future__ import annotations

import math
import textwrap
from typing import TYPE_CHECKING, Any

from beamtone.calc.caution import CAUTION
from beamtone.render.bands import band_lines, with_bands
from beamtone.render.directions import (
    abridged,
    all_modes_json,
    assumption_lines,
    depth_heading,
    direction_lines,
    directions_json,
    governing_lines,
    theory_json,
)
from beamtone.render.groups import member_groups_json
from beamtone.render.margins import (
    margin_lines,
    margins_json,
    response_json,
    response_lines,
    verdict_json,
)

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis
    from beamtone.calc.theories import TheoryPair

__all__ = ["solve_text", "solve_json"]


def _fmt(value: float, digits: int = 6) -> str:
    if value == 0.0 or not math.isfinite(value):
        return f"{value:g}"
    exponent = math.floor(math.log10(abs(value)))
    decimals = max(0, digits - 1 - exponent)
    if exponent >= digits + 3 or exponent < -4:
        return f"{value:.{digits - 1}e}"
    return f"{value:.{decimals}f}"


def _ends(member: Any) -> str:
    text = f"{member.left} at the left, {member.right} at the right"
    if member.inner_supports:
        inner = abridged([f"{s.kind} at {_fmt(s.at, 4)} m" for s in member.inner_supports])
        text += f"; inner supports {inner}"
    return text


def solve_text(analysis: Analysis) -> str:
    """Aligned plain-text report of a solve."""
    sheet, result, check = analysis.sheet, analysis.modes, analysis.handbook
    member = sheet.member
    lines = [f"beamtone solve: {sheet.title}" if sheet.title else "beamtone solve", ""]
    directions = analysis.directions
    if directions is not None:
        lines += governing_lines(directions)
    n_seg = len(member.segments)
    attached = sum(p.mass for p in member.masses)
    mass_note = f", {_fmt(attached, 4)} kg attached" if member.masses else ""
    lines.append(
        f"  member    {member.length:.6g} m, {n_seg} segment{'s' if n_seg > 1 else ''}, "
        f"{_fmt(member.member_mass, 4)} kg{mass_note}"
    )
    lines.append(f"  ends      {_ends(member)}")
    extras = []
    if member.springs:
        extras.append(f"{len(member.springs)} spring{'s' if len(member.springs) > 1 else ''}")
    if member.axial_force:
        kind = "tension" if member.axial_force > 0 else "compression"
        extras.append(f"axial {kind} {_fmt(abs(member.axial_force), 4)} N")
    if extras:
        lines.append(f"  carries   {', '.join(extras)}")
    element = "Timoshenko" if analysis.theory == "timoshenko" else "Hermite"
    lines.append(
        f"  mesh      {result.elements} {element} beam elements, {result.degrees_of_freedom} "
        f"free DOF, {result.solver}"
    )
    rigid = result.rigid_body_modes
    lines.append(
        f"  rigid     {rigid} rigid-body mode{'s' if rigid != 1 else ''}"
        + (" (not listed; modes start at the first flexible one)" if rigid else "")
    )
    lines.append("")
    if directions is not None:
        lines.append(depth_heading(directions))

    header = ["mode", "f [Hz]", "omega [rad/s]", "est. error", "eff. mass", "cumul."]
    # the handbook is Euler-Bernoulli: compared with the Euler-Bernoulli solve
    pair = analysis.theories
    eb_modes = result.modes if pair is None else pair.euler_bernoulli.modes
    if check is not None:
        header += ["handbook [Hz]", "FE vs hb" if eb_modes is result.modes else "E-B vs hb"]
    rows = [header]
    for i, mode in enumerate(result.modes):
        row = [
            str(mode.number),
            _fmt(mode.frequency_hz),
            _fmt(mode.omega),
            f"{mode.estimated_error:.1e}",
            f"{100 * mode.effective_mass_fraction:.1f} %",
            f"{100 * mode.cumulative_mass_fraction:.1f} %",
        ]
        if check is not None:
            ref = check.frequencies_hz[i]
            row += [_fmt(ref), f"{100 * (eb_modes[i].frequency_hz - ref) / ref:+.2e} %"]
        rows.append(row)
    widths = [max(len(r[c]) for r in rows) for c in range(len(header))]
    for r in rows:
        cells = [r[0].rjust(widths[0])] + [r[c].rjust(widths[c]) for c in range(1, len(r))]
        lines.append("  " + "   ".join(cells))
    lines.append("")
    if check is not None:
        lines.append(f"  handbook  {check.case}")
        lines += [f"            {part}" for part in textwrap.wrap(check.source, 78)]
    lines.append(
        f"  checks    mass orthogonality {result.mass_orthogonality:.1e}, stiffness "
        f"orthogonality {result.stiffness_orthogonality:.1e}; K {result.stiffness_definiteness}, "
        f"M {result.mass_definiteness}"
    )
    lines.append("            modes normalized to unit modal mass; effective mass in the plane")
    if result.mode_count is not None:
        lines += textwrap.wrap(result.mode_count.describe(), 92, initial_indent=" " * 12,
                               subsequent_indent=" " * 12)  # fmt: skip
    lines += textwrap.wrap(result.estimate_meaning, 92, initial_indent=" " * 12,
                           subsequent_indent=" " * 12)  # fmt: skip
    if result.assumptions:
        lines.append(f"  assumes   {result.assumptions[0]}")
        lines += [f"            {a}" for a in result.assumptions[1:]]
    lines.append("")
    if pair is not None:
        lines += theory_lines(pair)
        lines.append("")
    lines += _estimate_lines(analysis)
    if directions is not None:
        lines.append("")
        lines += direction_lines(directions)
        lines += assumption_lines(directions)
    if analysis.bands is not None:
        lines.append("")
        lines += band_lines(analysis.bands)
    if analysis.margins is not None:
        lines.append("")
        lines += margin_lines(analysis.margins, analysis.sheet.excitations)
    if analysis.response is not None:
        lines.append("")
        lines += response_lines(analysis.response)
    if analysis.warnings:
        lines.append("")
        lines.append("  warnings")
        lines += [f"  - {w}" for w in analysis.warnings]
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines) + "\n"


def theory_lines(pair: TheoryPair) -> list[str]:
    """The chosen beam theory and, per mode, both theories and the shear effect."""
    from beamtone.calc.theories import SHOWN_ABOVE

    chosen = "Timoshenko" if pair.theory == "timoshenko" else "Euler-Bernoulli"
    lines = [f"  theory    {chosen} (the table above); the other beside it, per mode:"]
    if pair.timoshenko is None:
        return lines + [f"            {pair.note()}"]
    for e, t, d in zip(
        pair.euler_bernoulli.modes, pair.timoshenko.modes, pair.differences, strict=False
    ):
        flag = "  (differ by more than 1 %)" if abs(d) > SHOWN_ABOVE else ""
        lines.append(
            f"  mode {e.number:<4} Timoshenko {_fmt(t.frequency_hz)} Hz, Euler-Bernoulli "
            f"{_fmt(e.frequency_hz)} Hz, shear and rotary inertia {100 * d:+.2f} %{flag}"
        )
    if pair.closed_form_hz is not None:
        exact = ", ".join(_fmt(f) for f in pair.closed_form_hz)
        lines.append(f"            Timoshenko closed form, pinned-pinned [Hz]: {exact}")
        lines.append("            (Timoshenko, Phil. Mag. 41, 1921; both branches, lowest first)")
    lines += [f"            no shear flexibility: {why}" for why in pair.without_shear]
    lines.append("            Rayleigh, Dunkerley, the bracket and the handbook: Euler-Bernoulli")
    return lines


def _estimate_lines(analysis: Analysis) -> list[str]:
    est, low, br, eq = (
        analysis.estimate,
        analysis.lower_bound,
        analysis.bracket,
        analysis.equivalent,
    )
    shape = "static deflection" if est.shape == "static" else est.shape
    # The bounds are of the Euler-Bernoulli fundamental; say so where the table is another theory.
    of = " of the Euler-Bernoulli f1" if analysis.theory == "timoshenko" else ""
    lines = [f"  Rayleigh  {_fmt(est.frequency_hz)} Hz (upper bound{of}), shape: {shape}"]
    if est.expression and est.expression != est.shape:
        lines.append(f"            w(x) = {est.expression}")
    if est.formula:
        lines.append(f"            {est.formula}")
    lines += [f"            {note}" for note in est.notes]
    if low.frequency_hz is not None:
        lines.append(f"  Dunkerley {_fmt(low.frequency_hz)} Hz (lower bound{of})")
        if low.note:
            lines.append(f"            {low.note}")
    else:
        lines.append(f"  Dunkerley no lower bound: {low.reason}")
    lines.append(f"  bracket   {br.message}")
    if analysis.ritz is not None:
        ritz = analysis.ritz
        lines.append("  Ritz      upper bounds [Hz] with 1, 2, ... trial functions:")
        for n, row in enumerate(ritz.convergence, start=1):
            lines.append(f"            {n:>2}: " + "  ".join(_fmt(f) for f in row))
    lines.append(
        f"  1-DOF     at {_fmt(eq.at_m, 4)} m: effective mass {_fmt(eq.mass_kg, 4)} kg, "
        f"stiffness {_fmt(eq.stiffness_n_per_m, 4)} N/m"
    )
    return lines


def solve_json(analysis: Analysis) -> dict[str, Any]:
    """The JSON object of a solve (keys keep their meaning across versions)."""
    sheet, result, check = analysis.sheet, analysis.modes, analysis.handbook
    member = sheet.member
    est, low, eq = analysis.estimate, analysis.lower_bound, analysis.equivalent
    return with_bands(analysis, {
        "title": sheet.title,
        "modes": [
            {
                "number": m.number,
                "frequency_hz": m.frequency_hz,
                "omega_rad_s": m.omega,
                "estimated_error": m.estimated_error,
                "effective_mass_kg": m.effective_mass,
                "effective_mass_fraction": m.effective_mass_fraction,
                "cumulative_mass_fraction": m.cumulative_mass_fraction,
                **theory_json(analysis.theories, i),
            }
            for i, m in enumerate(result.modes)
        ],
        "theory": analysis.theory,
        "timoshenko_closed_form_hz": None
        if analysis.theories is None or analysis.theories.closed_form_hz is None
        else list(analysis.theories.closed_form_hz),
        "rigid_body_modes": result.rigid_body_modes,
        "handbook": None
        if check is None
        else {
            "case": check.case,
            "frequencies_hz": list(check.frequencies_hz),
            "parameters": list(check.parameters),
            "source": check.source,
        },
        "warnings": list(analysis.warnings),
        "estimate": {
            "method": "rayleigh",
            "shape": est.shape,
            "expression": est.expression,
            "frequency_hz": est.frequency_hz,
            "formula": est.formula,
            "coefficient": est.coefficient,
            "notes": list(est.notes),
        },
        "lower_bound": None
        if low.frequency_hz is None
        else {"method": "dunkerley", "frequency_hz": low.frequency_hz, "note": low.note},
        "bracket": {
            "lower_hz": analysis.bracket.lower_hz,
            "fe_hz": analysis.bracket.fe_hz,
            "upper_hz": analysis.bracket.upper_hz,
            "width": analysis.bracket.width,
            "inside": analysis.bracket.inside,
            "status": analysis.bracket.status,
            "lower_reason": analysis.bracket.lower_reason,
        },
        "ritz": None
        if analysis.ritz is None
        else {
            "frequencies_hz": list(analysis.ritz.frequencies_hz),
            "convergence_hz": [list(r) for r in analysis.ritz.convergence],
            "shapes": list(analysis.ritz.shapes),
        },
        "groups": member_groups_json(analysis.groups),
        "equivalent": {
            "at_m": eq.at_m,
            "mass_kg": eq.mass_kg,
            "stiffness_n_per_m": eq.stiffness_n_per_m,
        },
        "member": {
            "length_m": member.length,
            "member_mass_kg": member.member_mass,
            "total_mass_kg": result.total_mass,
            "segments": len(member.segments),
        },
        "checks": {
            "elements": result.elements,
            "degrees_of_freedom": result.degrees_of_freedom,
            "solver": result.solver,
            "mass_orthogonality": result.mass_orthogonality,
            "stiffness_orthogonality": result.stiffness_orthogonality,
            "stiffness_matrix": result.stiffness_definiteness,
            "mass_matrix": result.mass_definiteness,
            "roundoff_dominated": result.roundoff_dominated,
            "mode_count": None if result.mode_count is None else {
                "below_hz": result.mode_count.below_hz,
                "counted": result.mode_count.counted,
                "found": result.mode_count.found,
                "ok": result.mode_count.ok,
            },
        },
        "estimate_meaning": result.estimate_meaning,
        "model_assumptions": list(result.assumptions),
        "caution": CAUTION,
        **_excitation_json(analysis),
        **_directions_json(analysis),
    })  # fmt: skip


def _directions_json(analysis: Analysis) -> dict[str, Any]:
    """``all_modes``, ``directions`` and ``governing`` (every direction of the member)."""
    directions = analysis.directions
    if directions is None:
        return {}
    gov = directions.governing
    return {
        "all_modes": all_modes_json(directions),
        "directions": directions_json(directions),
        "governing": None
        if gov is None
        else {"direction": gov.direction, "number": gov.number, "frequency_hz": gov.frequency_hz},
        "assumptions": list(directions.notes),
    }


def _excitation_json(analysis: Analysis) -> dict[str, Any]:
    """``margins`` and ``verdict`` where the worksheet has excitations; ``response`` where it
    also gives a damping ratio."""
    out: dict[str, Any] = {}
    if analysis.margins is not None:
        out["margins"] = margins_json(analysis.margins)
        out["verdict"] = verdict_json(analysis.margins)
        out["verdict_not_covered"] = list(analysis.margins.verdict.unchecked)
    if analysis.response is not None:
        out["response"] = response_json(analysis.response)
    return out
