"""The results column: modes, bounds, handbook check, warnings; marked when out of date."""

from __future__ import annotations

from typing import TYPE_CHECKING

from rich.console import Group, RenderableType
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Vertical
from textual.widgets import Static

from beamtone.calc.caution import CAUTION

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis

__all__ = ["ResultsView", "summary"]


class ResultsView(Vertical):
    """Shows an :class:`~calc.analysis.Analysis`; states ``current``, ``computing``, ``stale``
    (the inputs have an error: these results belong to earlier inputs) or ``failed``.

    A change of state redraws only the one-line banner; the results below are redrawn only
    when new ones arrive (or dimmed when they go out of date).
    """

    DEFAULT_CSS = """
    ResultsView { height: auto; padding: 0 1; }
    ResultsView > #banner { height: auto; }
    ResultsView > #body { height: auto; }
    ResultsView.-stale > #body, ResultsView.-failed > #body { color: $text-disabled; }
    """

    def __init__(self, id: str | None = None) -> None:  # noqa: A002 - textual's name
        super().__init__(id=id)
        self.analysis: Analysis | None = None
        self.state = "empty"
        self.problem = ""

    def compose(self) -> ComposeResult:
        yield Static(self._banner(), id="banner")
        yield Static(Text(CAUTION, style="italic"), id="body")

    def show(self, analysis: Analysis) -> None:
        """Show fresh results."""
        self.analysis = analysis
        self.state = "current"
        self.problem = ""
        self.set_classes("")
        self.query_one("#banner", Static).update(self._banner())
        self.query_one("#body", Static).update(
            Group(summary(analysis), Text(CAUTION, style="italic"))
        )

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
            return Text(f"✗ OUT OF DATE: {self.problem}", style="bold red")
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
