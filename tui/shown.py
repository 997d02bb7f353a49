"""What the workbench shows of an analysis: Rich text and plain data, ready to place.

Made where the analysis is (the app's solve worker, or the first solve's own process, see
``tui.early``), so the interface thread only places it; this module imports no textual, and
what it makes pickles without the numerical modules (the first results come up before the app
has imported them).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

from rich.console import Group, RenderableType
from rich.table import Table
from rich.text import Text

from beamtone.calc.caution import CAUTION

if TYPE_CHECKING:  # pragma: no cover
    import numpy as np

    from beamtone.calc.analysis import Analysis
    from beamtone.calc.model import Member

__all__ = [
    "ANSWERS",
    "MapData",
    "MapLine",
    "PlotData",
    "Shown",
    "answers",
    "body",
    "derived_text",
    "map_data",
    "plot_data",
    "shown",
    "summary",
    "verdict_line",
]

# The further answers, each a section drawn by beamtone.render (as the command line prints it)
ANSWERS = ("directions", "theories", "margins", "bands")


@dataclass(frozen=True)
class PlotData:
    """What the mode plot shows.

    Attributes
    ----------
    length : float
        Member length [m].
    x : ndarray
        Positions [m].
    shapes : list of ndarray
        Deflections at ``x``, scaled to unit maximum.
    labels : list of str
        One per shape (e.g. ``"1: 16.4 Hz"``).
    supports : list of (float, str)
        Position [m] and kind of every support.
    masses, springs : list of float
        Positions [m].
    """

    length: float
    x: np.ndarray
    shapes: list[np.ndarray]
    labels: list[str]
    supports: list[tuple[float, str]]
    masses: list[float]
    springs: list[float]


@dataclass(frozen=True)
class MapLine:
    """One excitation line of the frequency map [Hz]: the line (or range) and its band."""

    excitation: str
    order: float | None
    low_hz: float
    high_hz: float
    band_low_hz: float
    band_high_hz: float


@dataclass(frozen=True)
class MapData:
    """What the frequency map shows, from calc's margin table and bands.

    Attributes
    ----------
    lines : tuple of MapLine
        The excitation lines.
    modes : dict
        Per direction, its modes in the margin table as ``(number, frequency [Hz])``.
    inside : frozenset of (str, int)
        The ``(direction, number)`` of every mode inside a line's band.
    bands : dict
        ``(direction, number)`` to the mode's band ``(low, high)`` [Hz] over the tolerances.
    """

    lines: tuple[MapLine, ...]
    modes: dict[str, list[tuple[int, float]]]
    inside: frozenset[tuple[str, int]]
    bands: dict[tuple[str, int], tuple[float, float]]


@dataclass(frozen=True)
class Shown:
    """Everything the workbench shows of one analysis.

    Attributes
    ----------
    verdict : Text
        The governing mode and the excitation verdict (:func:`verdict_line`).
    summary : RenderableType
        The modes, bounds and checks (:func:`summary`).
    answers : dict
        Each further section's lines (:func:`answers`).
    map : MapData or None
        The frequency map (None without excitations).
    plot : PlotData
        The first mode shapes.
    derived : str
        The section and member properties (:func:`derived_text`).
    """

    verdict: Text
    summary: RenderableType
    answers: dict[str, list[str]]
    map: MapData | None
    plot: PlotData
    derived: str


def shown(analysis: Analysis) -> Shown:
    """All the workbench shows of ``analysis``."""
    return Shown(
        verdict=verdict_line(analysis),
        summary=summary(analysis),
        answers=answers(analysis),
        map=map_data(analysis),
        plot=plot_data(analysis),
        derived=derived_text(analysis.sheet.member),
    )


def plot_data(analysis: Analysis) -> PlotData:
    """The first three depth-plane mode shapes with the supports and attachments."""
    member = analysis.sheet.member
    modes = analysis.modes.modes[:3]
    supports = [(0.0, member.left), (member.length, member.right)]
    supports += [(s.at, s.kind) for s in member.inner_supports]
    return PlotData(
        length=member.length,
        x=modes[0].x,
        shapes=[m.w for m in modes],
        labels=[f"{m.number}: {m.frequency_hz:.4g} Hz" for m in modes],
        supports=supports,
        masses=[p.at for p in member.masses],
        springs=[s.at for s in member.springs],
    )


def map_data(analysis: Analysis) -> MapData | None:
    """The frequency map's content (None without excitations)."""
    table = analysis.margins
    if table is None:
        return None
    modes: dict[str, list[tuple[int, float]]] = {}
    for row in table.rows:
        found = modes.setdefault(row.direction, [])
        if all(n != row.mode for n, _ in found):
            found.append((row.mode, row.frequency_hz))
    bands = {}
    if analysis.bands is not None:
        bands = {(b.direction, b.number): (b.low_hz, b.high_hz) for b in analysis.bands.modes}
    lines = tuple(
        MapLine(ln.excitation, ln.order, ln.low_hz, ln.high_hz, ln.band_low_hz, ln.band_high_hz)
        for ln in table.lines
    )
    inside = frozenset((r.direction, r.mode) for r in table.rows if not r.clear)
    return MapData(lines, modes, inside, bands)


def derived_text(member: Member) -> str:
    """The section and member properties of a solved member, one line per segment."""
    parts = []
    for i, seg in enumerate(member.segments):
        sec = seg.section
        name = f"segment {i}: " if len(member.segments) > 1 else ""
        E = seg.material.youngs_modulus / 1e9
        parts.append(
            f"{name}A = {sec.area * 1e6:.5g} mm², I = {sec.second_moment * 1e12:.5g} mm⁴, "
            f"m = {seg.mass_per_length:.4g} kg/m, E = {E:.4g} GPa"
        )
    parts.append(f"member mass {member.member_mass:.4g} kg, length {member.length:.4g} m")
    return "\n".join(parts)


