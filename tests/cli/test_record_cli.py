"""``solve --record``, ``verify`` and ``report`` on the command line (in-process)."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
import tomlkit

from beamtone.calc.worksheet import replace_value
from tests.cli.inprocess import run

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture
def rail(tmp_path: Path) -> Path:
    path = tmp_path / "rail.toml"
    path.write_bytes((ROOT / "worksheets" / "slide-rail-us.toml").read_bytes())
    return path


@pytest.fixture
def recorded(rail: Path, capsys: pytest.CaptureFixture[str]) -> Path:
    status, _, err = run(capsys, "solve", str(rail), "--record")
    assert status == 0, err
    return rail


def test_solve_record_keeps_the_worksheet_and_its_comments(
    rail: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    before = rail.read_text(encoding="utf-8")
    status, out, err = run(capsys, "solve", str(rail), "--record")
    assert status == 0, err
    assert f"record written to {rail}" in out and "Caution" in out
    after = rail.read_text(encoding="utf-8")
    assert after.startswith(before.rstrip())  # every line, comment and blank as it was
    assert "# probe carriage parked mid-travel" in after
    table = tomlkit.parse(after)["record"]
    assert re.fullmatch(r"[0-9a-f]{64}", table["inputs_sha256"])
    assert table["version"] and table["modes"] == 4
    assert len(table["results"]["frequencies_hz"]) == 4


def test_solve_record_json_keeps_stdout_one_object(
    rail: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    status, out, err = run(capsys, "solve", str(rail), "--record", "--json", "--modes", "2")
    assert status == 0
    stored = tomlkit.parse(rail.read_text(encoding="utf-8"))["record"]
    assert json.loads(out)["modes"][0]["frequency_hz"] == stored["results"]["frequencies_hz"][0]
    assert stored["modes"] == 2 and "record written" in err


def test_verify_passes_on_a_fresh_record(
    recorded: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    before = recorded.read_bytes()
    status, out, err = run(capsys, "verify", str(recorded))
    assert status == 0, err
    assert "VERIFIED: every stored result reproduces" in out and "unchanged" in out
    assert "mode 1 frequency [Hz]" in out and "DIFFERS" not in out
    assert recorded.read_bytes() == before  # verify only reads
    status, out, _ = run(capsys, "verify", str(recorded), "--json")
    obj = json.loads(out)
    assert status == 0 and obj["verified"] is True and obj["inputs_unchanged"] is True
    assert all(c["ok"] for c in obj["comparisons"])


def test_verify_fails_on_a_changed_input(
    recorded: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    text = recorded.read_text(encoding="utf-8")
    written = tomlkit.parse(text)["record"]["written"]
    recorded.write_text(replace_value(text, "mass[0].mass", "5 lb"), encoding="utf-8")
    status, out, _ = run(capsys, "verify", str(recorded))
    assert status == 1
    stamp = written.strftime("%Y-%m-%dT%H:%M:%SZ")
    assert f"CHANGED since the record was written on {stamp}" in out
    assert f"the inputs changed since the record was written on {stamp}" in out
    assert "NOT VERIFIED" in out and "record.results.frequencies_hz[0]" in out
    status, out, _ = run(capsys, "verify", str(recorded), "--json")
    assert status == 1 and json.loads(out)["inputs_unchanged"] is False


def test_verify_fails_on_a_tampered_result(
    recorded: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    document = tomlkit.parse(recorded.read_text(encoding="utf-8"))
    freqs = document["record"]["results"]["frequencies_hz"]
    stored = float(freqs[0])
    freqs[0] = round(stored, 3)  # "tidied up" by hand
    recorded.write_text(tomlkit.dumps(document), encoding="utf-8")
    status, out, _ = run(capsys, "verify", str(recorded))
    assert status == 1
    assert "inputs    unchanged" in out and "DIFFERS" in out
    line = next(x for x in out.splitlines() if x.startswith("  - mode 1 frequency"))
    assert "record.results.frequencies_hz[0]" in line and "relative difference" in line
    assert f"stored {round(stored, 3):.12g}, now {stored:.12g}" in line


def test_verify_without_a_record_exits_1(rail: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status, out, err = run(capsys, "verify", str(rail))
    assert status == 1 and err == ""
    assert "no record to verify" in out and "--record" in out


@pytest.mark.parametrize(
    ("change", "key"),
    [
        (
            lambda t: t.replace("rayleigh_hz = ", 'rayleigh_hz = "high"\nwas = '),
            "record.results.rayleigh_hz",
        ),
        (lambda t: t.replace("[record.results]", "[record.outcome]"), "record.results"),
        (lambda t: t.replace('inputs_sha256 = "', 'inputs_sha256 = "0'), "record.inputs_sha256"),
    ],
)
def test_malformed_record_exits_2(
    recorded: Path, capsys: pytest.CaptureFixture[str], change: object, key: str
) -> None:
    recorded.write_text(change(recorded.read_text(encoding="utf-8")), encoding="utf-8")  # type: ignore[operator]
    before = recorded.read_bytes()
    status, out, err = run(capsys, "verify", str(recorded))
    assert status == 2 and out == ""
    assert err.startswith(f"beamtone: {key}: ") and "Traceback" not in err
    assert recorded.read_bytes() == before


def test_bad_worksheet_is_not_recorded(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = tmp_path / "bad.toml"
    text = (ROOT / "worksheets" / "slide-rail-us.toml").read_text(encoding="utf-8")
    path.write_text(text.replace('"36 in"', '"36 kg"'), encoding="utf-8")
    before = path.read_bytes()
    status, out, err = run(capsys, "solve", str(path), "--record")
    assert status == 2 and err.startswith("beamtone: member.length: ")
    assert path.read_bytes() == before
    status, _, err = run(capsys, "verify", str(tmp_path / "missing.toml"))
    assert status == 2 and "an existing worksheet file" in err


def test_unwritable_folder_leaves_the_worksheet(
    rail: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    import tempfile

    def refuse(*args: object, **kwargs: object) -> None:
        raise PermissionError(13, "Permission denied")

    before = rail.read_bytes()
    monkeypatch.setattr(tempfile, "mkstemp", refuse)
    status, _, err = run(capsys, "solve", str(rail), "--record")
    assert status == 2 and err.startswith("beamtone: file: ") and "Permission denied" in err
    assert rail.read_bytes() == before


# --- report --------------------------------------------------------------------------------------


def test_report_markdown_with_its_figure(
    recorded: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    before = recorded.read_bytes()
    out_path = recorded.parent / "rail-record.md"
    status, out, err = run(
        capsys,
        "report",
        str(recorded),
        "-o",
        str(out_path),
        "--excitation",
        "1800 rpm",
        "--harmonics",
        "1,2",
    )
    assert status == 0, err
    figure = recorded.parent / "rail-record-modes.svg"
    assert f"report written: {out_path}, {figure}" in out
    md = out_path.read_text(encoding="utf-8")
    assert "![" in md and "(rail-record-modes.svg)" in md
    assert figure.read_text(encoding="utf-8").lstrip().startswith("<?xml")
    assert "1x 30 Hz" in md and "2x 60 Hz" in md  # 1800 rpm = 30 Hz
    assert "reproduces: every stored result reproduces" in md
    assert "Caution" in md and "licensed engineer" in md
    assert recorded.read_bytes() == before  # the report never touches the worksheet
    assert oct(out_path.stat().st_mode & 0o777) != oct(0o600)  # usual permissions, not a temp's


def test_report_html_is_one_file(rail: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out_path = rail.parent / "rail.html"
    status, out, err = run(capsys, "report", str(rail), "-o", str(out_path), "--html")
    assert status == 0, err
    assert sorted(p.name for p in rail.parent.iterdir()) == ["rail.html", "rail.toml"]
    page = out_path.read_text(encoding="utf-8")
    assert page.count("<svg") == 1 and not re.search(r"https?://|<link|<script", page)
    assert "none in the worksheet" in page


@pytest.mark.parametrize(
    ("extra", "key"),
    [
        (["-o", "{ws}"], "-o"),  # the worksheet itself
        (["-o", "{dir}/report.html"], "-o"),  # HTML name without --html
        (["-o", "{dir}/report.md", "--html"], "-o"),
        (["-o", "{dir}/missing/report.md"], "-o"),
        (["-o", "{dir}/report.md", "--margin", "10%"], "--margin"),
        (["-o", "{dir}/report.md", "--excitation", "30 m"], "--excitation"),
        (["-o", "{dir}/report.md", "--excitation", "30 Hz", "--harmonics", "0"], "--harmonics"),
    ],
)
def test_bad_report_input_exits_2(
    rail: Path, capsys: pytest.CaptureFixture[str], extra: list[str], key: str
) -> None:
    before = rail.read_bytes()
    args = [a.format(ws=rail, dir=rail.parent) for a in extra]
    status, out, err = run(capsys, "report", str(rail), *args)
    assert status == 2 and out == ""
    assert err.startswith(f"beamtone: {key}: ") and "Traceback" not in err
    assert rail.read_bytes() == before
    assert sorted(p.name for p in rail.parent.iterdir()) == ["rail.toml"]


def test_report_refuses_to_write_over_the_worksheet_by_another_name(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    sheet = tmp_path / "sheet.md"  # a worksheet with an unusual name
    sheet.write_bytes((ROOT / "worksheets" / "free-free-bar.toml").read_bytes())
    link = tmp_path / "same.md"
    link.symlink_to(sheet)
    before = sheet.read_bytes()
    status, _, err = run(capsys, "report", str(sheet), "-o", str(link))
    assert status == 2 and "other than the worksheet itself" in err
    assert sheet.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["same.md", "sheet.md"]
