"""Positions written from the right end of the member.

A position key (``mass[].at``, ``spring[].at``, ``supports.inner[].at``, an excitation's
``force_at``) is a length from the left end.  It may also be written from the right end,
so an attachment follows the member's length when the length is edited:

``"right end"``
    at the right end (the member's length).
``"150 mm from the right end"`` (also ``"150 mm from right end"``, ``"150 mm from right"``)
    that far in from the right end.

The worksheet loader resolves them with the member's length (:func:`resolve`); every other
reader sees the text as written.

Examples
--------
>>> from beamtone.calc.positions import resolve
>>> resolve("right end", "mass[0].at", 2.0)
2.0
>>> round(resolve("150 mm from the right end", "mass[0].at", 2.0), 9)
1.85
"""

from __future__ import annotations

import re

from beamtone.calc.errors import InputError
from beamtone.calc.units import LENGTH, parse_quantity

__all__ = ["RIGHT_END", "from_right", "resolve"]

RIGHT_END = "right end"
"""The text of a position at the right end."""

_FORM = re.compile(
    r"^\s*(?:(?P<distance>.*?)\s*\bfrom\s+(?:the\s+)?right(?:\s+end)?|right\s+end)\s*$",
    re.IGNORECASE,
)


def from_right(text: object) -> str | None:
    """The distance from the right end as written (``"0 m"`` for ``"right end"``), or None
    where ``text`` is not written from the right end."""
    if not isinstance(text, str):
        return None
    found = _FORM.match(text)
    if found is None:
        return None
    distance = found.group("distance")
    return "0 m" if distance is None else distance  # "" where the distance is missing


def resolve(text: object, key: str, length: float | None) -> float:
    """A position written from the right end, as a length from the left end [m].

    Parameters
    ----------
    text : str
        ``"right end"`` or ``"DISTANCE from the right end"``.
    key : str
        The key path, named in errors.
    length : float or None
        The member's length [m]; None where no member length is known (refused).

    Raises
    ------
    InputError
        For a distance that is not a zero or positive length, or where no length is known.
    """
    distance = from_right(text)
    expected = 'a zero or positive length from the right end, e.g. "150 mm from the right end"'
    if distance is None:
        raise InputError(key, text, expected)
    if length is None:
        raise InputError(
            key, text, "a position from the left end", "here no member length is known"
        )
    try:
        value = parse_quantity(distance, LENGTH, key, allow_zero=True, minimum=False)
    except InputError as exc:
        raise InputError(key, text, expected, exc.hint) from None
    return length - value
