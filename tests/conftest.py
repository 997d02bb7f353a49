"""Every test keeps beamtone's cache of shape facts in a folder of its own session."""

from __future__ import annotations

import os
from pathlib import Path

import pytest


@pytest.fixture(autouse=True, scope="session")
def _private_shape_cache(tmp_path_factory: pytest.TempPathFactory) -> None:
    os.environ["BEAMTONE_CACHE"] = str(Path(tmp_path_factory.mktemp("beamtone-cache")))
