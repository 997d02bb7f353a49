"""The calculation record document: content, Markdown, one self-contained HTML file, figure."""

from __future__ import annotations

import builtins
import csv
import html
import math
import re
import xml.etree.ElementTree as ET
from pathlib import Path
from typing import Any

import pytest

from beamtone.calc import record
from beamtone.calc.analysis import Analysis, analyse
from beamtone.calc.report import number
from beamtone.calc.sizing import margins
from beamtone.calc.worksheet import load, loads
from beamtone.render import report
from tests.reference import reference_file

ROOT = Path(__file__).resolve().parents[2]
WORKSHEETS = sorted((ROOT / "worksheets").glob("*.toml"))
CAUTION = "Caution: the test's own caution, defer to the applicable codes."


@pytest.fixture(scope="module", params=[p.stem for p in WORKSHEETS])
def case(request: pytest.FixtureRequest) -> tuple[Analysis, report.Report]:
    analysis = analyse(load(ROOT / "worksheets" / f"{request.param}.toml"))
    return analysis, report.build(analysis, caution=CAUTION)


def _leaf_strings(data: Any) -> list[str]:
    if isinstance(data, dict):
        return [s for k, v in data.items() if k != "record" for s in _leaf_strings(v)]
    if isinstance(data, list):
        return [s for v in data for s in _leaf_strings(v)]
    if isinstance(data, bool):
        return ["true" if data else "false"]
    return [str(data)]


def _result_numbers(analysis: Analysis) -> list[str]:
    fe = analysis.modes
    out = []
    for m in fe.modes:
        out += [number(m.frequency_hz), number(m.omega), f"{m.estimated_error:.1e}"]
        if m.effective_mass > 1e-12 * fe.total_mass:
            out.append(number(m.effective_mass))
    out += [number(analysis.estimate.frequency_hz), number(analysis.bracket.fe_hz)]
    if analysis.lower_bound.frequency_hz is not None:
        out.append(number(analysis.lower_bound.frequency_hz))
    eq = analysis.equivalent
    out += [number(eq.at_m), number(eq.mass_kg), number(eq.stiffness_n_per_m)]
    out += [number(g.value) for g in analysis.groups.groups]
    if analysis.handbook is not None:
        out += [number(f) for f in analysis.handbook.frequencies_hz]
    if analysis.ritz is not None:
        out += [number(f) for row in analysis.ritz.convergence for f in row]
    member = analysis.sheet.member
    out += [number(member.member_mass), number(member.total_mass), number(member.length)]
    for seg in member.segments:
        sec = seg.section
        out += [number(sec.area), number(sec.second_moment), number(seg.bending_stiffness)]
        out += [number(seg.mass_per_length)]
    return out


def _text_of(html_text: str) -> str:
    return html.unescape(re.sub(r"<[^>]+>", "", html_text))


def test_every_input_and_result_appears(case: tuple[Analysis, report.Report]) -> None:
    analysis, doc = case
    md = doc.markdown("modes.svg")
    page = _text_of(doc.html())
    for text in _leaf_strings(analysis.sheet.data):
        assert f"`{text}`" in md, text  # as entered, literally
        assert text in page, text
    for value in _result_numbers(analysis):
        assert value in md, value
        assert value in page, value
    for w in analysis.warnings:
        assert w in page


def test_report_has_every_part(case: tuple[Analysis, report.Report]) -> None:
    analysis, doc = case
    titles = [s.title for s in doc.sections]
    assert titles == [
        "Purpose",
        "Inputs as entered and in SI",
        "Member: derived properties",
        "Assumptions",
        "Methods and formulas",
        "Results",
        "Cross-checks",
        "Dimensional groups",
        "Excitation margins",
        "Mode shapes",
        "Warnings",
        "Caution",
        "References",
    ]
    md = doc.markdown("modes.svg")
    for phrase in (
        "Euler-Bernoulli",
        "Undamped",
        "Idealized ends",
        "Linear",
        "R[w] =",
        "1/\u03c9\u2081\u00b2 \u2264",
        "K_e = EI/h^3",
        "M_e = m h/420",
        "1e-6",
        "Przemieniecki",
        "Timoshenko",
        CAUTION,
    ):
        assert phrase in md, phrase
    assert md.count(CAUTION) == 2  # under the purpose, and in its own section
    for seg in analysis.sheet.member.segments:
        assert seg.material.source in md  # where each material value comes from
    if analysis.handbook is not None:
        assert analysis.handbook.source in md
    assert "![" in md and "(modes.svg)" in md


