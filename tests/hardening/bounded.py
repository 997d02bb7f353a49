"""Running the command line with a time bound: in a fresh process, or in this one.

:func:`beamtone` starts a new process, as a user's shell does: for what only a process shows
(its start-up, its imports, the interpreter's own traceback, reading a device or a pipe).
:func:`here` runs the very same ``beamtone.cli.main.main`` in this process, with the
command's standard streams, exit status and environment, for checks of what the command
prints and returns: about a second less per run, the cost of a new interpreter importing
numpy, scipy and pint. ``tests/cli/test_solve_cli.py`` checks that both give the same
output, byte for byte, and the same exit status.
"""

from __future__ import annotations

import contextlib
import io
import os
import subprocess
import sys
import threading
import traceback
import warnings
from collections.abc import Iterator
from pathlib import Path

__all__ = ["ROOT", "beamtone", "here", "python"]

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


def here(
    *args: str, timeout: float = 30.0, cwd: Path | None = None, env: dict[str, str] | None = None
) -> subprocess.CompletedProcess[str]:
    """``beamtone ARGS`` run by ``beamtone.cli.main.main`` in this process, as a new process
    would run it: its standard output and error captured, its exit status (an exception that
    escapes is printed as the interpreter prints it, status 1), ``env`` added to the
    environment and ``cwd`` the working folder for the run. The test fails
    (TimeoutExpired) past ``timeout`` s: the run goes on in a thread of its own, so a hang
    fails the test instead of stopping the session.
    """
    from beamtone.cli.main import main

    out, err = io.StringIO(), io.StringIO()
    status: list[int] = []

    def run() -> None:
        try:
            status.append(main(list(args)))
        except SystemExit as exc:  # argparse's own exit, as the interpreter reports it
            code = exc.code
            if isinstance(code, int) or code is None:
                status.append(code or 0)
            else:
                err.write(f"{code}\n")
                status.append(1)
        except BaseException:  # noqa: BLE001 - what the interpreter would print, status 1
            err.write(traceback.format_exc())
            status.append(1)

    with contextlib.ExitStack() as stack:
        contexts = (
            _environment(env),
            _folder(cwd),
            contextlib.redirect_stdout(out),
            contextlib.redirect_stderr(err),
            _no_input(),
            _warnings_printed(err),
        )
        for context in contexts:
            stack.enter_context(context)
        worker = threading.Thread(target=run, daemon=True, name="beamtone-here")
        worker.start()
        worker.join(timeout)
    if worker.is_alive():
        raise subprocess.TimeoutExpired(["beamtone", *args], timeout, out.getvalue())
    return subprocess.CompletedProcess(["beamtone", *args], status[0], out.getvalue(),
                                       err.getvalue())  # fmt: skip


@contextlib.contextmanager
def _environment(env: dict[str, str] | None) -> Iterator[None]:
    saved = {name: os.environ.get(name) for name in env or {}}
    os.environ.update(env or {})
    try:
        yield
    finally:
        for name, value in saved.items():
            if value is None:
                os.environ.pop(name, None)
            else:
                os.environ[name] = value


@contextlib.contextmanager
def _folder(cwd: Path | None) -> Iterator[None]:
    before = os.getcwd()
    os.chdir(cwd or ROOT)
    try:
        yield
    finally:
        os.chdir(before)


@contextlib.contextmanager
def _warnings_printed(err: io.StringIO) -> Iterator[None]:
    """Warnings printed on standard error under the interpreter's default filters, as in a
    new process (pytest would otherwise collect them, and an unexpected warning would go
    unseen by a test that reads standard error)."""
    with warnings.catch_warnings():
        warnings.resetwarnings()
        warnings.simplefilter("default")
        for category in (DeprecationWarning, PendingDeprecationWarning, ImportWarning,
                         ResourceWarning):  # fmt: skip
            warnings.simplefilter("ignore", category)  # the interpreter's defaults

        def show(message, category, filename, lineno, file=None, line=None):  # noqa: ANN001, ANN202
            err.write(warnings.formatwarning(message, category, filename, lineno, line))

        warnings.showwarning = show
        yield


@contextlib.contextmanager
def _no_input() -> Iterator[None]:
    """Standard input empty and not a terminal, as ``beamtone`` (above) gives its process."""
    saved = sys.stdin
    sys.stdin = io.StringIO()
    try:
        yield
    finally:
        sys.stdin = saved
