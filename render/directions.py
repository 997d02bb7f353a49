"""Every direction in the command line's text and JSON: the governing mode first, then a table
per direction (width plane, torsion, axial), what each support holds there, the cross-checks
and what the model leaves out."""

from __future__ import annotations

import textwrap
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from beamtone.calc.directions import LABELS

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.directions import Direction, DirectionMode, Directions
    from beamtone.calc.theories import TheoryPair

__all__ = [
    "governing_lines",
    "depth_heading",
    "direction_lines",
    "assumption_lines",
    "directions_json",
    "all_modes_json",
    "theory_json",
    "abridged",
]

# A list of supports longer than this is shown by its first and last entries and a count
# (the worksheet holds them all; JSON lists them all).
LISTED = 8


def abridged(items: Sequence[str], limit: int = LISTED) -> str:
    """``items`` joined by commas; past ``limit`` entries, the first few, how many are left
    out and the last two (a member on a thousand hangers stays one readable line)."""
    if len(items) <= limit:
        return ", ".join(items)
    head, tail = list(items[: limit - 2]), list(items[-2:])
    return ", ".join([*head, f"... {len(items) - len(head) - len(tail)} more ...", *tail])


_UNITS = {"depth": "kg", "width": "kg", "torsion": "kg*m^2", "axial": "kg"}
_WHAT = {
    "depth": "bending in the depth plane (as drawn)",
    "width": "bending in the width plane (about the other principal axis)",
    "torsion": "twist about the member's axis",
    "axial": "stretching along the member's axis",
}


def _fmt(value: float, digits: int = 6) -> str:
    from beamtone.render.text import _fmt as fmt  # one number format for all solve output

    return fmt(value, digits)


def _mode_name(mode: DirectionMode) -> str:
    return f"{LABELS[mode.direction]} mode {mode.number}"


def governing_lines(directions: Directions) -> list[str]:
    """The governing mode: the lowest natural frequency of every direction computed."""
    gov = directions.governing
    if gov is None:
        return ["  governing no mode was computed in any direction"]
    line = (
        f"  governing {_fmt(gov.frequency_hz)} Hz, {_mode_name(gov)}: the lowest natural "
        "frequency of all directions"
    )
    out = [line]
    same = [d for d in directions.directions if d.same_as and gov.direction in (d.name, d.same_as)]
    if same:
        out.append("            (the depth and width planes coincide: two modes at this frequency)")
    missing = [f"{LABELS[d.name]}" for d in directions.directions if not d.computed]
    if missing:
        out.append(f"            not computed: {', '.join(missing)} (see below); it may be lower")
    return out


def depth_heading(directions: Directions) -> str:
    """The heading line of the depth plane's table."""
    return f"  depth plane  {_WHAT['depth']}; {abridged(directions['depth'].supports)}"


def _table(direction: Direction) -> list[str]:
    """The direction's modes, each row led by the direction's name (the depth plane's table
    is the one whose rows start with the mode number)."""
    ref = direction.reference_hz
    effective = "eff. inertia" if direction.name == "torsion" else "eff. mass"
    header = ["direction", "mode", "frequency [Hz]", "omega [rad/s]", "est. error", effective]
    header.append("cumul.")
    # a bending plane's handbook reference is Euler-Bernoulli: compared with that solve
    pair = direction.theories
    compared = [m.frequency_hz for m in direction.modes]
    if pair is not None and pair.theory != "euler-bernoulli":
        compared = [m.frequency_hz for m in pair.euler_bernoulli.modes]
    if ref is not None:
        header += ["reference [Hz]", "FE vs ref" if pair is None else "E-B vs ref"]
    rows = [header]
    cumulative = 0.0
    for i, m in enumerate(direction.modes):
        cumulative += m.effective_fraction
        row = [
            direction.name,
            str(m.number),
            _fmt(m.frequency_hz),
            _fmt(m.omega),
            f"{m.estimated_error:.1e}",
            f"{100 * m.effective_fraction:.1f} %",
            f"{100 * cumulative:.1f} %",
        ]
        if ref is not None:
            row += [_fmt(ref[i]), f"{100 * (compared[i] - ref[i]) / ref[i]:+.2e} %"]
        rows.append(row)
    widths = [max(len(r[c]) for r in rows) for c in range(len(header))]
    return [
        "  "
        + "   ".join([r[0].ljust(widths[0])] + [r[c].rjust(widths[c]) for c in range(1, len(r))])
        for r in rows
    ]


