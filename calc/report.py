"""The calculation record a reviewer can file: one document, as Markdown or as one HTML file.

:func:`build` turns an :class:`~calc.analysis.Analysis` into a :class:`Report`: purpose,
inputs as entered and in SI, derived section properties and member mass, assumptions, the
methods with their formulas, the results, the cross-checks, the dimensional groups, the
excitation margins where given, a figure of the first mode shapes, warnings, the caution
and the references behind every tabulated value used.  :meth:`Report.markdown` and
:meth:`Report.html` render it; the HTML is self-contained (inline style, the figure as
inline SVG, no external reference).

The figure is drawn by matplotlib (the ``report`` extra), imported only when a figure is
made; without it the report says how to get the figure and is complete otherwise.
"""

from __future__ import annotations

import datetime as _dt
import html as _html
import io
import math
import re
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from beamtone.calc.errors import InputError

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis
    from beamtone.calc.record import Verification
    from beamtone.calc.sizing import MarginCheck

__all__ = ["FIGURE_MODES", "Report", "Section", "build", "mode_figure", "number"]

FIGURE_MODES = 3
"""How many mode shapes the figure draws at most."""

_FE_REFERENCE = (
    "J. S. Przemieniecki, Theory of Matrix Structural Analysis, 1968, chapters 5 and 11: "
    "beam element stiffness, consistent mass and geometric stiffness matrices (common practice)"
)
_ENERGY_REFERENCE = (
    "S. Timoshenko, D. H. Young and W. Weaver, Vibration Problems in Engineering, chapter 5: "
    "Rayleigh's principle, the Rayleigh-Ritz method and Dunkerley's method"
)
_DEPTH_PRACTICE = (
    "Bending theory alone is taken as adequate while a half-wavelength exceeds about ten "
    "section depths (common practice)"
)
_MARGIN_PRACTICE = (
    "Separation margins around excitation frequencies: common practice; the applicable code "
    "or client specification sets the margin"
)
_NO_FIGURE = (
    "figure not drawn: matplotlib is not installed (install the report extra, "
    "pip install 'beamtone[report]')"
)


def number(value: float | None, digits: int = 6) -> str:
    """A value as the report prints it: ``digits`` significant figures, "-" for None.

    Examples
    --------
    >>> number(16.365064454180892), number(0.0), number(None), number(1.2e-9)
    ('16.3651', '0', '-', '1.2e-09')
    """
    if value is None:
        return "-"
    return f"{value:.{digits}g}"


def _error(value: float) -> str:
    return "-" if not math.isfinite(value) else f"{value:.1e}"


def _percent(value: float) -> str:
    return f"{100.0 * value:.1f} %"


# --- document blocks -----------------------------------------------------------------------------


@dataclass(frozen=True)
class _Paragraph:
    text: str


@dataclass(frozen=True)
class _Bullets:
    items: tuple[str, ...]


@dataclass(frozen=True)
class _Table:
    header: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    literal: tuple[int, ...] = ()  # columns of text as typed (shown as code)


@dataclass(frozen=True)
class _Formula:
    lines: tuple[str, ...]


@dataclass(frozen=True)
class _Figure:
    caption: str


@dataclass(frozen=True)
class _Alert:
    text: str


_Block = _Paragraph | _Bullets | _Table | _Formula | _Figure | _Alert


@dataclass(frozen=True)
class Section:
    """One numbered section of the report.

    Attributes
    ----------
    title : str
    blocks : tuple
        Paragraphs, lists, tables, formulas, the figure and alerts, in order.
    """

    title: str
    blocks: tuple[_Block, ...]


