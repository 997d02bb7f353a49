"""The mode-shape figure of the calculation record, as an SVG document.

Drawn by matplotlib (the ``report`` extra), imported only when a figure is drawn.
"""

from __future__ import annotations

import io
from typing import Any

from beamtone.calc.report import ModeShapes, number

__all__ = ["NO_FIGURE", "mode_figure"]

NO_FIGURE = (
    "figure not drawn: matplotlib is not installed (install the report extra, "
    "pip install 'beamtone[report]')"
)
"""What the report says in place of the figure where matplotlib is missing."""


def mode_figure(shapes: ModeShapes) -> str | None:
    """The mode shapes as an SVG document, or None where matplotlib is not installed.

    Each shape is drawn along the member (as sampled, unit largest deflection) with the
    supports, point masses and springs marked.  The file carries no time stamp.

    Parameters
    ----------
    shapes : ModeShapes
        See :func:`beamtone.calc.report.mode_shapes`.

    Returns
    -------
    str or None
    """
    try:
        import matplotlib
        from matplotlib.figure import Figure
    except ImportError:
        return None
    L = shapes.length
    with matplotlib.rc_context({"svg.fonttype": "none", "svg.hashsalt": "beamtone-modes"}):
        fig = Figure(figsize=(7.5, 3.8), layout="constrained")
        ax = fig.add_subplot()
        ax.axhline(0.0, color="#888888", linewidth=0.8)
        styles = ("-", "--", "-.")
        for (mode, frequency, w), style in zip(shapes.modes, styles * 4, strict=False):
            ax.plot(
                shapes.x,
                w,
                style,
                linewidth=1.8,
                label=f"mode {mode}: {number(frequency)} Hz",
            )
        _mark_member(ax, shapes)
        ax.set_xlim(-0.04 * L, 1.04 * L)
        ax.set_ylim(-1.45, 1.3)
        ax.set_xlabel("position from the left end, x [m]")
        ax.set_ylabel("deflection, unit maximum [-]")
        ax.grid(True, color="#dddddd", linewidth=0.6)
        ax.legend(
            loc="upper center", bbox_to_anchor=(0.5, -0.2), ncol=4, frameon=False, fontsize="small"
        )
        buffer = io.StringIO()
        fig.savefig(buffer, format="svg", metadata={"Date": None})
    return buffer.getvalue()


def _mark_member(ax: Any, shapes: ModeShapes) -> None:
    L = shapes.length
    seen: set[str] = set()

    def label(name: str) -> str | None:
        if name in seen:
            return None
        seen.add(name)
        return name

    for x, kind in shapes.supports:
        if kind == "clamped":
            ax.plot(
                [x, x],
                [-0.35, 0.35],
                color="black",
                linewidth=4,
                solid_capstyle="butt",
                label=label("clamped"),
            )
        elif kind == "pinned":
            ax.plot(
                [x],
                [-0.12],
                marker="^",
                markersize=11,
                color="black",
                linestyle="none",
                label=label("pinned"),
            )
        elif kind == "guided":
            ax.plot(
                [x],
                [0.0],
                marker="s",
                markersize=10,
                markerfacecolor="white",
                markeredgecolor="black",
                linestyle="none",
                label=label("guided"),
            )
    for at in shapes.masses:
        ax.plot(
            [at],
            [0.0],
            marker="o",
            markersize=8,
            color="#b03030",
            linestyle="none",
            label=label("point mass"),
        )
    for at in shapes.springs:
        width = 0.012 * L
        ys = [-0.05 - 0.05 * i for i in range(9)]
        zig = [at + (width if i % 2 else -width) * (0 < i < 8) for i in range(9)]
        ax.plot(zig, ys, color="#2a6f2a", linewidth=1.2, label=label("grounded spring"))
