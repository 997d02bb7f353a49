"""Nothing from a file reaches the terminal raw; Markdown shows user text literally (issue 21
item 8).  Before: an escape sequence in a title or a record field was printed raw by
``solve`` and ``verify`` (it could clear the screen and print fake results), and a Markdown
report embedded a title's image link unescaped."""

from __future__ import annotations

from pathlib import Path

import pytest

from beamtone.cli.terminal import clean
from tests.cli.inprocess import run
from tests.hardening.bounded import ROOT

BAR = (ROOT / "worksheets" / "free-free-bar.toml").read_text(encoding="utf-8")
NASTY = ["\\u001b[2J\\u001b[H", "\\u009b31m", "\\u0007", "\\u202eevil", "\\r f1 = 999 Hz"]


def _sheet(tmp_path: Path, title: str) -> Path:
    path = tmp_path / "bar.toml"
    text = BAR.replace('title = "Titanium test bar, free-free"', f'title = "bar {title}"')
    path.write_text(text, encoding="utf-8")
    return path


def _raw(text: str) -> bool:
    return any(ch in text for ch in "\x1b\x9b\x07\u202e\r")


@pytest.mark.parametrize("title", NASTY)
@pytest.mark.parametrize("command", [["solve"], ["groups"], ["solve", "--record"]])
def test_titles_are_printed_without_control_characters(
    title: str, command: list[str], tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    sheet = _sheet(tmp_path, title)
    status, out, err = run(capsys, command[0], str(sheet), *command[1:])
    assert status == 0, err
    assert not _raw(out + err)
    assert "bar \\x" in out or "bar \\u" in out


def test_record_fields_are_printed_without_control_characters(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    sheet = _sheet(tmp_path, "plain")
    assert run(capsys, "solve", str(sheet), "--record")[0] == 0
    text = sheet.read_text(encoding="utf-8")
    version = next(line for line in text.splitlines() if line.startswith("version = "))
    sheet.write_text(text.replace(version, 'version = "\\u001b[2J0.1"'), encoding="utf-8")
    status, out, err = run(capsys, "verify", str(sheet))
    assert not _raw(out + err) and "\\x1b[2J0.1" in out


def test_option_values_are_shown_without_control_characters(
    capsys: pytest.CaptureFixture[str],
) -> None:
    status, out, err = run(capsys, "solve", "bar\x1b[2J.toml")
    assert status == 2 and not _raw(err) and "\\x1b[2J" in err


def test_clean_keeps_newlines_tabs_and_text() -> None:
    assert clean("a\tb\nc é Π ω²") == "a\tb\nc é Π ω²"
    assert clean("\x1b[31m\x00\x7f\x85") == "\\x1b[31m\\x00\\x7f\\x85"


def test_markdown_report_escapes_links_and_images(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    sheet = _sheet(tmp_path, "![track](https://example.invalid/p.png) [z](javascript:x)")
    out_file = tmp_path / "r.md"
    status, _, err = run(capsys, "report", str(sheet), "-o", str(out_file))
    assert status == 0, err
    heading = out_file.read_text(encoding="utf-8").splitlines()[0]
    assert "![track](" not in heading and "[z](" not in heading
    assert "\\!\\[track\\]" in heading
