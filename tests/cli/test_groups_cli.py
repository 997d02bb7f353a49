"""``beamtone groups`` on the command line (in-process through cli.main.main)."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from beamtone.cli.main import main
from tests.cli.inprocess import run

ROOT = Path(__file__).resolve().parents[2]
MAST = str(ROOT / "worksheets" / "sensor-mast.toml")


def test_beam_variable_list_json(capsys: pytest.CaptureFixture[str]) -> None:
    """f, L, EI, m: one group f L^2 sqrt(m/EI) (common practice; Blevins 1979, chapter 8)."""
    status, out, err = run(capsys, "groups", "f=Hz", "L=m", "EI=N*m^2", "m=kg/m", "--json")
    assert status == 0, err
    obj = json.loads(out)
    assert obj["rank"] == 3
    assert obj["repeating"] == ["L", "EI", "m"]
    assert [v["name"] for v in obj["variables"]] == ["f", "L", "EI", "m"]
    (group,) = obj["groups"]
    assert group["exponents"] == {"f": "1", "L": "2", "EI": "-1/2", "m": "1/2"}
    assert group["expression"] == "f·L²·√(m/EI)"


def test_separate_e_and_i_give_two_groups(capsys: pytest.CaptureFixture[str]) -> None:
    status, out, _ = run(capsys, "groups", "f=Hz", "L=m", "E=Pa", "I=m^4", "m=kg/m", "--json")
    assert status == 0
    assert len(json.loads(out)["groups"]) == 2


@pytest.mark.parametrize(
    ("args", "key"),
    [
        (["f=Hz", "L=furlongz"], "L"),
        (["f=Hz", "f=s"], "f"),
        (["L=m", "t=s"], "variables"),  # independent dimensions: no group at all
        (["f=Hz", "L=m", "E=Pa", "I=m^4", "m=kg/m", "--repeat", "L,I,m"], "--repeat"),
        (["f=Hz", "L=m", "EI=N*m^2", "m=kg/m", "--repeat", "L,m"], "--repeat"),
        (["fHz"], "file"),
    ],
)
def test_bad_variable_lists_exit_2(
    args: list[str], key: str, capsys: pytest.CaptureFixture[str]
) -> None:
    status, out, err = run(capsys, "groups", *args)
    assert status == 2
    assert out == ""
    assert err.startswith(f"beamtone: {key}: "), err
    assert err.count("\n") == 1


def test_worksheet_groups_with_values(capsys: pytest.CaptureFixture[str]) -> None:
    status, out, err = run(capsys, "groups", MAST, "--json")
    assert status == 0, err
    obj = json.loads(out)
    by_expr = {g["expression"]: g for g in obj["groups"]}
    # the mast carries 2.5 kg on a 1.2 m tube: M/(mL) as computed by hand from the worksheet
    mass_ratio = by_expr["M0/(L·m)"]["value"]
    L, m = obj["variables"][0]["value"], obj["variables"][2]["value"]
    assert mass_ratio == pytest.approx(2.5 / (m * L), rel=1e-12)
    assert "omega1·L²·√(m/EI)" in by_expr


def test_solve_json_carries_groups(capsys: pytest.CaptureFixture[str]) -> None:
    status, out, _ = run(capsys, "solve", MAST, "--json")
    assert status == 0
    groups = json.loads(out)["groups"]
    assert any(g["expression"] == "M0/(L·m)" and "value" in g for g in groups)


def test_like_and_sweep(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    text = (ROOT / "worksheets" / "sensor-mast.toml").read_text()
    twice = text.replace('length = "1.2 m"', 'length = "2.4 m"').replace(
        'at = "1.2 m"', 'at = "2.4 m"'
    )
    other = tmp_path / "long.toml"
    other.write_text(twice)
    status, out, err = run(capsys, "groups", MAST, "--like", str(other), "--json")
    assert status == 0, err
    like = json.loads(out)["like"]
    assert not like["similar"]  # the tip mass and inertia ratios change with the length
    assert {d["group"] for d in like["differences"]} == {"M0/(L·m)", "J0/(L³·m)"}
    status, out, _ = run(capsys, "groups", MAST, "--sweep", "M0", "--from", "0", "--to", "1",
                         "--points", "3", "--json")  # fmt: skip
    assert status == 0
    points = json.loads(out)["points"]
    assert [p["value"] for p in points] == [0.0, 0.5, 1.0]
    assert points[0]["omega"][0] > points[1]["omega"][0] > points[2]["omega"][0]


@pytest.mark.parametrize(
    "args",
    [
        ["--sweep", "Q9", "--from", "0", "--to", "1"],
        ["--sweep", "M0"],
        ["--repeat", "L,EI,m"],
        ["--from", "nan"],
    ],
)
def test_bad_worksheet_group_options_exit_2(
    args: list[str], capsys: pytest.CaptureFixture[str]
) -> None:
    with pytest.raises(SystemExit) as info:
        status = main(["groups", MAST, *args])
        raise SystemExit(status)
    assert info.value.code == 2
    assert "Traceback" not in capsys.readouterr().err
