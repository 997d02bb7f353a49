"""beamtone's renderers: the library's results as terminal text, Markdown, HTML and figures.

``beamtone.calc`` computes and returns plain data; this package writes it out:

- ``render.report``: the calculation record (:func:`~beamtone.render.report.build`), as
  Markdown or one self-contained HTML file, with its figure.
- ``render.markdown``, ``render.html``: the report's blocks as Markdown and as HTML.
- ``render.figure``: the mode-shape figure as SVG (matplotlib, imported only when drawn).
- ``render.text``: the command line's aligned text and JSON objects.

Importing ``beamtone.render`` is cheap: nothing here loads numpy or matplotlib until it is
used.
"""

from __future__ import annotations

__all__: list[str] = []
