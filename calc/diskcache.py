"""Small JSON caches in the user's cache folder, for results a library works out slowly.

One thing is kept: what sympy finds about a shape formula (:mod:`calc.symbolic`).  Each
cache is one JSON file holding a format number, a version naming both beamtone's and the
library's versions (:func:`version_key`), and a table of entries; a file that is missing,
unreadable, damaged, not a regular file, larger than :data:`MAX_BYTES` or written for
another version reads as empty.  Writes replace the file atomically, and any failure to
write only loses the cache.  Nothing read back is ever executed, and the user of a cache
checks every entry that could change a number against a cheap independent computation
before trusting it.  Inside :func:`bypassed` (``beamtone verify``) no cache is read or
written.

The folder is ``$BEAMTONE_CACHE`` where that is set, else ``$XDG_CACHE_HOME/beamtone``
(``~/.cache/beamtone`` by default).
"""

from __future__ import annotations

import contextlib
import json
import os
import tempfile
import threading
from collections.abc import Iterator
from pathlib import Path
from typing import Any

__all__ = ["folder", "read", "store", "library_version", "version_key", "bypassed", "enabled"]

_FORMAT = 2
MAX_ENTRIES = 400
"""Entries kept per cache file; the oldest go first."""
MAX_BYTES = 4_000_000
"""Largest cache file read [bytes]."""

_bypass = threading.local()


@contextlib.contextmanager
def bypassed() -> Iterator[None]:
    """Within this block (in this thread) no cache is read or written."""
    before = getattr(_bypass, "depth", 0)
    _bypass.depth = before + 1
    try:
        yield
    finally:
        _bypass.depth = before


def enabled() -> bool:
    """Whether caches may be used here (not inside :func:`bypassed`)."""
    return getattr(_bypass, "depth", 0) == 0


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


def version_key(library: str) -> str:
    """The version a cache of ``library``'s results is written for: beamtone's and its own."""
    return f"beamtone {library_version('beamtone')}; {library} {library_version(library)}"


def read(name: str, version: str) -> dict[str, Any]:
    """The entries of cache ``name`` written for ``version`` (empty if there are none)."""
    from beamtone.calc.errors import InputError
    from beamtone.calc.files import read_limited

    where = folder()
    if where is None or not enabled():
        return {}
    try:
        raw = read_limited(where / f"{name}.json", MAX_BYTES, "a cache")
        data = json.loads(raw.decode("utf-8"))
    except (InputError, OSError, ValueError, UnicodeDecodeError, RecursionError):
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
    if where is None or not enabled():
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
