"""Long lists in the form (issue 21: "1,000 inner supports ... the app never draws").

The form builds the first rows of each list (``form.PAGE``) and a button that builds more;
the worksheet keeps every entry as written.  Measured before: a worksheet of 1,000 inner
supports took 76 s from start to first results on a quiet two-core machine, nearly all of
it textual mounting the 4,000 widgets of those rows (``beamtone solve`` of it: 2.9 s).
"""

from __future__ import annotations

import asyncio
from pathlib import Path

import pytest
from textual.widgets import Static

from beamtone.calc import fe
from beamtone.calc.worksheet import loads
from beamtone.tui.app import BeamtoneApp
from beamtone.tui.widgets.form import PAGE
from beamtone.tui.widgets.quantity import QuantityField
from tests.tui.driving import TIMEOUT, field_of, press, settled, sync

HEAD = """format = 1
title = "conveyor rail on many hangers"
[member]
length = "8 m"
material = "steel"
section = { shape = "round-tube", outside_diameter = "60 mm", wall = "4 mm" }
[supports]
left = "pinned"
right = "pinned"
"""


def spans(count: int, bad: int | None = None) -> str:
    """A tube over ``count + 1`` equal pinned spans (a scenario of our own); the entry
    ``bad`` (if any) has a mass unit where a position belongs."""
    parts = [HEAD]
    for k in range(count):
        at = f"{8.0 * (k + 1) / (count + 1):.9g} m" if k != bad else "2 kg"
        parts.append(f'[[supports.inner]]\nat = "{at}"\nkind = "pinned"\n')
    return "".join(parts)


def built(app: BeamtoneApp) -> list[int]:
    """Indices of the inner supports whose position field is built."""
    found = []
    for widget in app.workbench.query(".quantity"):
        key = getattr(widget, "key", "")
        if key.startswith("supports.inner[") and key.endswith("].at"):
            found.append(int(key.split("[")[1].split("]")[0]))
    return sorted(found)


@sync
async def test_a_long_list_opens_with_a_page_and_builds_more_on_request(tmp_path: Path) -> None:
    text = spans(40)
    path = tmp_path / "rail.toml"
    path.write_text(text, "utf-8")
    app = BeamtoneApp(path)
    async with app.run_test(size=(100, 40)) as pilot:
        view = await settled(pilot, app)
        # the results are for every support, not only the ones built
        exact = fe.solve(loads(text).member, 1).frequencies_hz[0]
        assert view.analysis.modes.modes[0].frequency_hz == pytest.approx(exact, rel=1e-9)
        assert built(app) == list(range(PAGE))
        note = str(app.workbench.query_one("#more-inner-note", Static).render())
        assert f"{40 - PAGE} more inner support entries" in note
        await press(pilot, app, "#more-inner")
        await settled(pilot, app)
        assert built(app) == list(range(2 * PAGE))
        assert len(app.document.inner_supports()) == 40
        # nothing the user wrote is lost: the worksheet is as written
        assert loads(app.document.text()).member == loads(text).member


@sync
async def test_a_bad_entry_past_the_page_is_built_and_marked(tmp_path: Path) -> None:
    path = tmp_path / "rail.toml"
    path.write_text(spans(40, bad=30), "utf-8")
    app = BeamtoneApp(path)
    async with app.run_test(size=(100, 40)) as pilot:
        view = await settled(pilot, app)
        assert view.state == "failed" and "supports.inner[30].at" in view.problem

        async def marked() -> QuantityField:
            while True:
                await pilot.pause()  # flush: the form builds the rows up to the bad one
                try:
                    field = field_of(app, "supports.inner[30].at").parent.parent
                except LookupError:
                    continue
                if isinstance(field, QuantityField) and field.has_class("-invalid"):
                    return field

        await asyncio.wait_for(marked(), TIMEOUT)
        assert built(app) == list(range(31))
