"""The cache folder: with no home folder there is no cache, and nothing is written anywhere."""

from __future__ import annotations

from pathlib import Path

import pytest

from beamtone.calc import units
from tests.calc.sheets import forget_units


def test_no_home_folder_means_no_cache(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    from beamtone.calc import diskcache

    monkeypatch.delenv("BEAMTONE_CACHE", raising=False)
    monkeypatch.delenv("XDG_CACHE_HOME", raising=False)
    monkeypatch.setenv("HOME", "")
    monkeypatch.setattr(diskcache.os.path, "expanduser", lambda text: text)
    monkeypatch.chdir(tmp_path)
    forget_units()
    assert diskcache.folder() is None
    assert units.parse_quantity("2 in", units.LENGTH, "k") == pytest.approx(0.0508, rel=1e-15)
    assert list(tmp_path.iterdir()) == []
    forget_units()