@dataclass(frozen=True)
class Report:
    """A calculation record, ready to render.

    Attributes
    ----------
    title : str
    sections : tuple of Section
    figure_svg : str or None
        The mode-shape figure as a standalone SVG document; None where it was not drawn.
    figure_note : str
        Why there is no figure, where there is none.
    """

    title: str
    sections: tuple[Section, ...]
    figure_svg: str | None
    figure_note: str = ""

    def markdown(self, figure_file: str | None = None) -> str:
        """The report as Markdown.

        Parameters
        ----------
        figure_file : str, optional
            Name of the SVG file (beside the Markdown file) the figure was written to; the
            figure is referenced by it.  Without it the figure is left out with a note.

        Returns
        -------
        str
        """
        lines = [f"# {_md(self.title)}", ""]
        for number_, section in enumerate(self.sections, start=1):
            lines += [f"## {number_}. {_md(section.title)}", ""]
            for block in section.blocks:
                lines += self._md_block(block, figure_file)
                lines.append("")
        return "\n".join(lines).rstrip() + "\n"

    def _md_block(self, block: _Block, figure_file: str | None) -> list[str]:
        if isinstance(block, _Paragraph):
            return [_md(block.text)]
        if isinstance(block, _Bullets):
            return [f"- {_md(item)}" for item in block.items]
        if isinstance(block, _Alert):
            return [f"> **{_md(block.text)}**"]
        if isinstance(block, _Formula):
            return ["```text", *block.lines, "```"]
        if isinstance(block, _Figure):
            if self.figure_svg is None or figure_file is None:
                return [f"*{_md(self.figure_note or 'figure not written')}*"]
            return [f"![{_md(block.caption)}]({figure_file})", "", f"*{_md(block.caption)}*"]
        header = "| " + " | ".join(_md(h) for h in block.header) + " |"
        rule = "| " + " | ".join("---" for _ in block.header) + " |"
        rows = [
            "| " + " | ".join(_md_cell(c, i in block.literal) for i, c in enumerate(row)) + " |"
            for row in block.rows
        ]
        return [header, rule, *rows]

    def html(self) -> str:
        """The report as one self-contained HTML file (inline style and figure).

        Returns
        -------
        str
        """
        body = [f"<h1>{_esc(self.title)}</h1>"]
        for number_, section in enumerate(self.sections, start=1):
            body.append(f'<section id="s{number_}">')
            body.append(f"<h2>{number_}. {_esc(section.title)}</h2>")
            body += [self._html_block(b) for b in section.blocks]
            body.append("</section>")
        return (
            "<!DOCTYPE html>\n"
            '<html lang="en">\n<head>\n<meta charset="utf-8">\n'
            '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
            f"<title>{_esc(self.title)}</title>\n<style>\n{_CSS}</style>\n</head>\n<body>\n"
            + "\n".join(body)
            + "\n</body>\n</html>\n"
        )

    def _html_block(self, block: _Block) -> str:
        if isinstance(block, _Paragraph):
            return f"<p>{_esc(block.text)}</p>"
        if isinstance(block, _Bullets):
            return "<ul>" + "".join(f"<li>{_esc(i)}</li>" for i in block.items) + "</ul>"
        if isinstance(block, _Alert):
            return f'<p class="alert">{_esc(block.text)}</p>'
        if isinstance(block, _Formula):
            return "<pre>" + _esc("\n".join(block.lines)) + "</pre>"
        if isinstance(block, _Figure):
            if self.figure_svg is None:
                return f'<p class="note">{_esc(self.figure_note)}</p>'
            return (
                f"<figure>{_inline_svg(self.figure_svg, block.caption)}"
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

# Escape only what would change the rendering: backslashes, code and emphasis markers, table
# pipes, the start of an HTML tag, a heading mark at the start, an underscore at a word edge.
_MD_SPECIAL = re.compile(r"([\\`*|])|<(?=[A-Za-z/!?])|(?<!\w)_|_(?!\w)|^#")


def _md(text: str) -> str:
    return _MD_SPECIAL.sub(lambda m: "\\" + m.group(0), text).replace("\n", " ")


def _md_cell(text: str, literal: bool) -> str:
    if not literal:
        return _md(text)
    text = text.replace("\n", " ").replace("|", "\\|")
    fence = "`"
    while fence in text:
        fence += "`"
    pad = " " if text.startswith("`") or text.endswith("`") else ""
    return f"{fence}{pad}{text}{pad}{fence}"


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


# --- the figure ----------------------------------------------------------------------------------


def _shape(mode: Any, xs: Sequence[float]) -> list[float]:
    from beamtone.calc.fe import interpolate

    peak = float(mode.w_modal[int(abs(mode.w_modal).argmax())])
    theta = mode.theta_modal / peak
    w = mode.w_modal / peak
    return [interpolate(mode.x, w, theta, x) for x in xs]


def mode_figure(analysis: Analysis, count: int = FIGURE_MODES) -> str | None:
    """The first mode shapes as an SVG document, or None where matplotlib is not installed.

    Each shape is scaled to unit largest deflection (largest deflection positive) and drawn
    along the member with its supports, point masses and springs marked.

    Parameters
    ----------
    analysis : Analysis
    count : int
        Modes to draw (at most this many).

    Returns
    -------
    str or None
    """
    try:
        import matplotlib
        from matplotlib.figure import Figure
    except ImportError:
        return None
    member = analysis.sheet.member
    L = member.length
    modes = analysis.modes.modes[:count]
    xs = [L * i / 400 for i in range(401)]
    with matplotlib.rc_context({"svg.fonttype": "none", "svg.hashsalt": "beamtone-modes"}):
        fig = Figure(figsize=(7.5, 3.8), layout="constrained")
        ax = fig.add_subplot()
        ax.axhline(0.0, color="#888888", linewidth=0.8)
        styles = ("-", "--", "-.")
        for mode, style in zip(modes, styles * 4, strict=False):
            ax.plot(
                xs,
                _shape(mode, xs),
                style,
                linewidth=1.8,
                label=f"mode {mode.number}: {number(mode.frequency_hz)} Hz",
            )
        _mark_member(ax, member)
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


def _mark_member(ax: Any, member: Any) -> None:
    L = member.length
    seen: set[str] = set()

    def label(name: str) -> str | None:
        if name in seen:
            return None
        seen.add(name)
        return name

    supports = [(0.0, member.left), (L, member.right)]
    supports += [(s.at, s.kind) for s in member.inner_supports]
    for x, kind in supports:
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
    for p in member.masses:
        ax.plot(
            [p.at],
            [0.0],
            marker="o",
            markersize=8,
            color="#b03030",
            linestyle="none",
            label=label("point mass"),
        )
    for s in member.springs:
        width = 0.012 * L
        ys = [-0.05 - 0.05 * i for i in range(9)]
        zig = [s.at + (width if i % 2 else -width) * (0 < i < 8) for i in range(9)]
        ax.plot(zig, ys, color="#2a6f2a", linewidth=1.2, label=label("grounded spring"))


# --- the content ---------------------------------------------------------------------------------


def build(
    analysis: Analysis,
    *,
    caution: str,
    source: str | None = None,
    margins: MarginCheck | None = None,
    verification: Verification | None = None,
    figure: bool = True,
    now: _dt.datetime | None = None,
) -> Report:
    """The calculation record of an analysis.

    Parameters
    ----------
    analysis : Analysis
    caution : str
        The caution to show (the command line's and the app's own wording).
    source : str, optional
        The worksheet's name as the reader should see it (default: where it was loaded from).
    margins : MarginCheck, optional
        An excitation check of the modes (see :func:`calc.sizing.margins`).
    verification : Verification, optional
        The outcome of verifying the worksheet's stored record, where it has one.
    figure : bool
        Whether to draw the mode-shape figure.
    now : datetime, optional
        The date to state (default: now, UTC).

    Returns
    -------
    Report
    """
    from beamtone.calc.record import inputs_digest, tool_version

    sheet = analysis.sheet
    title = f"Calculation record: {sheet.title}" if sheet.title else "Calculation record"
    when = (now or _dt.datetime.now(_dt.UTC)).astimezone(_dt.UTC).strftime("%Y-%m-%d %H:%M UTC")
    about = _Table(
        ("item", "value"),
        (
            ("worksheet", source or sheet.source),
            ("inputs digest (SHA-256)", inputs_digest(sheet.data)),
            ("computed with", f"beamtone {tool_version()}"),
            ("date", when),
            ("stored record", _record_state(verification)),
        ),
        literal=(),
    )
    svg = mode_figure(analysis) if figure else None
    note = "" if svg is not None else (_NO_FIGURE if figure else "figure not requested")
    sections = [
        Section("Purpose", (*_purpose(analysis), about, _Alert(caution))),
        Section("Inputs as entered and in SI", _inputs(analysis)),
        Section("Member: derived properties", _derived(analysis)),
        Section("Assumptions", _assumptions(analysis)),
        Section("Methods and formulas", _methods(analysis)),
        Section("Results", _results(analysis)),
        Section("Cross-checks", _checks(analysis, verification)),
        Section("Dimensional groups", _groups(analysis)),
        Section("Excitation margins", _margins(margins)),
        Section("Mode shapes", (_Figure(_caption(analysis)),)),
        Section("Warnings", _warnings(analysis)),
        Section("Caution", (_Paragraph(caution),)),
        Section("References", _references(analysis, margins)),
    ]
    return Report(title, tuple(sections), svg, note)


def _record_state(verification: Verification | None) -> str:
    if verification is None:
        return "none in the worksheet (beamtone solve FILE --record stores one)"
    state = "reproduces" if verification.passed else "DOES NOT REPRODUCE"
    return f"{state}: {verification.message}"


def _purpose(analysis: Analysis) -> tuple[_Block, ...]:
    sheet = analysis.sheet
    blocks: list[_Block] = [
        _Paragraph(
            f"Natural frequencies of the member \u201c{sheet.title or sheet.source}\u201d, with "
            "their mode shapes, to keep them clear of what excites it. The record states what "
            "was computed, from which inputs, by which methods and with which version, so that "
            "it can be checked again."
        )
    ]
    if sheet.notes.strip():
        blocks.append(_Paragraph("Notes from the worksheet:"))
        blocks += [_Paragraph(p.strip()) for p in re.split(r"\n\s*\n", sheet.notes) if p.strip()]
    else:
        blocks.append(_Paragraph("The worksheet has no notes."))
    return tuple(blocks)


# inputs


def _leaves(data: Any, prefix: str = "") -> list[tuple[str, Any]]:
    out: list[tuple[str, Any]] = []
    for name, value in data.items():
        if not prefix and name == "record":
            continue
        key = f"{prefix}.{name}" if prefix else name
        if isinstance(value, dict):
            out += _leaves(value, key)
        elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value):
            for i, item in enumerate(value):
                out += _leaves(item, f"{key}[{i}]")
        elif isinstance(value, list):
            out += [(f"{key}[{i}]", item) for i, item in enumerate(value)]
        else:
            out.append((key, value))
    return out


