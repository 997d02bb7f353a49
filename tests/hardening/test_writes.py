"""No lost work: a full disk or a read-only folder leaves the original worksheet as it was, and
the command line says why.
"""

from __future__ import annotations

import errno
import os
import tempfile
from pathlib import Path

import pytest

from beamtone.calc.errors import InputError
from beamtone.calc.worksheet import write_atomic
from tests.cli.inprocess import run
from tests.hardening.corpus import GOOD


def test_full_disk_leaves_the_original(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    path = tmp_path / "w.toml"
    path.write_text(GOOD)
    real_fdopen = os.fdopen

    class FullDisk:
        def __init__(self, handle) -> None:  # noqa: ANN001
            self.handle = handle

        def __enter__(self):  # noqa: ANN204
            return self

        def __exit__(self, *exc: object) -> None:
            self.handle.close()

        def write(self, text: str) -> int:
            raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(os, "fdopen", lambda fd, *a, **k: FullDisk(real_fdopen(fd, *a, **k)))
    with pytest.raises(InputError) as info:
        write_atomic(path, GOOD.replace("2.5 kg", "3 kg"))
    assert info.value.key == "file" and "space" in info.value.message.lower()
    assert path.read_text() == GOOD
    assert sorted(p.name for p in tmp_path.iterdir()) == ["w.toml"]


def test_read_only_folder_leaves_the_original(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    path = tmp_path / "w.toml"
    path.write_text(GOOD)

    def refuse(*args: object, **kwargs: object) -> tuple[int, str]:
        raise PermissionError(errno.EACCES, "Permission denied")

    monkeypatch.setattr(tempfile, "mkstemp", refuse)
    with pytest.raises(InputError) as info:
        write_atomic(path, "anything")
    assert info.value.key == "file" and "write" in info.value.message
    assert path.read_text() == GOOD


def test_apply_in_a_read_only_folder_tells_the_user(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    path = tmp_path / "w.toml"
    path.write_text(GOOD)

    def refuse(*args: object, **kwargs: object) -> tuple[int, str]:
        raise PermissionError(errno.EACCES, "Permission denied")

    monkeypatch.setattr(tempfile, "mkstemp", refuse)
    status, _, err = run(capsys, "size", str(path), "--vary", "member.length", "--between",
                         "0.5 m", "2 m", "--target", "20 Hz", "--apply")  # fmt: skip
    assert status == 2 and err.startswith("beamtone: file: ")
    assert path.read_text() == GOOD
