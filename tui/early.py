"""The app's first solve, in a process of its own, started before the interface is imported.

Starting the app costs two things of about the same size: the interface (textual, the screen's
layout) and the numerical side (numpy, scipy, the unit registry, the solve). In one process
they take turns; here the worksheet's first solve runs in a child process (``python -m
beamtone.tui.early``) on the other processor while the app draws its screen, and hands back
its :class:`~beamtone.calc.analysis.Analysis` (or the :class:`~beamtone.calc.errors.InputError`
that names what is wrong) through a pipe. Later solves run in the app's own worker thread, as
before; the child serves the first one only.

The child reads the worksheet as TOML text from the pipe (it unpickles nothing it is given)
and is the app's own code; nothing is read from disk but the modules. Whatever goes wrong
with it (it cannot start, it fails, its answer cannot be read, the worksheet changed
meanwhile) costs only time: :meth:`outcome` returns None and the app solves in its own
process.

The child is started only where a processor is spare (:func:`spare_processor`): on a busy
machine the two processes take turns and the child's own start-up costs more than it saves.
This module imports no textual, numpy, scipy or pint.
"""

from __future__ import annotations

import os
import pickle
import subprocess
import sys
import threading
from typing import Any

__all__ = ["EarlySolve", "main", "spare_processor", "start"]


def spare_processor() -> bool:
    """Whether a processor is idle enough to solve beside the interface (the load average
    over the last minute leaves one free). On a busy machine the two processes only take
    turns, and the child's own start-up makes the first results later, not sooner."""
    try:
        load = os.getloadavg()[0]
    except OSError:  # pragma: no cover - no load average on this system
        return False
    return load <= (os.cpu_count() or 1) - 1


def start(data: dict[str, Any] | None) -> EarlySolve | None:
    """The first solve of ``data`` in a process of its own where a processor is spare
    (:func:`spare_processor`), else None (the app solves in its worker). ``data``: an
    existing worksheet file's plain data; None starts nothing."""
    if data is None or not spare_processor():
        return None
    return EarlySolve(data)


class EarlySolve:
    """A first solve of ``data`` (a worksheet as plain data) running in a child process.

    Parameters
    ----------
    data : dict
        The worksheet as plain data (``Document.plain()``), as the app will solve it.
    """

    def __init__(self, data: dict[str, Any]) -> None:
        self.data = data
        self.answered = False  # whether outcome() handed back the child's answer
        self._process: subprocess.Popen[bytes] | None = None
        try:
            self._process = subprocess.Popen(
                [sys.executable, "-m", "beamtone.tui.early"],
                stdin=subprocess.PIPE,
                stdout=subprocess.PIPE,
                stderr=subprocess.DEVNULL,
                # BLAS single-threaded, as the command line runs it
                env={"OPENBLAS_NUM_THREADS": "1", **os.environ},
            )
            # a small worksheet fits the pipe's buffer; a large one is read by the child as
            # soon as it has started, so this write never waits long
            threading.Thread(target=self._send, daemon=True).start()
        except OSError:
            self._process = None

    def _send(self) -> None:
        process = self._process
        if process is None or process.stdin is None:
            return
        try:
            import tomlkit  # already loaded by the app's document

            process.stdin.write(tomlkit.dumps(self.data).encode("utf-8"))
            process.stdin.close()
        except (OSError, ValueError, TypeError):
            pass  # the child has gone (or the data has no TOML form): outcome() says so

    def outcome(self, data: dict[str, Any]) -> tuple[str, Any] | None:
        """Wait for the child's answer (in a worker thread: this blocks until it answers or
        :meth:`cancel` stops it).

        Returns
        -------
        tuple or None
            ``("done", (Shown, pickled Analysis))`` or ``("failed", InputError)``; None
            where ``data`` is not
            what the child solves, or the child gave no readable answer (solve in-process).
        """
        process = self._process
        if process is None or process.stdout is None:
            return None
        if data != self.data:
            self.cancel()
            return None
        try:
            raw = process.stdout.read()
            process.wait()
        except (OSError, ValueError):
            self.cancel()
            return None
        if process.returncode != 0 or not raw:
            return None
        try:
            # our own child's answer through a pipe, never a file another program could write
            how, payload = pickle.loads(raw)  # noqa: S301
        except Exception:  # noqa: BLE001 - a damaged answer only costs the in-process solve
            return None
        if how not in ("done", "failed"):
            return None
        self.answered = True
        if how == "failed":
            from beamtone.calc.errors import InputError

            return "failed", InputError(*payload)
        return "done", payload

    def cancel(self) -> None:
        """Stop the child if it still runs (the app closes, or its answer is not wanted)."""
        process = self._process
        if process is not None and process.poll() is None:
            process.kill()


def main() -> int:
    """The child: read the worksheet as TOML text on stdin, write the pickled outcome on
    stdout (to the parent app only)."""
    import tomllib

    try:
        data = tomllib.loads(sys.stdin.buffer.read().decode("utf-8"))
    except (UnicodeDecodeError, tomllib.TOMLDecodeError):
        return 2  # not a worksheet: the app solves in its own process
    from beamtone.calc.analysis import analyse
    from beamtone.calc.errors import InputError
    from beamtone.calc.worksheet import from_data
    from beamtone.tui.shown import shown

    try:
        analysis = analyse(from_data(data, "<app>"))
        # what to show, and the analysis itself pickled apart: the app shows the first
        # before it has imported the modules the second needs
        blob = pickle.dumps(analysis, protocol=pickle.HIGHEST_PROTOCOL)
        answer: tuple[str, Any] = ("done", (shown(analysis), blob))
    except InputError as exc:
        answer = ("failed", (exc.key, exc.value, exc.expected, exc.hint))
    raw = pickle.dumps(answer, protocol=pickle.HIGHEST_PROTOCOL)
    sys.stdout.buffer.write(raw)
    sys.stdout.buffer.flush()
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
