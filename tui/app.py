"""The beamtone terminal app: a thin App that opens a worksheet on the workbench screen."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from textual.app import App
from textual.binding import Binding

from beamtone.calc.errors import InputError
from beamtone.tui.dialogs.choices import (
    HelpDialog,
    PathDialog,
    RecoverDialog,
    TemplateDialog,
    UnsavedDialog,
)
from beamtone.tui.document import TEMPLATES, Document, Template
from beamtone.tui.early import EarlySolve
from beamtone.tui.screens.groups import GroupsScreen
from beamtone.tui.screens.sizing import SizingScreen
from beamtone.tui.screens.workbench import Workbench
from beamtone.tui.widgets.results import ResultsView

__all__ = ["BeamtoneApp", "run"]


class BeamtoneApp(App[None]):
    """Edit and solve a worksheet at the terminal."""

    CSS_PATH = "beamtone.tcss"
    TITLE = "beamtone"
    BINDINGS = [Binding("ctrl+q", "quit_safely", "quit", priority=True, show=False)]

    def __init__(self, path: str | Path | None = None, first: EarlySolve | None = None) -> None:
        super().__init__()
        self.start_path = Path(path) if path is not None else None
        self._first = first  # the worksheet's first solve, already running (see tui.early)
        self.document = Document.from_template(TEMPLATES[0])
        self.ask_template = path is None

    def on_mount(self) -> None:
        problem = None
        if self.start_path is not None:
            try:
                self.document = Document.open_or_new(self.start_path, TEMPLATES[0])
            except InputError as exc:  # unreadable as TOML: say so, start a new worksheet
                problem = exc.message
            # a path with no file yet: a new worksheet that saves there
            self.ask_template = not self.start_path.expanduser().exists()
        first = None if self.ask_template else self._first
        if self._first is not None and first is None:
            self._first.cancel()
        self.push_screen(Workbench(self.document, first))
        if self.ask_template:
            self.push_screen(TemplateDialog(), self._template_chosen)
        if problem:
            self.notify(f"not opened: {problem}", severity="error", timeout=10, markup=False)
        self._offer_recovery()

    def _offer_recovery(self) -> None:
        """After a session that ended without saving, offer its kept edits back."""
        kept = self.document.recoverable()
        if kept is None:
            return
        where = self.document.path.name if self.document.path else "a new worksheet"

        async def answered(take: bool | None) -> None:
            if take:
                self.document.recover(kept)
                await self.workbench.reload()
                self.refresh_title()
                self.notify("unsaved edits recovered; save them to keep them")
            else:
                self.document.discard_autosave()

        self.push_screen(RecoverDialog(where), answered)

    # --- state ------------------------------------------------------------------------------

    @property
    def workbench(self) -> Workbench:
        for screen in self.screen_stack:
            if isinstance(screen, Workbench):
                return screen
        raise LookupError("no workbench")

    def refresh_title(self) -> None:
        """Title: the file name and a modified marker."""
        name = self.document.path.name if self.document.path else "(not saved)"
        self.title = f"beamtone: {name}{' *' if self.document.modified else ''}"
        self.sub_title = self.document.title

    async def _replace(self, document: Document) -> None:
        self.document = document
        bench = self.workbench
        bench.document = document
        await bench.reload()
        self.refresh_title()

    async def _template_chosen(self, template: Template | None) -> None:
        if template is not None and template != TEMPLATES[0]:
            document = Document.from_template(template)
            document.path = self.document.path  # a new worksheet keeps the path it was given
            await self._replace(document)

    # --- actions ------------------------------------------------------------------------------

    def action_help(self) -> None:
        self.push_screen(HelpDialog())

    def action_save(self) -> None:
        if self.document.path is None:
            self.action_save_as()
            return
        self._save(self.document.path)

    def action_save_as(self, then: Callable[[], object] | None = None) -> None:
        current = str(self.document.path) if self.document.path else "worksheet.toml"

        def chosen(path: str | None) -> None:
            if path and self._save(Path(path)) and then is not None:
                then()

        self.push_screen(PathDialog("Save the worksheet as:", current), chosen)

    def _save(self, path: Path) -> bool:
        """Save as it is, a draft with entries to fix included; say what was saved."""
        bench = self.workbench
        view = bench.query_one(ResultsView)
        current = view.analysis if view.state == "current" and not bench.pending else None
        try:
            saved = self.document.save(path, current)
        except InputError as exc:  # the file cannot be written: the old one stays intact
            self.notify(f"not saved: {exc.message}", severity="error", timeout=8, markup=False)
            return False
        self.refresh_title()
        problems = self.document.problems()
        if problems:
            count = len(problems)
            entries = "entry" if count == 1 else "entries"
            self.notify(
                f"saved {saved} as a draft: {count} {entries} to fix "
                f"({', '.join(p.key for p in problems[:3])}{', ...' if count > 3 else ''}); "
                "beamtone solve refuses it until they are fixed. First: "
                f"{problems[0].message}",
                severity="warning",
                timeout=10,
                markup=False,
            )
        else:
            recorded = (
                "with its calculation record"
                if current is not None
                else "(no record: results not current)"
            )
            self.notify(f"saved {saved} {recorded}", markup=False)
        return True

    def action_open(self) -> None:
        self._unless_unsaved("open another worksheet", self._ask_open)

    def _ask_open(self) -> None:
        self.push_screen(PathDialog("Open the worksheet:"), self._open)

    async def _open(self, path: str | None) -> None:
        if not path:
            return
        try:
            document = Document.open(path)
        except InputError as exc:
            # a damaged file: say so, keep the current worksheet
            self.notify(f"not opened: {exc.message}", severity="error", timeout=10, markup=False)
            return
        await self._replace(document)
        self._offer_recovery()

    def action_new(self) -> None:
        self._unless_unsaved("start a new worksheet", self._ask_new)

    def _ask_new(self) -> None:
        self.push_screen(TemplateDialog(), self._new)

    async def _new(self, template: Template | None) -> None:
        if template is not None:
            await self._replace(Document.from_template(template))

    def action_sizing(self) -> None:
        self.push_screen(SizingScreen(self.document), self._sized)

    async def _sized(self, change: tuple[str, str, str] | None) -> None:
        if change is None:
            return
        key, value, text = change
        self.document.replace_text(text)
        await self.workbench.reload()
        self.refresh_title()
        self.notify(f"applied {key} = {value}", markup=False)

    def action_groups(self) -> None:
        analysis = self.workbench.query_one(ResultsView).analysis
        self.push_screen(GroupsScreen(analysis))

    def action_quit_safely(self) -> None:
        self._unless_unsaved("quit", self.exit)

    async def action_quit(self) -> None:
        """Every way out (the command palette's Quit included) asks about unsaved changes."""
        self.action_quit_safely()

    def _unless_unsaved(self, what: str, then: Callable[[], object]) -> None:
        if not self.document.modified:
            then()
            return

        def answered(choice: str | None) -> None:
            if choice == "save":
                if self.document.path is None:
                    self.action_save_as(then)
                    return
                if not self._save(self.document.path):
                    return
                then()
            elif choice == "discard":
                self.document.discard_autosave()
                then()

        self.push_screen(UnsavedDialog(what), answered)


def run(path: str | None = None, first: EarlySolve | None = None) -> None:
    """Run the app on a worksheet file, or on a new one from a template (``first``: the
    file's first solve, started before this module was imported)."""
    BeamtoneApp(path, first).run()
