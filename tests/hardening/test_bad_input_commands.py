"""Bad input through every command: the corpus of bad worksheets (tests/hardening/corpus.py)
run through each command, exit status 2 and one line naming the key; an oversized file refused
by its size.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.cli.inprocess import run
from tests.hardening.corpus import BAD, GOOD

COMMANDS: list[list[str]] = [
    ["solve"],
    ["solve", "--json"],
    ["size", "--vary", "member.length", "--between", "0.5 m", "2 m", "--target", "20 Hz"],
    ["sweep", "--vary", "member.length", "--between", "0.5 m", "2 m", "--points", "3"],
    ["groups"],
    ["verify"],
    ["report", "-o", "REPORT.md"],
]


@pytest.mark.parametrize("command", COMMANDS, ids=lambda c: " ".join(c[:2]))
@pytest.mark.parametrize(("name", "text", "key"), BAD, ids=[b[0] for b in BAD])
def test_bad_input_through_every_command(
    name: str,
    text: str,
    key: str,
    command: list[str],
    tmp_path: Path,
    capsys: pytest.CaptureFixture[str],
) -> None:
    """140 cases: exit 2, one line naming the key, no traceback, the file untouched."""
    sheet = tmp_path / "bad.toml"
    sheet.write_text(text)
    before = sheet.read_bytes()
    args = [command[0], str(sheet), *(str(tmp_path / a) if a == "REPORT.md" else a
                                      for a in command[1:])]  # fmt: skip
    status, out, err = run(capsys, *args)
    assert status == 2, (status, err)
    assert err.startswith(f"beamtone: {key}: "), err
    assert err.count("\n") == 1 and "Traceback" not in err
    assert out == ""
    assert sheet.read_bytes() == before
    assert not (tmp_path / "REPORT.md").exists()


def test_very_large_file_refused_by_its_size_before_parsing(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    """A 30 MB worksheet is refused by its size: never parsed, never read whole (pathlib)."""
    import tomllib

    import tomlkit

    big = tmp_path / "big.toml"
    big.write_text(GOOD + "# padding\n" * 3_000_000)  # about 30 MB, a valid worksheet

    def guarded(real, what: str):  # noqa: ANN001, ANN202
        def call(source, *args: object, **kwargs: object):  # noqa: ANN001, ANN202
            if isinstance(source, Path):
                assert source != big, f"the oversized file was {what}"
            else:
                assert len(source) < 2_000_000, f"the oversized text was {what}"
            return real(source, *args, **kwargs)

        return call

    monkeypatch.setattr(Path, "read_bytes", guarded(Path.read_bytes, "read"))
    monkeypatch.setattr(Path, "read_text", guarded(Path.read_text, "read"))
    for module, name in ((tomlkit, "parse"), (tomlkit, "loads"), (tomllib, "loads")):
        monkeypatch.setattr(module, name, guarded(getattr(module, name), "parsed"))
    status, _, err = run(capsys, "solve", str(big))
    assert status == 2 and err.startswith("beamtone: file: ")
    assert "at most 1000 kB" in err  # the message states the limit
