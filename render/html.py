"""The calculation record as one self-contained HTML file (inline style, inline figure)."""

from __future__ import annotations

import html as _html
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

__all__ = ["html"]

_CSS = """\
body { font-family: system-ui, -apple-system, "Segoe UI", Helvetica, Arial, sans-serif;
       max-width: 62rem; margin: 2rem auto; padding: 0 1rem; color: #1b1b1b; line-height: 1.45; }
h1 { font-size: 1.6rem; border-bottom: 2px solid #444; padding-bottom: .3rem; }
h2 { font-size: 1.2rem; margin-top: 2rem; border-bottom: 1px solid #bbb; }
table { border-collapse: collapse; margin: .6rem 0; font-size: .9rem; }
th, td { border: 1px solid #bbb; padding: .2rem .5rem; text-align: left; vertical-align: top; }
th { background: #eee; }
code, pre { font-family: ui-monospace, Menlo, Consolas, monospace; font-size: .88rem; }
pre { background: #f4f4f4; padding: .6rem; overflow-x: auto; }
.alert { border: 2px solid #a33; background: #fbeeee; padding: .5rem .8rem; font-weight: bold; }
.note { font-style: italic; }
figure { margin: 1rem 0; }
figure svg { max-width: 100%; height: auto; }
figcaption { font-style: italic; font-size: .9rem; }
@media print { body { margin: 0; max-width: none; } section { break-inside: avoid-page; } }
"""


def _esc(text: str) -> str:
    return _html.escape(text, quote=False)


def _inline_svg(svg: str, label: str) -> str:
    """The SVG document as an element inside HTML: no prolog, comments, metadata or namespaces
    (the HTML parser puts ``<svg>`` in its namespace)."""
    start = svg.find("<svg")
    text = svg[start:] if start >= 0 else svg
    text = re.sub(r"<!--.*?-->", "", text, flags=re.S)
    text = re.sub(r"<metadata>.*?</metadata>", "", text, flags=re.S)
    text = re.sub(r'\s+xmlns(:\w+)?="[^"]*"', "", text)
    label_attr = _html.escape(label, quote=True)
    return text.replace("<svg", f'<svg role="img" aria-label="{label_attr}"', 1).strip()


def _block(block: Block, svg: str | None, note: str, chart: str | None = None) -> str:
    if isinstance(block, Paragraph):
        return f"<p>{_esc(block.text)}</p>"
    if isinstance(block, Bullets):
        return "<ul>" + "".join(f"<li>{_esc(i)}</li>" for i in block.items) + "</ul>"
    if isinstance(block, Alert):
        return f'<p class="alert">{_esc(block.text)}</p>'
    if isinstance(block, Formula):
        return "<pre>" + _esc("\n".join(block.lines)) + "</pre>"
    if isinstance(block, Figure):
        if block.name == "interference":
            svg = chart
        if svg is None:
            return f'<p class="note">{_esc(note)}</p>'
        return (
            f"<figure>{_inline_svg(svg, block.caption)}"
            f"<figcaption>{_esc(block.caption)}</figcaption></figure>"
        )
    head = "".join(f"<th>{_esc(h)}</th>" for h in block.header)
    rows = []
    for row in block.rows:
        cells = "".join(
            f"<td><code>{_esc(c)}</code></td>" if i in block.literal else f"<td>{_esc(c)}</td>"
            for i, c in enumerate(row)
        )
        rows.append(f"<tr>{cells}</tr>")
    return f"<table><thead><tr>{head}</tr></thead><tbody>{''.join(rows)}</tbody></table>"


def html(
    report: Report, figure_svg: str | None = None, note: str = "", chart_svg: str | None = None
) -> str:
    """The report as one self-contained HTML file.

    Parameters
    ----------
    report : Report
        The content (see :func:`beamtone.calc.report.build`).
    figure_svg : str, optional
        The mode-shape figure as an SVG document, put inline; without it ``note`` says why
        there is no figure.
    note : str
    chart_svg : str, optional
        The interference chart as an SVG document, put inline where there is one.

    Returns
    -------
    str
    """
    body = [f"<h1>{_esc(report.title)}</h1>"]
    for number, section in enumerate(report.sections, start=1):
        body.append(f'<section id="s{number}">')
        body.append(f"<h2>{number}. {_esc(section.title)}</h2>")
        body += [_block(b, figure_svg, note, chart_svg) for b in section.blocks]
        body.append("</section>")
    return (
        "<!DOCTYPE html>\n"
        '<html lang="en">\n<head>\n<meta charset="utf-8">\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
        f"<title>{_esc(report.title)}</title>\n<style>\n{_CSS}</style>\n</head>\n<body>\n"
        + "\n".join(body)
        + "\n</body>\n</html>\n"
    )
