"""The terminal app driven headless with textual's Pilot."""

from __future__ import annotations

import math
from pathlib import Path

import pytest
from textual.widgets import Input, Select

from beamtone.calc.sizing import quantity_keys
from beamtone.calc.worksheet import load
from beamtone.tui.app import BeamtoneApp
from beamtone.tui.dialogs.choices import PathDialog, TemplateDialog, UnsavedDialog
from beamtone.tui.document import TEMPLATES, Document
from beamtone.tui.screens.sizing import SizingScreen
from beamtone.tui.screens.workbench import Workbench
from beamtone.tui.widgets.quantity import QuantityField
from tests.tui.driving import (
    BAR,
    edit,
    field_of,
    on_top,
    press,
    settled,
    sync,
    type_into,
    work_done,
)

ROOT = Path(__file__).resolve().parents[2]
LAMBDA1 = 1.87510407  # clamped-free (R. D. Blevins 1979, Table 8-1)


def bar_fundamental(length: float) -> float:
    EI = 200e9 * 0.04 * 0.008**3 / 12
    m = 7850 * 0.04 * 0.008
    return LAMBDA1**2 / (2 * math.pi * length**2) * math.sqrt(EI / m)


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
        view = await edit(pilot, app, "member.length", "500 mm")
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
        await type_into(pilot, field_of(app, "member.length"), "1 kg")
        field = field_of(app, "member.length").parent.parent
        assert isinstance(field, QuantityField)
        assert field.has_class("-invalid")
        assert "a length" in str(field.query_one(".problem").render())
        view = await settled(pilot, app, until=lambda: app.document.get("member.length") == "1 kg")
        assert view.state == "stale"
        assert view.analysis is before  # the last good results stay, marked
        assert "OUT OF DATE" in str(view._banner())  # noqa: SLF001
        assert app.document.get("member.length") == "1 kg"  # nothing typed is lost
        view = await edit(pilot, app, "member.length", "1 m")
        assert view.state == "current"


@sync
async def test_add_and_remove_a_mass(bar: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 60)) as pilot:
        bare = (await settled(pilot, app)).analysis.modes.modes[0].frequency_hz
        await press(pilot, app, "#add-mass")
        view = await settled(pilot, app, until=lambda: len(app.document.rows("mass")) == 1)
        assert len(app.document.rows("mass")) == 1
        loaded = view.analysis.modes.modes[0].frequency_hz
        assert loaded < bare
        await press(pilot, app, "#remove-mass-0")
        view = await settled(pilot, app, until=lambda: app.document.rows("mass") == [])
        assert app.document.rows("mass") == []
        again = view.analysis.modes.modes[0].frequency_hz
        assert again == pytest.approx(bare, rel=1e-12)


@sync
async def test_size_a_dimension_and_apply_it(bar: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await pilot.press("f5")
        screen = await on_top(pilot, app, SizingScreen)
        assert isinstance(screen, SizingScreen)
        vary = screen.query_one("#vary", Select)
        # the quantity to vary, picked from the drop-down list by keys (below its blank row)
        rows = quantity_keys(app.document.plain())
        assert vary.has_focus
        await pilot.press("enter", *["down"] * (1 + rows.index("member.section.depth")), "enter")
        await pilot.pause()  # flush
        assert vary.value == "member.section.depth"
        await type_into(pilot, screen.query_one("#low", Input), "4 mm")
        await type_into(pilot, screen.query_one("#high", Input), "30 mm")
        await type_into(pilot, screen.query_one("#frequency", Input), "20 Hz")
        # the depth plane, as this test always sized (the default follows every direction)
        direction = screen.query_one("#direction", Select)
        assert direction.value == "governing"
        await pilot.press("tab", "tab")  # from the frequency past the mode
        assert direction.has_focus
        await pilot.press("enter", "down", "enter")  # the list opens on governing; depth next
        await pilot.pause()  # flush
        assert direction.value == "depth"
        await press(pilot, app, "#solve")
        await work_done(pilot, app)
        assert screen.result is not None and screen.result.recommended == 0
        await press(pilot, app, "#apply")
        await on_top(pilot, app, Workbench)
        view = await settled(pilot, app, until=lambda: app.document.modified)
        assert app.screen is app.workbench
        assert view.analysis.modes.modes[0].frequency_hz == pytest.approx(20.0, rel=1e-5)
        assert app.document.modified


@sync
async def test_save_reopen_and_compare(bar: Path, tmp_path: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 60)) as pilot:
        await settled(pilot, app)
        await edit(pilot, app, "member.length", "750 mm")
        await press(pilot, app, "#add-spring")
        await settled(pilot, app, until=lambda: len(app.document.rows("spring")) == 1)
        await pilot.press("ctrl+s")
        await pilot.pause()  # flush
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
        await edit(pilot, app, "member.length", "2 m")
        await pilot.press("ctrl+q")
        await on_top(pilot, app, UnsavedDialog)
        assert isinstance(app.screen, UnsavedDialog)
        await press(pilot, app, "#cancel")
        await on_top(pilot, app, Workbench)
        assert app.is_running and app.screen is app.workbench
        assert app.return_code is None  # no exit was asked for
    assert bar.read_text() == BAR  # nothing was written


