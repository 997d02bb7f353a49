"""Reading and writing the files a user names: bounded reads, writes that keep the file.

Reads take regular files only (a FIFO, a device such as ``/dev/zero`` or a terminal is
refused without waiting on it) and at most a stated number of bytes from any source,
whatever the file system reports as its size.

Writes go to the file the user named: a symbolic link is followed to the real file (the
link stays a link), a file with several hard links is rewritten in place so every name
sees the new text, the owner's permissions are kept, a read-only file is refused, and,
where the caller says what it read, the write is refused when the file changed since
(its digest is compared just before the new text takes its place).  Otherwise the new text
goes to a temporary file in the same folder, flushed, then renamed over the real file, so
an interruption leaves the original whole.
"""

from __future__ import annotations

import contextlib
import hashlib
import os
import stat
import tempfile
from pathlib import Path

from beamtone.calc.errors import InputError

__all__ = ["WORKSHEET_BYTES", "digest", "read_limited", "write_atomic"]

_KINDS = {
    stat.S_IFIFO: "a pipe (FIFO)",
    stat.S_IFCHR: "a character device",
    stat.S_IFBLK: "a block device",
    stat.S_IFSOCK: "a socket",
    stat.S_IFDIR: "a folder",
}


WORKSHEET_BYTES = 1_000_000
"""Largest worksheet file accepted [bytes] (``calc.worksheet.MAX_BYTES``)."""


def digest(data: bytes) -> str:
    """The SHA-256 of some bytes, as 64 hexadecimal digits."""
    return hashlib.sha256(data).hexdigest()


def read_limited(path: str | Path, limit: int, what: str = "a worksheet") -> bytes:
    """The bytes of a regular file of at most ``limit`` bytes.

    Parameters
    ----------
    path : str or Path
        The file as the user named it (links are followed).
    limit : int
        Most bytes accepted [bytes]; more is refused, however the file reports its size.
    what : str
        What the file should be, for messages (``"a worksheet"``).

    Returns
    -------
    bytes

    Raises
    ------
    InputError
        Keyed ``"file"``: missing, not a regular file (pipe, device, folder), not readable,
        or longer than ``limit``.
    """
    p = Path(path)
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_NOCTTY", 0)
    try:
        fd = os.open(p, flags)
    except FileNotFoundError:
        raise InputError("file", str(p), f"an existing {what.removeprefix('a ')} file") from None
    except IsADirectoryError:
        raise InputError("file", str(p), f"{what} file, not a folder") from None
    except PermissionError:
        raise InputError("file", str(p), f"{what} file you may read") from None
    except OSError as exc:
        raise InputError("file", str(p), f"a readable {what.removeprefix('a ')} file",
                         exc.strerror) from None  # fmt: skip
    try:
        mode = os.fstat(fd).st_mode
        if stat.S_ISDIR(mode):
            raise InputError("file", str(p), f"{what} file, not a folder")
        if not stat.S_ISREG(mode):
            kind = _KINDS.get(stat.S_IFMT(mode), "not a regular file")
            raise InputError("file", str(p), f"{what} as a regular file", f"this is {kind}")
        chunks: list[bytes] = []
        size = 0
        while size <= limit:
            chunk = os.read(fd, min(1 << 16, limit + 1 - size))
            if not chunk:
                break
            chunks.append(chunk)
            size += len(chunk)
    except BlockingIOError:  # pragma: no cover - regular files do not block
        raise InputError("file", str(p), f"{what} as a regular file") from None
    except OSError as exc:
        raise InputError("file", str(p), f"a readable {what.removeprefix('a ')} file",
                         exc.strerror) from None  # fmt: skip
    finally:
        os.close(fd)
    if size > limit:
        raise InputError("file", str(p), f"{what} of at most {limit // 1000} kB",
                         f"more than {limit} bytes")  # fmt: skip
    return b"".join(chunks)


