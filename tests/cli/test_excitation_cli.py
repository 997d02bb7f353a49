"""Excitations in the worksheet on the command line: solve's margin table and verdict, the
JSON keys, --fail-unless-clear, and sizing that keeps its margin (the issue's two figures,
as worksheets of our own)."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from beamtone.calc import fe
from beamtone.calc.excitation import Excitation, margin_table, mode_refs
from beamtone.calc.sizing import variation
from beamtone.calc.worksheet import loads
from tests.cli.inprocess import run

ROOT = Path(__file__).resolve().parents[2]

# A 6 m pinned I-beam span carrying a pump skid (demo data of our own).
PUMP_SPAN = """\
format = 1
title = "Pump span"

[member]
length = "6 m"
material = "steel"
section = { shape = "i-beam", width = "120 mm", depth = "200 mm", flange = "10 mm", web = "6 mm" }

[supports]
left = "pinned"
right = "pinned"

[[mass]]
at = "2.2 m"
mass = "900 kg"
"""

EXCITATION = """
[[excitation]]
name = "pump"
speed = "1480 rpm"
orders = [1, 2]
margin = "20 %"
"""

# A flat bracket cantilevered from a frame, carrying a 120 Hz motor (demo data of our own).
BRACKET = """\
format = 1
title = "Motor bracket"

[member]
length = "250 mm"
material = "steel"
section = { shape = "rectangle", width = "60 mm", depth = "12 mm" }

[supports]
left = "clamped"
right = "free"