@sync
async def test_quit_unmodified_quits_at_once(bar: Path) -> None:
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await pilot.press("ctrl+q")
        assert app.return_code == 0  # the exit was asked for at once, no question between
        await pilot.pause()  # flush
        assert not app.is_running


@sync
async def test_damaged_file_keeps_the_current_worksheet(
    bar: Path, tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    damaged = tmp_path / "damaged.toml"
    damaged.write_bytes(b"format = 1\n[member\nlength = ")
    monkeypatch.chdir(tmp_path)  # the file name is typed relative to the working folder
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await pilot.press("ctrl+o")
        dialog = await on_top(pilot, app, PathDialog)
        assert isinstance(app.screen, PathDialog)
        await type_into(pilot, dialog.query_one("#path", Input), damaged.name)
        await press(pilot, app, "#ok")
        await on_top(pilot, app, Workbench)
        await pilot.pause()  # flush: the refused file's notice
        assert app.document.path == bar
        assert app.screen is app.workbench
        assert app.is_running
        assert any("not opened" in n.message for n in app._notifications)  # noqa: SLF001


@sync
async def test_new_from_template_without_a_file() -> None:
    app = BeamtoneApp()
    async with app.run_test(size=(100, 40)) as pilot:
        await on_top(pilot, app, TemplateDialog)
        assert isinstance(app.screen, TemplateDialog)
        await pilot.press("home", "down", "down", "down", "enter")  # the stepped shaft
        await on_top(pilot, app, Workbench)
        view = await settled(pilot, app, until=lambda: app.document.title == "Stepped shaft")
        assert view.state == "current"
        assert app.document.path is None
        assert len(view.analysis.sheet.member.segments) == 3


@sync
async def test_every_template_solves() -> None:
    """Each template, picked in the app, solves there to the numbers the library gives.

    The app's results are compared with an independent load of the template's text through
    ``calc.analysis.analyse`` (the command line's path); where a template is a handbook case
    the app's frequencies agree with the handbook's (Blevins 1979, Table 8-1, through
    calc.handbook); and the fundamental lies inside the Dunkerley / Rayleigh bracket.
    """
    from beamtone.calc.analysis import analyse

    app = BeamtoneApp()
    async with app.run_test(size=(100, 40)) as pilot:
        await on_top(pilot, app, TemplateDialog)
        await pilot.press("escape")  # keep the first template for now
        for i, template in enumerate(TEMPLATES):
            await on_top(pilot, app, Workbench)
            await pilot.press("ctrl+n")
            await on_top(pilot, app, TemplateDialog)
            await pilot.press("home", *["down"] * i, "enter")
            await on_top(pilot, app, Workbench)
            expected = Document.from_template(template)
            assert expected.worksheet().member.length > 0
            view = await settled(
                pilot, app, until=lambda e=expected: app.document.plain() == e.plain()
            )
            assert view.state == "current", (template.name, view.problem)
            shown = view.analysis
            f = shown.modes.frequencies_hz
            assert len(f) >= 3 and all(math.isfinite(x) and x > 0 for x in f), template.name
            reference = analyse(expected.worksheet())
            assert f == pytest.approx(reference.modes.frequencies_hz, rel=1e-12), template.name
            if shown.handbook is not None:  # the handbook is Euler-Bernoulli: that solve
                exact = shown.handbook.frequencies_hz
                eb = shown.theories.euler_bernoulli.frequencies_hz
                assert eb[: len(exact)] == pytest.approx(exact, rel=1e-6), template.name
            assert shown.bracket.inside, (template.name, shown.bracket.message)


@sync
async def test_unsaved_edits_survive_a_crash_and_are_offered_back(bar: Path) -> None:
    """The app keeps unsaved edits beside the file; the next session offers them back."""
    from beamtone.tui.dialogs.choices import RecoverDialog

    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await edit(pilot, app, "member.length", "650 mm")
        kept = app.document.autosave_path
        assert kept.exists()
        # the session now "crashes": it ends without saving or being asked
    assert bar.read_text() == BAR
    second = BeamtoneApp(bar)
    async with second.run_test(size=(100, 40)) as pilot:
        await on_top(pilot, second, RecoverDialog)
        assert isinstance(second.screen, RecoverDialog)
        await press(pilot, second, "#recover")
        view = await settled(
            pilot, second, until=lambda: second.document.get("member.length") == "650 mm"
        )
        assert second.document.get("member.length") == "650 mm"
        assert second.document.modified
        assert view.analysis.modes.modes[0].frequency_hz == pytest.approx(
            bar_fundamental(0.65), rel=1e-6
        )
        await pilot.press("ctrl+s")
        await pilot.pause()  # flush
        assert not kept.exists()  # saved: the kept edits are gone
    assert load(bar).member.length == pytest.approx(0.65)
