"""Mode shapes drawn in the terminal with braille dots, with the supports and attachments."""

from __future__ import annotations

import numpy as np
from rich.text import Text
from textual.widget import Widget

from beamtone.tui.shown import PlotData

__all__ = ["PlotData", "ModePlot"]

# Colours chosen to read on dark and light backgrounds alike.
_COLOURS = ("dodger_blue2", "dark_orange3", "medium_purple3")
_BRAILLE = 0x2800
_DOTS = ((0x01, 0x08), (0x02, 0x10), (0x04, 0x20), (0x40, 0x80))  # [row][column]
_HEIGHT = 9  # lines of the plot and its markers, above the legend
_SUPPORT_GLYPH = {"clamped": "▮", "pinned": "▲", "guided": "═", "free": "·"}


class ModePlot(Widget):
    """A braille plot of the first mode shapes along the member."""

    DEFAULT_CSS = """
    ModePlot { height: auto; min-width: 30; }
    """

    def __init__(self, id: str | None = None) -> None:  # noqa: A002 - textual's name
        super().__init__(id=id)
        self.data: PlotData | None = None
        self.stale = False

    def show(self, data: PlotData | None, stale: bool = False) -> None:
        """Draw new data (None clears), marked stale when it no longer matches the inputs."""
        self.data = data
        self.stale = stale
        self.refresh(layout=True)  # the legend's lines may change

    def render(self) -> Text:
        width = max(10, self.size.width)
        height = _HEIGHT  # the legend below wraps to the width (never cut)
        if self.data is None:
            return Text("no mode shapes yet", style="dim")
        return render_plot(self.data, width, height, self.stale)


def render_plot(data: PlotData, width: int, height: int, stale: bool = False) -> Text:
    """The plot as Rich text of ``height`` lines by ``width`` cells."""
    rows = height - 2  # one line of markers, one of the legend
    cols = width
    dots_w, dots_h = 2 * cols, 4 * rows
    cells = np.zeros((rows, cols), dtype=int)
    owner = np.full((rows, cols), -1)
    for k, shape in enumerate(data.shapes):
        xs = np.linspace(0.0, data.length, dots_w)
        ws = np.interp(xs, data.x, shape)
        py = np.clip(np.round((1.0 - (ws + 1.0) / 2.0) * (dots_h - 1)).astype(int), 0, dots_h - 1)
        # join neighbouring dots so steep parts stay continuous
        for i in range(dots_w):
            lo, hi = py[i], py[i]
            if i + 1 < dots_w:
                lo, hi = min(py[i], py[i + 1]), max(py[i], py[i + 1])
            for y in range(lo, hi + 1):
                r, c = y // 4, i // 2
                cells[r, c] |= _DOTS[y % 4][i % 2]
                owner[r, c] = k
    text = Text()
    axis = (dots_h - 1) // 2 // 4
    for r in range(rows):
        for c in range(cols):
            bits = cells[r, c]
            if bits:
                style = _COLOURS[owner[r, c] % len(_COLOURS)]
                text.append(chr(_BRAILLE + bits), style="dim" if stale else style)
            elif r == axis:
                text.append("─", style="dim")
            else:
                text.append(" ")
        text.append("\n")
    marks = [" "] * cols
    for at in data.springs:
        marks[_column(at, data.length, cols)] = "⌇"
    for at in data.masses:
        marks[_column(at, data.length, cols)] = "●"
    for at, kind in data.supports:
        marks[_column(at, data.length, cols)] = _SUPPORT_GLYPH.get(kind, "?")
    text.append("".join(marks), style="bold")
    text.append("\n")
    for k, label in enumerate(data.labels):
        text.append("━━ ", style="dim" if stale else _COLOURS[k % len(_COLOURS)])
        text.append(label + "   ")
    text.append("depth plane; ▮ clamped ▲ pinned ═ guided ● mass ⌇ spring", style="dim")
    if stale:
        text.append("  (out of date)", style="bold")
    return text


def _column(at: float, length: float, cols: int) -> int:
    return int(np.clip(round(at / length * (cols - 1)), 0, cols - 1))
