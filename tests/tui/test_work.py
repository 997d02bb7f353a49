"""The app as a place to work (issue 20): each finding driven as a user meets it.

Fields are typed into key by key and buttons clicked; the tests wait for the workbench's
solve of the document's contents, for screens and for workers, never for time.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from textual.widgets import Input, Select, Static

from beamtone.tui.app import BeamtoneApp
from beamtone.tui.dialogs.choices import TemplateDialog, UnsavedDialog
from beamtone.tui.screens.groups import GroupsScreen
from beamtone.tui.screens.workbench import Workbench
from beamtone.tui.widgets.freqmap import FrequencyMap
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


def quantity(app: BeamtoneApp, key: str) -> QuantityField:
    field = field_of(app, key).parent.parent
    assert isinstance(field, QuantityField)
    return field


async def answer(pilot, screen: GroupsScreen, text: str) -> None:  # noqa: ANN001
    """Wait until the groups calculator shows its answer for ``text``."""
    import asyncio

    from tests.tui.driving import TIMEOUT

    async def shown() -> None:
        while screen.shown != text:
            screen.answered.clear()
            await screen.answered.wait()

    await asyncio.wait_for(shown(), TIMEOUT)
    await pilot.pause()  # flush


def notices(app: BeamtoneApp) -> str:
    return "\n".join(n.message for n in app._notifications)  # noqa: SLF001


@sync
async def test_a_draft_with_an_entry_to_fix_saves_as_typed(bar: Path) -> None:
    """Found: a worksheet with one invalid entry could not be saved; the hint lost
    "[mass]" to markup."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await edit(pilot, app, "member.length", "1 kg")
        await pilot.press("ctrl+s")
        await pilot.pause()  # flush: the save and its notice
        assert not app.document.modified
        said = notices(app)
        assert "1 entry to fix" in said and "member.length" in said
        assert "[mass]" in said  # the hint as written, not eaten as markup
    assert 'length = "1 kg"' in bar.read_text()  # saved as typed
    assert "# comment kept on save" in bar.read_text()


@sync
async def test_a_worksheet_with_a_bad_value_opens_with_it_marked(tmp_path: Path) -> None:
    """Found: a worksheet with one bad value was refused instead of opened."""
    path = tmp_path / "bad.toml"
    path.write_text(BAR.replace('"40 mm"', '"40 mmm"'))
    app = BeamtoneApp(path)
    async with app.run_test(size=(100, 40)) as pilot:
        view = await settled(pilot, app)
        assert app.document.path == path
        assert view.state == "failed" and "member.section.width" in view.problem
        assert quantity(app, "member.section.width").has_class("-invalid")
        await edit(pilot, app, "member.section.width", "40 mm")
        assert app.workbench.query_one("#results").state == "current"


@sync
async def test_beamtone_file_opens_a_worksheet_with_a_bad_value(tmp_path: Path) -> None:
    """Found: `beamtone FILE` refused it with exit 2; now only unreadable TOML is refused."""
    from beamtone.cli import main as cli

    bad = tmp_path / "bad.toml"
    bad.write_text(BAR.replace('"1 m"', '"1 kg"'))
    started: list[str | None] = []
    import beamtone.tui.app as app_module

    original = app_module.run

    def run(path: str | None, first: object = None) -> None:  # the app, not started
        started.append(path)
        if first is not None:
            first.cancel()  # type: ignore[attr-defined]

    app_module.run = run  # type: ignore[assignment]
    try:
        os.environ.setdefault("TERM", "xterm")
        status_bad = cli._app(str(bad))  # noqa: SLF001
        status_new = cli._app(str(tmp_path / "new.toml"))  # noqa: SLF001
        (tmp_path / "broken.toml").write_text("format = 1\n[member\n")
        status_broken = cli._app(str(tmp_path / "broken.toml"))  # noqa: SLF001
    finally:
        app_module.run = original
    assert status_broken == 2
    if started:  # the test runs with a terminal: both were started
        assert status_bad == status_new == 0


@sync
async def test_a_new_path_starts_a_worksheet_there(tmp_path: Path) -> None:
    """Found: a FILE that did not exist was refused instead of started at that path."""
    path = tmp_path / "fresh.toml"
    app = BeamtoneApp(path)
    async with app.run_test(size=(100, 40)) as pilot:
        await on_top(pilot, app, TemplateDialog)
        await pilot.press("home", "down", "down", "enter")  # the span carrying a machine
        await on_top(pilot, app, Workbench)
        await settled(pilot, app, until=lambda: "machine" in app.document.title.lower())
        assert app.document.path == path
        await edit(pilot, app, "title", "my span")
        await pilot.press("ctrl+s")
        await pilot.pause()  # flush
    assert 'title = "my span"' in path.read_text()


