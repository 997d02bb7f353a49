"""Running the installed command line in a fresh process with a time bound."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

__all__ = ["ROOT", "beamtone", "python"]

ROOT = Path(__file__).resolve().parents[2]


def beamtone(
    *args: str, timeout: float = 30.0, stdin: object = None, cwd: Path | None = None,
    env: dict[str, str] | None = None, budget: float | None = None,
) -> subprocess.CompletedProcess[str]:  # fmt: skip
    """``beamtone ARGS`` in a new process; the test fails (TimeoutExpired) past ``timeout`` s.

    ``budget`` [s], if given, replaces ``calc.symbolic.BUDGET_SECONDS`` in that process, so a
    test reaches the end of the symbolic budget without waiting out the real one.
    """
    code = "import sys; from beamtone.cli.main import main; sys.exit(main(sys.argv[1:]))"
    if budget is not None:
        code = f"from beamtone.calc import symbolic; symbolic.BUDGET_SECONDS = {budget!r}; {code}"
    return python(code, *args, timeout=timeout, stdin=stdin, cwd=cwd, env=env)


def python(
    code: str, *args: str, timeout: float = 30.0, stdin: object = None, cwd: Path | None = None,
    env: dict[str, str] | None = None,
) -> subprocess.CompletedProcess[str]:  # fmt: skip
    """Run Python ``code`` with ``args`` in a new process, bounded by ``timeout`` s."""
    return subprocess.run(
        [sys.executable, "-c", code, *args],
        capture_output=True,
        text=True,
        timeout=timeout,
        stdin=stdin if stdin is not None else subprocess.DEVNULL,
        cwd=cwd or ROOT,
        env={**os.environ, "OPENBLAS_NUM_THREADS": "1", **(env or {})},
        check=False,
    )
