"""App tests keep any autosave of new worksheets in a temporary cache folder; ``bar`` is the
worksheet most of them open."""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.tui.driving import BAR


@pytest.fixture(autouse=True)
def _private_cache(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))


# Tests type each edit as one burst of key events (tests.tui.driving.type_into), so every key
# of an edit arrives within milliseconds: a shorter typing pause still sees one solve per edit
# and saves a quarter of a second of idle waiting per edit (the app's own pause is unchanged).
TEST_PAUSE = 0.05  # seconds


@pytest.fixture(autouse=True)
def _short_typing_pause(monkeypatch: pytest.MonkeyPatch) -> None:
    from beamtone.tui.screens import groups, workbench

    monkeypatch.setattr(workbench, "DEBOUNCE", TEST_PAUSE)
    monkeypatch.setattr(groups, "DEBOUNCE", TEST_PAUSE)


@pytest.fixture
def bar(tmp_path: Path) -> Path:
    """:data:`tests.tui.driving.BAR` written to a file of this test's own."""
    path = tmp_path / "bar.toml"
    path.write_text(BAR)
    return path