def _real_target(path: Path) -> Path:
    """The regular file a path names, links followed; refused if it is none."""
    real = Path(os.path.realpath(path))
    try:
        info = real.stat()
    except FileNotFoundError:
        if path.is_symlink():
            raise InputError("file", str(path), "a link to an existing worksheet",
                             f"it points to {real}, which does not exist") from None  # fmt: skip
        return real  # a new file
    except OSError as exc:
        raise InputError("file", str(path), "a worksheet that can be written",
                         exc.strerror) from None  # fmt: skip
    if not stat.S_ISREG(info.st_mode):
        kind = _KINDS.get(stat.S_IFMT(info.st_mode), "not a regular file")
        raise InputError("file", str(path), "a worksheet as a regular file", f"this is {kind}")
    writable = info.st_mode & (stat.S_IWUSR | stat.S_IWGRP | stat.S_IWOTH)
    if not writable or not os.access(real, os.W_OK):
        raise InputError(
            "file", str(path), "a worksheet you may write",
            f"it is read-only (mode {stat.S_IMODE(info.st_mode):04o}); nothing was written",
        )  # fmt: skip
    return real


def _unchanged(real: Path, path: Path, expected: bytes | None) -> None:
    if expected is None:
        return
    try:
        now = read_limited(real, max(len(expected), 1) * 2 + 1_000_000)
    except InputError:
        now = None
    if now is None or digest(now) != digest(expected):
        raise InputError(
            "file", str(path), "a worksheet unchanged since beamtone read it",
            "it was changed meanwhile (another program or run wrote it); nothing was written: "
            "run the command again on the file as it is now",
        )  # fmt: skip


def write_atomic(path: str | Path, text: str, *, expected: bytes | None = None) -> None:
    """Replace the contents of the file the user named, keeping the file.

    Parameters
    ----------
    path : str or Path
        The file; a symbolic link is followed to the real file.
    text : str
        The new contents (written as UTF-8, line ends as given).
    expected : bytes, optional
        The contents the new text was made from; the write is refused if the file no
        longer holds exactly these bytes just before it would be replaced.

    Raises
    ------
    InputError
        Keyed ``"file"`` when the file is read-only, is not a regular file, changed since
        it was read, or its folder cannot be written; the file is then untouched.
    """
    named = Path(path)
    real = _real_target(named)
    folder = real.parent
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{real.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise InputError("file", str(named), "a worksheet in a folder you may write",
                         exc.strerror) from None  # fmt: skip
    data = text.encode("utf-8")
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        info = None
        with contextlib.suppress(OSError):
            info = real.stat()
        if info is not None:
            with contextlib.suppress(OSError):  # keep the original's permissions and owner
                os.chmod(tmp, stat.S_IMODE(info.st_mode))
            with contextlib.suppress(OSError):
                os.chown(tmp, info.st_uid, info.st_gid)
        _unchanged(real, named, expected)
        if info is None or info.st_nlink <= 1:
            os.replace(tmp, real)
    except OSError as exc:
        Path(tmp).unlink(missing_ok=True)
        raise InputError("file", str(named), "a worksheet that can be written",
                         exc.strerror) from None  # fmt: skip
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    if info is not None and info.st_nlink > 1:
        try:
            _rewrite_in_place(real, data)
        except OSError as exc:  # the complete new text stays in the temporary file
            hint = f"{exc.strerror}; the new text is kept in {tmp}"
            raise InputError("file", str(named), "a worksheet that can be written", hint) from None
        Path(tmp).unlink(missing_ok=True)
    _sync_folder(folder)


def _rewrite_in_place(real: Path, data: bytes) -> None:
    """Rewrite a hard-linked file through its own inode, so every name sees the new text."""
    with open(real, "r+b") as handle:
        handle.write(data)
        handle.truncate()
        handle.flush()
        os.fsync(handle.fileno())


def _sync_folder(folder: Path) -> None:
    try:
        dir_fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        with contextlib.suppress(OSError):  # not every file system syncs folders
            os.fsync(dir_fd)
    finally:
        os.close(dir_fd)
