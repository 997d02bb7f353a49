"""The scatter and batch commands: thin over calc.scatter and calc.batch (checked there)."""

from __future__ import annotations

import json

import pytest

from tests.cli.inprocess import run

_SHEET = """format = 1
title = "mast with a compliant base"
[member]
length = "1.2 m"
material = "steel"
section = { shape = "round-tube", outside_diameter = "48 mm", wall = "3 mm" }
[supports]
left = "clamped"
right = "free"
left_rotational_stiffness = ["30 kN*m/rad", "rigid"]
[[mass]]
at = "1.2 m"
mass = "2.5 kg"
[tolerances]
"member.material.youngs_modulus" = "5 %"
"mass[0].mass" = ["2.3 kg", "2.8 kg"]
[check]
modes = 2
"""


class _Done:
    def __init__(self, status: int, out: str, err: str) -> None:
        self.returncode, self.stdout, self.stderr = status, out, err


def _run(capsys: pytest.CaptureFixture[str], *args: str) -> _Done:
    return _Done(*run(capsys, *args))


def test_scatter_json_and_solve_bands(tmp_path, capsys: pytest.CaptureFixture[str]) -> None:  # noqa: ANN001
    sheet = tmp_path / "mast.toml"
    sheet.write_text(_SHEET)
    out = _run(capsys, "scatter", str(sheet), "--samples", "64", "--json")
    assert out.returncode == 0, out.stderr
    data = json.loads(out.stdout)
    assert data["samples"] == 64 and len(data["modes"]) == 2
    p = data["modes"][0]["percentiles_hz"]
    assert p["p1"] <= p["p50"] <= p["p99"]
    solve = json.loads(_run(capsys, "solve", str(sheet), "--json").stdout)
    first = solve["modes"][0]
    assert set(first["band"]) == {"low_hz", "high_hz", "method"}
    assert first["band"]["low_hz"] <= p["p1"] and p["p99"] <= first["band"]["high_hz"]
    assert {"key", "elasticity", "contribution_hz"} == set(first["sensitivities"][0])
    assert all("band" in m for m in solve["all_modes"])
    assert sheet.read_text() == _SHEET  # nothing the user wrote is modified


def test_batch_table_and_bad_input(tmp_path, capsys: pytest.CaptureFixture[str]) -> None:  # noqa: ANN001
    sheet = tmp_path / "mast.toml"
    sheet.write_text(_SHEET)
    table = tmp_path / "rows.csv"
    table.write_text("name,member.section.wall [mm]\nthin,2\nthick,4\n")
    out = _run(capsys, "batch", str(sheet), "--table", str(table), "--csv")
    assert out.returncode == 0, out.stderr
    lines = out.stdout.splitlines()
    assert lines[0].startswith("name,member.section.wall") and len(lines) == 3
    bad = _run(capsys, "batch", str(sheet), "--table", str(tmp_path / "missing.csv"))
    assert bad.returncode == 2 and "--table" in bad.stderr and "Traceback" not in bad.stderr
    plain = tmp_path / "plain.toml"
    plain.write_text(_SHEET.split("[tolerances]")[0].replace(
        'left_rotational_stiffness = ["30 kN*m/rad", "rigid"]\n', ""))  # fmt: skip
    none = _run(capsys, "scatter", str(plain), "--samples", "10")
    assert none.returncode == 2 and "tolerances" in none.stderr


def test_report_shows_the_bands_and_a_histogram(
    tmp_path, capsys: pytest.CaptureFixture[str]
) -> None:  # noqa: ANN001
    sheet = tmp_path / "mast.toml"
    sheet.write_text(_SHEET)
    out = _run(capsys, "report", str(sheet), "-o", str(tmp_path / "mast.md"), "--scatter", "40")
    assert out.returncode == 0, out.stderr
    text = (tmp_path / "mast.md").read_text()
    assert "Tolerance bands" in text and "| samples | histogram |" in text
    assert "tolerances are the user's" in text


def test_scatter_covers_every_direction(tmp_path, capsys: pytest.CaptureFixture[str]) -> None:  # noqa: ANN001
    # The sensor mast with tolerances and a pump: a round tube, so the width plane equals the
    # depth plane in every sample; torsion and axial motion are studied too.
    from pathlib import Path

    sheet = (
        Path(__file__).resolve().parents[2] / "worksheets/excitations/sensor-mast-tolerances.toml"
    )
    data = json.loads(_run(capsys, "scatter", str(sheet), "--samples", "40", "--json").stdout)
    names = [d["direction"] for d in data["directions"]]
    assert names == ["depth", "width", "torsion", "axial"]
    width = data["directions"][1]
    assert width["same_as"] == "depth" and width["modes"] == [
        {**m, "direction": "width"} for m in data["directions"][0]["modes"]
    ]
    torsion = data["directions"][2]["modes"][0]
    assert torsion["percentiles_hz"]["p1"] <= torsion["percentiles_hz"]["p99"]
    assert sum(torsion["histogram"]["counts"]) == 40
    assert len(data["bands"]) == 2 and data["any_in_band"] == 0.0
    text = _run(capsys, "scatter", str(sheet), "--samples", "40").stdout
    assert "torsion" in text and "axial" in text and "width plane: the same" in text
    assert "none of 40 samples (under 7.5 % at 95 % confidence)" in text
    out = _run(capsys, "report", str(sheet), "-o", str(tmp_path / "m.md"), "--scatter", "40")
    assert out.returncode == 0, out.stderr
    report = (tmp_path / "m.md").read_text()
    assert "| axial mode 1 [Hz] | samples | histogram |" in report
    assert "chance of a mode of any direction in it" in report
