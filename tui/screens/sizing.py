"""Sizing view: vary one quantity to meet a frequency target or clear an excitation."""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import Screen
from textual.widgets import Button, DataTable, Footer, Header, Input, Label, Select, Static

from beamtone.calc.errors import InputError
from beamtone.tui.document import Document

__all__ = ["SizingScreen"]

# What each sizing input is called in messages: the app's field names.
_FIELD_NAMES = {
    "low": "low",
    "high": "high",
    "target": "frequency",
    "excitation": "frequency",
    "mode": "mode",
    "harmonics": "orders",
    "margin": "margin",
    "direction": "direction",
}


class SizingScreen(Screen[tuple[str, str, str] | None]):
    """Returns ``(key, value, new worksheet text)`` to apply, or None."""

    BINDINGS = [
        Binding("escape", "back", "back"),
        Binding("ctrl+r", "solve", "solve"),
    ]

    def __init__(self, document: Document) -> None:
        super().__init__()
        self.document = document
        self.result: object | None = None

    def compose(self) -> ComposeResult:
        from beamtone.calc.directions import DEFAULT_SIZING_DIRECTION, DIRECTIONS, LABELS
        from beamtone.calc.sizing import quantity_keys

        keys = quantity_keys(self.document.plain())
        follow = [("governing: the lowest of all directions", "governing")]
        follow += [(LABELS[d], d) for d in DIRECTIONS]
        yield Header()
        with Vertical(id="sizing"):
            yield Static("Size one value of the worksheet", classes="step")
            with Horizontal(classes="pair"):
                yield Label("vary", classes="pairlabel")
                yield Select(
                    [(k, k) for k in keys],
                    prompt="a quantity of the worksheet",
                    id="vary",
                    compact=True,
                )
            with Horizontal(classes="pair"):
                yield Label("between", classes="pairlabel")
                yield Input(placeholder="low, e.g. 20 mm", id="low", compact=True)
                yield Input(placeholder="high, e.g. 80 mm", id="high", compact=True)
            with Horizontal(classes="pair"):
                yield Label("goal", classes="pairlabel")
                yield Select(
                    [("frequency target", "target"), ("clear an excitation", "excitation")],
                    value="target",
                    allow_blank=False,
                    id="goal",
                    compact=True,
                )
            with Horizontal(classes="pair"):
                yield Label("frequency", classes="pairlabel")
                yield Input(placeholder="60 Hz, or 1480 rpm", id="frequency", compact=True)
                yield Label("mode", classes="pairlabel")
                yield Input("1", id="mode", compact=True)
            with Horizontal(classes="pair"):
                yield Label("direction", classes="pairlabel")
                yield Select(
                    follow,
                    value=DEFAULT_SIZING_DIRECTION,
                    allow_blank=False,
                    id="direction",
                    compact=True,
                )
            with Horizontal(classes="pair"):
                yield Label("margin", classes="pairlabel")
                yield Input("20%", id="margin", compact=True)
                yield Label("orders", classes="pairlabel")
                yield Input("1", id="harmonics", compact=True)
            with Horizontal(classes="buttons"):
                yield Button("solve", id="solve", variant="primary")
                yield Button("apply the chosen value", id="apply", disabled=True)
                yield Button("back", id="back")
            yield Static("", id="sizing-message")
            yield DataTable(id="solutions", cursor_type="row")
            yield Static(
                "Separation margins are common practice; the margin is yours to set and the "
                "applicable code governs.",
                classes="note",
            )
        yield Footer()

    def on_mount(self) -> None:
        table = self.query_one("#solutions", DataTable)
        table.add_columns("value", "f1 [Hz]", "member mass [kg]", "note")
        self.query_one("#vary", Select).focus()

    def action_back(self) -> None:
        self.dismiss(None)

    @on(Button.Pressed, "#back")
    def _back(self) -> None:
        self.dismiss(None)

    @on(Button.Pressed, "#solve")
    def action_solve(self) -> None:
        vary = self.query_one("#vary", Select).value
        if vary is Select.NULL:
            self._say("pick the quantity to vary")
            return
        values = {
            i: self.query_one(f"#{i}", Input).value
            for i in ("low", "high", "frequency", "mode", "margin", "harmonics")
        }
        goal = str(self.query_one("#goal", Select).value)
        values["direction"] = str(self.query_one("#direction", Select).value)
        self._say("solving…")
        self.query_one("#apply", Button).disabled = True
        self._run(self.document.text(), str(vary), goal, values)

    @work(thread=True, exclusive=True, group="sizing", exit_on_error=False)
    def _run(self, text: str, key: str, goal: str, values: dict[str, str]) -> None:
        from beamtone.calc import sizing
        from beamtone.calc.worksheet import loads

        frequency = values["frequency"]
        try:
            sheet = loads(text, "<app>")
            request = sizing.read_request(
                sheet,
                key,
                values["low"],
                values["high"],
                target=frequency if goal == "target" else None,
                excitation=frequency if goal != "target" else None,
                mode=values["mode"],
                harmonics=values["harmonics"],
                margin=values["margin"],
                names=_FIELD_NAMES,
                direction=values["direction"],
            )
            result = sizing.run_request(request)
        except InputError as exc:
            self.app.call_from_thread(self._say, exc.message, True)
            return
        except Exception as exc:  # the outermost layer of this work: never a traceback
            self.app.call_from_thread(
                self._say, f"internal error: {type(exc).__name__}: {exc}", True
            )
            return
        self.app.call_from_thread(self._show, result)

    def _say(self, text: str, error: bool = False) -> None:
        message = self.query_one("#sizing-message", Static)
        message.update(Text(text))  # messages quote what the user typed: never markup
        message.set_class(error, "error")

    def _show(self, result: object) -> None:
        from beamtone.calc.sizing import SizingResult

        assert isinstance(result, SizingResult)
        self.result = result
        self._say(result.message)
        table = self.query_one("#solutions", DataTable)
        table.clear()
        for i, s in enumerate(result.solutions):
            note = "recommended" if i == result.recommended else s.above
            table.add_row(
                Text(s.value),
                f"{s.frequency_hz:.6g}",
                f"{s.member_mass_kg:.4g}",
                Text(note),
                key=str(i),
            )
        if result.recommended is not None:
            table.move_cursor(row=result.recommended)
        self.query_one("#apply", Button).disabled = not result.solutions or (
            result.recommended is None
        )

    @on(Button.Pressed, "#apply")
    def _apply(self) -> None:
        from beamtone.calc.sizing import SizingResult

        if not isinstance(self.result, SizingResult) or not self.result.solutions:
            return
        from beamtone.calc.sizing import variation
        from beamtone.calc.worksheet import loads

        row = self.query_one("#solutions", DataTable).cursor_row
        chosen = self.result.solutions[min(max(row, 0), len(self.result.solutions) - 1)]
        text = self.document.text()
        try:
            var = variation(loads(text, "<app>"), self.result.variable)
            new_text = var.rewrite(text, chosen.value_si)
        except InputError as exc:
            self._say(exc.message, True)
            return
        self.dismiss((self.result.variable, chosen.value, new_text))
