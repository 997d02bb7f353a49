"""beamtone: natural frequencies of beam-like members, unit-checked, at the terminal.

The installed distribution has exactly one top-level package, ``beamtone``:

- ``beamtone.calc``: the computation library (no user interface).
- ``beamtone.cli``: the command line (``beamtone ...``).
- ``beamtone.tui``: the terminal app.
- ``beamtone.render``: text, Markdown and HTML output of the library's results.

In the repository these live in the top-level folders ``calc/``, ``cli/``, ``tui/`` and
``render/``; the packaging maps them under this package.
"""

__all__: list[str] = []
