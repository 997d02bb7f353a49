"""Cross-sections: area, both principal second moments, torsion and warping constants.

``depth`` is the dimension in the first bending plane, the *depth plane* (the plane
of vibration of a format 1 worksheet); bending in it is about the axis across the
depth.  The *width plane* is the other principal plane, across the width.  Every
built-in shape is doubly symmetric, so its shear centre is its centroid and bending
in the two planes, torsion and axial motion are uncoupled.  All values are SI
(m, m^2, m^4, m^6).  Area and second moments are the standard ones of elementary
strength of materials (common practice).

Torsion (Saint-Venant constant J, warping constant Cw):

- rectangle: the exact theory-of-elasticity series (S. P. Timoshenko and J. N.
  Goodier, *Theory of Elasticity*, 3rd ed., 1970, section 109), summed to double
  precision (relative error below 1e-13; ``rectangle_torsion_constant``).
- round and round tube: J = the polar moment (exact, circular sections do not warp).
- box: thin-walled closed section, Bredt's formula on the mid-line of the wall,
  J = 2 t (b - t)^2 (h - t)^2 / (b + h - 2 t) (e.g. W. C. Young and R. G. Budynas,
  *Roark's Formulas for Stress and Strain*, 7th ed., Table 10.7, from memory); it
  leaves out the wall's own open-section stiffness, so it is low for thick walls
  (``TORSION_NOTES``).
- i-beam: open thin-walled section, J = (2 b tf^3 + hw tw^3)/3 with hw = h - 2 tf
  (the sum of b t^3/3 of its three plates, no correction for the plates' free edges
  or the web-flange junctions; no root fillets); Cw = tf b^3 (h - tf)^2 / 24 (the
  flanges' warping about the centroid, web neglected; common practice, e.g. AISC
  Design Guide 9, from memory).
- Cw of solid and closed sections is taken as zero: their warping stiffness is
  negligible beside G J (exactly zero for round sections).

The polar moment Ip = I_depth + I_width about the centroid gives the mass moment of
inertia per length rho*Ip for torsion.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field

from beamtone.calc.errors import InputError
from beamtone.calc.schema import SECTION_SHAPES, section_dimension
from beamtone.calc.units import Dimension

__all__ = [
    "Section",
    "SHAPES",
    "TORSION_NOTES",
    "build_section",
    "rectangle_torsion_constant",
]

TORSION_NOTES: dict[str, str] = {
    "rectangle": "J from the exact series for a rectangular bar; warping neglected",
    "round": "J = polar moment (exact); no warping",
    "round-tube": "J = polar moment (exact); no warping",
    "box": "J by Bredt's thin-walled formula on the wall's mid-line (low for thick walls); "
    "warping neglected",
    "i-beam": "J = sum of b t^3/3 of the flanges and web (no fillets, no junction "
    "correction); Cw = tf b^3 (h - tf)^2 / 24 (flanges only)",
    "properties": "J, Cw and Ip as given",
}
"""How each shape's torsion constant and warping constant are found."""


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
    second_moment_width : float or None
        Second moment of area for bending in the width plane (about the axis along the
        depth) [m^4]; None when a direct-properties section does not give it.
    torsion_constant : float or None
        Saint-Venant torsion constant J [m^4] (not the polar moment); None when not known.
    warping_constant : float or None
        Warping constant Cw about the shear centre [m^6]; 0 where negligible.
    polar_moment : float or None
        Polar second moment about the centroid, Ip = I_depth + I_width [m^4]; the mass
        moment of inertia per length is rho*Ip.  None when not known.
    width : float or None
        Overall dimension in the width plane [m]; None when not given.
    shear_area : float or None
        Shear area kappa A for bending in the depth plane [m^2], where a section given by its
        properties states it (built-in shapes: from Cowper's coefficient, :mod:`calc.shear`).
    shear_area_width : float or None
        The same for the width plane [m^2].
    plane : str
        The plane this section bends in: ``"depth"``, or ``"width"`` for the section turned a
        quarter turn (:func:`calc.directions.width_member`); its ``second_moment`` is that
        plane's.
    """

    shape: str
    area: float
    second_moment: float
    depth: float | None
    dimensions: dict[str, float] = field(default_factory=dict, compare=False)
    second_moment_width: float | None = None
    torsion_constant: float | None = None
    warping_constant: float | None = None
    polar_moment: float | None = None
    width: float | None = None
    shear_area: float | None = None
    shear_area_width: float | None = None
    plane: str = "depth"

    @property
    def radius_of_gyration(self) -> float:
        """sqrt(I/A) [m]."""
        return math.sqrt(self.second_moment / self.area)

    @property
    def effective_depth(self) -> float:
        """Depth [m]; where not given, that of the rectangle with the same I/A (sqrt(12 I/A))."""
        return self.depth if self.depth is not None else math.sqrt(12.0) * self.radius_of_gyration


def rectangle_torsion_constant(a: float, b: float) -> float:
    """Saint-Venant torsion constant J of a solid rectangle [m^4].

    The exact series of the theory of elasticity (Timoshenko and Goodier, *Theory of
    Elasticity*, section 109), with ``a >= b`` the longer and shorter sides::

        J = a b^3 / 3 * (1 - 192 b / (pi^5 a) * sum_{n odd} tanh(n pi a / (2 b)) / n^5)

    The sum is split as sum (tanh - 1)/n^5 (terms fall as exp(-n pi a/b)) plus the
    closed form (1 - 2^-5) zeta(5), so it is exact to double precision (relative error
    below 1e-13).

    Parameters
    ----------
    a, b : float
        The two sides [m], in either order.

    Returns
    -------
    float
        J [m^4].

    Examples
    --------
    >>> round(rectangle_torsion_constant(1.0, 1.0), 6)   # a square: 0.1406 a^4
    0.140577
    """
    a, b = max(a, b), min(a, b)
    r = a / b
    total = (1.0 - 2.0**-5) * _ZETA5
    n = 1
    while True:
        term = (math.tanh(n * math.pi * r / 2.0) - 1.0) / n**5
        total += term
        if abs(term) < 1e-18:
            break
        n += 2
    return a * b**3 / 3.0 * (1.0 - 192.0 / (math.pi**5 * r) * total)


_ZETA5 = 1.0369277551433699263  # Riemann zeta(5) (mpmath.zeta(5))


def _too_thick(key: str, value: float, limit: float, what: str) -> InputError:
    return InputError(key, f"{value * 1e3:.6g} mm", f"{what} ({limit * 1e3:.6g} mm)")


def _rectangle(d: dict[str, float], key: str) -> Section:
    b, h = d["width"], d["depth"]
    return Section(
        "rectangle",
        b * h,
        b * h**3 / 12.0,
        h,
        d,
        second_moment_width=h * b**3 / 12.0,
        torsion_constant=rectangle_torsion_constant(b, h),
        warping_constant=0.0,
        polar_moment=b * h * (b**2 + h**2) / 12.0,
        width=b,
    )


def _round(d: dict[str, float], key: str) -> Section:
    D = d["diameter"]
    second = math.pi * D**4 / 64.0
    return Section("round", math.pi * D**2 / 4.0, second, D, d, **_circular(second, D))


def _circular(second: float, D: float) -> dict[str, float]:
    """Width-plane and torsion properties of a round section or tube of second moment I."""
    return {
        "second_moment_width": second,
        "torsion_constant": 2.0 * second,
        "warping_constant": 0.0,
        "polar_moment": 2.0 * second,
        "width": D,
    }


def _round_tube(d: dict[str, float], key: str) -> Section:
    D, t = d["outside_diameter"], d["wall"]
    if t > D / 2.0:
        what = "a wall no thicker than half the outside diameter"
        raise _too_thick(f"{key}.wall", t, D / 2.0, what)
    Di = D - 2.0 * t
    second = math.pi * (D**4 - Di**4) / 64.0
    return Section(
        "round-tube", math.pi * (D**2 - Di**2) / 4.0, second, D, d, **_circular(second, D)
    )


def _box(d: dict[str, float], key: str) -> Section:
    b, h, t = d["width"], d["depth"], d["wall"]
    limit = min(b, h) / 2.0
    if t > limit:
        raise _too_thick(f"{key}.wall", t, limit, "a wall no thicker than half the smaller side")
    bi, hi = b - 2.0 * t, h - 2.0 * t
    second = (b * h**3 - bi * hi**3) / 12.0
    width_second = (h * b**3 - hi * bi**3) / 12.0
    return Section(
        "box",
        b * h - bi * hi,
        second,
        h,
        d,
        second_moment_width=width_second,
        torsion_constant=2.0 * t * (b - t) ** 2 * (h - t) ** 2 / (b + h - 2.0 * t),
        warping_constant=0.0,
        polar_moment=second + width_second,
        width=b,
    )


def _i_beam(d: dict[str, float], key: str) -> Section:
    b, h, tf, tw = d["width"], d["depth"], d["flange"], d["web"]
    if 2.0 * tf >= h:
        raise _too_thick(f"{key}.flange", tf, h / 2.0, "flanges thinner than half the depth")
    if tw > b:
        raise _too_thick(f"{key}.web", tw, b, "a web no thicker than the flange width")
    hw = h - 2.0 * tf
    area = 2.0 * b * tf + hw * tw
    second = (b * h**3 - (b - tw) * hw**3) / 12.0
    width_second = (2.0 * tf * b**3 + hw * tw**3) / 12.0
    return Section(
        "i-beam",
        area,
        second,
        h,
        d,
        second_moment_width=width_second,
        torsion_constant=(2.0 * b * tf**3 + hw * tw**3) / 3.0,
        warping_constant=tf * b**3 * (h - tf) ** 2 / 24.0,
        polar_moment=second + width_second,
        width=b,
    )


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
    width, I2 = d.get("width"), d.get("second_moment_width")
    if width is not None and I2 is not None and A * width**2 / 4.0 * (1.0 + 1e-12) < I2:
        raise InputError(
            f"{key}.second_moment_width",
            f"{I2:.6g} m^4",
            f"at most A*width^2/4 = {A * width**2 / 4.0:.6g} m^4 for this area and width",
        )
    Ip = d.get("polar_moment")
    if Ip is None and I2 is not None:
        Ip = I + I2  # perpendicular-axis theorem, about the centroid
    J = d.get("torsion_constant")
    if J is not None and Ip is not None and Ip * (1.0 + 1e-12) < J:
        # Saint-Venant: the torsion constant never exceeds the polar moment (equal for circles).
        raise InputError(
            f"{key}.torsion_constant",
            f"{J:.6g} m^4",
            f"at most the polar moment {Ip:.6g} m^4 (equal only for round sections)",
        )
    for name in ("shear_area", "shear_area_width"):
        if d.get(name) is not None and d[name] > A * (1.0 + 1e-12):
            # kappa A: the part of the area that carries the shear; never more than the area
            raise InputError(
                f"{key}.{name}", f"{d[name]:.6g} m^2", f"at most the area {A:.6g} m^2 (kappa A)"
            )
    return Section(
        "properties",
        A,
        I,
        depth,
        d,
        second_moment_width=I2,
        torsion_constant=J,
        warping_constant=d.get("warping_constant", 0.0 if J is not None else None),
        polar_moment=Ip,
        width=width,
        shear_area=d.get("shear_area"),
        shear_area_width=d.get("shear_area_width"),
    )


@dataclass(frozen=True)
class ShapeSpec:
    """Keys a section shape needs and how to build it."""

    required: tuple[tuple[str, Dimension], ...]
    optional: tuple[tuple[str, Dimension], ...]
    build: Callable[[dict[str, float], str], Section]


_BUILDERS: dict[str, Callable[[dict[str, float], str], Section]] = {
    "rectangle": _rectangle,
    "round": _round,
    "round-tube": _round_tube,
    "box": _box,
    "i-beam": _i_beam,
    "properties": _properties,
}


def _spec(shape: str) -> ShapeSpec:
    required, optional = SECTION_SHAPES[shape]
    return ShapeSpec(
        tuple((n, section_dimension(n)) for n in required),
        tuple((n, section_dimension(n)) for n in optional),
        _BUILDERS[shape],
    )


# The dimension keys of each shape are the schema's (calc.schema.SECTION_SHAPES); a shape
# there without a builder here fails at import.
SHAPES: dict[str, ShapeSpec] = {shape: _spec(shape) for shape in SECTION_SHAPES}


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