@sync
async def test_each_new_worksheet_keeps_its_own_autosave(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    """Found: new worksheets shared one autosave file, outside BEAMTONE_CACHE."""
    cache = tmp_path / "own-cache"
    monkeypatch.setenv("BEAMTONE_CACHE", str(cache))
    kept = []
    for title in ("first session", "second session"):
        app = BeamtoneApp()
        async with app.run_test(size=(100, 40)) as pilot:
            await on_top(pilot, app, TemplateDialog)
            await pilot.press("escape")
            await on_top(pilot, app, Workbench)
            await settled(pilot, app)
            await edit(pilot, app, "title", title)
            kept.append(app.document.autosave_path)
            assert kept[-1].is_file() and cache in kept[-1].parents
    assert kept[0] != kept[1]
    assert "first session" in kept[0].read_text()
    assert "second session" in kept[1].read_text()


@sync
async def test_the_command_palette_quit_asks(bar: Path) -> None:
    """Found: the command palette's Quit left at once with unsaved changes."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await edit(pilot, app, "member.length", "2 m")
        await app.run_action("quit")  # what the palette's Quit runs
        await on_top(pilot, app, UnsavedDialog)
        await press(pilot, app, "#cancel")
        await on_top(pilot, app, Workbench)
        assert app.is_running and app.return_code is None
    assert bar.read_text() == BAR


@sync
async def test_user_text_is_never_markup(bar: Path) -> None:
    """Found: typing "[/" ended the app with a markup error."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await type_into(pilot, field_of(app, "member.length"), "1 [/]")
        await settled(pilot, app, until=lambda: app.document.get("member.length") == "1 [/]")
        assert quantity(app, "member.length").has_class("-invalid")
        assert app.is_running
        await edit(pilot, app, "title", "[b]bold[/b] [/")
        assert app.is_running
        await pilot.press("f6")
        screen = await on_top(pilot, app, GroupsScreen)
        await type_into(pilot, screen.query_one("#variables", Input), "f=Hz x=[/")
        await answer(pilot, screen, "f=Hz x=[/")
        shown = str(screen.query_one("#calculator", Static).render())
        assert "[/" in shown
        assert app.is_running


@sync
async def test_the_groups_calculator_works_in_a_worker(bar: Path) -> None:
    """Found: symbolic work ran on every keystroke on the interface thread."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        await pilot.press("f6")
        screen = await on_top(pilot, app, GroupsScreen)
        await type_into(pilot, screen.query_one("#variables", Input), "f=Hz L=m EI=N*m^2 m=kg/m")
        await answer(pilot, screen, "f=Hz L=m EI=N*m^2 m=kg/m")
        await work_done(pilot, app)
        assert "rank 3" in str(screen.query_one("#calculator", Static).render())


@sync
async def test_focus_stays_on_the_shape_after_changing_it(bar: Path) -> None:
    """Found: after another section shape, the next Tab and typing landed elsewhere."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 40)) as pilot:
        await settled(pilot, app)
        shape = app.workbench.query_one("#shape", Select)
        shape.scroll_visible(animate=False)
        await pilot.pause()  # flush: the scroll lands before the click
        await pilot.click(shape)  # opens the list (which then lies under the pointer)
        await pilot.press("down", "enter")  # rectangle -> round
        view = await settled(
            pilot, app, until=lambda: app.document.get("member.section.shape") == "round"
        )
        assert view.state == "current"
        assert app.focused is app.workbench.query_one("#shape", Select)
        await pilot.press("tab")
        assert app.focused is field_of(app, "member.section.diameter")


@sync
async def test_a_tip_mass_follows_the_length(bar: Path) -> None:
    """Found: editing the length left a tip mass where it was, then refused it."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 60)) as pilot:
        await settled(pilot, app)
        await press(pilot, app, "#add-mass")
        await settled(pilot, app, until=lambda: len(app.document.rows("mass")) == 1)
        assert app.document.get("mass[0].at") == "right end"
        view = await edit(pilot, app, "member.length", "2 m")
        assert view.state == "current"
        assert view.analysis.sheet.member.masses[0].at == 2.0
        view = await edit(pilot, app, "mass[0].at", "300 mm from the right end")
        assert view.analysis.sheet.member.masses[0].at == pytest.approx(1.7)


@sync
async def test_stale_values_are_marked_until_recomputed(bar: Path) -> None:
    """Found: derived properties stayed from the previous section unmarked; a field kept its
    error mark after it became valid."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 60)) as pilot:
        await settled(pilot, app)
        derived = app.workbench.query_one("#derived", Static)
        assert not derived.has_class("-stale")
        view = await edit(pilot, app, "member.section.depth", "8 kg")
        assert view.state == "stale" and derived.has_class("-stale")
        assert "out of date" in str(derived.render())
        await edit(pilot, app, "member.section.depth", "12 mm")
        assert not derived.has_class("-stale") and "out of date" not in str(derived.render())
        await press(pilot, app, "#add-mass")
        await settled(pilot, app, until=lambda: len(app.document.rows("mass")) == 1)
        view = await edit(pilot, app, "mass[0].at", "5 m")  # beyond the 1 m member
        assert view.state == "stale"
        assert quantity(app, "mass[0].at").has_class("-invalid")
        view = await edit(pilot, app, "member.length", "6 m")
        assert view.state == "current"
        assert not quantity(app, "mass[0].at").has_class("-invalid")
        assert "member.length = 6 m" in view.inputs  # which inputs the results are for


@sync
async def test_an_excitation_entry_shows_the_verdict_margins_and_map(bar: Path) -> None:
    """An excitation typed into its schema fields: the verdict, the margin table and the
    terminal frequency map follow, from calc's margin table (no number made in the app)."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 60)) as pilot:
        await settled(pilot, app)
        await press(pilot, app, "#add-excitation")
        await settled(pilot, app, until=lambda: len(app.document.rows("excitation")) == 1)
        # the fundamental of the bar is about 6.5 Hz: a 390 rpm source (6.5 Hz) is inside
        view = await edit(pilot, app, "excitation[0].speed", "390 rpm")
        verdict = view.analysis.margins.verdict
        assert not verdict.clear
        from beamtone.tui.widgets.results import verdict_line

        assert verdict.text in verdict_line(view.analysis).plain
        assert "excitation margins" in str(view.query_one("#margins", Static).render())
        chart = view.query_one(FrequencyMap)
        drawn = str(chart.render()).rsplit("\n", 1)[0]  # the map without its legend
        assert chart.display and "◆" in drawn
        # 1500 rpm (25 Hz, band 20-30 Hz) lies between the bar's modes (6.5, 32.6, 40.9 Hz)
        view = await edit(pilot, app, "excitation[0].speed", "1500 rpm")
        assert all(r.clear for r in view.analysis.margins.rows)
        assert "◆" not in str(chart.render()).rsplit("\n", 1)[0]


@sync
async def test_a_tolerance_entry_shows_bands_and_what_moves_them(bar: Path) -> None:
    """A tolerance picked from the worksheet's quantities and typed: the bands of every mode
    and the inputs ranked by how much they move it (calc.band, drawn by render.bands)."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(100, 60)) as pilot:
        await settled(pilot, app)
        picker = app.workbench.query_one("#tolerance-key", Select)
        picker.scroll_visible(animate=False)
        await pilot.pause()  # flush: the scroll lands before the click
        await pilot.click(picker)  # opens the list of the worksheet's quantities
        await pilot.pause()  # flush: the list is up
        assert picker.expanded
        await pilot.press("down", "down", "enter")  # below the blank row, the first: member.length
        await pilot.pause()  # flush
        assert picker.value == "member.length", picker.value
        await press(pilot, app, "#add-tolerance")
        view = await settled(pilot, app, until=lambda: "member.length" in app.document.tolerances())
        assert app.document.tolerances() == {"member.length": "5 %"}
        await type_into(pilot, field_of(app, "tolerances.member.length"), "2 %")
        view = await settled(
            pilot, app, until=lambda: app.document.tolerances() == {"member.length": "2 %"}
        )
        bands = view.analysis.bands
        assert bands is not None
        depth1 = next(b for b in bands.modes if b.direction == "depth" and b.number == 1)
        f1 = view.analysis.modes.modes[0].frequency_hz
        # f1 goes as 1/L^2 (Euler-Bernoulli, common practice): +-2 % in L is about -+4 % in f1
        assert depth1.low_hz == pytest.approx(f1 / 1.02**2, rel=2e-3)
        assert depth1.high_hz == pytest.approx(f1 / 0.98**2, rel=2e-3)
        shown = str(view.query_one("#bands", Static).render())
        assert "member.length" in shown and "first to pin down" in shown
    assert "tolerances" not in bar.read_text()  # nothing written until saved
