"""The calculation record as Markdown."""

from __future__ import annotations

import re

from beamtone.calc.report import (
    Alert,
    Block,
    Bullets,
    Figure,
    Formula,
    Paragraph,
    Report,
)

__all__ = ["markdown", "escape"]

# Escape only what would change the rendering: backslashes, code and emphasis markers, table
# pipes, the start of an HTML tag, a heading mark at the start, an underscore at a word edge;
# and, in text that could make a link, an image or a link reference definition (a "](", "]["
# or "]:" in it), every bracket and an image's "!".  Brackets elsewhere stay as written
# ("beamtone[report]"): with no reference definition in the document they cannot link.
_MD_SPECIAL = re.compile(r"([\\`*|])|<(?=[A-Za-z/!?])|(?<!\w)_|_(?!\w)|^#")
_MD_LINKING = re.compile(r"([\\`*|\[\]])|!(?=\[)|<(?=[A-Za-z/!?])|(?<!\w)_|_(?!\w)|^#")
_LINK = re.compile(r"\][(\[:]")


def escape(text: str) -> str:
    """Plain text as Markdown that shows it literally (on one line).

    Examples
    --------
    >>> escape("a *b* | <i>c_</i>")
    'a \\\\*b\\\\* \\\\| \\\\<i>c\\\\_\\\\</i>'
    >>> escape("pip install 'beamtone[report]'"), escape("![x](y)")
    ("pip install 'beamtone[report]'", '\\\\!\\\\[x\\\\](y)')
    """
    special = _MD_LINKING if _LINK.search(text) else _MD_SPECIAL
    return special.sub(lambda m: "\\" + m.group(0), text).replace("\n", " ")


def _cell(text: str, literal: bool) -> str:
    if not literal:
        return escape(text)
    text = text.replace("\n", " ").replace("|", "\\|")
    fence = "`"
    while fence in text:
        fence += "`"
    pad = " " if text.startswith("`") or text.endswith("`") else ""
    return f"{fence}{pad}{text}{pad}{fence}"


def _block(block: Block, figure: str | None, note: str, chart: str | None = None) -> list[str]:
    if isinstance(block, Paragraph):
        return [escape(block.text)]
    if isinstance(block, Bullets):
        return [f"- {escape(item)}" for item in block.items]
    if isinstance(block, Alert):
        return [f"> **{escape(block.text)}**"]
    if isinstance(block, Formula):
        return ["```text", *block.lines, "```"]
    if isinstance(block, Figure):
        if block.name == "interference":
            figure = chart
        if figure is None:
            return [f"*{escape(note or 'figure not written')}*"]
        return [f"![{escape(block.caption)}]({figure})", "", f"*{escape(block.caption)}*"]
    header = "| " + " | ".join(escape(h) for h in block.header) + " |"
    rule = "| " + " | ".join("---" for _ in block.header) + " |"
    rows = [
        "| " + " | ".join(_cell(c, i in block.literal) for i, c in enumerate(row)) + " |"
        for row in block.rows
    ]
    return [header, rule, *rows]


def markdown(
    report: Report, figure_file: str | None = None, note: str = "", chart_file: str | None = None
) -> str:
    """The report as Markdown.

    Parameters
    ----------
    report : Report
        The content (see :func:`beamtone.calc.report.build`).
    figure_file : str, optional
        Name of the SVG file (beside the Markdown file) holding the figure; the figure is
        referenced by it.  Without it the figure is left out and ``note`` says why.
    note : str
        Why there is no figure, where there is none.
    chart_file : str, optional
        Name of the SVG file holding the interference chart, where there is one.

    Returns
    -------
    str
    """
    lines = [f"# {escape(report.title)}", ""]
    for number, section in enumerate(report.sections, start=1):
        lines += [f"## {number}. {escape(section.title)}", ""]
        for block in section.blocks:
            lines += _block(block, figure_file, note, chart_file)
            lines.append("")
    return "\n".join(lines).rstrip() + "\n"
