"""The results column: modes, bounds, handbook check, warnings; marked when out of date."""

from __future__ import annotations

from typing import TYPE_CHECKING

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import HorizontalScroll, Vertical
from textual.widgets import Static

from beamtone.calc.caution import CAUTION
from beamtone.tui.shown import ANSWERS, Shown, answers, body, summary, verdict_line
from beamtone.tui.widgets.freqmap import FrequencyMap

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis

__all__ = ["ResultsView", "answers", "summary", "verdict_line"]


class ResultsView(Vertical):
    """Shows what the workbench makes of an analysis (:class:`~tui.shown.Shown`); states
    ``current``, ``computing``, ``stale`` (the inputs have an error: these results belong to
    earlier inputs) or ``failed``.

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
        self.analysis: Analysis | None = None  # the analysis shown (once it is at hand)
        self.shown: Shown | None = None
        self.state = "empty"
        self.problem = ""
        self.inputs = ""  # which inputs the shown results are for

    def compose(self) -> ComposeResult:
        yield Static(self._banner(), id="banner")
        yield Static("", id="inputs")
        yield Static(Text(CAUTION, style="italic"), id="body")
        yield FrequencyMap(id="map")
        for name in ANSWERS:  # wide tables scroll sideways in their own box, never cut
            with HorizontalScroll(id=f"{name}-box", classes="answer-box"):
                yield Static("", id=name, classes="answer")

    def show(self, view: Shown, inputs: str = "", analysis: Analysis | None = None) -> None:
        """Show fresh results; ``inputs`` says which inputs they are for; ``analysis`` is the
        analysis they show (None while it is still read back: see ``tui.early``)."""
        self.shown = view
        self.analysis = analysis
        self.state = "current"
        self.problem = ""
        self.inputs = inputs
        self.set_classes("")
        self.query_one("#banner", Static).update(self._banner())
        self.query_one("#inputs", Static).update(Text(inputs))
        self.query_one("#body", Static).update(body(view))
        self.query_one(FrequencyMap).show(view.map)
        for name, lines in view.answers.items():
            widget = self.query_one(f"#{name}", Static)
            self.query_one(f"#{name}-box").display = bool(lines)
            widget.update(Text("\n".join(lines), no_wrap=True, overflow="ignore"))

    def mark(self, state: str, problem: str = "") -> None:
        """Mark the shown results ``computing``, ``stale`` or ``failed``."""
        self.state = state
        self.problem = problem
        self.set_classes(f"-{state}" if state in ("stale", "failed") else "")
        self.query_one("#banner", Static).update(self._banner())
        if self.inputs:  # which inputs the dimmed results below are for, never "now"
            earlier = " (earlier inputs: not the latest edits)" if state == "stale" else ""
            self.query_one("#inputs", Static).update(Text(self.inputs + earlier))

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
