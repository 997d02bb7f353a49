"""Limits stated in the message, exit status 2 for every bad input, one-line option errors
(issue 21 items 6, 7 and 10).  Each reproduced first: a two-way sweep at both maxima
allocated 7.5 GiB; ``--harmonics`` with 100 orders took 50 s; ``elements = 200000`` in a
record made ``verify`` take a minute; ``groups --sweep --to 1e308`` exited 1 (later: blamed
check.modes); option errors printed the whole usage; ``solve --elements 1`` blamed
``check.modes``."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from tests.cli.inprocess import run
from tests.hardening.bounded import ROOT, beamtone

MAST = ROOT / "worksheets" / "sensor-mast.toml"
BAR = ROOT / "worksheets" / "free-free-bar.toml"


def test_a_two_way_sweep_at_the_maxima_is_refused_at_once() -> None:
    done = beamtone(
        "sweep", str(MAST), "--vary", "member.length", "--between", "1 m", "3 m",
        "--points", "20000", "--vary2", "member.section.outside_diameter",
        "--between2", "30 mm", "3.5 in", "--points2", "2000", timeout=30,
    )  # fmt: skip
    assert done.returncode == 2, done.stderr
    assert "--points2" in done.stderr and "at most 40,000 points" in done.stderr


def test_one_way_sweeps_have_a_stated_limit(capsys: pytest.CaptureFixture[str]) -> None:
    status, _, err = run(capsys, "sweep", str(MAST), "--vary", "member.length",
                         "--between", "1 m", "3 m", "--points", "100000")  # fmt: skip
    assert status == 2 and "--points: expected 1 to 20000 points" in err


def test_many_harmonics_are_refused_with_the_limit() -> None:
    orders = ",".join(str(k) for k in range(1, 101))
    done = beamtone(
        "size", str(MAST), "--vary", "member.section.outside_diameter", "--between", "30 mm",
        "3.5 in", "--excitation", "1480 rpm", "--harmonics", orders, timeout=30,
    )  # fmt: skip
    assert done.returncode == 2 and "--harmonics" in done.stderr
    assert "at most 16 orders" in done.stderr


def test_a_huge_mesh_in_a_record_is_refused(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    sheet = tmp_path / "bar.toml"
    sheet.write_bytes(BAR.read_bytes())
    assert run(capsys, "solve", str(sheet), "--record", "--elements", "40")[0] == 0
    text = sheet.read_text(encoding="utf-8")
    sheet.write_text(re.sub(r"(?m)^elements = 40$", "elements = 200000", text), "utf-8")
    done = beamtone("verify", str(sheet), timeout=30)
    assert done.returncode == 2 and "record.elements" in done.stderr, done.stderr


@pytest.mark.parametrize(
    ("args", "named"),
    [
        (["--modes", "x"], "--modes"),
        (["--elements", "0"], "--elements"),
        (["--elements", "300000"], "--elements"),
        (["--bogus"], "--bogus"),
    ],
)
def test_option_errors_are_one_line_naming_the_option(
    args: list[str], named: str, capsys: pytest.CaptureFixture[str]
) -> None:
    status, out, err = run(capsys, "solve", str(BAR), *args)
    assert status == 2 and out == ""
    assert err.count("\n") == 1 and named in err and "usage:" not in err


def test_elements_1_blames_elements(capsys: pytest.CaptureFixture[str]) -> None:
    status, _, err = run(capsys, "solve", str(BAR), "--elements", "1")
    assert status == 2 and err.startswith("beamtone: --elements: ")


@pytest.mark.parametrize("end", ["1e308", "-1e308"])
def test_groups_sweep_to_an_absurd_value_names_the_option(
    end: str, capsys: pytest.CaptureFixture[str]
) -> None:
    status, _, err = run(capsys, "groups", str(MAST), "--sweep", "Π1", "--from", "0.1",
                         f"--to={end}", "--points", "3")  # fmt: skip
    assert status == 2 and err.startswith("beamtone: --to: ")


@pytest.mark.parametrize(("start", "stop"), [("0.1", "0.7"), ("0.7", "0.1"), ("0.35", "0.05")])
def test_groups_sweep_reports_the_values_written(
    start: str, stop: str, capsys: pytest.CaptureFixture[str]
) -> None:
    import json

    status, out, _ = run(capsys, "groups", str(MAST), "--sweep", "Π1", "--from", start,
                         "--to", stop, "--points", "7", "--json")  # fmt: skip
    values = [p["value"] for p in json.loads(out)["points"]]
    assert status == 0 and values[0] == float(start) and values[-1] == float(stop)
