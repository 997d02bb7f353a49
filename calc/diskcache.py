"""Small JSON caches in the user's cache folder, for results a library works out slowly.

Two things are kept: what sympy finds about a shape formula (:mod:`calc.symbolic`) and what
pint makes of a unit expression (:mod:`calc.units`).  Each cache is one JSON file holding a
format number, the version of the library whose results it keeps, and a table of entries;
a file that is missing, unreadable, damaged or written for another version reads as empty.
Writes replace the file atomically, and any failure to write only loses the cache.  Nothing
read back is ever executed: each user validates every entry before trusting it.

The folder is ``$BEAMTONE_CACHE`` where that is set, else ``$XDG_CACHE_HOME/beamtone``
(``~/.cache/beamtone`` by default).
"""

from __future__ import annotations

import json
import os
import tempfile
from pathlib import Path
from typing import Any

__all__ = ["folder", "read", "store", "library_version"]

_FORMAT = 1
MAX_ENTRIES = 400
"""Entries kept per cache file; the oldest go first."""


def folder() -> Path | None:
    """The cache folder (see the module documentation), or None where there is no home."""
    own = os.environ.get("BEAMTONE_CACHE")
    if own:
        return Path(own)
    base = Path(os.environ.get("XDG_CACHE_HOME") or os.path.expanduser("~/.cache"))
    # without a home folder "~" stays as it is: keep nothing rather than write below the cwd
    return base / "beamtone" if base.is_absolute() else None


def library_version(name: str) -> str:
    """A library's installed version, without importing it."""
    from importlib.metadata import PackageNotFoundError, version

    try:
        return version(name)
    except PackageNotFoundError:  # pragma: no cover - both are dependencies
        return "unknown"


def read(name: str, version: str) -> dict[str, Any]:
    """The entries of cache ``name`` written for ``version`` (empty if there are none)."""
    where = folder()
    if where is None:
        return {}
    try:
        data = json.loads((where / f"{name}.json").read_text(encoding="utf-8"))
    except (OSError, ValueError, UnicodeDecodeError, RecursionError):
        return {}
    if (
        not isinstance(data, dict)
        or data.get("format") != _FORMAT
        or data.get("version") != version
        or not isinstance(data.get("entries"), dict)
    ):
        return {}
    return data["entries"]


def store(name: str, version: str, key: str, entry: Any, limit: int | None = None) -> None:
    """Add (or renew) one entry of cache ``name``."""
    where = folder()
    if where is None:
        return
    path = where / f"{name}.json"
    entries = dict(read(name, version))
    entries.pop(key, None)
    entries[key] = entry
    while len(entries) > (MAX_ENTRIES if limit is None else limit):
        entries.pop(next(iter(entries)))
    data = {"format": _FORMAT, "version": version, "entries": entries}
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, temporary = tempfile.mkstemp(dir=path.parent, prefix=f".{name}-", suffix=".json")
        try:
            with os.fdopen(fd, "w", encoding="utf-8") as handle:
                json.dump(data, handle)
            os.replace(temporary, path)
        except BaseException:
            Path(temporary).unlink(missing_ok=True)
            raise
    except (OSError, TypeError, ValueError):
        pass
