"""The app's one typing pause: work starts this long after the last key.

Long enough that a word typed at an ordinary pace ("150 mm") is solved once, not at every
key on its way ("150 m" is never shown as a result of its own), and short enough that the
answer still follows the typing. Test drivers that press keys faster than this see one solve
per edit, as a user does.
"""

from __future__ import annotations

__all__ = ["DEBOUNCE"]

DEBOUNCE = 0.25  # seconds of quiet after the last key
