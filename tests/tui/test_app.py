"""The terminal app driven headless with textual's Pilot."""

from __future__ import annotations

import asyncio
import functools
import math
from collections.abc import Callable, Coroutine
from pathlib import Path
from typing import Any

import pytest
from textual.widgets import Button, Input, Select

from beamtone.calc.worksheet import load
from beamtone.tui.app import BeamtoneApp
from beamtone.tui.dialogs.choices import PathDialog, TemplateDialog, UnsavedDialog
from beamtone.tui.document import TEMPLATES, Document
from beamtone.tui.screens.sizing import SizingScreen
from beamtone.tui.widgets.quantity import QuantityField
from beamtone.tui.widgets.results import ResultsView

ROOT = Path(__file__).resolve().parents[2]
LAMBDA1 = 1.87510407  # clamped-free (R. D. Blevins 1979, Table 8-1)

BAR = """\
format = 1
title = "test bar"   # comment kept on save

[member]
length = "1 m"
material = { youngs_modulus = "200 GPa", density = "7850 kg/m^3" }
section = { shape = "rectangle", width = "40 mm", depth = "8 mm" }

[supports]
left = "clamped"
right = "free"
"""


def sync(test: Callable[..., Coroutine[Any, Any, None]]) -> Callable[..., None]:
    """Run an async test on its own event loop (no pytest plugin needed)."""

    @functools.wraps(test)
    def wrapper(*args: Any, **kwargs: Any) -> None:
        asyncio.run(test(*args, **kwargs))

    return wrapper


@pytest.fixture
def bar(tmp_path: Path) -> Path:
    path = tmp_path / "bar.toml"
    path.write_text(BAR)
    return path


def bar_fundamental(length: float) -> float:
    EI = 200e9 * 0.04 * 0.008**3 / 12
    m = 7850 * 0.04 * 0.008
    return LAMBDA1**2 / (2 * math.pi * length**2) * math.sqrt(EI / m)


async def settled(pilot, app: BeamtoneApp, since: int | None = None) -> ResultsView:  # noqa: ANN001
    """Wait until a solve after ``since`` finished solves (or the first) has been shown."""
    for _ in range(400):
        await pilot.pause(0.05)
        bench = app.workbench
        done = bench.finished > (since if since is not None else 0)
        if done and not bench.pending:
            return bench.query_one(ResultsView)
    raise AssertionError("the app did not settle")


def finished(app: BeamtoneApp) -> int:
    return app.workbench.finished


async def press(pilot, app: BeamtoneApp, selector: str) -> None:  # noqa: ANN001
    """Press a button of the current screen (scrolled into view first, then clicked)."""
    button = app.screen.query_one(selector, Button)
    button.scroll_visible(animate=False)
    await pilot.pause(0.05)
    button.press()
    await pilot.pause(0.2)


async def type_into(pilot, app: BeamtoneApp, dom_id: str, text: str) -> None:  # noqa: ANN001
    field = app.workbench.query_one(f"#{dom_id}", Input)
    field.value = text
    await pilot.pause()


