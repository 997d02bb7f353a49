"""The app's start (issue 20): the first solve in a process of its own, the form built in two
steps, and worksheets with logarithmic units (issue 21) opened and typed without a traceback.

Started as ``beamtone FILE`` starts it: the file's first solve (``tui.early.EarlySolve``)
begins before the app exists; the tests wait for the workbench's solve of the document's
contents, never for time.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from textual.widgets import Static

from beamtone.calc.analysis import analyse
from beamtone.calc.worksheet import load
from beamtone.tui.app import BeamtoneApp
from beamtone.tui.document import Document
from beamtone.tui.early import EarlySolve
from beamtone.tui.widgets.form import WorksheetForm
from beamtone.tui.widgets.quantity import QuantityField
from tests.tui.driving import field_of, settled, sync, type_into
from tests.tui.test_app import BAR, bar_fundamental, edit

# logarithmic units: a level or a ratio on a log scale, never a physical quantity
LEVELS = ("dB", "Np", "octave", "decade")


@pytest.fixture
def bar(tmp_path: Path) -> Path:
    path = tmp_path / "bar.toml"
    path.write_text(BAR)
    return path


def quantity(app: BeamtoneApp, key: str) -> QuantityField:
    field = field_of(app, key).parent.parent
    assert isinstance(field, QuantityField)
    return field


def problem(app: BeamtoneApp, key: str) -> str:
    return str(quantity(app, key).query_one(".problem", Static).render())


@sync
async def test_the_first_solve_in_its_own_process_is_the_solve(bar: Path) -> None:
    """Its results are the library's, digit for digit, and the clamped-free fundamental of
    Blevins' table (R. D. Blevins 1979, Table 8-1); then the whole form is there and an edit
    is solved in the app's own worker."""
    first = EarlySolve(bar.read_text())
    app = BeamtoneApp(bar, first)
    async with app.run_test(size=(100, 40)) as pilot:
        view = await settled(pilot, app)
        assert view.state == "current" and first.answered  # shown from the child's answer
        library = analyse(load(bar))
        shown = [m.frequency_hz for m in view.analysis.modes.modes]
        assert shown == [m.frequency_hz for m in library.modes.modes]
        assert shown[0] == pytest.approx(bar_fundamental(1.0), rel=1e-6)
        form = app.workbench.query_one(WorksheetForm)
        assert form.complete and form.query("#add-excitation")
        view = await edit(pilot, app, "member.length", "500 mm")
        f = view.analysis.modes.modes[0].frequency_hz
        assert f == pytest.approx(bar_fundamental(0.5), rel=1e-6)
        # the unit registry was built after the first results: the fields read their text
        si = quantity(app, "member.length").query_one(".si", Static)
        assert str(si.render()) == "0.5 m"


@sync
async def test_a_first_solve_of_other_inputs_is_not_shown(bar: Path, tmp_path: Path) -> None:
    """The file changed between the start and the screen: the app solves what it opened."""
    first = EarlySolve(BAR.replace('"1 m"', '"2 m"'))
    app = BeamtoneApp(bar, first)
    async with app.run_test(size=(100, 40)) as pilot:
        view = await settled(pilot, app)
        assert not first.answered
        f = view.analysis.modes.modes[0].frequency_hz
        assert f == pytest.approx(bar_fundamental(1.0), rel=1e-6)


