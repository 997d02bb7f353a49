"""Every test keeps beamtone's cache of shape facts in a folder of its own session, and runs
BLAS single-threaded as the command line does.

The command line (``cli/main.py``) and the benchmarks set ``OPENBLAS_NUM_THREADS=1`` before
numpy is imported: beamtone's matrices are small and banded, and BLAS threads only add
overhead.  Tests import ``calc`` and the app directly, so they set it here, before any test
module imports numpy; on the 2-core machine a threaded dense eigen solve of the app's bar took
2-4 s instead of 0.25 s, and the processes the tests start inherit the setting.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest

if "OPENBLAS_NUM_THREADS" not in os.environ:
    assert "numpy" not in sys.modules, "numpy came before tests/conftest.py could set BLAS threads"
    os.environ["OPENBLAS_NUM_THREADS"] = "1"


@pytest.fixture(autouse=True, scope="session")
def _private_shape_cache(tmp_path_factory: pytest.TempPathFactory) -> None:
    os.environ["BEAMTONE_CACHE"] = str(Path(tmp_path_factory.mktemp("beamtone-cache")))
