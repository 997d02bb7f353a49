"""beamtone's computation library: no user interface, SI floats and numpy arrays inside.

Modules, one concern each:

- ``calc.units``: the one pint registry; quantity strings to SI floats.
- ``calc.materials``, ``calc.sections``: material library and cross-section properties.
- ``calc.model``: the immutable member description (segments, supports, attachments).
- ``calc.fe``: finite-element eigen solution with error estimates and soundness checks.
- ``calc.handbook``: exact frequency parameters of tabulated uniform-beam cases.
- ``calc.worksheet``: TOML worksheets in, a validated member out.
- ``calc.errors``: the one input-error type.

Importing ``calc`` itself is cheap; the submodules load numpy, scipy and pint
when they are first used.
"""

from __future__ import annotations

import importlib
from typing import Any

__all__ = ["InputError", "Member", "FEResult", "load", "loads", "solve"]

_LAZY = {
    "InputError": "beamtone.calc.errors",
    "Member": "beamtone.calc.model",
    "FEResult": "beamtone.calc.fe",
    "solve": "beamtone.calc.fe",
    "load": "beamtone.calc.worksheet",
    "loads": "beamtone.calc.worksheet",
}


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(f"module 'calc' has no attribute {name!r}")
    return getattr(importlib.import_module(module), name)
