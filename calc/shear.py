"""Shear deformation and rotary inertia: shear coefficients, and the two beam theories.

Shear coefficients kappa (the shear stiffness of a section is kappa G A) after G. R. Cowper,
The shear coefficient in Timoshenko's beam theory, J. Appl. Mech. 33 (1966) 335-340, Table 1
(formulas as recalled from that table, "from memory"), with the material's Poisson's ratio nu:

- rectangle: 10 (1 + nu) / (12 + 11 nu), in both planes;
- round: 6 (1 + nu) / (7 + 6 nu);
- round tube: 6 (1 + nu) (1 + c^2)^2 / ((7 + 6 nu) (1 + c^2)^2 + (20 + 12 nu) c^2), c the ratio of
  the inner to the outer radius;
- box (thin-walled, one wall thickness): 10 (1 + nu) (1 + 3 m)^2 / ((12 + 72 m + 150 m^2 + 90 m^3)
  + nu (11 + 66 m + 135 m^2 + 90 m^3) + 10 n^2 ((3 + nu) m + 3 m^2)), with m = b t1 / (h t) and
  n = b / h, h the wall's mid-line height in the plane of bending (the webs), b the mid-line
  width across it (the flanges);
- i-beam, depth plane (thin-walled): 10 (1 + nu) (1 + 3 m)^2 / ((12 + 72 m + 150 m^2 + 90 m^3)
  + nu (11 + 66 m + 135 m^2 + 90 m^3) + 30 n^2 (m + m^2) + 5 nu n^2 (8 m + 9 m^2)), with
  m = 2 b tf / (h tw), n = b / h, h the distance between the flanges' mid-lines;
- i-beam, width plane: not in Cowper's table; the two flanges taken as rectangles carrying the
  shear (kappa of the rectangle times the flanges' area, the web's share left out: an
  approximation stated in :data:`SHEAR_NOTES`).

A section given by its properties has shear flexibility only where the worksheet gives its
shear area (``shear_area``, and ``shear_area_width`` for the width plane); without it the
Timoshenko solve keeps its rotary inertia but no shear flexibility, and says so.  G comes from
the material (``Material.shear_modulus_or_none``: as given, or E / (2 (1 + nu))); a material
that gives G without nu is read as isotropic where E / (2 G) - 1 lies in [0, 0.5), else (an
orthotropic material such as timber) Cowper's coefficients are taken at nu = 0.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from beamtone.calc.materials import Material
from beamtone.calc.sections import Section

__all__ = [
    "THEORIES",
    "TIMOSHENKO",
    "EULER_BERNOULLI",
    "SHEAR_NOTES",
    "SegmentShear",
    "cowper_coefficient",
    "segment_shear",
    "pinned_timoshenko_hz",
    "pinned_timoshenko_spectrum",
    "engesser_load",
]

TIMOSHENKO = "timoshenko"
EULER_BERNOULLI = "euler-bernoulli"
THEORIES = (TIMOSHENKO, EULER_BERNOULLI)
"""The beam theories a worksheet may choose (``[member] theory``)."""

SHEAR_NOTES: dict[str, str] = {
    "rectangle": "Cowper's coefficient of a rectangle, 10 (1 + nu) / (12 + 11 nu)",
    "round": "Cowper's coefficient of a solid circle, 6 (1 + nu) / (7 + 6 nu)",
    "round-tube": "Cowper's coefficient of a hollow circle",
    "box": "Cowper's thin-walled box coefficient on the wall's mid-line",
    "i-beam": "Cowper's thin-walled I-section coefficient in the depth plane; in the width "
    "plane the two flanges as rectangles carrying the shear (the web's share left out)",
    "properties": "the shear area as given",
}
"""How each shape's shear coefficient is found."""


def _rectangle(nu: float) -> float:
    return 10.0 * (1.0 + nu) / (12.0 + 11.0 * nu)


