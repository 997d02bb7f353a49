"""The frequency map in the terminal: natural frequencies, excitation lines and their margin
bands on one frequency axis (the interference chart's content, drawn with characters).

One row per excitation line: its margin band ``[---]`` around the line ``|`` (a range of
speeds fills the band between its ends with ``=``). One row per direction: each mode ``●``
(red ``◆`` where it lies inside a band), and its own band ``<···>`` where tolerances are
given. The axis is linear from 0 to a little above the highest thing drawn. Every position
comes from calc's results (the margin table's lines and modes, the bands); nothing is
computed here but where a character goes.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from rich.text import Text
from textual.widgets import Static

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.tui.shown import MapData

__all__ = ["FrequencyMap", "frequency_map"]

_LABEL = 14  # characters of each row's label
_ABOVE = 9  # characters kept at the right for "+N above"
_PLANES = {"depth": "depth plane", "width": "width plane"}


class FrequencyMap(Static):
    """Shows :func:`frequency_map` of an analysis with excitations; hidden without them."""

    DEFAULT_CSS = """
    FrequencyMap { height: auto; width: 1fr; margin: 1 0 0 0; }
    """

    def __init__(self, id: str | None = None) -> None:  # noqa: A002 - textual's name
        super().__init__("", id=id)
        self.data: MapData | None = None
        self.display = False

    def show(self, data: MapData | None) -> None:
        """Draw ``data`` (:func:`beamtone.tui.shown.map_data`; None hides the map)."""
        self.data = data
        self.display = data is not None
        self.refresh(layout=True)

    def render(self) -> Text:
        if self.data is None:
            return Text("")
        width = max(self.size.width, _LABEL + 20)
        return frequency_map(self.data, width)


def frequency_map(data: MapData, width: int) -> Text:
    """The map, ``width`` characters wide (at least 34)."""
    plot = max(width - _LABEL - 1 - _ABOVE, 20)
    modes, inside, bands = data.modes, data.inside, data.bands
    # the axis: from 0 to well above the highest band of a line, so the bands read; modes
    # above it are counted at the right edge
    lines_top = max([ln.band_high_hz for ln in data.lines] + [1e-9])
    lowest = min([f for found in modes.values() for _, f in found] + [lines_top])
    top = max(lines_top * 1.6, lowest * 1.2)

    def col(hz: float) -> int | None:
        c = round(hz / top * (plot - 1))
        return c if 0 <= c < plot else None

    out = Text()
    for ln in data.lines:
        cells = [" "] * plot
        lo, hi = col(ln.band_low_hz), col(min(ln.band_high_hz, top))
        if lo is not None:
            end = hi if hi is not None else plot - 1
            for c in range(lo, end + 1):
                cells[c] = "-"
            cells[lo] = "["
            if hi is not None:
                cells[hi] = "]"
        a, b = col(ln.low_hz), col(ln.high_hz)
        if a is not None:
            for c in range(a, (b if b is not None else plot - 1) + 1):
                cells[c] = "="
            cells[a] = "|"
            if b is not None:
                cells[b] = "|"
        order = "min" if ln.order is None else f"x{ln.order:g}"
        out.append(f"{ln.excitation[: _LABEL - len(order) - 2]} {order}".ljust(_LABEL), "dim")
        out.append(" " + "".join(cells) + "\n", "yellow")
    for direction, found in modes.items():
        line = Text(" " * plot)
        for n, _f in found:
            band = bands.get((direction, n))
            if band is not None:
                lo, hi = col(band[0]), col(band[1])
                if lo is not None and hi is not None and hi > lo:
                    line.stylize("cyan", lo, hi + 1)
                    chars = list(line.plain)
                    for c in range(lo, hi + 1):
                        chars[c] = "·" if chars[c] == " " else chars[c]
                    chars[lo], chars[hi] = "<", ">"
                    line = _retext(line, "".join(chars))
        for n, f in found:
            c = col(f)
            if c is None:
                continue
            red = (direction, n) in inside
            chars = list(line.plain)
            chars[c] = "◆" if red else "●"
            line = _retext(line, "".join(chars))
            line.stylize("bold red" if red else "bold", c, c + 1)
        out.append(_PLANES.get(direction, direction)[:_LABEL].ljust(_LABEL), "dim")
        out.append(" ")
        out.append_text(line)
        above = sum(1 for _, f in found if col(f) is None)
        if above:
            out.append(f" +{above} above"[:_ABOVE], "dim")
        out.append("\n")
    axis = [" "] * plot
    ticks = Text(" " * (_LABEL + 1))
    labels = [" "] * plot
    for k in range(3):
        c = round(k / 2 * (plot - 1))
        axis[c] = "┼" if k == 1 else ("├" if k == 0 else "┤")
        text = f"{k / 2 * top:.4g}"
        start = min(max(c - len(text) // 2, 0), plot - len(text))
        labels[start : start + len(text)] = list(text)
    out.append(" " * (_LABEL + 1) + "".join(c if c != " " else "─" for c in axis) + "\n", "dim")
    ticks.append("".join(labels) + " Hz", "dim")
    out.append_text(ticks)
    out.append("\n")
    out.append(
        "| line  [--] its margin band  ● mode  ◆ mode inside a band"
        + ("  <··> mode's band over the tolerances" if bands else ""),
        "dim",
    )
    return out


def _retext(line: Text, plain: str) -> Text:
    """The same spans over new characters of the same length."""
    new = Text(plain)
    for span in line.spans:
        new.stylize(span.style, span.start, span.end)
    return new
