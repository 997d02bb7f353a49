"""The main screen: the entry form on the left, live results and mode shapes on the right."""

from __future__ import annotations

import asyncio

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.timer import Timer
from textual.widgets import Footer, Header

from beamtone.calc.errors import InputError
from beamtone.tui.document import Document
from beamtone.tui.widgets.debounce import DEBOUNCE
from beamtone.tui.widgets.form import WorksheetForm
from beamtone.tui.widgets.modeplot import ModePlot, PlotData
from beamtone.tui.widgets.quantity import QuantityField
from beamtone.tui.widgets.results import ResultsView

__all__ = ["Workbench"]


class Workbench(Screen[None]):
    """Edit a worksheet and see its results."""

    BINDINGS = [
        Binding("ctrl+s", "app.save", "save"),
        Binding("f2", "app.save_as", "save as"),
        Binding("ctrl+o", "app.open", "open"),
        Binding("ctrl+n", "app.new", "new"),
        Binding("f5", "app.sizing", "size"),
        Binding("f6", "app.groups", "groups"),
        Binding("f1", "app.help", "help"),
        Binding("ctrl+q", "app.quit_safely", "quit"),
    ]

    def __init__(self, document: Document) -> None:
        super().__init__()
        self.document = document
        # pending: a solve is scheduled or running for the latest inputs
        self._timer: Timer | None = None
        self._version = 0
        self._solving: dict | None = None
        self.solves = 0  # solves shown
        self.finished = 0  # solves finished, shown or failed
        self.pending = False
        # what the shown results (or the shown error) were solved from, and an event set each
        # time a solve of the latest inputs finishes: scripts and tests wait on these
        self.solved: dict | None = None
        self.solve_finished = asyncio.Event()
        self._mounted = False
        self.last_edit = ""  # the latest edit, "key = text": what the results are for
        self._solving_edit = ""

    def compose(self) -> ComposeResult:
        # the first solve starts before the form is built: the worker imports the numerical
        # libraries and builds the unit registry while textual lays out the screen
        self._version += 1
        self.pending = True
        self._solving = self.document.plain()
        self._early: tuple[str, object, int] | None = None
        self._run(self._solving, self._version)
        yield Header()
        with Horizontal(id="split"):
            yield WorksheetForm(self.document, id="form")
            with VerticalScroll(id="results-column"):
                yield ModePlot(id="plot")
                yield ResultsView(id="results")
        yield Footer()

    def on_mount(self) -> None:
        self.app.refresh_title()  # type: ignore[attr-defined]
        self._mounted = True
        if self._early is not None:  # the first solve ended before the screen was up
            how, outcome, version = self._early
            self._early = None
            (self._done if how == "done" else self._failed)(outcome, version)  # type: ignore[arg-type]

    # --- solving ---------------------------------------------------------------------------

    @on(WorksheetForm.Changed)
    def _changed(self, event: WorksheetForm.Changed) -> None:
        self.app.refresh_title()  # type: ignore[attr-defined]
        if event.edit:
            self.last_edit = event.edit
        self.schedule()

    def schedule(self, now: bool = False) -> None:
        """Solve after a short pause in typing (at once with ``now``)."""
        self._version += 1
        self.pending = True
        if self._timer is not None:
            self._timer.stop()
        results = self.query_one(ResultsView)
        if results.analysis is not None:
            results.mark("computing")
        self.query_one(WorksheetForm).mark_derived_stale()
        if now:
            self._solve()
        else:
            self._timer = self.set_timer(DEBOUNCE, self._solve)

    def _solve(self) -> None:
        self.document.autosave()  # after the typing pause: unsaved edits survive a crash
        self._solving = self.document.plain()
        self._solving_edit = self.last_edit
        self._run(self._solving, self._version)

    @work(thread=True, exclusive=True, group="solve", exit_on_error=False)
    def _run(self, data: dict, version: int) -> None:
        from beamtone.calc.analysis import analyse
        from beamtone.calc.worksheet import from_data

        try:
            analysis = analyse(from_data(data, "<app>"))
        except InputError as exc:
            self.app.call_from_thread(self._failed, exc, version)
            return
        except Exception as exc:  # the outermost layer of the app's work: never a traceback
            problem = InputError(
                "member",
                None,
                "a model beamtone can solve",
                f"internal error, please report: {type(exc).__name__}: {exc}",
            )
            self.app.call_from_thread(self._failed, problem, version)
            return
        self.app.call_from_thread(self._done, analysis, version)

    def _done(self, analysis: object, version: int) -> None:
        if version != self._version:
            return  # the inputs changed again meanwhile; a newer solve is on its way
        if not self._mounted:
            self._early = ("done", analysis, version)
            return
        self.pending = False
        self.solves += 1
        self.finished += 1
        self.solved = self._solving
        self.solve_finished.set()
        QuantityField.checking = True  # the unit registry is built: fields read at once now
        results = self.query_one(ResultsView)
        results.show(analysis, self._for_text())  # type: ignore[arg-type]
        self.query_one(ModePlot).show(_plot_data(analysis))
        form = self.query_one(WorksheetForm)
        form.clear_solve_errors()
        form.update_derived(analysis.sheet.member)  # type: ignore[attr-defined]

    def _failed(self, exc: InputError, version: int) -> None:
        if version != self._version:
            return
        if not self._mounted:
            self._early = ("failed", exc, version)
            return
        self.pending = False
        self.finished += 1
        self.solved = self._solving
        self.solve_finished.set()
        results = self.query_one(ResultsView)
        QuantityField.checking = True
        results.mark("stale" if results.analysis is not None else "failed", exc.message)
        form = self.query_one(WorksheetForm)
        form.clear_solve_errors()
        form.show_error(exc)
        plot = self.query_one(ModePlot)
        plot.show(plot.data, stale=True)

    def _for_text(self) -> str:
        """Which inputs the results are for: the file and the latest edit."""
        name = self.document.path.name if self.document.path else "the new worksheet"
        edited = f", after {self._solving_edit}" if self._solving_edit else ""
        return f"for {name} as on screen{edited}"

    async def reload(self) -> None:
        """Rebuild the form after the document was replaced or changed from outside."""
        form = self.query_one(WorksheetForm)
        form.document = self.document
        await form.rebuild()
        self.schedule(now=True)


def _plot_data(analysis: object) -> PlotData:
    from beamtone.calc.analysis import Analysis

    assert isinstance(analysis, Analysis)
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