[[mass]]
at = "250 mm"
mass = "4 kg"
"""


def _depth_plane() -> list[str]:
    """``--direction depth`` where sizing can follow one direction: the issue's figures are
    about the depth plane (by default sizing checks every direction)."""
    from beamtone.cli.main import build_parser

    size = build_parser()._subparsers._group_actions[0].choices["size"]  # type: ignore[union-attr]
    return ["--direction", "depth"] if "--direction" in size._option_string_actions else []


MARGIN_KEYS = {"excitation", "order", "mode", "direction", "frequency_hz", "separation",
               "required", "clear"}  # fmt: skip


def _write(tmp_path: Path, text: str, name: str = "sheet.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_solve_prints_margins_and_a_verdict(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    path = _write(tmp_path, PUMP_SPAN + EXCITATION)
    status, out, err = run(capsys, "solve", str(path))
    assert status == 0, err
    assert "excitation margins" in out
    # the band line says what the band is and how many modes are inside it (it used to read
    # "no mode in ..." even where the table below had modes inside)
    inside = [
        line for line in out.splitlines() if line.split()[:2] == ["pump", "2"] and "INSIDE" in line
    ]
    band = (
        f"pump order 2 at 49.33 Hz: band to keep clear 39.47-59.2 Hz, {len(inside)} mode(s) INSIDE"
    )
    assert inside and band in out
    # mode 2 of this span sits at 58.9 Hz, inside the 2x band: not clear
    rows = [line.split() for line in out.splitlines()]
    (row,) = [r for r in rows if r[:5] == ["pump", "2", "49.333", "depth", "2"]]
    assert row[-1] == "INSIDE"
    assert "verdict   NOT CLEAR: " in out
    assert "the applicable code" in out


def test_json_keys_as_the_issue_lists(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    text = (
        PUMP_SPAN
        + EXCITATION
        + '\n[[excitation]]\nname = "drive"\nspeed = ["900 rpm", "1200 rpm"]\nmargin = "10 %"\n'
    )
    status, out, err = run(capsys, "solve", str(_write(tmp_path, text)), "--json")
    assert status == 0, err
    obj = json.loads(out)
    rows = obj["margins"]
    assert len([r for r in rows if r["direction"] == "depth"]) == (2 + 1) * 5  # 3 lines, 5 modes
    for row in rows:
        line = {"line_hz"} if row["excitation"] == "pump" else {"line_range_hz"}
        assert set(row) == MARGIN_KEYS | line
        assert row["direction"] in ("depth", "width", "torsion", "axial")
    (inside,) = [r for r in rows if (r["direction"], r["mode"], r["order"]) == ("depth", 2, 2.0)]
    assert not inside["clear"]
    assert inside["separation"] == pytest.approx(inside["frequency_hz"] / (2 * 1480 / 60) - 1)
    assert [r["line_range_hz"] for r in rows if r["excitation"] == "drive"][0] == pytest.approx(
        [15.0, 20.0]
    )
    assert set(obj["verdict"]) == {"clear", "governing"}
    assert obj["verdict"]["clear"] is False
    assert obj["verdict"]["governing"]["clear"] is False
    assert obj["modes"]  # the old keys stay


def test_fail_unless_clear(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    inside = _write(tmp_path, PUMP_SPAN + EXCITATION)
    assert run(capsys, "solve", str(inside), "--fail-unless-clear")[0] == 3
    plain = _write(tmp_path, PUMP_SPAN, "plain.toml")
    status, _, err = run(capsys, "solve", str(plain), "--fail-unless-clear")
    assert status == 3 and "no [[excitation]]" in err
    # every direction computed and clear is the only way to exit 0; until the other
    # directions are computed the verdict is "not shown clear"
    far = PUMP_SPAN + '\n[check]\nmodes = 8\n[[excitation]]\nfrequency = "15 Hz"\nmargin = "10 %"\n'
    status, out, _ = run(capsys, "solve", str(_write(tmp_path, far, "far.toml")))
    assert status == 0
    assert "clears every band" in out or "NOT SHOWN CLEAR" in out


@pytest.mark.parametrize(
    ("table", "key"),
    [
        ('speed = "1480 rpm"\norders = [1]', "excitation[0].margin"),
        (
            'speed = "1480 rpm"\nmargin = "20 %"\ncriterion = "bracket-octave"',
            "excitation[0].criterion",
        ),
        ('speed = "1480 m"\nmargin = "20 %"', "excitation[0].speed"),
        ('frequency = ["20 Hz"]\nmargin = "20 %"', "excitation[0].frequency"),
        ('frequency = ["30 Hz", "20 Hz"]\nmargin = "20 %"', "excitation[0].frequency"),
        ('speed = "1480 rpm"\nfrequency = "20 Hz"\nmargin = "20 %"', "excitation[0]"),
        ('speed = "1480 rpm"\nmargin = "20"', "excitation[0].margin"),
        ('speed = "1480 rpm"\nmargin = "150 %"', "excitation[0].margin"),
        ('speed = "1480 rpm"\nmargin = "20 %"\norders = [0]', "excitation[0].orders[0]"),
        ('speed = "1480 rpm"\ncriterion = "octave"', "excitation[0].criterion"),
        ('speed = "1480 rpm"\nmargin = "20 %"\nforce = "100 N"', "excitation[0].force_at"),
        (
            'speed = "1480 rpm"\nmargin = "20 %"\nforce = "100 N"\nforce_at = "7 m"',
            "excitation[0].force_at",
        ),
        ('speed = "1480 rpm"\nmargn = "20 %"', "excitation[0].margn"),
    ],
)
def test_bad_excitations_exit_2_naming_the_key(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], table: str, key: str
) -> None:
    path = _write(tmp_path, PUMP_SPAN + "\n[[excitation]]\n" + table + "\n")
    before = path.read_bytes()
    status, out, err = run(capsys, "solve", str(path))
    assert status == 2 and out == ""
    assert err.startswith(f"beamtone: {key}: "), err
    assert "Traceback" not in err
    assert path.read_bytes() == before


def test_bad_damping_ratio(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = _write(tmp_path, PUMP_SPAN + EXCITATION + '\n[response]\ndamping_ratio = "0 %"\n')
    status, _, err = run(capsys, "solve", str(path))
    assert status == 2 and err.startswith("beamtone: response.damping_ratio: ")


def test_forced_response_in_solve(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    text = (
        PUMP_SPAN + EXCITATION + 'force = "300 N"\nforce_at = "2.2 m"\n'
        + '\n[response]\ndamping_ratio = "2 %"\n'
    )  # fmt: skip
    path = _write(tmp_path, text)
    status, out, err = run(capsys, "solve", str(path), "--json")
    assert status == 0, err
    resp = json.loads(out)["response"]
    assert resp["damping_ratio"] == 0.02
    first = resp["lines"][0]
    assert [p["name"] for p in first["points"]] == ["force", "mass[0]"]
    assert "damping is uncertain" in resp["caution"]
    status, out, _ = run(capsys, "solve", str(path))
    assert "forced response, damping ratio 2 %" in out and "damping is uncertain" in out


def test_example_worksheet_solves(capsys: pytest.CaptureFixture[str]) -> None:
    status, out, err = run(
        capsys, "solve", str(ROOT / "worksheets" / "excitations" / "pump-span.toml")
    )
    assert status == 0, err
    assert "verdict" in out and "ACI 351.3R" in out and "check against the current edition" in out


# --- sizing: the issue's figures, reproduced and gone -------------------------------------------


def test_pump_span_edge_value_is_inside_and_never_recommended(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    sheet = loads(PUMP_SPAN)
    pump = Excitation("pump", 1480 / 60, 1480 / 60, (1.0, 2.0), 0.2, 0.2)
    var = variation(sheet, "member.section.depth")
    # what was recommended before: the depth where mode 2 meets the band edge (29.6 Hz)
    path = _write(tmp_path, PUMP_SPAN)
    status, out, err = run(
        capsys, "size", str(path), *_depth_plane(), "--vary", "member.section.depth",
        "--between", "100 mm", "400 mm", "--excitation", "1480 rpm", "--harmonics", "1,2",
        "--margin", "20%", "--json", "--apply",
    )  # fmt: skip
    assert status == 0, err
    obj = json.loads(out)
    edges = [s for s in obj["solutions"] if s["above"] == "band edge"]
    edge = min(edges, key=lambda s: s["member_mass_kg"])
    # before: this value, where mode 2 meets the band edge (29.6 Hz), was recommended
    # (100.3486026 mm with Euler-Bernoulli bending) and written with its ten digits
    edge_mm = float(edge["value"].split()[0])
    assert 100.0 < edge_mm < 104.0
    below, above = math.floor(edge_mm), math.floor(edge_mm) + 1  # the neat values either side
    at_edge = margin_table([pump], mode_refs(fe.solve(var.member(edge["value_si"]), 5)))
    assert not at_edge.verdict.clear  # mode 2 at 29.6 Hz: on the edge is not clear
    # the neat value below the edge puts mode 2 inside the band
    neat = margin_table([pump], mode_refs(fe.solve(var.member(below / 1000), 5)))
    assert not neat.verdict.clear and neat.verdict.governing.mode == 2
    # now: a rounded value, solved again, clear, with the margin it achieves
    rec = obj["solutions"][obj["recommended"]]
    assert rec["above"] == "rounded" and rec["value"] == f"{above} mm"  # the next whole mm
    assert obj["applied"] == f"{above} mm"
    assert f'depth = "{above} mm"' in path.read_text()
    assert rec["value_si"] > edge["value_si"]
    # every depth-plane mode is clear; the other directions were not checked by this sizing,
    # so the verdict it shows is not "clear"
    assert obj["verdict"]["clear"] is (not _depth_plane())
    g = obj["verdict"]["governing"]
    assert g["clear"] is True
    assert (g["mode"], g["order"]) == (2, 1.0) and g["separation"] > 0.2
    again = margin_table([pump], mode_refs(fe.solve(var.member(above / 1000), 5)))
    assert again.verdict.clear
    assert "only the depth-plane bending modes were checked" in obj["message"]


def test_bracket_names_the_start_up_passage_and_the_stiff_alternative(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    path = _write(tmp_path, BRACKET)
    status, out, err = run(
        capsys, "size", str(path), *_depth_plane(), "--vary", "member.section.depth",
        "--between", "4 mm",
        "30 mm", "--excitation", "120 Hz", "--margin", "20%",
    )  # fmt: skip
    assert status == 0, err
    # before: the range end (4 mm, least mass) without a word about the fundamental at 8.7 Hz
    assert "recommended 4.0 mm" in out
    assert "passes through resonance whenever the source runs up from rest" in out
    stiff = out.split("stiff alternative with every mode above every band: ")[1].split(" mm")[0]
    assert 27.0 < float(stiff) < 28.0  # the fundamental above 144 Hz: 27.3 mm, 0.1 mm steps


def test_sizing_uses_the_worksheet_excitations_and_sizes(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    sizes = tmp_path / "flats.txt"
    sizes.write_text(
        "# flat bar stock\n5 mm, 6 mm\n8 mm\n10 mm, 12 mm, 16 mm, 20 mm, 25 mm, 30 mm\n"
        "40 mm, 50 mm  # thick plate\n"
    )
    text = (
        BRACKET
        + '\n[[excitation]]\nname = "motor"\nfrequency = "120 Hz"\ncriterion = "bracket-octave"\n'
    )
    path = _write(tmp_path, text)
    status, out, err = run(
        capsys, "size", str(path), *_depth_plane(), "--vary", "member.section.depth",
        "--between", "4 mm",
        "50 mm", "--sizes", f"@{sizes}", "--json",
    )  # fmt: skip
    assert status == 0, err
    obj = json.loads(out)
    # the octave rule allows no mode below 120 Hz: the lightest stock above 240 Hz wins
    assert obj["practical"]["recommended"] == obj["practical"]["stiff_alternative"]
    rec = obj["solutions"][obj["recommended"]]
    assert rec["frequency_hz"] > 240.0 and rec["value"] == "40 mm"
    assert [c["value"] for c in obj["practical"]["candidates"]][:2] == ["5 mm", "6 mm"]


@pytest.mark.parametrize(
    ("extra", "key"),
    [
        (["--step", "1 kg"], "--step"),
        (["--step", "-1 mm"], "--step"),
        (["--sizes", "5 mm, 6 kg"], "--sizes"),
        (["--sizes", "@/nonexistent/sizes.txt"], "file"),
        (["--step", "1 mm", "--sizes", "5 mm"], "--step"),
    ],
)
def test_bad_rounding_input_exits_2(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], extra: list[str], key: str
) -> None:
    path = _write(tmp_path, BRACKET)
    before = path.read_bytes()
    status, out, err = run(
        capsys, "size", str(path), *_depth_plane(), "--vary", "member.section.depth",
        "--between", "4 mm",
        "30 mm", "--excitation", "120 Hz", *extra, "--apply",
    )  # fmt: skip
    assert status == 2 and out == "", err
    assert err.startswith(f"beamtone: {key}"), err
    assert path.read_bytes() == before


def test_size_without_goal_or_excitations_still_exits_2(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    path = _write(tmp_path, BRACKET)
    status, _, err = run(
        capsys, "size", str(path), "--vary", "member.length", "--between", "1 m", "2 m"
    )
    assert status == 2 and "[[excitation]]" in err


# --- the report -------------------------------------------------------------------------------


def test_report_shows_the_table_the_verdict_and_the_chart(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    path = _write(tmp_path, PUMP_SPAN + EXCITATION)
    out_path = tmp_path / "span.md"
    status, out, err = run(capsys, "report", str(path), "-o", str(out_path))
    assert status == 0, err
    chart = tmp_path / "span-chart.svg"
    assert str(chart) in out
    md = out_path.read_text(encoding="utf-8")
    assert "The worksheet's excitations" in md
    assert "Verdict: NOT CLEAR" in md
    assert "(span-chart.svg)" in md and "Interference chart" in md
    svg = chart.read_text(encoding="utf-8")
    assert svg.lstrip().startswith("<?xml") and "running speed [rpm]" in svg
    html_path = tmp_path / "span.html"
    status, _, err = run(capsys, "report", str(path), "-o", str(html_path), "--html")
    assert status == 0, err
    page = html_path.read_text(encoding="utf-8")
    assert page.count("<svg") == 2


def test_report_frequency_map_and_forced_response(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    text = (
        BRACKET + '\n[[excitation]]\nname = "motor"\nfrequency = "120 Hz"\n'
        'criterion = "bracket-octave"\nforce = "5 N"\nforce_at = "250 mm"\n'
        '\n[response]\ndamping_ratio = "3 %"\n'
    )  # fmt: skip
    path = _write(tmp_path, text)
    out_path = tmp_path / "bracket.md"
    status, _, err = run(capsys, "report", str(path), "-o", str(out_path))
    assert status == 0, err
    md = out_path.read_text(encoding="utf-8")
    assert "Frequency map" in md and "Forced response: modal superposition" in md
    assert "damping is uncertain" in md
    assert "bracket-octave" in md and "check against the current edition" in md
    assert "frequency \\[Hz\\]" not in md  # the chart is a file, not text
    assert "frequency [Hz]" in (tmp_path / "bracket-chart.svg").read_text(encoding="utf-8")


# --- the record -------------------------------------------------------------------------------


def test_record_keeps_the_verdict_and_verify_fails_when_an_edit_moves_a_mode_into_a_band(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    text = BRACKET + '\n[[excitation]]\nname = "motor"\nfrequency = "120 Hz"\nmargin = "20 %"\n'
    path = _write(tmp_path, text)
    status, out, err = run(capsys, "solve", str(path), "--record", "--fail-unless-clear")
    assert status == 0, err + out  # clear: fundamental 44 Hz, far below 96-144 Hz
    stored = path.read_text(encoding="utf-8")
    assert 'verdict = "clear"' in stored
    assert run(capsys, "verify", str(path))[0] == 0
    # a thicker bracket puts the fundamental (about 102 Hz) inside the band around 120 Hz
    path.write_text(stored.replace('depth = "12 mm"', 'depth = "21 mm"'), encoding="utf-8")
    status, out, _ = run(capsys, "verify", str(path), "--json")
    assert status == 1
    obj = json.loads(out)
    (verdict,) = [c for c in obj["comparisons"] if c["quantity"] == "excitation verdict"]
    assert (verdict["stored"], verdict["now"], verdict["ok"]) == ("clear", "not clear", False)
    assert run(capsys, "solve", str(path), "--fail-unless-clear")[0] == 3
