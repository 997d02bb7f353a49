"""``beamtone size`` and ``beamtone sweep`` on the command line (in-process)."""

from __future__ import annotations

import csv
import io
import json
from pathlib import Path

import pytest

from tests.cli.inprocess import run

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture
def mast(tmp_path: Path) -> Path:
    path = tmp_path / "mast.toml"
    path.write_bytes((ROOT / "worksheets" / "sensor-mast.toml").read_bytes())
    return path


def test_size_json_and_apply(mast: Path, capsys: pytest.CaptureFixture[str]) -> None:
    before = mast.read_text()
    status, out, err = run(
        capsys, "size", str(mast), "--vary", "member.section.outside_diameter",
        "--between", "30 mm", "3.5 in", "--target", "30 Hz", "--direction", "depth", "--json",
        "--apply",
    )  # fmt: skip
    assert status == 0, err
    obj = json.loads(out)
    assert obj["variable"] == "member.section.outside_diameter"
    assert obj["target_hz"] == 30.0
    (sol,) = obj["solutions"]
    assert sol["value"].endswith(" mm") and obj["recommended"] == 0
    assert sol["frequency_hz"] == pytest.approx(30.0, rel=1e-6)
    assert obj["applied"] == sol["value"]
    after = mast.read_text()
    diff = [(a, b) for a, b in zip(before.splitlines(), after.splitlines(), strict=True) if a != b]
    assert len(diff) == 1 and sol["value"] in diff[0][1]
    assert "# welded base plate" in after  # comments kept
    status, out, _ = run(capsys, "solve", str(mast), "--json")
    assert json.loads(out)["modes"][0]["frequency_hz"] == pytest.approx(30.0, rel=1e-6)


def test_size_excitation_text(mast: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status, out, _ = run(
        capsys, "size", str(mast), "--vary", "member.length", "--between", "0.5 m", "2 m",
        "--excitation", "1480 rpm", "--harmonics", "1,2", "--margin", "15%",
    )  # fmt: skip
    assert status == 0
    assert "24.67 Hz" in out and "common practice" in out and "Caution" in out


def test_sweep_csv_and_json(mast: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status, out, _ = run(
        capsys, "sweep", str(mast), "--vary", "mass[0].mass", "--between", "0 kg", "10 lb",
        "--points", "4", "--modes", "2", "--csv",
    )  # fmt: skip
    assert status == 0
    rows = list(csv.reader(io.StringIO(out)))
    assert rows[0] == ["mass[0].mass [kg]", "f1 [Hz]", "f2 [Hz]", "member mass [kg]"]
    assert len(rows) == 5
    status, out, _ = run(
        capsys, "sweep", str(mast), "--vary", "member.length", "--between", "1 m", "1.5 m",
        "--points", "3", "--json",
    )  # fmt: skip
    obj = json.loads(out)
    assert [round(p["value_si"], 12) for p in obj["points"]] == [1.0, 1.25, 1.5]


@pytest.mark.parametrize(
    ("extra", "key"),
    [
        (["--vary", "member.length", "--between", "1 kg", "2 kg", "--target", "5 Hz"], "--between"),
        (["--vary", "member.lenght", "--between", "1 m", "2 m", "--target", "5 Hz"], "--vary"),
        (["--vary", "member.length", "--between", "1 m", "2 m", "--target", "5 m"], "--target"),
        (
            [
                "--vary",
                "member.length",
                "--between",
                "1 m",
                "2 m",
                "--excitation",
                "20 Hz",
                "--margin",
                "150%",
            ],
            "--margin",
        ),  # fmt: skip
        (
            [
                "--vary",
                "member.length",
                "--between",
                "1 m",
                "2 m",
                "--excitation",
                "20 Hz",
                "--harmonics",
                "one",
            ],
            "--harmonics",
        ),  # fmt: skip
        (["--vary", "member.length", "--between", "1 m", "1 m", "--target", "5 Hz"], "--between"),
    ],
)
def test_bad_size_input_exits_2(
    extra: list[str], key: str, mast: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    before = mast.read_bytes()
    status, out, err = run(capsys, "size", str(mast), *extra, "--apply")
    assert status == 2
    assert out == ""
    assert err.startswith(f"beamtone: {key}: "), err
    assert mast.read_bytes() == before


def test_size_needs_a_goal(mast: Path, capsys: pytest.CaptureFixture[str]) -> None:
    status, _, err = run(
        capsys, "size", str(mast), "--vary", "member.length", "--between", "1 m", "2 m"
    )
    assert status == 2 and "Traceback" not in err


def test_apply_a_length_moves_the_tip_mass_with_the_end(
    mast: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    """The instrument at the tip stays at the tip, in the file as in the solves."""
    status, out, err = run(
        capsys, "size", str(mast), "--vary", "member.length", "--between", "0.6 m", "2 m",
        "--target", "25 Hz", "--direction", "depth", "--json", "--apply",
    )  # fmt: skip
    assert status == 0, err
    applied = json.loads(out)["applied"]
    text = mast.read_text()
    assert f'length = "{applied}"' in text
    assert f'at = "{applied}"' in text  # the [[mass]] at the old end moved to the new one
    status, out, _ = run(capsys, "solve", str(mast), "--json")
    assert json.loads(out)["modes"][0]["frequency_hz"] == pytest.approx(25.0, rel=1e-5)
