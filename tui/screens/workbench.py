"""The main screen: the entry form on the left, live results and mode shapes on the right."""

from __future__ import annotations

import asyncio
import threading
from typing import TYPE_CHECKING, Any

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.timer import Timer
from textual.widgets import Footer, Header

from beamtone.calc.errors import InputError
from beamtone.tui.document import Document
from beamtone.tui.early import EarlySolve
from beamtone.tui.shown import Shown
from beamtone.tui.widgets.debounce import DEBOUNCE
from beamtone.tui.widgets.form import WorksheetForm
from beamtone.tui.widgets.modeplot import ModePlot
from beamtone.tui.widgets.quantity import QuantityField
from beamtone.tui.widgets.results import ResultsView

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis

__all__ = ["Workbench"]

# Held while the unit registry is built: the first solve's worker builds it after the results
# are shown, and a solve of a quick first edit must not build a second one beside it.
_UNITS = threading.Lock()


class Workbench(Screen[None]):
    """Edit a worksheet and see its results.

    Parameters
    ----------
    document : Document
        The worksheet being edited.
    first : EarlySolve, optional
        The first solve of ``document``, already running in a process of its own (``beamtone
        FILE`` starts it before the interface is imported); its answer is shown first.
    """

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

    def __init__(self, document: Document, first: EarlySolve | None = None) -> None:
        super().__init__()
        self.document = document
        self._first = first
        self._last_error: InputError | None = None  # the shown solve's error, if it failed
        # pending: a solve is scheduled or running for the latest inputs
        self._timer: Timer | None = None
        self._version = 0
        self._solving: dict | None = None
        self.solves = 0  # solves shown
        self.finished = 0  # solves finished, shown or failed
        self.pending = False
        # what the shown results (or the shown error) were solved from, an event set each
        # time a solve of the latest inputs finishes, and one set each time results are
        # shown (before the form's marks): scripts and tests wait on these
        self.solved: dict | None = None
        self.solve_finished = asyncio.Event()
        self.results_shown = asyncio.Event()
        self._mounted = False
        self.last_edit = ""  # the latest edit, "key = text": what the results are for
        self._solving_edit = ""

    def compose(self) -> ComposeResult:
        # the first solve starts before the form is built: the worker imports the numerical
        # libraries (or waits for the process already solving) while textual lays out the
        # screen; the unit registry is built after the first results are shown
        self._version += 1
        self.pending = True
        self._solving = self.document.plain()
        self._early: list[tuple[Any, tuple]] = []  # outcomes that came before on_mount
        self._run(self._solving, self._version, self._first)
        yield Header()
        with Horizontal(id="split"):
            yield WorksheetForm(self.document, id="form", lazy=True)
            with VerticalScroll(id="results-column"):
                yield ModePlot(id="plot")
                yield ResultsView(id="results")
        yield Footer()

    def on_mount(self) -> None:
        self.app.refresh_title()  # type: ignore[attr-defined]
        self._mounted = True
        early, self._early = self._early, []
        for method, args in early:  # what the first solve handed back before the screen was up
            method(*args)

    def _deliver(self, method: Any, *args: Any) -> None:
        """Call ``method`` on the interface thread (from a worker), once the screen is up."""

        def deliver() -> None:
            if self._mounted:
                method(*args)
            else:
                self._early.append((method, args))

        self.app.call_from_thread(deliver)

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
        if results.shown is not None:
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

    def on_unmount(self) -> None:
        if self._first is not None:  # closed before the first solve answered
            self._first.cancel()

    @work(thread=True, exclusive=True, group="solve", exit_on_error=False)
    def _run(self, data: dict, version: int, first: EarlySolve | None = None) -> None:
        """Solve ``data`` and hand back what to show, made here, off the interface thread.

        With ``first`` (the first solve, running in a process of its own), its answer is
        shown as soon as it arrives; the analysis it shows is read back after that, and the
        unit registry built, before the fields read their text."""
        outcome = first.outcome(data) if first is not None else None
        if outcome is not None and outcome[0] == "done":
            view, blob = outcome[1]
            self._deliver(self._display, view, version)
            import pickle

            from beamtone.calc.analysis import Analysis

            try:  # our own child's answer through a pipe (see tui.early)
                analysis = pickle.loads(blob)  # noqa: S301
            except Exception:  # noqa: BLE001 - unreadable: solve here instead
                analysis = None
            if isinstance(analysis, Analysis):
                self._deliver(self._done, analysis, view, version)
                self._units()
                return
            outcome = None
        from beamtone.calc.analysis import analyse
        from beamtone.calc.worksheet import from_data
        from beamtone.tui.shown import shown

        if outcome is None:
            try:
                self._units(announce=False)
                analysis = analyse(from_data(data, "<app>"))
                self._deliver(self._done, analysis, shown(analysis), version)
            except InputError as exc:
                self._deliver(self._failed, exc, version)
            except Exception as exc:  # the outermost layer of the app's work: no traceback
                problem = InputError(
                    "member",
                    None,
                    "a model beamtone can solve",
                    f"internal error, please report: {type(exc).__name__}: {exc}",
                )
                self._deliver(self._failed, problem, version)
        else:  # the first solve's process found an entry to fix
            self._deliver(self._failed, outcome[1], version)
        self._units()

    def _units(self, announce: bool = True) -> None:
        """Build the unit registry (in a worker) and, the first time, let the fields read."""
        if QuantityField.checking:
            return
        from beamtone.calc.units import registry

        with _UNITS:
            registry()
        if announce:
            self._deliver(self._units_ready)

    def _units_ready(self) -> None:
        """The unit registry is built: fields read their text at once from now on."""
        if QuantityField.checking:
            return
        QuantityField.checking = True
        form = self.query_one(WorksheetForm)
        form.recheck_all()
        if self._last_error is not None:
            form.show_error(self._last_error)

    def _display(self, view: Shown, version: int) -> None:
        """Show results before their analysis is at hand (the first solve's own process)."""
        if version != self._version:
            return
        self.solves += 1
        self.results_shown.set()
        self.query_one(ResultsView).show(view, self._for_text())
        self.query_one(ModePlot).show(view.plot)
        self.query_one(WorksheetForm).update_derived(view.derived)

    def _done(self, analysis: Analysis, view: Shown, version: int) -> None:
        if version != self._version:
            return  # the inputs changed again meanwhile; a newer solve is on its way
        results = self.query_one(ResultsView)
        if results.shown is view:  # on screen already: now with its analysis
            results.analysis = analysis
        else:
            self.solves += 1
            self.results_shown.set()
            results.show(view, self._for_text(), analysis)
            self.query_one(ModePlot).show(view.plot)
        self._settle(version, view.derived, None)

    def _failed(self, exc: InputError, version: int) -> None:
        if version != self._version:
            return
        results = self.query_one(ResultsView)
        results.mark("stale" if results.shown is not None else "failed", exc.message)
        plot = self.query_one(ModePlot)
        plot.show(plot.data, stale=True)
        self._settle(version, "", exc)

    def _settle(self, version: int, derived: str, error: InputError | None) -> None:
        """After a solve's results (or its error) are shown: the form's marks, then done.

        The first time, the rest of the form is built first (it waited for the results)."""
        form = self.query_one(WorksheetForm)
        if not form.complete:

            async def filled() -> None:
                await form.fill()
                self._settle(version, derived, error)

            self.call_later(filled)
            return
        form.clear_solve_errors()
        if error is not None:
            form.show_error(error)
        else:
            form.update_derived(derived)
        self._last_error = error
        if version != self._version:
            return  # edited while the form was completed: a newer solve is on its way
        self.pending = False
        self.finished += 1
        self.solved = self._solving
        self.solve_finished.set()

    def _for_text(self) -> str:
        """Which inputs the results are for: the file and the latest edit."""
        name = self.document.path.name if self.document.path else "the new worksheet"
        edited = f", after {self._solving_edit}" if self._solving_edit else ""
        return f"for {name}{edited}"

    async def reload(self) -> None:
        """Rebuild the form after the document was replaced or changed from outside."""
        form = self.query_one(WorksheetForm)
        form.document = self.document
        await form.rebuild()
        self.schedule(now=True)
