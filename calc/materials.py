"""Material library: Young's modulus, density and Poisson's ratio of common materials.

Values are typical generic values for early-stage estimates, not design
allowables; each carries its source.  For a specific grade, product form or
temperature, give the material inline in the worksheet.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Material", "LIBRARY", "lookup", "names"]


@dataclass(frozen=True)
class Material:
    """An isotropic linear-elastic material.

    Attributes
    ----------
    name : str
        Library name, or ``"inline"`` for one given in the worksheet.
    youngs_modulus : float
        Young's modulus E [Pa].
    density : float
        Mass density rho [kg/m^3].
    poisson_ratio : float or None
        Poisson's ratio nu [-], where known.
    source : str
        Where the values come from.
    shear_modulus : float or None
        Shear modulus G [Pa] where given (e.g. an orthotropic material such as timber,
        whose G is not E/(2(1 + nu))); else derived from ``poisson_ratio``.
    """

    name: str
    youngs_modulus: float
    density: float
    poisson_ratio: float | None = None
    source: str = "given in the worksheet"
    shear_modulus: float | None = None

    @property
    def shear_modulus_or_none(self) -> float | None:
        """G [Pa]: as given, else E/(2(1 + nu)) of an isotropic material, else None."""
        if self.shear_modulus is not None:
            return self.shear_modulus
        if self.poisson_ratio is not None:
            return self.youngs_modulus / (2.0 * (1.0 + self.poisson_ratio))
        return None


LIBRARY: dict[str, Material] = {
    m.name: m
    for m in (
        Material(
            "steel",
            200e9,
            7850.0,
            0.30,
            # AISC 360 takes E = 29,000 ksi (200 GPa); EN 1993-1-1 3.2.6 gives nu = 0.3;
            # EN 1991-1-1 Annex A gives 77 kN/m^3 (about 7850 kg/m^3). From memory.
            "structural carbon steel: E as AISC 360 (29,000 ksi), nu as EN 1993-1-1, "
            "density as EN 1991-1-1 (from memory)",
        ),
        Material(
            "stainless-steel",
            193e9,
            8000.0,
            0.29,
            # Austenitic 304/316, annealed: typical values (ASM Metals Handbook), from memory.
            "austenitic stainless 304/316: typical value, common practice "
            "(ASM handbook, from memory)",
        ),
        Material(
            "aluminium-6061",
            68.9e9,
            2700.0,
            0.33,
            # 6061-T6: typical values (ASM Metals Handbook / MMPDS), from memory.
            "aluminium alloy 6061-T6: typical value (ASM handbook, from memory)",
        ),
        Material(
            "titanium-6al-4v",
            113.8e9,
            4430.0,
            0.342,
            # Ti-6Al-4V annealed: typical values (ASM Materials Properties Handbook), from memory.
            "titanium alloy Ti-6Al-4V, annealed: typical value (ASM handbook, from memory)",
        ),
        Material(
            "copper",
            115e9,
            8940.0,
            0.31,
            # C11000 electrolytic tough-pitch copper, annealed: typical values (ASM), from memory.
            "copper alloy C11000: typical value (ASM handbook, from memory)",
        ),
        Material(
            "gfrp-pultruded",
            23e9,
            1850.0,
            0.30,
            # EN 13706-3 grade E23 pultruded profiles: E >= 23 GPa lengthwise; density typical
            # of glass-fibre/polyester pultrusions; nu typical. From memory.
            "glass-fibre pultruded profile, lengthwise: E as EN 13706-3 grade E23 (minimum); "
            "density and nu typical value, common practice (from memory)",
        ),
        Material(
            "timber-c24",
            11e9,
            420.0,
            None,
            # EN 338 strength class C24: E0,mean = 11.0 kN/mm^2, rho_mean = 420 kg/m^3,
            # G_mean = 0.69 kN/mm^2. From memory.
            "softwood strength class C24, along the grain: E0,mean, G_mean and rho_mean of "
            "EN 338 (from memory)",
            shear_modulus=0.69e9,
        ),
    )
}

_ALIASES = {
    "structural-steel": "steel",
    "carbon-steel": "steel",
    "stainless": "stainless-steel",
    "aluminum-6061": "aluminium-6061",
    "aluminium": "aluminium-6061",
    "aluminum": "aluminium-6061",
    "titanium": "titanium-6al-4v",
    "gfrp": "gfrp-pultruded",
    "timber": "timber-c24",
}


def lookup(name: str) -> Material | None:
    """Return the library material called ``name`` (case-insensitive, with aliases), or None."""
    key = name.strip().lower().replace(" ", "-").replace("_", "-")
    key = _ALIASES.get(key, key)
    return LIBRARY.get(key)


def names() -> list[str]:
    """All names a worksheet may use, library names first."""
    return [*LIBRARY, *_ALIASES]