def _thin_walled(nu: float, m: float, n: float, open_section: bool) -> float:
    top = 10.0 * (1.0 + nu) * (1.0 + 3.0 * m) ** 2
    base = (12.0 + 72.0 * m + 150.0 * m**2 + 90.0 * m**3) + nu * (
        11.0 + 66.0 * m + 135.0 * m**2 + 90.0 * m**3
    )
    if open_section:
        extra = 30.0 * n**2 * (m + m**2) + 5.0 * nu * n**2 * (8.0 * m + 9.0 * m**2)
    else:
        extra = 10.0 * n**2 * ((3.0 + nu) * m + 3.0 * m**2)
    return top / (base + extra)


def cowper_coefficient(section: Section, nu: float, plane: str = "depth") -> float | None:
    """Cowper's shear coefficient kappa of a built-in section in a bending plane [-].

    Parameters
    ----------
    section : Section
        A built-in shape (its ``dimensions`` as given in the worksheet, in the depth plane).
    nu : float
        Poisson's ratio [-].
    plane : str
        ``"depth"`` or ``"width"``.

    Returns
    -------
    float or None
        kappa, such that the shear stiffness is kappa G A; None for a section given by its
        properties.

    Examples
    --------
    >>> from beamtone.calc.sections import build_section
    >>> sq = build_section("rectangle", {"width": 2.0, "depth": 2.0})
    >>> round(cowper_coefficient(sq, 0.3), 4)
    0.8497
    """
    d = section.dimensions
    shape = section.shape
    if shape == "rectangle":
        return _rectangle(nu)
    if shape == "round":
        return 6.0 * (1.0 + nu) / (7.0 + 6.0 * nu)
    if shape == "round-tube":
        D, t = d["outside_diameter"], d["wall"]
        c2 = ((D - 2.0 * t) / D) ** 2
        return (
            6.0
            * (1.0 + nu)
            * (1.0 + c2) ** 2
            / ((7.0 + 6.0 * nu) * (1.0 + c2) ** 2 + (20.0 + 12.0 * nu) * c2)
        )
    if shape == "box":
        t = d["wall"]
        h, b = d["depth"] - t, d["width"] - t
        if plane == "width":
            h, b = b, h
        return _thin_walled(nu, b / h, b / h, open_section=False)
    if shape == "i-beam":
        tf, tw, b = d["flange"], d["web"], d["width"]
        h = d["depth"] - tf
        if plane == "width":
            return _rectangle(nu) * 2.0 * b * tf / section.area
        return _thin_walled(nu, 2.0 * b * tf / (h * tw), b / h, open_section=True)
    return None


@dataclass(frozen=True)
class SegmentShear:
    """What a segment brings to the Timoshenko theory in one bending plane.

    Attributes
    ----------
    shear_stiffness : float
        kappa G A [N]; ``math.inf`` where the shear flexibility is not known.
    rotary_inertia : float
        rho I per length [kg*m] (the section's own; added mass carries none).
    reason : str
        Why the shear flexibility is left out ("" where it is included).
    """

    shear_stiffness: float
    rotary_inertia: float
    reason: str = ""


def segment_shear(material: Material, section: Section, plane: str = "depth") -> SegmentShear:
    """kappa G A and rho I of a uniform segment in a bending plane.

    ``section`` is the section as it bends in that plane (its ``second_moment`` the plane's);
    ``plane`` says which of the shape's planes that is (``Section.plane``).
    """
    rotary = material.density * section.second_moment
    G = material.shear_modulus_or_none
    if G is None:
        return SegmentShear(
            math.inf, rotary, "the material gives no shear modulus (poisson_ratio or shear_modulus)"
        )
    if section.shape == "properties":
        area = section.shear_area if plane == "depth" else section.shear_area_width
        if area is None:
            key = "shear_area" if plane == "depth" else "shear_area_width"
            return SegmentShear(math.inf, rotary, f"the section gives no {key}")
        return SegmentShear(G * area, rotary)
    nu = material.poisson_ratio
    if nu is None:  # G given alone: Poisson's ratio of that E and G where it is isotropic,
        # else (timber: E/G near 16) Cowper's coefficient at nu = 0 (5/6 for a rectangle)
        nu = material.youngs_modulus / (2.0 * G) - 1.0
        if not 0.0 <= nu < 0.5:
            nu = 0.0
    kappa = cowper_coefficient(section, nu, plane)
    assert kappa is not None
    return SegmentShear(kappa * G * section.area, rotary)


