"""The one input-error type of beamtone.

Bad input raises :class:`InputError`; numerical shortfalls are reported in
result objects instead (see ``calc.fe.FEResult.warnings``).
"""

from __future__ import annotations

__all__ = ["InputError"]

_MAX_SHOWN = 60


def _printable(text: str) -> str:
    """Escape control and other non-printable characters so a message stays one line."""
    return "".join(c if c.isprintable() else repr(c)[1:-1] for c in text)


def _show(value: object) -> str:
    text = repr(value) if not isinstance(value, str) else '"' + value + '"'
    text = _printable(text)
    if len(text) > _MAX_SHOWN:
        text = text[: _MAX_SHOWN - 3] + "..."
    return text


class InputError(ValueError):
    """Input that beamtone cannot accept.

    Parameters
    ----------
    key : str
        Dotted key path of the offending entry, e.g. ``"member.section.wall"``,
        or ``"file"`` for the worksheet as a whole.
    value : object
        What was given (shown shortened in the message).
    expected : str
        What would have been accepted, in plain words.
    hint : str, optional
        A further suggestion, e.g. a did-you-mean.
    """

    def __init__(self, key: str, value: object, expected: str, hint: str | None = None) -> None:
        self.key = key
        self.value = value
        self.expected = expected
        self.hint = hint
        super().__init__(self.message)

    @property
    def message(self) -> str:
        """One line naming the key, the value given and what was expected."""
        text = f"{_printable(self.key)}: got {_show(self.value)}; expected {self.expected}"
        if self.hint:
            text += f" ({self.hint})"
        return _printable(text)

    def __str__(self) -> str:
        return self.message