@sync
async def test_closing_as_the_first_results_arrive(bar: Path) -> None:
    """Found with the start benchmark: closing the app just as its first results were shown,
    while the rest of the form was being built, ended in a traceback (exit 1)."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(80, 24)) as pilot:
        bench = app.workbench
        while not bench.solves:  # polled as a user's eye would: the results on screen
            await pilot.pause(0.002)
    # leaving run_test closes the app while the rest of the form is built: no error raised
    assert app.return_code in (0, None)


@pytest.mark.parametrize("unit", ["dB", "decade"])
@pytest.mark.parametrize("early", [True, False], ids=["own-process", "in-app"])
@sync
async def test_a_worksheet_with_a_logarithmic_unit_opens_marked(
    unit: str, early: bool, tmp_path: Path
) -> None:
    """Found (issue 21): such a file printed a full traceback. Now it opens, the field is
    marked with what was expected and why, and fixing it gives results."""
    path = tmp_path / "level.toml"
    path.write_text(BAR.replace('width = "40 mm"', f'width = "40 {unit}"'))
    first = EarlySolve(path.read_text()) if early else None
    app = BeamtoneApp(path, first)
    async with app.run_test(size=(80, 24)) as pilot:
        view = await settled(pilot, app)
        assert first is None or first.answered
        assert view.state == "failed" and "member.section.width" in view.problem
        assert "logarithmic" in view.problem
        assert quantity(app, "member.section.width").has_class("-invalid")
        assert "logarithmic unit" in problem(app, "member.section.width")
        view = await edit(pilot, app, "member.section.width", "40 mm")
        assert view.state == "current"
        assert not quantity(app, "member.section.width").has_class("-invalid")


@sync
async def test_typing_a_logarithmic_unit_gives_an_inline_error(bar: Path) -> None:
    """Each logarithmic unit typed into a field: an inline error naming it, the results out
    of date, nothing typed lost; a linear unit again solves."""
    app = BeamtoneApp(bar)
    async with app.run_test(size=(80, 24)) as pilot:
        await settled(pilot, app)
        for unit in LEVELS:
            text = f"30 {unit}"
            await type_into(pilot, field_of(app, "member.section.depth"), text)
            assert quantity(app, "member.section.depth").has_class("-invalid")
            assert f"'{unit}' is a logarithmic unit" in problem(app, "member.section.depth")
            view = await settled(
                pilot, app, until=lambda t=text: app.document.get("member.section.depth") == t
            )
            assert view.state == "stale" and "logarithmic" in view.problem
            assert app.document.get("member.section.depth") == text
        view = await edit(pilot, app, "member.section.depth", "8 mm")
        assert view.state == "current"
        assert view.analysis.modes.modes[0].frequency_hz == pytest.approx(
            bar_fundamental(1.0), rel=1e-6
        )


def test_the_child_starts_only_where_a_processor_is_spare(
    bar: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    """On a busy machine the two processes would only take turns: the app solves in its
    worker instead. Busy is counted now (tasks runnable besides this one), not as the load
    average over the last minute, which still counts a run that has just ended."""
    from beamtone.tui import early

    text = early.worksheet_text(bar)
    assert text == bar.read_text()
    assert early.start(None) is None
    monkeypatch.setattr(early, "_processors", lambda: 2)
    monkeypatch.setattr(early, "_runnable", lambda: 3)  # this one and two others
    monkeypatch.setattr(early.os, "getloadavg", lambda: (0.0, 0.0, 0.0))
    assert early.start(text) is None
    monkeypatch.setattr(early, "_runnable", lambda: 1)  # only this one
    monkeypatch.setattr(early.os, "getloadavg", lambda: (5.0, 5.0, 5.0))  # a run just ended
    first = early.start(text)
    assert isinstance(first, EarlySolve)
    first.cancel()
    assert first.outcome(Document.open(bar).plain()) is None  # stopped: solve in the worker
    # where the system gives no count of runnable tasks, the load average decides
    monkeypatch.setattr(early, "_runnable", lambda: None)
    assert early.start(text) is None
    monkeypatch.setattr(early.os, "getloadavg", lambda: (0.3, 0.3, 0.3))
    assert early.spare_processor()


def test_the_count_of_runnable_tasks_includes_this_one() -> None:
    """Read from the system where it gives one: at least this process is runnable."""
    from beamtone.tui import early

    runnable = early._runnable()
    assert runnable is None or runnable >= 1


@pytest.mark.parametrize(
    ("content", "why"),
    [(b"\x00\x01", "binary"), ("x".encode("utf-16"), "not UTF-8"), (None, "a folder")],
)
def test_only_a_readable_worksheet_text_starts_a_child(
    tmp_path: Path, content: bytes | None, why: str
) -> None:
    """A file the app will refuse or mark gets no first-solve process (``why``): the app says
    what is wrong and solves, if at all, in its own process."""
    from beamtone.tui import early

    path = tmp_path / "sheet.toml"
    if content is None:
        path.mkdir()
    else:
        path.write_bytes(content)
    assert early.worksheet_text(path) is None
    assert early.worksheet_text(tmp_path / "missing.toml") is None


class _Marker:
    """Unpickling this would create the file named ``path`` (the test's probe)."""

    def __init__(self, path: str) -> None:
        self.path = path

    def __reduce__(self) -> tuple:
        return (open, (self.path, "w"))


def test_the_first_solve_process_unpickles_nothing_it_is_given(tmp_path: Path) -> None:
    """The child reads TOML text on its standard input; a pickle there is refused (exit 2),
    never loaded (found in review: it read its input with pickle)."""
    import pickle
    import subprocess
    import sys

    probe = tmp_path / "ran"
    done = subprocess.run(
        [sys.executable, "-m", "beamtone.tui.early"],
        input=pickle.dumps(_Marker(str(probe))),
        capture_output=True,
        timeout=60,
    )
    assert done.returncode == 2 and done.stdout == b""
    assert not probe.exists()