def body(view: Shown) -> RenderableType:
    """The results' main block: verdict, summary and the caution."""
    return Group(view.verdict, view.summary, Text(CAUTION, style="italic"))


def summary(analysis: Analysis) -> RenderableType:
    """The results as Rich renderables (also used by the tests)."""
    result, check = analysis.modes, analysis.handbook
    table = Table(box=None, pad_edge=False, header_style="bold", expand=False, padding=(0, 1))
    table.add_column("#", justify="right")
    table.add_column("f [Hz]", justify="right")
    table.add_column("error", justify="right")
    table.add_column("mass", justify="right")
    if check is not None:
        table.add_column("handbook", justify="right")
    for i, mode in enumerate(result.modes):
        row = [
            str(mode.number),
            f"{mode.frequency_hz:.6g}",
            f"{mode.estimated_error:.0e}",
            f"{100 * mode.effective_mass_fraction:.0f}%",
        ]
        if check is not None:
            row.append(f"{check.frequencies_hz[i]:.6g}")
        table.add_row(*row)
    est, low, br = analysis.estimate, analysis.lower_bound, analysis.bracket
    lines = Text()
    if result.rigid_body_modes:
        lines.append(f"rigid-body modes: {result.rigid_body_modes} (not listed)\n", style="dim")
    lines.append("Rayleigh ", style="bold")
    lines.append(f"{est.frequency_hz:.6g} Hz, upper bound, shape {est.shape}\n")
    if est.formula:
        lines.append(f"  {est.formula}\n", style="dim")
    lines.append("Dunkerley ", style="bold")
    lines.append(
        f"{low.frequency_hz:.6g} Hz, lower bound\n" if low.frequency_hz else "no bound (rigid)\n"
    )
    if br.inside:
        lines.append("bracket  ", style="bold")
        lines.append(_bracket_bar(br.lower_hz, br.fe_hz, br.upper_hz) + "\n")
    else:
        lines.append(br.message + "\n", style="bold red")
    if analysis.ritz is not None:
        bounds = ", ".join(f"{f:.5g}" for f in analysis.ritz.frequencies_hz[:3])
        lines.append("Ritz     ", style="bold")
        lines.append(f"{bounds} Hz\n")
    eq = analysis.equivalent
    lines.append("1-DOF    ", style="bold")
    lines.append(f"{eq.mass_kg:.4g} kg, {eq.stiffness_n_per_m:.4g} N/m at {eq.at_m:.4g} m\n")
    if check is not None:
        lines.append(f"handbook: {check.case}\n", style="dim")
    groups = [g for g in analysis.groups.groups if not g.variable.startswith("omega")][:6]
    if groups:
        lines.append("groups   ", style="bold")
        lines.append(", ".join(f"{g.expression} = {g.value:.4g}" for g in groups) + "\n")
    if analysis.margins is not None:  # the worksheet's excitations (calc.excitation)
        verdict = analysis.margins.verdict
        lines.append("verdict  ", style="bold")
        lines.append(verdict.text + "\n", style="bold" if verdict.clear else "bold red")
    for w in analysis.warnings:
        lines.append(f"! {w}\n", style="yellow")
    return Group(table, lines)


def _bracket_bar(lower: float | None, fe: float, upper: float) -> str:
    if lower is None:
        return f"FE {fe:.6g} ≤ {upper:.6g} Hz"
    width = 12
    span = max(upper - lower, 1e-300)
    pos = int(round((fe - lower) / span * (width - 1)))
    bar = "".join("◆" if i == pos else "─" for i in range(width))
    return f"{lower:.5g} ├{bar}┤ {upper:.5g} Hz"


def verdict_line(analysis: Analysis) -> Text:
    """The governing mode and its direction, and the excitation verdict, in one or two lines."""
    out = Text()
    directions = analysis.directions
    governing = directions.governing if directions is not None else None
    if governing is not None:
        plane = {"depth": "depth plane", "width": "width plane"}.get(
            governing.direction, governing.direction
        )
        out.append("governing ", style="bold")
        out.append(f"{governing.frequency_hz:.6g} Hz, {plane} mode {governing.number}")
        missing = [d.name for d in directions.directions if not d.computed]
        if missing:
            out.append(f" (not computed: {', '.join(missing)}; may be lower)", style="yellow")
        out.append("\n")
    if analysis.margins is not None:
        verdict = analysis.margins.verdict
        out.append("verdict   ", style="bold")
        out.append(verdict.text, style="bold green" if verdict.clear else "bold red")
        out.append("\n")
    return out


def answers(analysis: Analysis) -> dict[str, list[str]]:
    """Each further section's lines (empty where the worksheet does not ask for it), drawn by
    beamtone.render as the command line prints them: every direction's modes, Euler-Bernoulli
    against Timoshenko where they differ, the excitation margins with the verdict, the bands
    over the tolerances with the ranked sensitivities."""
    from beamtone.render.bands import band_lines
    from beamtone.render.directions import direction_lines, governing_lines
    from beamtone.render.margins import margin_lines
    from beamtone.render.text import theory_lines

    out: dict[str, list[str]] = dict.fromkeys(ANSWERS, [])
    if analysis.directions is not None:
        out["directions"] = (
            governing_lines(analysis.directions) + [""] + direction_lines(analysis.directions)
        )
    pair = analysis.theories
    if pair is not None and (pair.timoshenko is None or pair.shown):
        out["theories"] = theory_lines(pair)
    if analysis.margins is not None:
        out["margins"] = margin_lines(analysis.margins, analysis.sheet.excitations)
    if analysis.bands is not None:
        out["bands"] = band_lines(analysis.bands)
    return out
