"""The app's results column says the excitation verdict (the same words as solve)."""

from __future__ import annotations

from pathlib import Path

from rich.console import Console

from beamtone.calc import analyse, load
from beamtone.tui.widgets.results import summary

ROOT = Path(__file__).resolve().parents[2]


def _text(renderable: object) -> str:
    console = Console(width=200, record=True, color_system=None)
    console.print(renderable)
    return console.export_text()


def test_results_show_the_verdict() -> None:
    analysis = analyse(load(ROOT / "worksheets" / "excitations" / "pump-span.toml"))
    assert analysis.margins is not None
    text = _text(summary(analysis))
    assert f"verdict  {analysis.margins.verdict.text}"[:60] in " ".join(text.split("\n"))


def test_no_verdict_without_excitations() -> None:
    analysis = analyse(load(ROOT / "worksheets" / "sensor-mast.toml"))
    assert "verdict" not in _text(summary(analysis))