def pinned_timoshenko_hz(
    L: float, EI: float, rho_A: float, rho_I: float, kGA: float, n: int, P: float = 0.0
) -> float:
    """Lower-branch natural frequency of mode n of a pinned-pinned uniform Timoshenko beam [Hz].

    With k = n pi / L the sine modes satisfy both ends exactly, and Timoshenko's equations
    (S. P. Timoshenko, Phil. Mag. 41 (1921) 744; the frequency equation as written in
    S. M. Han, H. Benaroya and T. Wei, J. Sound Vib. 225 (1999) 935, for the hinged-hinged
    beam) give the quadratic in omega^2

        rho_A rho_I w^4 - (A1 rho_I + B1 rho_A) w^2 + A1 B1 - (kGA k)^2 = 0,

    A1 = (kGA + P) k^2, B1 = kGA + EI k^2 (P the axial force, tension positive, acting on
    w'^2 as in the finite elements).

    Parameters
    ----------
    L : float [m]
    EI : float [N*m^2]
    rho_A : float [kg/m]
    rho_I : float [kg*m]
    kGA : float [N]
    n : int
        Mode number, 1 for the first.
    P : float [N]

    Returns
    -------
    float
        f [Hz] of the lower (bending) branch.

    Examples
    --------
    >>> round(pinned_timoshenko_hz(10.0, 200e9 * 4 / 3, 8000 * 4, 8000 * 4 / 3,
    ...                            0.8497 * 200e9 / 2.6 * 4, 1), 3)   # NAFEMS deep beam
    42.645
    """
    k = n * math.pi / L
    A1 = (kGA + P) * k * k
    B1 = kGA + EI * k * k
    a = rho_A * rho_I
    b = A1 * rho_I + B1 * rho_A
    c = EI * kGA * k**4 + P * k * k * (kGA + EI * k * k)  # A1 B1 - (kGA k)^2, expanded
    disc = math.sqrt(max(b * b - 4.0 * a * c, 0.0))
    omega2 = 2.0 * c / (b + disc)  # the smaller root, without cancellation
    return math.sqrt(omega2) / (2.0 * math.pi)


def pinned_timoshenko_spectrum(
    L: float, EI: float, rho_A: float, rho_I: float, kGA: float, count: int, P: float = 0.0
) -> tuple[float, ...]:
    """The lowest ``count`` natural frequencies of a pinned-pinned uniform Timoshenko beam [Hz].

    Both roots of the quadratic of :func:`pinned_timoshenko_hz` for each n, sorted: on a deep
    member the upper (shear) branch of a low n can fall among the bending modes, and the
    finite elements find it there too.
    """
    out = []
    for n in range(1, count + 1):
        k = n * math.pi / L
        A1 = (kGA + P) * k * k
        B1 = kGA + EI * k * k
        a = rho_A * rho_I
        b = A1 * rho_I + B1 * rho_A
        c = EI * kGA * k**4 + P * k * k * (kGA + EI * k * k)
        disc = math.sqrt(max(b * b - 4.0 * a * c, 0.0))
        out.append(math.sqrt(2.0 * c / (b + disc)) / (2.0 * math.pi))
        if a > 0.0:
            out.append(math.sqrt((b + disc) / (2.0 * a)) / (2.0 * math.pi))
    return tuple(sorted(out)[:count])


def engesser_load(euler_load: float, kGA: float) -> float:
    """Buckling load with shear flexibility, Engesser's P_E / (1 + P_E / kappa G A) [N].

    Exact for a pinned-pinned uniform member under the work of the axial force on w'^2 (the
    form the finite elements use; common practice, e.g. S. P. Timoshenko and J. M. Gere,
    Theory of Elastic Stability, 2nd ed., 1961, section 2.17, from memory).
    """
    if math.isinf(kGA):
        return euler_load
    return euler_load / (1.0 + euler_load / kGA)
