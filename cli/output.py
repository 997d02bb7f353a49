"""Writing the command line's output: one JSON object on stdout.

The text and the JSON objects themselves are made by ``beamtone.render``; the caution is
``beamtone.calc.caution.CAUTION`` (named here too for the commands that print it).
"""

from __future__ import annotations

import json
import sys
from typing import Any

from beamtone.calc.caution import CAUTION

__all__ = ["CAUTION", "write_json"]


def write_json(obj: dict[str, Any]) -> None:
    """Write one JSON object and a newline to stdout."""
    json.dump(obj, sys.stdout, indent=2, allow_nan=False)
    sys.stdout.write("\n")
