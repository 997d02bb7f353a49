"""A field for one quantity: ``value unit`` text, its SI value beside it, or what is wrong."""

from __future__ import annotations

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.widgets import Input, Label, Static

from beamtone.calc.errors import InputError
from beamtone.calc.positions import from_right, resolve
from beamtone.calc.units import FREQUENCY, Dimension, parse_frequency, parse_quantity

__all__ = ["QuantityField", "TextField"]


class QuantityField(Vertical):
    """Label, input and the parsed SI value (or an inline error) of one worksheet quantity.

    Posts :class:`QuantityField.Edited` with its key path and the text as typed, whether or
    not the text is valid: nothing typed is lost.
    """

    DEFAULT_CSS = """
    QuantityField { height: auto; margin: 0 0 0 1; }
    QuantityField > Horizontal { height: auto; }
    QuantityField Label { width: 14; padding: 0 1 0 0; color: $text-muted; }
    QuantityField Input { width: 12; height: 1; border: none; padding: 0 1; }
    QuantityField .si { width: 1fr; height: auto; padding: 0 0 0 1; color: $text-muted; }
    QuantityField > .problem { display: none; color: $error; padding: 0 0 0 2; height: auto; }
    QuantityField.-invalid > .problem { display: block; }
    QuantityField.-invalid .si { color: $error; text-style: bold; }
    QuantityField.-invalid Input { background: $error 20%; }
    """

    class Edited(Message):
        """The text of a field changed."""

        def __init__(self, field: QuantityField, key: str, text: str) -> None:
            super().__init__()
            self.field = field
            self.key = key
            self.text = text

    def __init__(
        self,
        key: str,
        label: str,
        dimension: Dimension,
        value: str = "",
        *,
        allow_zero: bool = False,
        allow_negative: bool = False,
        position: bool = False,
        optional: bool = False,
    ) -> None:
        super().__init__(classes="quantity")
        self.optional = optional
        self._posted = value
        self.key = key
        self.label = label
        self.dimension = dimension
        self.value = value
        self.allow_zero = allow_zero
        self.allow_negative = allow_negative
        self.position = position

    def compose(self) -> ComposeResult:
        example = self.dimension.example.split(" or ")[0].strip('"')
        placeholder = "(none)" if self.optional else example
        with Horizontal():
            yield Label(self.label)
            yield Input(self.value, placeholder=placeholder, compact=True, id=_dom_id(self.key))
            yield Static("", classes="si")
        yield Static("", classes="problem")

    def on_mount(self) -> None:
        self._check(self.value)

    checking = False
    """Whether fields read their text; off until the app's first solve has built the unit
    registry in its worker (the screen comes up without waiting for it: "…" until then)."""

    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        event.stop()
        self.value = event.value
        if event.value == self._posted and not QuantityField.checking:
            return  # the text it was built with, before the first solve: read then
        self._check(event.value)
        if event.value != self._posted:  # not for the value the field was built with
            self._posted = event.value
            self.post_message(self.Edited(self, self.key, event.value))

    def _check(self, text: str) -> None:
        found = self.query(".si")
        if not found:  # the app closed while the form was being built: nothing to show
            return
        si = found.first(Static)
        if self.optional and not text.strip():
            self.remove_class("-invalid")
            si.update("none")
            return
        if not QuantityField.checking:  # the app's first seconds: read once the units are built
            self.remove_class("-invalid")
            si.update("…")
            return
        if self.position and from_right(text) is not None:
            try:  # the distance is checked here, the member's length when it is solved
                inward = -resolve(text, self.key, 0.0)
            except InputError as exc:
                self._invalid(exc)
                return
            self.remove_class("-invalid")
            si.update(f"L\u2212{inward:.5g} m")
            return
        try:
            if self.dimension == FREQUENCY:  # cycles per second: 1480 rpm is 24.67 Hz
                value = parse_frequency(text, self.key)
            else:
                value = parse_quantity(
                    text,
                    self.dimension,
                    self.key,
                    allow_zero=self.allow_zero or self.position,
                    allow_negative=self.allow_negative,
                    minimum=not self.position,
                )
        except InputError as exc:
            self._invalid(exc)
            return
        self.remove_class("-invalid")
        # a narrow column wraps the unit to the next line, never cuts it (80 columns)
        si.update(f"{value:.5g} {self.dimension.si_unit}")

    def _invalid(self, exc: InputError) -> None:
        self.add_class("-invalid")
        self.query_one(".si", Static).update("✗")
        hint = f" ({exc.hint})" if exc.hint else ""
        # the message quotes what the user typed: never read as markup
        self.query_one(".problem", Static).update(Text(f"expected {exc.expected}{hint}"))
        self.refresh(layout=True)  # the message may need more lines than the last one

    def recheck(self) -> None:
        """Show this field's own reading again (drop a mark of an earlier solve)."""
        self._check(self.value)

    def show_error(self, message: str) -> None:
        """Mark the field with an error found when the worksheet was solved."""
        if not self.query(".si"):  # the app closed while the form was being built
            return
        self.add_class("-invalid")
        self.query_one(".si", Static).update("✗")
        self.query_one(".problem", Static).update(Text(message))

    @property
    def valid(self) -> bool:
        return not self.has_class("-invalid")


class TextField(Horizontal):
    """Label and input for plain text (title, shape expression)."""

    DEFAULT_CSS = """
    TextField { height: 1; margin: 0 0 0 1; }
    TextField > Label { width: 13; color: $text-muted; }
    TextField > Input { width: 1fr; height: 1; border: none; padding: 0 1; }
    TextField.-invalid > Input { background: $error 20%; }
    """

    def __init__(self, key: str, label: str, value: str = "", placeholder: str = "") -> None:
        super().__init__(classes="text")
        self.key = key
        self.label = label
        self.value = value
        self.placeholder = placeholder
        self._posted = value

    def compose(self) -> ComposeResult:
        yield Label(self.label)
        yield Input(self.value, placeholder=self.placeholder, compact=True, id=_dom_id(self.key))

    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        event.stop()
        self.value = event.value
        self.remove_class("-invalid")
        if event.value != self._posted:
            self._posted = event.value
            self.post_message(QuantityField.Edited(self, self.key, event.value))  # type: ignore[arg-type]

    @on(Input.Blurred)
    def _left(self, event: Input.Blurred) -> None:
        """Show a long text from its start again once the focus has left it (a title
        scrolled to its end read as if cut)."""
        event.input.cursor_position = 0

    def recheck(self) -> None:
        """Drop a mark of an earlier solve."""
        self.remove_class("-invalid")
        self.tooltip = None

    def show_error(self, message: str) -> None:
        self.add_class("-invalid")
        self.tooltip = Text(message)


def _dom_id(key: str) -> str:
    """A DOM id for a key path: ``mass[0].at`` -> ``f-mass-0-at``."""
    out = "f-" + key.replace("[", "-").replace("]", "").replace(".", "-").replace("_", "-")
    return out
