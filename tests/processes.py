"""Running beamtone in new Python processes, as a cold start does."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def cold_solves(sheet: Path, shown: str, module: str, cache: Path) -> list[tuple[str, bool]]:
    """Load and analyse a worksheet in two fresh processes sharing a cache folder.

    Returns, for each run, the text of ``shown`` (an expression in the analysis ``a``) and
    whether ``module`` was imported by the end.
    """
    code = (
        "import sys; from beamtone.calc.worksheet import load; "
        "from beamtone.calc.analysis import analyse; "
        f"a = analyse(load({str(sheet)!r})); print({shown}); print({module!r} in sys.modules)"
    )
    env = {**os.environ, "BEAMTONE_CACHE": str(cache)}
    out = []
    for _ in range(2):
        lines = subprocess.run(
            [sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT, env=env,
            check=True,
        ).stdout.split("\n")  # fmt: skip
        out.append((lines[0], lines[1] == "True"))
    return out
