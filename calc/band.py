"""The band of every mode over the tolerances: first order, checked by solving the corners.

The first-order band comes from the sensitivities (:mod:`calc.sensitivity`): each input
moves each frequency by df/dp times its excursion, and the band adds the lowering and
the raising excursions.  It is checked by full finite-element solves at the corners of
the tolerance box (every corner for up to ``MAX_CORNERS`` of them; with more inputs, the
two corners first order says are extreme for each mode plus a Latin-hypercube sample of
the box).  A band is stated to its own tolerance: 1 % of its first-order width plus
twice the finite-element error estimate of the solves.  Where the checked band differs
from the first-order one by more than that, the checked one is reported and the band's
``method`` says so.

What a band is and is not: corner solves give the exact extremes where a frequency is
monotonic in each input over its range (frequencies are monotonic in stiffnesses,
masses, E and rho; a position or a dimension that moves a node of the mode need not
be); otherwise the band is an estimate, not a bound.  The tolerances themselves are the
user's.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from beamtone.calc import fe
from beamtone.calc.fe import FEResult
from beamtone.calc.sensitivity import Sensitivities, sensitivities
from beamtone.calc.tolerances import Design, Tolerance, vary_within

__all__ = [
    "MAX_CORNERS",
    "FIRST_ORDER",
    "CORNERS",
    "SAMPLED",
    "InputEffect",
    "ModeBand",
    "BandResult",
    "band",
    "corner_values",
    "latin_hypercube",
]

MAX_CORNERS = 16
"""Up to this many corners (four inputs) every corner of the tolerance box is solved."""
FIRST_ORDER = "first-order"
CORNERS = "corners"
SAMPLED = "corners and sampling"
_BAND_TOLERANCE = 0.01  # of the first-order width
_SEED = 20261202


@dataclass(frozen=True)
class InputEffect:
    """How one input moves one mode.

    Attributes
    ----------
    key : str
        The input's key path.
    elasticity : float or None
        Percent change of the frequency per percent of the input [-]; None where the
        input's nominal value is zero.
    contribution_hz : float
        First-order change of the frequency as the input goes from its low to its high
        value [Hz] (negative: raising the input lowers the frequency).
    """

    key: str
    elasticity: float | None
    contribution_hz: float


@dataclass(frozen=True)
class ModeBand:
    """One mode's band over the tolerances.

    Attributes
    ----------
    number : int
        Mode number (1 for the first flexible mode).
    frequency_hz : float
        Nominal frequency [Hz].
    low_hz, high_hz : float
        The reported band [Hz].
    method : str
        ``FIRST_ORDER`` (confirmed by the check), ``CORNERS`` or ``SAMPLED`` (the checked
        band, reported because first order was off by more than the band's tolerance).
    first_order : tuple of float
        The first-order band (low, high) [Hz].
    checked : tuple of float or None
        Lowest and highest frequency of the check solves (with the nominal) [Hz].
    tolerance_hz : float
        The band's own tolerance [Hz].
    effects : tuple of InputEffect
        Every input, largest absolute contribution first.
    """

    number: int
    frequency_hz: float
    low_hz: float
    high_hz: float
    method: str
    first_order: tuple[float, float]
    checked: tuple[float, float] | None
    tolerance_hz: float
    effects: tuple[InputEffect, ...]

    def as_dict(self) -> dict[str, object]:
        """The JSON shape: ``band: {low_hz, high_hz, method}``, ``sensitivities: [...]``."""
        return {
            "band": {"low_hz": self.low_hz, "high_hz": self.high_hz, "method": self.method},
            "sensitivities": [
                {"key": e.key, "elasticity": e.elasticity, "contribution_hz": e.contribution_hz}
                for e in self.effects
            ],
        }


@dataclass(frozen=True)
class BandResult:
    """Bands of every reported mode.

    Attributes
    ----------
    modes : tuple of ModeBand
    tolerances : tuple of Tolerance
    sensitivities : Sensitivities
    solves : int
        Full finite-element solves made by the check (0 when not checked).
    notes : tuple of str
        What the user should know about these bands.
    """

    modes: tuple[ModeBand, ...]
    tolerances: tuple[Tolerance, ...]
    sensitivities: Sensitivities
    solves: int
    notes: tuple[str, ...]


def corner_values(tolerances: Sequence[Tolerance]) -> np.ndarray:
    """Every corner of the tolerance box, shape (2^n, n), in each tolerance's measure."""
    lows = [t.low for t in tolerances]
    highs = [t.high for t in tolerances]
    return np.array(list(itertools.product(*zip(lows, highs, strict=True))), dtype=float).reshape(
        -1, len(tolerances)
    )


def latin_hypercube(tolerances: Sequence[Tolerance], samples: int, seed: int = _SEED) -> np.ndarray:
    """A Latin-hypercube sample of the tolerance box, uniform in each range, shape (samples, n).

    Each input's range is cut into ``samples`` equal strata, one point in each, and the
    strata of the inputs are paired by independent random permutations (M. D. McKay,
    R. J. Beckman and W. J. Conover, Technometrics 21(2), 1979).
    """
    rng = np.random.default_rng(seed)
    n = len(tolerances)
    u = rng.permuted(np.tile(np.arange(samples), (n, 1)), axis=1).T + rng.random((samples, n))
    u /= samples
    low = np.array([t.low for t in tolerances])
    high = np.array([t.high for t in tolerances])
    return low + u * (high - low)


def _solve_points(
    design: Design, tolerances: Sequence[Tolerance], points: np.ndarray, modes: int
) -> tuple[np.ndarray, float]:
    """Frequencies [Hz] at each point (rows), and the largest relative error estimate."""
    out = np.empty((len(points), modes))
    worst = 0.0
    for i, point in enumerate(points):
        member = vary_within(design, tolerances, point)
        res = fe.solve(member, modes)
        out[i] = res.frequencies_hz
        worst = max(worst, max(m.estimated_error for m in res.modes))
    return out, worst


def band(
    design: Design,
    result: FEResult,
    tolerances: Sequence[Tolerance],
    *,
    check: bool = True,
    samples: int | None = None,
) -> BandResult:
    """Band, elasticities and contributions of every mode of ``result`` over the tolerances.

    Parameters
    ----------
    design : Design
        The design ``result`` solved.
    result : FEResult
        Its nominal solution.
    tolerances : sequence of Tolerance
    check : bool
        Check the first-order band by full solves (corners, and sampling with more than
        four inputs).  Without it every band is first order and says so.
    samples : int, optional
        Latin-hypercube points of the check with more than four inputs (default 4 per
        input, at least 16).

    Returns
    -------
    BandResult
    """
    tolerances = tuple(tolerances)
    sens = sensitivities(design, result, tolerances)
    dfdp = sens.frequency_derivatives
    elast = sens.elasticities
    low = np.array([t.low for t in tolerances])
    high = np.array([t.high for t in tolerances])
    nominal = np.array([t.nominal for t in tolerances])
    down = np.minimum(dfdp * (low - nominal), dfdp * (high - nominal))
    up = np.maximum(dfdp * (low - nominal), dfdp * (high - nominal))
    f0 = sens.frequencies_hz
    fo_low = f0 + down.sum(axis=1)
    fo_high = f0 + up.sum(axis=1)
    contribution = dfdp * (high - low)
    errors = np.array([m.estimated_error for m in result.modes])
    n_modes = len(result.modes)
    notes: list[str] = []
    checked = None
    solves = 0
    method = CORNERS
    worst_error = float(np.max(errors)) if len(errors) else 0.0
    if check and tolerances:
        if 2 ** len(tolerances) <= MAX_CORNERS:
            points = corner_values(tolerances)
        else:
            method = SAMPLED
            sign = np.sign(dfdp)
            extreme = np.concatenate(
                [np.where(sign < 0, high, low), np.where(sign < 0, low, high)], axis=0
            )
            count = samples or max(16, 4 * len(tolerances))
            points = np.unique(
                np.concatenate([extreme, latin_hypercube(tolerances, count)], axis=0), axis=0
            )
        freqs, worst = _solve_points(design, tolerances, points, n_modes)
        worst_error = max(worst_error, worst)
        solves = len(points)
        checked = (np.minimum(freqs.min(axis=0), f0), np.maximum(freqs.max(axis=0), f0))
        notes.append(
            f"bands checked by {solves} full solves ({method}); exact where a mode is monotonic "
            "in each input over its range, an estimate otherwise"
        )
    else:
        notes.append("bands are first order only (not checked by full solves)")
    notes.append("the tolerances are the user's; the band covers only the inputs given")
    out = []
    for i in range(n_modes):
        fo = (float(fo_low[i]), float(fo_high[i]))
        tol_hz = _BAND_TOLERANCE * (fo[1] - fo[0]) + 2.0 * worst_error * float(f0[i])
        lo_hi = fo
        used = FIRST_ORDER
        chk = None
        if checked is not None:
            chk = (float(checked[0][i]), float(checked[1][i]))
            if abs(chk[0] - fo[0]) > tol_hz or abs(chk[1] - fo[1]) > tol_hz:
                lo_hi = chk
                used = method
        effects = sorted(
            (
                InputEffect(
                    key=t.key,
                    elasticity=None if math.isnan(elast[i, j]) else float(elast[i, j]),
                    contribution_hz=float(contribution[i, j]),
                )
                for j, t in enumerate(tolerances)
            ),
            key=lambda e: -abs(e.contribution_hz),
        )
        out.append(
            ModeBand(
                number=result.modes[i].number,
                frequency_hz=float(f0[i]),
                low_hz=lo_hi[0],
                high_hz=lo_hi[1],
                method=used,
                first_order=fo,
                checked=chk,
                tolerance_hz=tol_hz,
                effects=tuple(effects),
            )
        )
    replaced = [b.number for b in out if b.method != FIRST_ORDER]
    if replaced:
        notes.insert(
            0,
            "first order was off by more than the band's tolerance for mode"
            + ("s " if len(replaced) > 1 else " ")
            + ", ".join(map(str, replaced))
            + ": the checked band is reported",
        )
    return BandResult(tuple(out), tolerances, sens, solves, tuple(notes))
