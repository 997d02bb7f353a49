"""Small modal dialogs: unsaved changes, a file path, a template, the help text."""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, OptionList, Static
from textual.widgets.option_list import Option

from beamtone.calc.caution import CAUTION
from beamtone.tui.document import TEMPLATES, Template

__all__ = ["UnsavedDialog", "RecoverDialog", "PathDialog", "TemplateDialog", "HelpDialog"]


class UnsavedDialog(ModalScreen[str]):
    """Asks what to do with unsaved changes: ``"save"``, ``"discard"`` or ``"cancel"``."""

    BINDINGS = [("escape", "dismiss('cancel')", "cancel")]

    def __init__(self, what: str = "quit") -> None:
        super().__init__()
        self.what = what

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(
                f"The worksheet has unsaved changes. Save before you {self.what}?",
                classes="question",
            )
            with Horizontal(classes="buttons"):
                yield Button("save", id="save", variant="primary")
                yield Button("don't save", id="discard", variant="error")
                yield Button("cancel", id="cancel")

    @on(Button.Pressed)
    def _answer(self, event: Button.Pressed) -> None:
        self.dismiss(event.button.id or "cancel")


class RecoverDialog(ModalScreen[bool]):
    """Offers back the edits an earlier session kept but never saved."""

    BINDINGS = [("escape", "dismiss(False)", "no")]

    def __init__(self, where: str) -> None:
        super().__init__()
        self.where = where

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(
                f"An earlier session left unsaved edits to {self.where}. Recover them? "
                "(They replace what is on screen, unsaved; saving keeps them.)",
                markup=False,  # a file name is the user's text
                classes="question",
            )
            with Horizontal(classes="buttons"):
                yield Button("recover", id="recover", variant="primary")
                yield Button("let them go", id="drop", variant="error")

    @on(Button.Pressed)
    def _answer(self, event: Button.Pressed) -> None:
        self.dismiss(event.button.id == "recover")


class PathDialog(ModalScreen[str | None]):
    """Asks for a file path; returns it, or None when cancelled."""

    BINDINGS = [("escape", "dismiss(None)", "cancel")]

    def __init__(self, title: str, value: str = "", error: str = "") -> None:
        super().__init__()
        self.title_text = title
        self.value = value
        self.error = error

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label(self.title_text)
            yield Input(self.value, placeholder="path/to/worksheet.toml", id="path")
            yield Static(self.error, id="path-error", classes="error")
            with Horizontal(classes="buttons"):
                yield Button("ok", id="ok", variant="primary")
                yield Button("cancel", id="cancel")

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        self._finish(event.value)

    @on(Button.Pressed, "#ok")
    def _ok(self) -> None:
        self._finish(self.query_one("#path", Input).value)

    @on(Button.Pressed, "#cancel")
    def _cancel(self) -> None:
        self.dismiss(None)

    def _finish(self, value: str) -> None:
        if not value.strip():
            self.query_one("#path-error", Static).update("give a file name")
            return
        self.dismiss(value.strip())


class TemplateDialog(ModalScreen[Template | None]):
    """Picks a template for a new worksheet."""

    BINDINGS = [("escape", "dismiss(None)", "cancel")]

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Label("Start a new worksheet from:")
            yield OptionList(
                *(Option(f"{t.name}: {t.description}", id=str(i)) for i, t in enumerate(TEMPLATES)),
                id="templates",
            )

    @on(OptionList.OptionSelected)
    def _chosen(self, event: OptionList.OptionSelected) -> None:
        self.dismiss(TEMPLATES[int(event.option.id or 0)])


HELP = (
    "beamtone: natural frequencies of a beam-like member, early in design.\n\n"
    "Fill in the steps on the left from top to bottom: the member (length or segments, "
    "material, section), its ends, what it carries, the assumed shape. Every quantity takes a "
    "number and a unit, in any unit of the right kind (mm, in, kN/m, lbf/in, ksi, lb/in^3, "
    "...); its SI value shows beside it, or what is wrong. Results on the right follow as you "
    "type; while an entry is wrong they are marked OUT OF DATE.\n\n"
    "keys\n"
    "  ctrl+s  save          f2      save as\n"
    "  ctrl+o  open          ctrl+n  new from a template\n"
    "  f5      size a value  f6      dimensionless groups\n"
    "  f1      this help     ctrl+q  quit\n"
    "  tab, shift+tab: next and previous field; the mouse works too\n\n"
)


class HelpDialog(ModalScreen[None]):
    """The keys, how the screen works, and the caution."""

    BINDINGS = [("escape", "dismiss", "close"), ("f1", "dismiss", "close")]

    def compose(self) -> ComposeResult:
        with VerticalScroll(classes="dialog wide"):
            yield Static(HELP + CAUTION)
            yield Button("close", id="close", variant="primary")

    @on(Button.Pressed, "#close")
    def _close(self) -> None:
        self.dismiss(None)
