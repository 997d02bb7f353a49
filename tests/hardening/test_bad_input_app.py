"""Bad input in the app: each worksheet of the bad corpus loaded, an inline NOT SOLVED, the app
keeps running.
"""

from __future__ import annotations

import asyncio
from pathlib import Path

import pytest

from beamtone.calc.errors import InputError
from tests.hardening.corpus import BAD, GOOD


def test_bad_input_in_the_app_keeps_it_running(tmp_path: Path) -> None:
    """Each bad worksheet loaded into the app: an inline NOT SOLVED, the app keeps running."""
    from beamtone.tui.app import BeamtoneApp
    from beamtone.tui.document import Document
    from tests.tui.driving import settled

    good = tmp_path / "good.toml"
    good.write_text(GOOD)

    async def scenario() -> None:
        app = BeamtoneApp(good)
        async with app.run_test(size=(100, 40)) as pilot:
            await settled(pilot, app)
            for name, text, key in BAD:
                if key == "file":
                    with pytest.raises(InputError):
                        Document.from_text(text)
                    continue
                # the whole worksheet replaced at once, as opening or recovering one does
                document = Document.from_text(text)
                await app._replace(document)  # noqa: SLF001
                view = await settled(pilot, app, until=lambda d=document: app.document is d)
                assert view.state in ("stale", "failed"), name
                assert key in view.problem, (name, view.problem)
                assert app.is_running

    asyncio.run(scenario())
