"""The app's first solve, in a process of its own, started before the interface is imported.

Starting the app costs two things of about the same size: the interface (textual, the screen's
layout) and the numerical side (numpy, scipy, the unit registry, the solve). In one process
they take turns; here the worksheet's first solve runs in a child process (``python -m
beamtone.tui.early``) on the other processor while the app draws its screen, and hands back
its :class:`~beamtone.calc.analysis.Analysis` (or the :class:`~beamtone.calc.errors.InputError`
that names what is wrong) through a pipe. Later solves run in the app's own worker thread, as
before; the child serves the first one only.

The child starts first thing, before the app has even read the worksheet as a document: it
is given the file's TOML text through the pipe (it unpickles nothing it is given) and is the
app's own code; nothing is read from disk but the modules. Its answer is used only where that
text reads as the very data the app then solves. Whatever goes wrong with it (it cannot
start, it fails, its answer cannot be read, the worksheet changed meanwhile) costs only time:
:meth:`outcome` returns None and the app solves in its own process.

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
import time
from typing import Any

__all__ = ["EarlySolve", "main", "spare_processor", "start", "worksheet_text"]


def _runnable() -> int | None:
    """Tasks runnable on the machine now, this one included (the fewest of three looks a
    millisecond apart, from ``/proc/loadavg``), or None where the system does not say."""
    counts = []
    for look in range(3):
        if look:
            time.sleep(0.001)
        try:
            with open("/proc/loadavg", encoding="ascii") as handle:
                counts.append(int(handle.read().split()[3].split("/")[0]))
        except (OSError, ValueError, IndexError):
            return None
    return min(counts)


def _processors() -> int:
    """Processors this process may run on."""
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):  # pragma: no cover - not Linux
        return os.cpu_count() or 1


def spare_processor() -> bool:
    """Whether a processor is idle enough to solve beside the interface: besides this
    process, at least one processor has nothing runnable on it now. On a busy machine the two
    processes only take turns, and the child's own start-up makes the first results later,
    not sooner.

    The count is taken now, not averaged: the load average over the last minute still
    counts a build or test run that has just ended, and would refuse the child on a machine
    that has since gone quiet. Where the system gives no count of runnable tasks, the load
    average over the last minute decides.
    """
    processors = _processors()
    runnable = _runnable()
    if runnable is not None:
        return runnable <= processors - 1
    try:
        load = os.getloadavg()[0]
    except OSError:  # pragma: no cover - no load average on this system
        return False
    return load <= processors - 1


def worksheet_text(path: str | os.PathLike[str]) -> str | None:
    """The TOML text of an existing worksheet file, for :func:`start`; None where it is not a
    regular, readable UTF-8 text file within the worksheet size limit (the app then says what is
    wrong and solves, if at all, in its own process)."""
    from beamtone.calc.errors import InputError
    from beamtone.calc.files import WORKSHEET_BYTES, read_limited

    try:
        raw = read_limited(os.path.expanduser(path), WORKSHEET_BYTES)
        return None if b"\x00" in raw else raw.decode("utf-8").removeprefix("\ufeff")
    except (InputError, UnicodeDecodeError):
        return None


def start(text: str | None) -> EarlySolve | None:
    """The first solve of the worksheet ``text`` in a process of its own where a processor
    is spare (:func:`spare_processor`), else None (the app solves in its worker). ``text``:
    an existing worksheet file's TOML text (:func:`worksheet_text`); None starts nothing."""
    if text is None or not spare_processor():
        return None
    return EarlySolve(text)


class EarlySolve:
    """A first solve of the worksheet ``text`` running in a child process.

    Parameters
    ----------
    text : str
        The worksheet as TOML text (the file as the app opens it). The child's answer is
        used only where this text reads as the very data the app solves (:meth:`outcome`).
    """

    def __init__(self, text: str) -> None:
        self.text = text
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
            process.stdin.write(self.text.encode("utf-8"))
            process.stdin.close()
        except (OSError, ValueError):
            pass  # the child has gone: outcome() says so

    def outcome(self, data: dict[str, Any]) -> tuple[str, Any] | None:
        """Wait for the child's answer (in a worker thread: this blocks until it answers or
        :meth:`cancel` stops it).

        Returns
        -------
        tuple or None
            ``("done", (Shown, pickled Analysis))`` or ``("failed", InputError)``; None
            where ``data`` (the worksheet the app solves, as plain data) is not what the
            child's text reads as, or the child gave no readable answer (solve in-process).
        """
        process = self._process
        if process is None or process.stdout is None:
            return None
        if data != self._data():
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

    def _data(self) -> dict[str, Any] | None:
        """The text as the child reads it (plain data), or None where it is not TOML."""
        import tomllib

        try:
            return tomllib.loads(self.text)
        except tomllib.TOMLDecodeError:
            return None

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
