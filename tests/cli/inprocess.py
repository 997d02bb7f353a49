"""Running the command line in-process for tests: ``cli.main.main`` returns the exit status."""

from __future__ import annotations

import pytest

from beamtone.cli.main import main

__all__ = ["run"]


def run(capsys: pytest.CaptureFixture[str], *args: str) -> tuple[int, str, str]:
    """(exit status, stdout, stderr) of ``beamtone ARGS``; argparse's own exits included."""
    try:
        status = main(list(args))
    except SystemExit as exc:
        status = int(exc.code or 0)
    out, err = capsys.readouterr()
    return status, out, err
