"""Groups view: the worksheet's dimensionless groups, and a calculator for any variable list."""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import Screen
from textual.widgets import Button, DataTable, Footer, Header, Input, Static

from beamtone.calc.errors import InputError

__all__ = ["GroupsScreen"]


class GroupsScreen(Screen[None]):
    """Shows the member's groups (from the last solve) and a free-form calculator."""

    BINDINGS = [Binding("escape", "back", "back")]

    def __init__(self, analysis: object | None) -> None:
        super().__init__()
        self.analysis = analysis

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

    @on(Input.Submitted, "#variables")
    @on(Input.Changed, "#variables")
    def _calculate(self, event: Input.Changed | Input.Submitted) -> None:
        from beamtone.calc import variable_groups

        out = self.query_one("#calculator", Static)
        items = event.value.split()
        if not items:
            out.update("")
            return
        try:
            result = variable_groups(items)
        except InputError as exc:
            out.update(f"[b red]{exc.message}[/]")
            out.set_class(True, "error")
            return
        out.set_class(False, "error")
        lines = [f"rank {result.rank}; repeating {', '.join(result.repeating)}"]
        lines += [f"  {g.symbol} = {g.expression}" for g in result.groups]
        out.update("\n".join(lines))
