"""What a solve claims about itself: the mode count, what the estimate means, the model's
assumptions, and a bracket status that never claims a bound that does not exist."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from tests.cli.inprocess import run

ROOT = Path(__file__).resolve().parents[2]


def test_text_names_the_count_the_estimate_and_the_assumptions(
    capsys: pytest.CaptureFixture[str],
) -> None:
    status, out, err = run(capsys, "solve", str(ROOT / "worksheets" / "sensor-mast.toml"))
    assert status == 0, err
    assert "mode count just below mode 5" in out and "none skipped" in out
    assert "est. error is the numerical error of the solution of the stated model" in out
    assert "assumes   bending in one plane" in out
    assert "rigid supports exactly as given" in out


def test_json_bracket_status_and_reason(capsys: pytest.CaptureFixture[str]) -> None:
    status, out, err = run(
        capsys, "solve", str(ROOT / "worksheets" / "free-free-bar.toml"), "--json"
    )
    assert status == 0, err
    obj = json.loads(out)
    assert obj["lower_bound"] is None
    assert obj["bracket"]["status"] == "upper bound only"
    assert "rigid body" in obj["bracket"]["lower_reason"]
    count = obj["checks"]["mode_count"]
    assert count["ok"] and count["counted"] == count["found"]
    assert obj["model_assumptions"] and "estimate_meaning" in obj
