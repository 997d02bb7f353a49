"""beamtone's computation library: no user interface, SI floats and numpy arrays inside.

The front door (everything the command line and the app call; each is documented where it
is defined)::

    sheet = load("worksheets/machine-span.toml")   # or loads(text); InputError on bad input
    analysis = analyse(sheet)        # every method: FE modes, handbook, Rayleigh, Dunkerley ...
    size_for_target(...), size_for_excitation(...), sweep(...), sweep2(...), margins(...)
    worksheet_groups(sheet), worksheet_master_curve(sheet, ...), variable_groups(["f=Hz", ...])
    save_record(path, analysis), verify(sheet)     # the stored [record] and its check
    report_data(sheet)               # the calculation record's content, as plain data

``CAUTION`` is the one caution every output shows.  ``beamtone.render`` turns the results
into text, Markdown, HTML and figures.

Modules, one concern each:

- ``units``: the one pint registry; the one guarded parser of unit text.
- ``errors``: the one input-error type (``InputError``, naming the key).
- ``schema``: the one description of worksheet format 1 (keys, dimensions, limits).
- ``worksheet``: TOML worksheets in, a validated member out; ``files``: bounded reads and
  writes that keep the user's file.
- ``materials``, ``sections``: material library and cross-section properties.
- ``model``: the immutable member description (segments, supports, attachments);
  ``compliance``: supports of finite stiffness.
- ``fe`` (a package): mesh, element matrices, assembly, eigen solvers, the adaptive solve
  with its error estimate, soundness checks, buckling.
- ``handbook``: exact frequency parameters of tabulated uniform-beam cases.
- ``expressions``, ``symbolic``: assumed shapes typed by the user, and what sympy finds
  about them; ``diskcache``: the small caches that keep such findings.
- ``rayleigh``: Rayleigh's quotient, Rayleigh-Ritz, Dunkerley's bound, the bracket, the
  equivalent single-DOF model.
- ``analysis``: everything for one worksheet in one call (``analyse``).
- ``groups``, ``similitude``: Buckingham-Pi groups, a member's groups, similitude, master
  curves.
- ``sizing``, ``design_values``, ``tolerances``: sizing for a target or an excitation,
  sweeps, design values, toleranced inputs.
- ``excitation``, ``response``: excitations with their margins and verdict, forced response.
- ``record``: the stored ``[record]`` of a solve and its verification.
- ``report``: the calculation record's content (sections of plain blocks, mode shapes).
- ``caution``: the caution text.

Importing ``beamtone.calc`` itself is cheap; the submodules load numpy, scipy and pint when
they are first used.
"""

from __future__ import annotations

import importlib
from typing import Any

__all__ = [
    "CAUTION",
    "Analysis",
    "FEResult",
    "InputError",
    "Member",
    "Worksheet",
    "analyse",
    "from_data",
    "load",
    "loads",
    "margins",
    "pi_groups",
    "read_record",
    "report_data",
    "save_record",
    "size_for_excitation",
    "size_for_target",
    "solve",
    "sweep",
    "sweep2",
    "variable_groups",
    "verify",
    "worksheet_groups",
    "worksheet_master_curve",
]

_LAZY = {
    "CAUTION": "beamtone.calc.caution",
    "InputError": "beamtone.calc.errors",
    "Worksheet": "beamtone.calc.worksheet",
    "load": "beamtone.calc.worksheet",
    "loads": "beamtone.calc.worksheet",
    "from_data": "beamtone.calc.worksheet",
    "Member": "beamtone.calc.model",
    "FEResult": "beamtone.calc.fe",
    "solve": "beamtone.calc.fe",
    "Analysis": "beamtone.calc.analysis",
    "analyse": "beamtone.calc.analysis",
    "size_for_target": "beamtone.calc.sizing",
    "size_for_excitation": "beamtone.calc.sizing",
    "sweep": "beamtone.calc.sizing",
    "sweep2": "beamtone.calc.sizing",
    "margins": "beamtone.calc.sizing",
    "pi_groups": "beamtone.calc.groups",
    "variable_groups": "beamtone.calc.groups",
    "worksheet_groups": "beamtone.calc.similitude",
    "worksheet_master_curve": "beamtone.calc.similitude",
    "read_record": "beamtone.calc.record",
    "save_record": "beamtone.calc.record",
    "verify": "beamtone.calc.record",
    "report_data": "beamtone.calc.report",
}


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(f"module 'beamtone.calc' has no attribute {name!r}")
    return getattr(importlib.import_module(module), name)


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))