def test_cantilever_shows_the_published_parameter() -> None:
    """Clamped-free lambda_1 = 1.87510407: Blevins 1979, Table 8-1 (reference file)."""
    text = (ROOT / "worksheets" / "free-free-bar.toml").read_text(encoding="utf-8")
    text = text.replace('left = "free"', 'left = "clamped"')
    analysis = analyse(loads(text))
    md = report.build(analysis, caution=CAUTION, figure=False).markdown()
    with reference_file("uniform-beam-frequency-parameters.csv").open() as handle:
        rows = list(csv.reader(line for line in handle if not line.startswith("#")))
    lam = next(float(r[3]) for r in rows if r[:2] == ["clamped", "free"])
    checks = md[md.index("## 7. Cross-checks") :]
    row = re.search(r"^\| 1 \| [^|]+ \| [^|]+ \| ([0-9.]+) \|", checks, re.M)
    assert row is not None and round(float(row.group(1)), 8) == lam
    seg = analysis.sheet.member.segments[0]
    L = analysis.sheet.member.length
    f1 = lam**2 / (2 * math.pi * L**2) * math.sqrt(seg.bending_stiffness / seg.mass_per_length)
    assert f"| 1 | {number(f1)} |" in md


def test_html_is_one_self_contained_file(case: tuple[Analysis, report.Report]) -> None:
    _, doc = case
    page = doc.html()
    assert page.startswith("<!DOCTYPE html>") and page.rstrip().endswith("</html>")
    assert not re.search(r"https?://", page)
    assert not re.search(r"<link|<script|<img|<iframe|\bsrc\s*=|@import|url\((?!#)", page, re.I)
    assert page.count("<svg") == 1 and page.count("</svg>") == 1
    assert "<style>" in page
    svg = page[page.index("<svg") : page.index("</svg>") + 6]
    ET.fromstring(svg.replace("xlink:href", "href"))  # well-formed inline SVG


def test_figure_draws_the_first_modes_and_the_member(case: tuple[Analysis, report.Report]) -> None:
    analysis, doc = case
    assert doc.figure_svg is not None
    root = ET.fromstring(doc.figure_svg)
    assert root.tag.endswith("svg")
    text = " ".join(t for t in root.itertext())
    for mode in analysis.modes.modes[: report.FIGURE_MODES]:
        assert f"mode {mode.number}: {number(mode.frequency_hz)} Hz" in text
    assert f"mode {report.FIGURE_MODES + 1}:" not in text
    member = analysis.sheet.member
    kinds = {member.left, member.right} | {s.kind for s in member.inner_supports}
    for kind in kinds - {"free"}:
        assert kind in text
    assert ("point mass" in text) == bool(member.masses)
    assert ("grounded spring" in text) == bool(member.springs)
    assert "Date" not in doc.figure_svg  # reproducible: no time stamp in the file


def test_without_matplotlib_the_report_says_so(monkeypatch: pytest.MonkeyPatch) -> None:
    real = builtins.__import__

    def refuse(name: str, *args: Any, **kwargs: Any) -> Any:
        if name == "matplotlib" or name.startswith("matplotlib."):
            raise ImportError(name)
        return real(name, *args, **kwargs)

    monkeypatch.setattr(builtins, "__import__", refuse)
    analysis = analyse(load(ROOT / "worksheets" / "slide-rail-us.toml"))
    doc = report.build(analysis, caution=CAUTION)
    assert doc.figure_svg is None
    assert "beamtone[report]" in doc.markdown("ignored.svg")
    page = doc.html()
    assert "<svg" not in page and "beamtone[report]" in page


def test_margins_and_verification_are_shown() -> None:
    sheet = load(ROOT / "worksheets" / "slide-rail-us.toml")
    analysis = analyse(sheet)
    f = analysis.modes.frequencies_hz
    check = margins(f, float(f[0]), (1, 2), 0.15)
    text = record.with_record(
        sheet_text := (ROOT / "worksheets" / "slide-rail-us.toml").read_text(encoding="utf-8"),
        record.build_record(analysis),
    )
    stored = loads(text)
    analysis = analyse(stored)
    verification = record.verify(stored, analysis)
    md = report.build(
        analysis, caution=CAUTION, margins=check, verification=verification, figure=False
    ).markdown()
    assert "INSIDE BAND (+0.0 %)" in md and "At least one mode lies inside" in md
    assert f"1x {number(float(f[0]))} Hz" in md and "common practice" in md
    assert "reproduces: every stored result reproduces within tolerance" in md
    assert "| mode 1 frequency \\[Hz\\] |" in md or "| mode 1 frequency [Hz] |" in md
    assert sheet_text.splitlines()[0] not in md  # comments are not inputs


