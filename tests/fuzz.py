"""How hard the fuzz tests try: a quick run by default (CI), a long one by hand.

BEAMTONE_FUZZ=long .venv/bin/python -m pytest -k fuzz     # 50x the examples
"""

from __future__ import annotations

import os

__all__ = ["EXAMPLES"]

_SCALE = 50 if os.environ.get("BEAMTONE_FUZZ", "").lower() == "long" else 1


def EXAMPLES(quick: int) -> int:  # noqa: N802 - reads as a constant at the call site
    """Examples for a fuzz test that runs ``quick`` of them in the quick profile."""
    return quick * _SCALE