@sync
async def test_opens_a_worksheet_and_shows_its_fundamental(bar: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        view = await settled(pilot, app)
        assert view.state == "current"
        f = view.analysis.modes.modes[0].frequency_hz
        assert f == pytest.approx(bar_fundamental(1.0), rel=1e-6)
        assert "bar.toml" in app.title and "*" not in app.title


@sync
async def test_changing_the_length_changes_the_frequency(bar: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        n = finished(app)
        await type_into(pilot, app, "f-member-length", "500 mm")
        view = await settled(pilot, app, n)
        assert view.state == "current"
        f = view.analysis.modes.modes[0].frequency_hz
        assert f == pytest.approx(bar_fundamental(0.5), rel=1e-6)
        assert app.title.endswith("*")
        assert app.document.get("member.length") == "500 mm"


@sync
async def test_bad_unit_shows_inline_error_and_marks_results_stale(bar: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        good = await settled(pilot, app)
        before = good.analysis
        n = finished(app)
        await type_into(pilot, app, "f-member-length", "1 kg")
        field = app.workbench.query_one("#f-member-length", Input).parent.parent
        assert isinstance(field, QuantityField)
        assert field.has_class("-invalid")
        assert "a length" in str(field.query_one(".problem").render())
        view = await settled(pilot, app, n)
        assert view.state == "stale"
        assert view.analysis is before  # the last good results stay, marked
        assert "OUT OF DATE" in str(view._banner())  # noqa: SLF001
        assert app.document.get("member.length") == "1 kg"  # nothing typed is lost
        n = finished(app)
        await type_into(pilot, app, "f-member-length", "1 m")
        view = await settled(pilot, app, n)
        assert view.state == "current"


@sync
async def test_add_and_remove_a_mass(bar: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 60)) as pilot:
        bare = (await settled(pilot, app)).analysis.modes.modes[0].frequency_hz
        await press(pilot, app, "#add-mass")
        await pilot.pause(0.2)
        assert len(app.document.rows("mass")) == 1
        loaded = (await settled(pilot, app)).analysis.modes.modes[0].frequency_hz
        assert loaded < bare
        await press(pilot, app, "#remove-mass-0")
        await pilot.pause(0.2)
        assert app.document.rows("mass") == []
        again = (await settled(pilot, app)).analysis.modes.modes[0].frequency_hz
        assert again == pytest.approx(bare, rel=1e-12)


@sync
async def test_size_a_dimension_and_apply_it(bar: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await pilot.press("f5")
        await pilot.pause(0.2)
        screen = app.screen
        assert isinstance(screen, SizingScreen)
        screen.query_one("#vary", Select).value = "member.section.depth"
        screen.query_one("#low", Input).value = "4 mm"
        screen.query_one("#high", Input).value = "30 mm"
        screen.query_one("#frequency", Input).value = "20 Hz"
        await press(pilot, app, "#solve")
        for _ in range(100):
            await pilot.pause(0.05)
            if screen.result is not None:
                break
        assert screen.result is not None and screen.result.recommended == 0
        n = finished(app)
        await press(pilot, app, "#apply")
        view = await settled(pilot, app, n)
        assert app.screen is app.workbench
        assert view.analysis.modes.modes[0].frequency_hz == pytest.approx(20.0, rel=1e-5)
        assert app.document.modified


@sync
async def test_save_reopen_and_compare(bar: Path, tmp_path: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 60)) as pilot:
        await settled(pilot, app)
        n = finished(app)
        await type_into(pilot, app, "f-member-length", "750 mm")
        await press(pilot, app, "#add-spring")
        await pilot.pause(0.2)
        await settled(pilot, app, n)
        await pilot.press("ctrl+s")
        await pilot.pause(0.2)
        assert not app.document.modified and "*" not in app.title
        edited = app.document.plain()
    text = bar.read_text()
    assert "# comment kept on save" in text
    reopened = Document.open(bar).plain()
    assert "record" in reopened  # saved with its calculation record
    assert {k: v for k, v in reopened.items() if k != "record"} == {
        k: v for k, v in edited.items() if k != "record"
    }
    sheet = load(bar)
    assert sheet.member.length == pytest.approx(0.75)
    assert len(sheet.member.springs) == 1
    from beamtone.calc.record import verify

    result = verify(sheet)
    assert result is not None and result.passed  # the stored results reproduce


@sync
async def test_quit_with_unsaved_changes_asks(bar: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await type_into(pilot, app, "f-member-length", "2 m")
        await pilot.press("ctrl+q")
        await pilot.pause(0.2)
        assert isinstance(app.screen, UnsavedDialog)
        await press(pilot, app, "#cancel")
        await pilot.pause(0.1)
        assert app.is_running and app.screen is app.workbench
    assert bar.read_text() == BAR  # nothing was written


@sync
async def test_quit_unmodified_quits_at_once(bar: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await pilot.press("ctrl+q")
        await pilot.pause(0.2)
        assert not app.is_running


@sync
async def test_damaged_file_keeps_the_current_worksheet(bar: Path, tmp_path: Path) -> None:
    damaged = tmp_path / "damaged.toml"
    damaged.write_bytes(b"format = 1\n[member\nlength = ")
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await pilot.press("ctrl+o")
        await pilot.pause(0.2)
        assert isinstance(app.screen, PathDialog)
        app.screen.query_one("#path", Input).value = str(damaged)
        await press(pilot, app, "#ok")
        await pilot.pause(0.3)
        assert app.document.path == bar
        assert app.screen is app.workbench
        assert app.is_running


@sync
async def test_new_from_template_without_a_file() -> None:
    app = BeamtoneApp()
    async with app.run_test(size=(100, 40)) as pilot:
        await pilot.pause(0.3)
        assert isinstance(app.screen, TemplateDialog)
        app.screen.dismiss(TEMPLATES[3])  # the stepped shaft
        view = await settled(pilot, app)
        assert view.state == "current"
        assert app.document.path is None
        assert len(view.analysis.sheet.member.segments) == 3


def test_every_template_solves() -> None:
    for template in TEMPLATES:
        doc = Document.from_template(template)
        sheet = doc.worksheet()
        assert sheet.member.length > 0


@sync
async def test_unsaved_edits_survive_a_crash_and_are_offered_back(bar: Path) -> None:
    """The app keeps unsaved edits beside the file; the next session offers them back."""
    from beamtone.tui.dialogs.choices import RecoverDialog

    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        n = finished(app)
        await type_into(pilot, app, "f-member-length", "650 mm")
        await settled(pilot, app, n)
        kept = app.document.autosave_path
        assert kept.exists()
        # the session now "crashes": it ends without saving or being asked
    assert bar.read_text() == BAR
    second = BeamtoneApp(bar)
    async with second.run_test(size=(100, 40)) as pilot:
        await pilot.pause(0.5)
        assert isinstance(second.screen, RecoverDialog)
        await press(pilot, second, "#recover")
        view = await settled(pilot, second, 0)
        assert second.document.get("member.length") == "650 mm"
        assert second.document.modified
        assert view.analysis.modes.modes[0].frequency_hz == pytest.approx(
            bar_fundamental(0.65), rel=1e-6
        )
        await pilot.press("ctrl+s")
        await pilot.pause(0.3)
        assert not kept.exists()  # saved: the kept edits are gone
    assert load(bar).member.length == pytest.approx(0.65)