def test_failed_verification_is_loud() -> None:
    path = ROOT / "worksheets" / "slide-rail-us.toml"
    text = record.with_record(
        path.read_text(encoding="utf-8"), record.build_record(analyse(load(path)))
    )
    changed = loads(text.replace('length = "36 in"', 'length = "37 in"'))
    analysis = analyse(changed)
    doc = report.build(
        analysis, caution=CAUTION, verification=record.verify(changed, analysis), figure=False
    )
    md = doc.markdown()
    assert "DOES NOT REPRODUCE" in md and "> **The inputs changed since the record" in md
    assert "NO |" in md


def test_markdown_escapes_what_would_change_the_rendering() -> None:
    text = (ROOT / "worksheets" / "free-free-bar.toml").read_text(encoding="utf-8")
    text = text.replace("Titanium test bar, free-free", "bar *A* | <b>rev_2</b>")
    analysis = analyse(loads(text))
    doc = report.build(analysis, caution=CAUTION, figure=False)
    md = doc.markdown()
    assert md.startswith("# Calculation record: bar \\*A\\* \\| \\<b>rev_2\\</b>\n")
    assert "`bar *A* \\| <b>rev_2</b>`" in md  # in the inputs table, literally (pipe escaped)
    page = doc.html()
    assert "bar *A* | &lt;b&gt;rev_2&lt;/b&gt;" in page and "<b>rev_2" not in page


def test_inputs_in_si(case: tuple[Analysis, report.Report]) -> None:
    analysis, doc = case
    table = next(b for b in doc.sections[1].blocks if hasattr(b, "rows"))
    si = {row[0]: row[2] for row in table.rows}
    member = analysis.sheet.member
    if "member.length" in si:
        assert si["member.length"] == f"{number(member.length)} m"
    for i, p in enumerate(member.masses):
        assert si[f"mass[{i}].mass"] == f"{number(p.mass)} kg"
        assert si[f"mass[{i}].at"] == f"{number(p.at)} m"
    for i, s in enumerate(member.springs):
        if s.stiffness:
            assert si[f"spring[{i}].stiffness"] == f"{number(s.stiffness)} N/m"


# A free-pinned steel bar in compression and one in tension: scenarios of our own.
_HONEST = """
format = 1
title = "Bar with an end prop, {force}"
[member]
theory = "euler-bernoulli"
length = "1.5 m"
material = "steel"
section = {{ shape = "rectangle", width = "40 mm", depth = "10 mm" }}
axial_force = "{force}"
[supports]
left = "free"
right = "pinned"
[[spring]]
at = "0 m"
stiffness = "2e4 N/m"
"""


@pytest.mark.parametrize("force", ["-200 N", "300 N"])
def test_report_says_what_the_numbers_leave_out_and_which_bounds_hold(force: str) -> None:
    """The report shows what the command line's text and JSON show about honesty (issue 15):
    the model assumptions the estimate leaves out, the independent mode count, the bracket's
    status with the reason a lower bound is withheld, and Dunkerley's note."""
    analysis = analyse(loads(_HONEST.format(force=force)))
    doc = report.build(analysis, caution=CAUTION)
    fe = analysis.modes
    for text in (doc.markdown(None), _text_of(doc.html())):
        flat = " ".join(text.split())
        assert "What the numbers leave out" in flat
        for line in fe.assumptions:
            assert " ".join(line.split()) in flat, line
        assert " ".join(fe.estimate_meaning.split()) in flat
        assert fe.mode_count is not None and fe.mode_count.ok
        assert " ".join(fe.mode_count.describe().split()) in flat
        assert "none skipped" in flat
        br, low = analysis.bracket, analysis.lower_bound
        assert f"Bracket status: {br.status}" in flat
        if force.startswith("-"):  # compression: Dunkerley's sum is no bound
            assert low.frequency_hz is None and br.status == "upper bound only"
            assert br.lower_reason and " ".join(br.lower_reason.split()) in flat
            assert "no lower bound is given" in flat
        else:  # tension: the bound of the member without it, and the note says so
            assert low.frequency_hz is not None and low.note
            assert br.status == "bracketed"
            assert " ".join(low.note.split()) in flat