def direction_lines(directions: Directions) -> list[str]:
    """The width plane's, torsion's and axial motion's sections."""
    lines: list[str] = []
    for d in directions.directions[1:]:
        lines.append(f"  {LABELS[d.name]}  {_WHAT[d.name]}; {abridged(d.supports)}")
        if not d.computed:
            lines.append(f"            not computed: {d.reason}")
            lines.append("")
            continue
        if d.rigid_body_modes:
            lines.append(f"            {d.rigid_body_modes} rigid-body mode (not listed)")
        if d.same_as:
            lines.append(f"            same as the {LABELS[d.same_as]}: two physical modes each")
        lines += _table(d)
        ref = d.handbook or d.closed_form
        if ref is not None:
            lines += _wrapped("reference", f"{ref.case}: {ref.source}")
        if d.estimate is not None and d.lower_bound is not None and d.bracket is not None:
            low = d.lower_bound.frequency_hz
            # bounds of the Euler-Bernoulli fundamental; say so where the table is Timoshenko
            eb = d.theories is not None and d.theories.theory != "euler-bernoulli"
            of = " of the Euler-Bernoulli f1" if eb else ""
            lines.append(
                f"            Rayleigh {_fmt(d.estimate.frequency_hz)} Hz (upper bound{of}, "
                "static deflection shape); "
                + (f"Dunkerley {_fmt(low)} Hz (lower bound{of})" if low is not None else
                   f"no Dunkerley bound: {d.lower_bound.reason}")
            )  # fmt: skip
            lines.append(f"            bracket {d.bracket.message}")
        if d.theories is not None and not d.same_as:
            lines += _theory_lines(d.theories)
        for note in d.notes:
            lines += _wrapped("note", note)
        lines.append("")
    return lines


def _theory_lines(pair: TheoryPair) -> list[str]:
    """A bending plane's modes whose two beam theories differ by more than 1 %, both shown."""
    if pair.timoshenko is None:
        return _wrapped("theory", pair.note())
    chosen = "Timoshenko" if pair.theory == "timoshenko" else "Euler-Bernoulli"
    lines = [f"            theory {chosen}; Euler-Bernoulli is what the reference and bounds check"]
    for n in pair.shown:
        e, t = pair.euler_bernoulli.modes[n - 1], pair.timoshenko.modes[n - 1]
        lines.append(
            f"            mode {n}: Timoshenko {_fmt(t.frequency_hz)} Hz, Euler-Bernoulli "
            f"{_fmt(e.frequency_hz)} Hz, shear and rotary inertia "
            f"{100 * pair.differences[n - 1]:+.2f} %"
        )
    return lines


def _wrapped(label: str, text: str) -> list[str]:
    first = f"            {label}: "
    return textwrap.wrap(text, 92, initial_indent=first, subsequent_indent=" " * len(first))


def assumption_lines(directions: Directions) -> list[str]:
    """What the direction model assumes and leaves out."""
    lines = ["  model"]
    for note in directions.notes:
        lines += textwrap.wrap(note, 92, initial_indent="  - ", subsequent_indent="    ")
    return lines


def _mode_json(m: DirectionMode) -> dict[str, Any]:
    return {
        "direction": m.direction,
        "number": m.number,
        "frequency_hz": m.frequency_hz,
        "omega_rad_s": m.omega,
        "estimated_error": m.estimated_error,
    }


def all_modes_json(directions: Directions) -> list[dict[str, Any]]:
    """``all_modes``: every computed mode of every direction, lowest frequency first."""
    return [
        {**_mode_json(m), **theory_json(directions[m.direction].theories, m.number - 1)}
        for m in directions.all_modes
    ]


def theory_json(pair: TheoryPair | None, i: int) -> dict[str, float]:
    """Mode ``i`` (from 0) of a bending plane by each beam theory solved [Hz] (issue 17): the
    ``euler_bernoulli_hz`` and ``timoshenko_hz`` of the JSON modes."""
    if pair is None:
        return {}
    out = {"euler_bernoulli_hz": pair.euler_bernoulli.modes[i].frequency_hz}
    if pair.timoshenko is not None:
        out["timoshenko_hz"] = pair.timoshenko.modes[i].frequency_hz
    return out


def directions_json(directions: Directions) -> dict[str, Any]:
    """``directions``: per direction its modes and handbook (or closed-form) values, or why it
    was not computed; what each support holds there; its notes."""
    out: dict[str, Any] = {}
    for d in directions.directions:
        entry: dict[str, Any] = {
            "computed": d.computed,
            "reason": d.reason or None,
            "supports": list(d.supports),
            "rigid_body_modes": d.rigid_body_modes,
            "modes": [
                {
                    **_mode_json(m),
                    "effective": m.effective,
                    "effective_unit": _UNITS[d.name],
                    "effective_fraction": m.effective_fraction,
                    **theory_json(d.theories, i),
                }
                for i, m in enumerate(d.modes)
            ],
            "handbook": None,
            "same_as": d.same_as or None,
            "notes": list(d.notes),
        }
        ref = d.handbook or d.closed_form
        if ref is not None:
            entry["handbook"] = {
                "case": ref.case,
                "frequencies_hz": list(ref.frequencies_hz),
                "source": ref.source,
            }
        if d.estimate is not None and d.lower_bound is not None:
            entry["estimate_hz"] = d.estimate.frequency_hz
            entry["lower_bound_hz"] = d.lower_bound.frequency_hz
        out[d.name] = entry
    return out
