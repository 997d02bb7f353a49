"""Cross-sections: area and second moment of area for bending in the plane of vibration.

``depth`` is the dimension in the plane of vibration; bending is about the axis
across it.  All values are SI (m, m^2, m^4).  Formulas are the standard ones of
elementary strength of materials (common practice).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field

from beamtone.calc.errors import InputError
from beamtone.calc.units import AREA, LENGTH, SECOND_MOMENT, Dimension

__all__ = ["Section", "SHAPES", "build_section"]


@dataclass(frozen=True)
class Section:
    """A cross-section.

    Attributes
    ----------
    shape : str
        Shape name (``"rectangle"``, ``"round-tube"``, ..., or ``"properties"``).
    area : float
        Cross-sectional area A [m^2].
    second_moment : float
        Second moment of area I about the bending axis [m^4].
    depth : float or None
        Overall depth in the plane of vibration [m]; None when only properties were given.
    dimensions : dict of str to float
        The defining dimensions as given, in SI [m, m^2 or m^4].
    """

    shape: str
    area: float
    second_moment: float
    depth: float | None
    dimensions: dict[str, float] = field(default_factory=dict, compare=False)

    @property
    def radius_of_gyration(self) -> float:
        """sqrt(I/A) [m]."""
        return math.sqrt(self.second_moment / self.area)

    @property
    def effective_depth(self) -> float:
        """Depth [m]; where not given, that of the rectangle with the same I/A (sqrt(12 I/A))."""
        return self.depth if self.depth is not None else math.sqrt(12.0) * self.radius_of_gyration


def _too_thick(key: str, value: float, limit: float, what: str) -> InputError:
    return InputError(key, f"{value * 1e3:.6g} mm", f"{what} ({limit * 1e3:.6g} mm)")


def _rectangle(d: dict[str, float], key: str) -> Section:
    b, h = d["width"], d["depth"]
    return Section("rectangle", b * h, b * h**3 / 12.0, h, d)


def _round(d: dict[str, float], key: str) -> Section:
    D = d["diameter"]
    return Section("round", math.pi * D**2 / 4.0, math.pi * D**4 / 64.0, D, d)


def _round_tube(d: dict[str, float], key: str) -> Section:
    D, t = d["outside_diameter"], d["wall"]
    if t > D / 2.0:
        what = "a wall no thicker than half the outside diameter"
        raise _too_thick(f"{key}.wall", t, D / 2.0, what)
    Di = D - 2.0 * t
    return Section(
        "round-tube", math.pi * (D**2 - Di**2) / 4.0, math.pi * (D**4 - Di**4) / 64.0, D, d
    )


def _box(d: dict[str, float], key: str) -> Section:
    b, h, t = d["width"], d["depth"], d["wall"]
    limit = min(b, h) / 2.0
    if t > limit:
        raise _too_thick(f"{key}.wall", t, limit, "a wall no thicker than half the smaller side")
    bi, hi = b - 2.0 * t, h - 2.0 * t
    return Section("box", b * h - bi * hi, (b * h**3 - bi * hi**3) / 12.0, h, d)


def _i_beam(d: dict[str, float], key: str) -> Section:
    b, h, tf, tw = d["width"], d["depth"], d["flange"], d["web"]
    if 2.0 * tf >= h:
        raise _too_thick(f"{key}.flange", tf, h / 2.0, "flanges thinner than half the depth")
    if tw > b:
        raise _too_thick(f"{key}.web", tw, b, "a web no thicker than the flange width")
    hw = h - 2.0 * tf
    area = 2.0 * b * tf + hw * tw
    second = (b * h**3 - (b - tw) * hw**3) / 12.0
    return Section("i-beam", area, second, h, d)


def _properties(d: dict[str, float], key: str) -> Section:
    A, I = d["area"], d["second_moment"]
    depth = d.get("depth")
    if depth is not None and A * depth**2 / 4.0 * (1.0 + 1e-12) < I:
        # No section of depth h has a radius of gyration above h/2 (all area at the extreme fibres).
        raise InputError(
            f"{key}.second_moment",
            f"{I:.6g} m^4",
            f"at most A*depth^2/4 = {A * depth**2 / 4.0:.6g} m^4 for this area and depth",
        )
    return Section("properties", A, I, depth, d)


@dataclass(frozen=True)
class ShapeSpec:
    """Keys a section shape needs and how to build it."""

    required: tuple[tuple[str, Dimension], ...]
    optional: tuple[tuple[str, Dimension], ...]
    build: Callable[[dict[str, float], str], Section]


SHAPES: dict[str, ShapeSpec] = {
    "rectangle": ShapeSpec((("width", LENGTH), ("depth", LENGTH)), (), _rectangle),
    "round": ShapeSpec((("diameter", LENGTH),), (), _round),
    "round-tube": ShapeSpec((("outside_diameter", LENGTH), ("wall", LENGTH)), (), _round_tube),
    "box": ShapeSpec((("width", LENGTH), ("depth", LENGTH), ("wall", LENGTH)), (), _box),
    "i-beam": ShapeSpec(
        (("width", LENGTH), ("depth", LENGTH), ("flange", LENGTH), ("web", LENGTH)), (), _i_beam
    ),
    "properties": ShapeSpec(
        (("area", AREA), ("second_moment", SECOND_MOMENT)), (("depth", LENGTH),), _properties
    ),
}


def build_section(shape: str, dimensions: dict[str, float], key: str = "section") -> Section:
    """Build a section from its shape name and SI dimensions.

    Parameters
    ----------
    shape : str
        One of ``SHAPES``.
    dimensions : dict of str to float
        The shape's keys in SI units [m, or m^2 and m^4 for ``"properties"``].
    key : str
        Key path of the section, named in errors.

    Returns
    -------
    Section

    Raises
    ------
    InputError
        For an unknown shape, a missing dimension or impossible geometry.
    """
    spec = SHAPES.get(shape)
    if spec is None:
        raise InputError(f"{key}.shape", shape, "one of " + ", ".join(SHAPES))
    for name, _dim in spec.required:
        if name not in dimensions:
            raise InputError(f"{key}.{name}", None, f"the {name} of a {shape} section")
    return spec.build(dict(dimensions), key)
