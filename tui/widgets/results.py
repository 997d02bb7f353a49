"""The results column: modes, bounds, handbook check, warnings; marked when out of date."""

from __future__ import annotations

from typing import TYPE_CHECKING

from rich.console import Group, RenderableType
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.containers import HorizontalScroll, Vertical
from textual.widgets import Static

from beamtone.calc.caution import CAUTION
from beamtone.tui.widgets.freqmap import FrequencyMap

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis

__all__ = ["ResultsView", "answers", "summary", "verdict_line"]

# The further answers, each a section drawn by beamtone.render (as the command line prints it)
_ANSWERS = ("directions", "theories", "margins", "bands")


class ResultsView(Vertical):
    """Shows an :class:`~calc.analysis.Analysis`; states ``current``, ``computing``, ``stale``
    (the inputs have an error: these results belong to earlier inputs) or ``failed``.

    A change of state redraws only the one-line banner; the results below are redrawn only
    when new ones arrive (or dimmed when they go out of date).
    """

    DEFAULT_CSS = """
    ResultsView { height: auto; padding: 0 1; }
    ResultsView > #banner, ResultsView > #inputs { height: auto; }
    ResultsView > #inputs { color: $text-muted; }
    ResultsView > #body { height: auto; }
    ResultsView > .answer-box { height: auto; margin: 1 0 0 0; }
    ResultsView .answer { height: auto; width: auto; }
    ResultsView.-stale > #body, ResultsView.-failed > #body,
    ResultsView.-stale .answer, ResultsView.-failed .answer { color: $text-disabled; }
    """

    def __init__(self, id: str | None = None) -> None:  # noqa: A002 - textual's name
        super().__init__(id=id)
        self.analysis: Analysis | None = None
        self.state = "empty"
        self.problem = ""
        self.inputs = ""  # which inputs the shown results are for

    def compose(self) -> ComposeResult:
        yield Static(self._banner(), id="banner")
        yield Static("", id="inputs")
        yield Static(Text(CAUTION, style="italic"), id="body")
        yield FrequencyMap(id="map")
        for name in _ANSWERS:  # wide tables scroll sideways in their own box, never cut
            with HorizontalScroll(id=f"{name}-box", classes="answer-box"):
                yield Static("", id=name, classes="answer")

    def show(self, analysis: Analysis, inputs: str = "") -> None:
        """Show fresh results; ``inputs`` says which inputs they are for."""
        self.analysis = analysis
        self.state = "current"
        self.problem = ""
        self.inputs = inputs
        self.set_classes("")
        self.query_one("#banner", Static).update(self._banner())
        self.query_one("#inputs", Static).update(Text(inputs))
        self.query_one("#body", Static).update(
            Group(verdict_line(analysis), summary(analysis), Text(CAUTION, style="italic"))
        )
        self.query_one(FrequencyMap).show(analysis)
        for name, lines in answers(analysis).items():
            widget = self.query_one(f"#{name}", Static)
            self.query_one(f"#{name}-box").display = bool(lines)
            widget.update(Text("\n".join(lines), no_wrap=True, overflow="ignore"))

    def mark(self, state: str, problem: str = "") -> None:
        """Mark the shown results ``computing``, ``stale`` or ``failed``."""
        self.state = state
        self.problem = problem
        self.set_classes(f"-{state}" if state in ("stale", "failed") else "")
        self.query_one("#banner", Static).update(self._banner())

    def _banner(self) -> Text:
        if self.state == "current":
            return Text("● results up to date", style="bold green")
        if self.state == "computing":
            return Text("◌ computing…", style="bold yellow")
        if self.state == "stale":
            return Text(f"✗ OUT OF DATE (earlier inputs, below): {self.problem}", style="bold red")
        if self.state == "failed":
            return Text(f"✗ NOT SOLVED: {self.problem}", style="bold red")
        return Text("no results yet", style="dim")


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

    out: dict[str, list[str]] = dict.fromkeys(_ANSWERS, [])
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
