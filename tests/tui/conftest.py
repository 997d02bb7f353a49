"""App tests keep any autosave of new worksheets in a temporary cache folder; ``bar`` is the
worksheet most of them open."""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.tui.driving import BAR


@pytest.fixture(autouse=True)
def _private_cache(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))


@pytest.fixture
def bar(tmp_path: Path) -> Path:
    """:data:`tests.tui.driving.BAR` written to a file of this test's own."""
    path = tmp_path / "bar.toml"
    path.write_text(BAR)
    return path
