"""The interference chart of the calculation record, as an SVG document.

With a running speed among the excitations: natural frequencies (horizontal lines, one style
per direction) against running speed, with each order's line through the origin, its margin
band, and the operating speed (or range) marked; an order line crossing a natural frequency
inside the operating speed is a resonance.  Without one: a frequency map, the bands of every
excitation line as spans and the natural frequencies as lines across them.

Drawn by matplotlib (the ``report`` extra), imported only when a chart is drawn.
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from typing import Any

from beamtone.calc.excitation import Excitation, MarginTable, ModeRef, lines

__all__ = ["interference_chart"]

_DIRECTION_STYLE = {
    "depth": ("#1f4e9c", "-"),
    "width": ("#9c4a1f", "--"),
    "torsion": ("#2a7a2a", "-."),
    "axial": ("#6a2a8a", ":"),
}


def interference_chart(excitations: Sequence[Excitation], table: MarginTable) -> str | None:
    """The interference chart (or, without a running speed, the frequency map) as SVG.

    Parameters
    ----------
    excitations : sequence of Excitation
    table : MarginTable
        Their margin table: every computed mode of every computed direction (those not clear
        of a band are marked).

    Returns
    -------
    str or None
        None where matplotlib is not installed.
    """
    modes = list(
        {
            (r.direction, r.mode): ModeRef(r.direction, r.mode, r.frequency_hz) for r in table.rows
        }.values()
    )
    try:
        import matplotlib
        from matplotlib.figure import Figure
    except ImportError:
        return None
    with matplotlib.rc_context({"svg.fonttype": "none", "svg.hashsalt": "beamtone-chart"}):
        fig = Figure(figsize=(7.5, 4.6), layout="constrained")
        ax = fig.add_subplot()
        if any(e.as_speed for e in excitations):
            _speed_chart(ax, excitations, modes, table)
        else:
            _frequency_map(ax, excitations, modes, table)
        ax.legend(
            loc="upper center", bbox_to_anchor=(0.5, -0.14), ncol=3, frameon=False,
            fontsize="small",
        )  # fmt: skip
        buffer = io.StringIO()
        fig.savefig(buffer, format="svg", metadata={"Date": None})
    return buffer.getvalue()


def _top(table: MarginTable, modes: Sequence[ModeRef]) -> float:
    """The chart's frequency axis ends 30 % above the highest band (modes above it are clear
    of every band and left off), or above the lowest mode where that is higher."""
    reach = max((ln.band_high_hz for ln in table.lines), default=0.0)
    lowest = min((m.frequency_hz for m in modes), default=0.0)
    return 1.3 * max(reach, lowest)


def _inside(table: MarginTable) -> set[tuple[str, int]]:
    return {(r.direction, r.mode) for r in table.rows if not r.clear}


def _mode_lines(ax: Any, modes: Sequence[ModeRef], table: MarginTable, vertical: bool) -> None:
    bad = _inside(table)
    seen: set[str] = set()
    for m in modes:
        colour, style = _DIRECTION_STYLE.get(m.direction, ("black", "-"))
        label = f"{m.direction} modes" if m.direction not in seen else None
        seen.add(m.direction)
        inside = (m.direction, m.number) in bad
        draw = ax.axvline if vertical else ax.axhline
        draw(m.frequency_hz, color="#c00000" if inside else colour, linestyle=style,
             linewidth=2.2 if inside else 1.2, label=label)  # fmt: skip
    if bad:
        ax.plot([], [], color="#c00000", linewidth=2.2, label="red: not clear of a band")


def _speed_chart(
    ax: Any, excitations: Sequence[Excitation], modes: Sequence[ModeRef], table: MarginTable
) -> None:
    speeds = [e for e in excitations if e.as_speed]
    top_rpm = 1.3 * max(e.high_hz for e in speeds) * 60.0
    top_hz = _top(table, modes)
    x = [0.0, top_rpm]
    first = next(e for e in excitations if e.as_speed)
    for e in excitations:
        if e.as_speed:
            label = "operating speed" if e is first else None
            if e.is_range:
                ax.axvspan(e.low_hz * 60.0, e.high_hz * 60.0, color="#999999", alpha=0.35,
                           label=label)  # fmt: skip
            else:
                ax.axvline(e.low_hz * 60.0, color="#777777", linewidth=2.5, label=label)
            for ln in lines(e):
                if ln.order is None:
                    continue
                h = ln.order / 60.0
                low = [0.0, (1.0 - e.below) * h * top_rpm]
                high = [0.0, (1.0 + e.above) * h * top_rpm]
                ax.fill_between(x, low, high, color="#f0b000", alpha=0.18, linewidth=0)
                ax.plot(x, [0.0, h * top_rpm], color="#a06000", linewidth=1.0)
                ax.annotate(f"{ln.order:g}x", (top_rpm, h * top_rpm), fontsize="small",
                            xytext=(2, 0), textcoords="offset points", clip_on=True)  # fmt: skip
        for ln in lines(e):
            if not e.as_speed or ln.order is None:
                ax.axhspan(ln.band_low_hz, ln.band_high_hz, color="#f0b000", alpha=0.18)
    ax.plot([], [], color="#a06000", linewidth=1.0, label="order lines, with margin bands")
    _mode_lines(ax, modes, table, vertical=False)
    ax.set_xlim(0.0, top_rpm)
    ax.set_ylim(0.0, top_hz)
    ax.set_xlabel("running speed [rpm]")
    ax.set_ylabel("frequency [Hz]")
    ax.grid(True, color="#dddddd", linewidth=0.6)


def _frequency_map(
    ax: Any, excitations: Sequence[Excitation], modes: Sequence[ModeRef], table: MarginTable
) -> None:
    names = [e.name for e in excitations]
    for row, e in enumerate(excitations):
        for ln in lines(e):
            label = "margin bands" if row == 0 and ln is lines(e)[0] else None
            ax.barh(row, ln.band_high_hz - ln.band_low_hz, left=ln.band_low_hz, height=0.6,
                    color="#f0b000", alpha=0.35, label=label)  # fmt: skip
            ax.plot([ln.low_hz, ln.high_hz], [row, row], color="#a06000", linewidth=3)
    _mode_lines(ax, modes, table, vertical=True)
    ax.set_xlim(0.0, _top(table, modes))
    ax.set_yticks(range(len(names)), names)
    ax.set_ylim(-0.8, len(names) - 0.2)
    ax.set_xlabel("frequency [Hz]")
    ax.grid(True, axis="x", color="#dddddd", linewidth=0.6)
