"""Files the user names: links, read-only files, files changed underneath, bounded reads.

Issue 21 items 3-6, each reproduced first: ``--apply`` and ``--record`` replaced a symbolic
link by a plain file (the real worksheet unchanged, "written" printed), broke hard links,
replaced read-only files through the rename, and two ``size --apply`` runs both landed; a
FIFO given as FILE blocked forever, ``/dev/zero`` was read until memory ran out, and 5.4 MB
through ``/dev/stdin`` were accepted.  Every case runs under a time bound.
"""

from __future__ import annotations

import os
import stat
import subprocess
from pathlib import Path

import pytest

from beamtone.calc import files
from beamtone.calc.errors import InputError
from beamtone.calc.worksheet import MAX_BYTES
from tests.cli.inprocess import run
from tests.hardening.bounded import ROOT, beamtone

SOURCE = ROOT / "worksheets" / "sensor-mast.toml"
SIZE = ["--vary", "member.section.outside_diameter", "--between", "30 mm", "3.5 in"]
SIZE += ["--target", "30 Hz", "--apply"]


@pytest.fixture
def mast(tmp_path: Path) -> Path:
    path = tmp_path / "real" / "mast.toml"
    path.parent.mkdir()
    path.write_bytes(SOURCE.read_bytes())
    return path


def _link(mast: Path) -> Path:
    link = mast.parent.parent / "link.toml"
    link.symlink_to(mast)
    return link


@pytest.mark.parametrize("command", [["size", *SIZE], ["solve", "--record"]])
def test_writes_through_a_symbolic_link_reach_the_real_file(
    command: list[str], mast: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    link = _link(mast)
    before = mast.read_bytes()
    status, _, err = run(capsys, command[0], str(link), *command[1:])
    assert status == 0, err
    assert link.is_symlink() and link.resolve() == mast.resolve()
    assert mast.read_bytes() != before


@pytest.mark.parametrize("command", [["size", *SIZE], ["solve", "--record"]])
def test_hard_links_are_kept(
    command: list[str], mast: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    other = mast.parent / "other-name.toml"
    os.link(mast, other)
    status, _, err = run(capsys, command[0], str(mast), *command[1:])
    assert status == 0, err
    assert mast.stat().st_ino == other.stat().st_ino and mast.stat().st_nlink == 2
    assert other.read_bytes() == mast.read_bytes() != SOURCE.read_bytes()


def test_permissions_are_kept(mast: Path, capsys: pytest.CaptureFixture[str]) -> None:
    mast.chmod(0o640)
    status, _, err = run(capsys, "solve", str(mast), "--record")
    assert status == 0, err
    assert stat.S_IMODE(mast.stat().st_mode) == 0o640


@pytest.mark.parametrize("command", [["size", *SIZE], ["solve", "--record"]])
def test_read_only_worksheets_are_refused(
    command: list[str], mast: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    mast.chmod(0o444)
    status, out, err = run(capsys, command[0], str(mast), *command[1:])
    assert status == 2 and "read-only" in err and "nothing was written" in err
    assert err.count("\n") == 1 and "written to" not in out
    assert mast.read_bytes() == SOURCE.read_bytes()
    assert stat.S_IMODE(mast.stat().st_mode) == 0o444


def test_apply_refuses_a_worksheet_changed_since_it_was_read(
    mast: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    """Another run writes the file while this one sizes: its value must not be lost."""
    from beamtone.calc import sizing

    meanwhile = SOURCE.read_text(encoding="utf-8").replace("title =", "# other run\ntitle =", 1)
    solve = sizing.run_request

    def slow(*args: object, **kwargs: object) -> object:
        mast.write_text(meanwhile, encoding="utf-8")
        return solve(*args, **kwargs)

    monkeypatch.setattr(sizing, "run_request", slow)
    status, out, err = run(capsys, "size", str(mast), *SIZE)
    assert status == 2 and "changed meanwhile" in err and "nothing was written" in err
    assert mast.read_text(encoding="utf-8") == meanwhile


def test_write_atomic_compares_just_before_the_rename(mast: Path) -> None:
    before = mast.read_bytes()
    mast.write_bytes(before + b"\n# edited\n")
    with pytest.raises(InputError, match="changed meanwhile"):
        files.write_atomic(mast, "title = 'x'\n", expected=before)
    assert mast.read_bytes() == before + b"\n# edited\n"
    assert sorted(p.name for p in mast.parent.iterdir()) == ["mast.toml"]


def test_a_dangling_link_is_refused(tmp_path: Path) -> None:
    link = tmp_path / "gone.toml"
    link.symlink_to(tmp_path / "nowhere.toml")
    with pytest.raises(InputError, match="does not exist"):
        files.write_atomic(link, "x = 1\n")
    assert link.is_symlink() and not (tmp_path / "nowhere.toml").exists()


# --- bounded reads ----------------------------------------------------------------------------


def test_a_fifo_is_refused_without_blocking(tmp_path: Path) -> None:
    fifo = tmp_path / "pipe.toml"
    os.mkfifo(fifo)
    for command in (["solve", str(fifo)], ["verify", str(fifo)], ["groups", str(fifo)]):
        done = beamtone(*command, timeout=20)
        assert done.returncode == 2 and "pipe (FIFO)" in done.stderr, done.stderr


@pytest.mark.parametrize("device", ["/dev/zero", "/dev/null", "/dev/urandom"])
def test_devices_are_refused(device: str) -> None:
    if not Path(device).exists():
        pytest.skip(f"no {device}")
    done = beamtone("solve", device, timeout=20)
    assert done.returncode == 2 and "character device" in done.stderr, done.stderr


def test_stdin_as_a_pipe_is_refused(tmp_path: Path) -> None:
    big = b"# padding\n" * 540_000  # 5.4 MB, as in the issue
    code = "import sys; from beamtone.cli.main import main; sys.exit(main(sys.argv[1:]))"
    done = subprocess.run(
        [os.sys.executable, "-c", code, "solve", "/dev/stdin"], input=big, capture_output=True,
        timeout=20, cwd=ROOT, check=False,
    )  # fmt: skip
    assert done.returncode == 2 and b"pipe (FIFO)" in done.stderr


def test_stdin_from_a_large_file_reads_at_most_the_limit(tmp_path: Path) -> None:
    big = tmp_path / "big.toml"
    big.write_bytes(SOURCE.read_bytes() + b"# padding\n" * 540_000)
    with big.open("rb") as handle:
        done = beamtone("solve", "/dev/stdin", stdin=handle, timeout=20)
    assert done.returncode == 2 and "at most 1000 kB" in done.stderr, done.stderr


def test_read_limited_never_reads_past_the_limit(tmp_path: Path) -> None:
    path = tmp_path / "w.toml"
    path.write_bytes(b"a" * (MAX_BYTES + 1))
    with pytest.raises(InputError, match="at most"):
        files.read_limited(path, MAX_BYTES)
    path.write_bytes(b"a" * MAX_BYTES)
    assert len(files.read_limited(path, MAX_BYTES)) == MAX_BYTES
