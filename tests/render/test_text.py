"""The command line's text for members with many inner supports: one readable line each,
the worksheet and JSON keeping every support."""

from __future__ import annotations

import json

from beamtone.calc.analysis import analyse
from beamtone.calc.worksheet import loads
from beamtone.render.directions import LISTED, abridged
from beamtone.render.text import solve_json, solve_text

HEAD = """format = 1
title = "cable tray on hangers"
[member]
length = "6 m"
material = "steel"
section = { shape = "round-tube", outside_diameter = "48 mm", wall = "3 mm" }
theory = "euler-bernoulli"
[supports]
left = "pinned"
right = "pinned"
"""


def hangers(count: int) -> str:
    """A tube over ``count + 1`` equal pinned spans (a scenario of our own)."""
    rows = [f'[[supports.inner]]\nat = "{6 * (k + 1) / (count + 1):.6g} m"\nkind = "pinned"\n'
            for k in range(count)]  # fmt: skip
    return HEAD + "".join(rows)


def test_a_short_list_is_shown_whole() -> None:
    items = [f"s{k}" for k in range(LISTED)]
    assert abridged(items) == ", ".join(items)


def test_a_long_list_shows_its_ends_and_how_many_are_left_out() -> None:
    items = [f"s{k}" for k in range(30)]
    text = abridged(items)
    assert text.startswith("s0, s1, ") and text.endswith("s28, s29")
    assert f"... {30 - LISTED} more ..." in text
    assert "s10" not in text


def test_solve_text_abridges_the_supports_and_json_keeps_them_all() -> None:
    analysis = analyse(loads(hangers(40)))
    text = solve_text(analysis)
    ends = next(line for line in text.splitlines() if line.lstrip().startswith("ends"))
    assert "more ..." in ends and len(ends) < 400
    assert "pinned at 5.854 m" in ends  # the last support, 6 * 40 / 41 m
    data = solve_json(analysis)
    listed = json.loads(json.dumps(data))["directions"]["depth"]["supports"]
    assert sum("inner at" in s for s in listed) == 40
