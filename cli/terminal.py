"""Text for the terminal: nothing from a file reaches it as a control character.

A worksheet's title or a record's field can hold escape sequences that clear the screen or
draw fake results.  Everything the command line writes passes through :class:`CleanStream`,
which shows each control character as a visible ``\\xNN`` (``\\uNNNN``) escape; newlines and
tabs stay as they are.  JSON output is unaffected (``json`` already escapes them).
"""

from __future__ import annotations

import contextlib
import re
import sys
from collections.abc import Iterator
from typing import TextIO

__all__ = ["clean", "CleanStream", "clean_output"]

# C0 controls except tab and newline, DEL, C1 controls, and the bidirectional overrides
# and isolates that reorder what a terminal shows.
_CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u200e\u200f\u202a-\u202e\u2066-\u2069]")


def _escape(match: re.Match[str]) -> str:
    code = ord(match.group())
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"


def clean(text: str) -> str:
    """``text`` with every terminal control character shown as a visible escape."""
    return _CONTROL.sub(_escape, text)


class CleanStream:
    """A text stream that writes through :func:`clean` to another one."""

    def __init__(self, stream: TextIO) -> None:
        self._stream = stream

    def write(self, text: str) -> int:
        self._stream.write(clean(text))
        return len(text)

    def __getattr__(self, name: str) -> object:
        return getattr(self._stream, name)


@contextlib.contextmanager
def clean_output() -> Iterator[None]:
    """Within this block, ``sys.stdout`` and ``sys.stderr`` write through :func:`clean`."""
    out, err = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = CleanStream(out), CleanStream(err)  # type: ignore[assignment]
    try:
        yield
    finally:
        sys.stdout, sys.stderr = out, err
