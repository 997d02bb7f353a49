"""Where the tests find published reference values.

The project's shared reference folder sits beside the repository (``../shared/reference``);
a copy of each file used is kept in ``tests/reference/`` so the suite also runs from a
checkout without it.  ``test_reference_copies`` keeps the two identical.
"""

from __future__ import annotations

from pathlib import Path

__all__ = ["reference_file", "SHARED", "VENDORED"]

_REPO = Path(__file__).resolve().parents[1]
SHARED = _REPO.parent / "shared" / "reference"
VENDORED = _REPO / "tests" / "reference"


def reference_file(name: str) -> Path:
    """Path of a published reference file: the shared folder's, else the vendored copy."""
    shared = SHARED / name
    return shared if shared.is_file() else VENDORED / name
