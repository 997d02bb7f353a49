"""Groups view: the worksheet's dimensionless groups, and a calculator for any variable list."""

from __future__ import annotations

import asyncio

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import Screen
from textual.timer import Timer
from textual.widgets import Button, DataTable, Footer, Header, Input, Static

from beamtone.calc.errors import InputError
from beamtone.tui.widgets.debounce import DEBOUNCE

__all__ = ["GroupsScreen"]


class GroupsScreen(Screen[None]):
    """Shows the member's groups (from the last solve) and a free-form calculator."""

    BINDINGS = [Binding("escape", "back", "back")]

    def __init__(self, analysis: object | None) -> None:
        super().__init__()
        self.analysis = analysis
        self.asked = ""  # the variable list as typed
        self.shown = ""  # the variable list whose answer is on screen
        self._timer: Timer | None = None
        self.answered = asyncio.Event()  # set each time an answer is shown

    def compose(self) -> ComposeResult:
        yield Header()
        with Vertical(id="groups"):
            yield Static("Dimensionless groups of this member (L, EI, m repeating)", classes="step")
            yield DataTable(id="member-groups", cursor_type="row")
            yield Static(
                "f_i = Omega_i / (2 pi L^2) * sqrt(EI/m), with Omega_i = omega_i L^2 sqrt(m/EI)",
                classes="note",
            )
            yield Static("Any variable list (NAME=UNIT ..., the wanted one first)", classes="step")
            yield Input(placeholder="f=Hz L=m EI=N*m^2 m=kg/m", id="variables")
            yield Static("", id="calculator")
            yield Button("back", id="back")
        yield Footer()

    def on_mount(self) -> None:
        table = self.query_one("#member-groups", DataTable)
        table.add_columns("", "group", "value", "from")
        from beamtone.calc.analysis import Analysis

        if isinstance(self.analysis, Analysis):
            for g in self.analysis.groups.groups:
                table.add_row(g.symbol, g.expression, f"{g.value:.6g}", g.meaning)
        else:
            table.add_row("", "solve the worksheet first", "", "")

    def action_back(self) -> None:
        self.dismiss(None)

    @on(Button.Pressed, "#back")
    def _back(self) -> None:
        self.dismiss(None)

    @on(Input.Changed, "#variables")
    def _typed(self, event: Input.Changed) -> None:
        """Work after a pause in typing, in a worker: the screen never waits for sympy."""
        self.asked = event.value
        if self._timer is not None:
            self._timer.stop()
        self._timer = self.set_timer(DEBOUNCE, self._start)

    @on(Input.Submitted, "#variables")
    def _submitted(self, event: Input.Submitted) -> None:
        self.asked = event.value
        self._start()

    def _start(self) -> None:
        if self._timer is not None:
            self._timer.stop()
            self._timer = None
        out = self.query_one("#calculator", Static)
        if not self.asked.split():
            self.shown = self.asked
            out.update("")
            return
        out.update(Text("working…", style="dim"))
        self._calculate(self.asked)

    @work(thread=True, exclusive=True, group="groups", exit_on_error=False)
    def _calculate(self, text: str) -> None:
        from beamtone.calc.groups import parse_variables, pi_groups, variable

        try:
            pairs = parse_variables(text.split())
            result = pi_groups([variable(n, u) for n, u in pairs])
        except InputError as exc:
            self.app.call_from_thread(self._show, text, exc.message, True)
            return
        except Exception as exc:  # the outermost layer of this work: never a traceback
            problem = f"internal error, please report: {type(exc).__name__}: {exc}"
            self.app.call_from_thread(self._show, text, problem, True)
            return
        lines = [f"rank {result.rank}; repeating {', '.join(result.repeating)}"]
        lines += [f"  {g.symbol} = {g.expression}" for g in result.groups]
        self.app.call_from_thread(self._show, text, "\n".join(lines), False)

    def _show(self, text: str, shown: str, error: bool) -> None:
        if text != self.asked:
            return  # typed on meanwhile: a newer answer is on its way
        self.shown = text
        self.answered.set()
        out = self.query_one("#calculator", Static)
        # the user's own text may come back in a message: never read as markup
        out.update(Text(shown, style="bold red" if error else ""))
        out.set_class(error, "error")
