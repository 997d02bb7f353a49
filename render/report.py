"""The calculation record a reviewer can file, written out: Markdown, or one HTML file.

:func:`build` takes the content from :func:`beamtone.calc.report.build`, draws the figure
and returns a :class:`Report` that writes itself as Markdown (:meth:`Report.markdown`,
the figure in an SVG file beside it) or as one self-contained HTML file
(:meth:`Report.html`: inline style, the figure as inline SVG, no external reference).
Without matplotlib the report says how to get the figure and is complete otherwise.
"""

from __future__ import annotations

import datetime as _dt
from dataclasses import dataclass
from typing import TYPE_CHECKING

from beamtone.calc import report as content
from beamtone.calc.caution import CAUTION
from beamtone.calc.report import FIGURE_MODES, Section, number
from beamtone.render.figure import NO_FIGURE, mode_figure
from beamtone.render.html import html as _html
from beamtone.render.markdown import markdown as _markdown

if TYPE_CHECKING:  # pragma: no cover
    from beamtone.calc.analysis import Analysis
    from beamtone.calc.record import Verification
    from beamtone.calc.sizing import MarginCheck

__all__ = ["FIGURE_MODES", "Report", "Section", "build", "number", "render"]


@dataclass(frozen=True)
class Report:
    """A calculation record, ready to write.

    Attributes
    ----------
    content : beamtone.calc.report.Report
        The sections and the mode shapes, as plain data.
    figure_svg : str or None
        The mode-shape figure as a standalone SVG document; None where it was not drawn.
    figure_note : str
        Why there is no figure, where there is none.
    chart_svg : str or None
        The interference chart (or frequency map) as SVG, where the worksheet has excitations
        and it was drawn.
    """

    content: content.Report
    figure_svg: str | None
    figure_note: str = ""
    chart_svg: str | None = None

    @property
    def title(self) -> str:
        """The document's title."""
        return self.content.title

    @property
    def sections(self) -> tuple[Section, ...]:
        """The numbered sections, in order."""
        return self.content.sections

    def markdown(self, figure_file: str | None = None, chart_file: str | None = None) -> str:
        """The report as Markdown.

        Parameters
        ----------
        figure_file : str, optional
            Name of the SVG file (beside the Markdown file) the figure was written to; the
            figure is referenced by it.  Without it the figure is left out with a note.
        chart_file : str, optional
            Name of the SVG file the interference chart was written to.

        Returns
        -------
        str
        """
        shown = figure_file if self.figure_svg is not None else None
        chart = chart_file if self.chart_svg is not None else None
        return _markdown(self.content, shown, self.figure_note, chart)

    def html(self) -> str:
        """The report as one self-contained HTML file (inline style and figure).

        Returns
        -------
        str
        """
        return _html(self.content, self.figure_svg, self.figure_note, self.chart_svg)


def render(report: content.Report, figure: bool = True) -> Report:
    """Draw the figure of a report's content (where asked and possible).

    Parameters
    ----------
    report : beamtone.calc.report.Report
    figure : bool
        Whether to draw the mode-shape figure.

    Returns
    -------
    Report
    """
    svg = mode_figure(report.shapes) if figure else None
    note = "" if svg is not None else (NO_FIGURE if figure else "figure not requested")
    chart = None
    if figure and report.margins is not None:
        from beamtone.render.interference import interference_chart

        chart = interference_chart(report.excitations, report.margins)
    return Report(report, svg, note, chart)


def build(
    analysis: Analysis,
    *,
    caution: str = CAUTION,
    source: str | None = None,
    margins: MarginCheck | None = None,
    verification: Verification | None = None,
    figure: bool = True,
    now: _dt.datetime | None = None,
) -> Report:
    """The calculation record of an analysis, ready to write.

    Parameters are those of :func:`beamtone.calc.report.build`, and

    figure : bool
        Whether to draw the mode-shape figure.

    Returns
    -------
    Report
    """
    data = content.build(
        analysis,
        caution=caution,
        source=source,
        margins=margins,
        verification=verification,
        now=now,
    )
    return render(data, figure)
