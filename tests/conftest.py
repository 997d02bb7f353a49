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


# Files whose module-scoped fixtures are costly (each starts a batch of processes): with
# ``-n``, one worker runs the whole file; split over two workers each batch would run twice.
# (pytest-xdist's own ``xdist_group`` mark has no effect with this pytest: it renames the
# items through an attribute that pytest 9 no longer reads.)
ONE_WORKER = ("tests/cli/test_solve_cli.py",)


@pytest.hookimpl(optionalhook=True)  # a hook of pytest-xdist: absent with -p no:xdist
def pytest_xdist_make_scheduler(config: pytest.Config, log: object) -> object:
    """With ``-n`` (xdist's default ``--dist load``): every test goes to whichever worker is
    free, one by one, except the tests of an ``ONE_WORKER`` file, which go together, first."""
    if config.getvalue("dist") != "load":
        return None  # a --dist the caller asked for
    from xdist.scheduler import LoadScopeScheduling

    class Scheduling(LoadScopeScheduling):
        def _split_scope(self, nodeid: str) -> str:
            path = nodeid.split("::", 1)[0]
            return path if path in ONE_WORKER else nodeid

    return Scheduling(config, log)