def _entered(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return value
    return str(value)


def _si(analysis: Analysis, key: str, value: Any) -> str:
    from beamtone.calc import materials, sizing

    if key == "estimate.reference" and analysis.sheet.estimate.reference is not None:
        return f"{number(analysis.sheet.estimate.reference)} m"
    if not isinstance(value, str):
        return "-"
    if key.endswith(".material") or key == "material":
        found = materials.lookup(value)
        if found is not None:
            return (
                f"library: E = {number(found.youngs_modulus)} Pa, "
                f"\u03c1 = {number(found.density)} kg/m^3"
            )
        return "-"
    try:
        var = sizing.variation(analysis.sheet, key)
    except InputError:
        return "-"
    return f"{number(var.value)} {var.dimension.si_unit}"


def _inputs(analysis: Analysis) -> tuple[_Block, ...]:
    rows = []
    for key, value in _leaves(analysis.sheet.data):
        rows.append((key, _entered(value), _si(analysis, key, value)))
    return (
        _Paragraph(
            "Every entry of the worksheet (its stored record aside), as written and as the "
            "calculation used it in SI units."
        ),
        _Table(("key", "as entered", "in SI"), tuple(rows), literal=(0, 1, 2)),
    )


# derived


def _derived(analysis: Analysis) -> tuple[_Block, ...]:
    member = analysis.sheet.member
    edges = member.boundaries
    sections = []
    lines = []
    for i, seg in enumerate(member.segments):
        sec = seg.section
        depth = (
            number(sec.depth)
            if sec.depth is not None
            else (f"{number(sec.effective_depth)} (from I/A)")
        )
        sections.append(
            (
                str(i + 1),
                f"{number(edges[i])} to {number(edges[i + 1])}",
                sec.shape,
                number(sec.area),
                number(sec.second_moment),
                depth,
                number(sec.radius_of_gyration),
            )
        )
        lines.append(
            (
                str(i + 1),
                number(seg.length),
                seg.material.name,
                number(seg.material.youngs_modulus),
                number(seg.material.density),
                number(seg.bending_stiffness),
                number(seg.added_mass),
                number(seg.mass_per_length),
                number(seg.mass_per_length * seg.length),
            )
        )
    attached = sum(p.mass for p in member.masses)
    totals = (
        ("member length", f"{number(member.length)} m"),
        ("member mass (with added mass)", f"{number(member.member_mass)} kg"),
        ("point masses", f"{number(attached)} kg"),
        ("total mass", f"{number(member.total_mass)} kg"),
        ("ends", f"{member.left} at x = 0, {member.right} at x = {number(member.length)} m"),
    )
    extra = []
    if member.inner_supports:
        extra.append(
            (
                "inner supports",
                ", ".join(f"{s.kind} at {number(s.at)} m" for s in member.inner_supports),
            )
        )
    if member.axial_force:
        kind = "tension" if member.axial_force > 0 else "compression"
        extra.append(("axial force", f"{number(abs(member.axial_force))} N {kind}"))
    return (
        _Paragraph("Sections (bending about the axis across the depth; SI units):"),
        _Table(
            ("segment", "x [m]", "shape", "A [m^2]", "I [m^4]", "depth [m]", "r = sqrt(I/A) [m]"),
            tuple(sections),
        ),
        _Paragraph("Stiffness and mass along the member:"),
        _Table(
            (
                "segment",
                "length [m]",
                "material",
                "E [Pa]",
                "\u03c1 [kg/m^3]",
                "EI [N m^2]",
                "added [kg/m]",
                "m [kg/m]",
                "mass [kg]",
            ),
            tuple(lines),
        ),
        _Table(("quantity", "value"), (*totals, *extra)),
    )


def _assumptions(analysis: Analysis) -> tuple[_Block, ...]:
    member = analysis.sheet.member
    items = [
        "Euler-Bernoulli bending in one plane: plane sections stay plane and normal to the "
        "axis; shear deformation and the rotary inertia of the section are neglected.",
        "Linear: small deflections, linear-elastic, isotropic and homogeneous material with "
        "the properties listed.",
        "Undamped free vibration: the natural frequencies are those of the undamped system.",
        "Idealized ends and supports: clamped, pinned and guided supports are rigid and ideal; "
        "springs are linear and grounded; point masses are rigid and act at a point.",
        "Each segment is uniform; changes of section are abrupt.",
    ]
    if member.axial_force:
        items.append(
            "The axial force is constant along the member and does not change during "
            "vibration (geometric stiffness)."
        )
    items.append(_DEPTH_PRACTICE + "; where a mode breaks this, the warnings say so.")
    return (_Bullets(tuple(items)),)


# methods


def _methods(analysis: Analysis) -> tuple[_Block, ...]:
    fe, est, low = analysis.modes, analysis.estimate, analysis.lower_bound
    blocks: list[_Block] = [
        _Paragraph(
            f"Finite elements. Hermite cubic beam elements (deflection w and slope \u03b8 at "
            f"each node), consistent mass, supports enforced exactly by eliminating the degrees "
            f"of freedom they hold. Reported mesh: {fe.elements} elements, "
            f"{fe.degrees_of_freedom} free degrees of freedom; eigen solver: {fe.solver}."
        ),
        _Formula(
            (
                "element of length h, bending stiffness EI, mass per length m, axial force P:",
                "K_e = EI/h^3 [[12, 6h, -12, 6h], [6h, 4h^2, -6h, 2h^2],",
                "              [-12, -6h, 12, -6h], [6h, 2h^2, -6h, 4h^2]]",
                "M_e = m h/420 [[156, 22h, 54, -13h], [22h, 4h^2, 13h, -3h^2],",
                "               [54, 13h, 156, -22h], [-13h, -3h^2, -22h, 4h^2]]",
                "G_e = P/(30h) [[36, 3h, -36, 3h], [3h, 4h^2, -3h, -h^2],",
                "               [-36, -3h, 36, -3h], [3h, -h^2, -3h, 4h^2]]",
                "(K + G) \u03c6 = \u03c9\u00b2 M \u03c6,   f = \u03c9/(2\u03c0)",
                "effective mass of mode i: (\u03c6_i\u1d40 M r)\u00b2,",
                "  with \u03c6_i\u1d40 M \u03c6_i = 1 and r the unit translation",
            )
        ),
        _Paragraph(
            "Accuracy. The mesh is chosen so that every reported frequency meets a relative "
            "accuracy of 1e-6. Each mode is solved on two meshes, one twice as fine; the "
            "estimated error is twice the Richardson estimate from the h^4 convergence of the "
            "eigenvalues, or a round-off bound where that is larger. Finite-element frequencies "
            "of this kind converge from above. Eigenvalues are taken from the element strain "
            "energies of the eigenvectors."
        ),
        _Paragraph(
            "Rayleigh's quotient. For an assumed shape w(x) that meets the geometric conditions "
            "of every support, the quotient bounds the fundamental from above:"
        ),
        _Formula(
            (
                "\u03c9\u2081\u00b2 \u2264 R[w] = (\u222bEI w''\u00b2 dx + P\u222bw'\u00b2 dx + "
                "\u03a3k w(a)\u00b2 + \u03a3k_r w'(a)\u00b2)",
                "                / (\u222bm w\u00b2 dx + \u03a3M w(a)\u00b2 + \u03a3J w'(a)\u00b2)",
            )
        ),
    ]
    shape = (
        "the static deflection under the member's own weight"
        if est.shape == "static"
        else (f"w(x) = {est.expression or est.shape}")
    )
    text = f"Assumed shape: {shape}."
    if est.formula:
        text += f" Integrated symbolically: {est.formula}."
    else:
        text += " Integrated numerically (Gauss quadrature on every segment)."
    blocks.append(_Paragraph(text))
    if est.notes:
        blocks.append(_Bullets(tuple(est.notes)))
    if analysis.ritz is not None:
        blocks.append(
            _Paragraph(
                "Rayleigh-Ritz. With several trial functions the quotient's stationary values "
                "bound as many of the lowest frequencies from above: "
                "det(K_r - \u03c9\u00b2 M_r) = 0 with K_r, M_r the energy matrices of the "
                "functions: " + "; ".join(analysis.ritz.shapes) + "."
            )
        )
    blocks += [
        _Paragraph(
            "Dunkerley's bound. The sum of the inverse squares of all natural frequencies "
            "equals the trace of flexibility times mass, which bounds the fundamental from below:"
        ),
        _Formula(
            (
                "1/\u03c9\u2081\u00b2 \u2264 \u03a3 1/\u03c9_i\u00b2 = \u222bm(x) a(x,x) dx + "
                "\u03a3M_j a(x_j,x_j) + \u03a3J_j b(x_j,x_j)",
                "a(x,x): deflection at x under a unit force at x; b: rotation under a unit moment",
            )
        ),
        _Paragraph(
            "The flexibility is that of the supported member, exact at the element nodes and "
            "integrated exactly"
            + (" (no axial force)." if low.exact else "; with the axial force it is approximate.")
        ),
        _Paragraph(
            "Bracket. The finite-element fundamental must lie between Dunkerley's lower and "
            "Rayleigh's upper bound (within its estimated error); if it does not, the model or "
            "its input is suspect."
        ),
        _Paragraph(
            "Handbook frequencies (where the member is a tabulated case). The exact roots "
            "\u03bb_i of the characteristic equation of the case, solved to 1e-12, give"
        ),
        _Formula(
            ("f_i = \u03bb_i\u00b2/(2\u03c0 l\u00b2) \u221a(EI/m),   l the member or span length",)
        ),
        _Paragraph(
            "Equivalent single-degree-of-freedom model at a point a: with the fundamental "
            "normalized to unit modal mass, m_e = 1/\u03c6(a)\u00b2 and k_e = \u03c9\u2081\u00b2 "
            "m_e."
        ),
        _Paragraph(
            "Dimensional groups: with L, and EI and m of the first segment, as repeating "
            "variables, every result is f = \u03a9/(2\u03c0L\u00b2)\u221a(EI/m) and the groups "
            "below decide \u03a9."
        ),
    ]
    return tuple(blocks)


# results


def _results(analysis: Analysis) -> tuple[_Block, ...]:
    fe = analysis.modes
    floor = 1e-12 * fe.total_mass  # below it an effective mass is round-off of zero
    rows = tuple(
        (
            str(m.number),
            number(m.frequency_hz),
            number(m.omega),
            _error(m.estimated_error),
            number(m.effective_mass) if m.effective_mass > floor else "0",
            _percent(m.effective_mass_fraction),
            _percent(m.cumulative_mass_fraction),
        )
        for m in fe.modes
    )
    rigid = fe.rigid_body_modes
    est, low, eq = analysis.estimate, analysis.lower_bound, analysis.equivalent
    blocks: list[_Block] = [
        _Table(
            (
                "mode",
                "f [Hz]",
                "\u03c9 [rad/s]",
                "est. rel. error",
                "eff. mass [kg]",
                "eff. mass",
                "cumulative",
            ),
            rows,
        ),
        _Paragraph(
            f"Rigid-body modes: {rigid}"
            + (" (counted, not listed; mode 1 is the first flexible mode)." if rigid else ".")
            + " Effective masses are in the plane of vibration, as fractions of the total mass "
            f"{number(fe.total_mass)} kg."
        ),
        _Paragraph(
            f"Soundness of the eigen solution: mass orthogonality {fe.mass_orthogonality:.1e}, "
            f"stiffness orthogonality {fe.stiffness_orthogonality:.1e}; stiffness matrix "
            f"{fe.stiffness_definiteness}, mass matrix {fe.mass_definiteness}."
        ),
        _Table(
            ("estimate", "value"),
            (
                ("Rayleigh (upper bound on f1)", f"{number(est.frequency_hz)} Hz"),
                (
                    "Dunkerley (lower bound on f1)",
                    f"{number(low.frequency_hz)} Hz"
                    if low.frequency_hz is not None
                    else f"none: {low.reason}",
                ),
                ("equivalent 1-DOF model: point", f"{number(eq.at_m)} m"),
                ("equivalent 1-DOF model: effective mass", f"{number(eq.mass_kg)} kg"),
                ("equivalent 1-DOF model: stiffness", f"{number(eq.stiffness_n_per_m)} N/m"),
            ),
        ),
    ]
    if analysis.ritz is not None:
        ritz = analysis.ritz
        count = len(ritz.frequencies_hz)
        blocks.append(_Paragraph("Rayleigh-Ritz upper bounds [Hz] with 1, 2, ... functions:"))
        blocks.append(
            _Table(
                ("functions", *(f"f{i + 1}" for i in range(count))),
                tuple(
                    (str(n), *(number(f) for f in row), *("-" for _ in range(count - len(row))))
                    for n, row in enumerate(ritz.convergence, start=1)
                ),
            )
        )
    return tuple(blocks)


def _checks(analysis: Analysis, verification: Verification | None) -> tuple[_Block, ...]:
    blocks: list[_Block] = []
    check = analysis.handbook
    if check is None:
        blocks.append(
            _Paragraph(
                "Handbook: the member is not one of the tabulated cases (uniform with classical "
                "ends and nothing attached, a cantilever with a tip mass, equal pinned spans), so "
                "the finite-element result stands on its own, with the bracket below."
            )
        )
    else:
        rows = []
        for mode, lam, ref in zip(
            analysis.modes.modes, check.parameters, check.frequencies_hz, strict=False
        ):
            diff = (mode.frequency_hz - ref) / ref
            rows.append(
                (
                    str(mode.number),
                    number(mode.frequency_hz),
                    number(ref),
                    number(lam, 10),
                    f"{100 * diff:+.2e} %",
                )
            )
        blocks.append(_Paragraph(f"Handbook case: {check.case} (source: {check.source})."))
        blocks.append(
            _Table(("mode", "FE [Hz]", "handbook [Hz]", "\u03bb_i", "FE vs handbook"), tuple(rows))
        )
    br = analysis.bracket
    blocks.append(
        _Table(
            ("Dunkerley [Hz]", "FE f1 [Hz]", "Rayleigh [Hz]", "width", "holds"),
            (
                (
                    number(br.lower_hz),
                    number(br.fe_hz),
                    number(br.upper_hz),
                    "-" if br.width is None else f"{100 * br.width:.3g} %",
                    "yes" if br.inside else "NO",
                ),
            ),
        )
    )
    blocks.append(_Alert(br.message) if not br.inside else _Paragraph(f"Bracket: {br.message}."))
    if verification is not None:
        blocks.append(_Paragraph(f"Stored record: {verification.message}."))
        if not verification.inputs_unchanged:
            blocks.append(
                _Alert(
                    f"The inputs changed since the record was written on "
                    f"{verification.record.written}: the stored results describe other inputs."
                )
            )
        blocks.append(
            _Table(
                ("quantity", "stored", "now", "rel. difference", "tolerance", "agrees"),
                tuple(_comparison_row(c) for c in verification.comparisons),
            )
        )
    return tuple(blocks)


def _comparison_row(c: Any) -> tuple[str, ...]:
    def show(v: Any) -> str:
        if v is None:
            return "-"
        if isinstance(v, bool):
            return "yes" if v else "no"
        if isinstance(v, int):
            return str(v)
        return number(v, 10) if isinstance(v, float) else str(v)

    quantity = f"{c.quantity} [{c.unit}]" if c.unit else c.quantity
    rel = "-" if c.relative is None else f"{c.relative:.1e}"
    return (quantity, show(c.stored), show(c.now), rel, c.rule, "yes" if c.ok else "NO")


def _groups(analysis: Analysis) -> tuple[_Block, ...]:
    g = analysis.groups
    rows = tuple((x.symbol, x.expression, number(x.value), x.meaning) for x in g.groups)
    return (
        _Paragraph(
            f"Repeating variables: L = {number(g.length)} m, EI = {number(g.bending_stiffness)} "
            f"N m^2, m = {number(g.mass_per_length)} kg/m (first segment). "
            "\u03a9_i = \u03c9_i L\u00b2 \u221a(m/EI)."
        ),
        _Table(("group", "definition", "value", "meaning"), rows, literal=(1,)),
    )


def _margins(margins: MarginCheck | None) -> tuple[_Block, ...]:
    if margins is None:
        return (
            _Paragraph(
                'No excitation was given (beamtone report FILE --excitation "1480 rpm" adds '
                "this check)."
            ),
        )
    header = ["mode", "f [Hz]"] + [
        f"{ln.harmonic}x {number(ln.frequency_hz)} Hz (band {number(ln.low_hz)} to "
        f"{number(ln.high_hz)})"
        for ln in margins.lines
    ]
    rows = []
    for i, (f, row) in enumerate(zip(margins.frequencies_hz, margins.inside, strict=True), 1):
        cells = [
            f"{'INSIDE BAND' if hit else 'clear'} ({100 * (f / ln.frequency_hz - 1):+.1f} %)"
            for hit, ln in zip(row, margins.lines, strict=True)
        ]
        rows.append((str(i), number(f), *cells))
    blocks: list[_Block] = [
        _Paragraph(
            "Each mode against each excitation line: inside the band means closer to the line "
            "than the margin; the percentage is the mode's separation from the line."
        ),
        _Table(tuple(header), tuple(rows)),
        _Paragraph(_MARGIN_PRACTICE + "."),
    ]
    if not margins.clear:
        blocks.append(_Alert("At least one mode lies inside an excitation band."))
    return tuple(blocks)


def _caption(analysis: Analysis) -> str:
    n = min(FIGURE_MODES, len(analysis.modes.modes))
    which = "mode shape" if n == 1 else f"first {n} mode shapes"
    return (
        f"The {which}, each scaled to unit largest deflection, with the supports, point "
        "masses and springs marked."
    )


def _warnings(analysis: Analysis) -> tuple[_Block, ...]:
    if not analysis.warnings:
        return (_Paragraph("None."),)
    blocks: list[_Block] = []
    if not analysis.bracket.inside:
        blocks.append(_Alert(analysis.bracket.message))
    blocks.append(_Bullets(tuple(analysis.warnings)))
    return tuple(blocks)


def _references(analysis: Analysis, margins: MarginCheck | None) -> tuple[_Block, ...]:
    items: list[str] = [_FE_REFERENCE, _ENERGY_REFERENCE]
    if analysis.handbook is not None:
        items.append(
            f"Handbook frequency parameters ({analysis.handbook.case}): {analysis.handbook.source}"
        )
    seen: set[tuple[str, str]] = set()
    for seg in analysis.sheet.member.segments:
        mat = seg.material
        if (mat.name, mat.source) in seen:
            continue
        seen.add((mat.name, mat.source))
        items.append(f"Material {mat.name}: {mat.source}")
    items.append(_DEPTH_PRACTICE)
    if margins is not None:
        items.append(_MARGIN_PRACTICE)
    return (_Bullets(tuple(items)),)
