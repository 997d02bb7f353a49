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
from dataclasses import dataclass, replace

import numpy as np

from beamtone.calc import fe
from beamtone.calc.directions import Direction, Directions
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
    "same_as_bands",
    "tightening",
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
EULER_BERNOULLI = "euler-bernoulli"
FIRST_ORDER_THEORIES = (EULER_BERNOULLI, "timoshenko")


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
        Change of the frequency as the input goes from its low to its high value [Hz]
        (negative: raising the input lowers the frequency): first order where the band is
        first order, else from the least-squares plane through the check solves.
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
    direction : str
        ``"depth"``, ``"width"``, ``"torsion"`` or ``"axial"``.
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
    direction: str = "depth"

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
        Depth-plane modes first, then every other computed direction's.
    tolerances : tuple of Tolerance
    sensitivities : Sensitivities or None
        First-order sensitivities of the depth plane (None for a bending theory without
        them: its bands come from the check solves).
    solves : int
        Full finite-element solves made by the check (0 when not checked).
    notes : tuple of str
        What the user should know about these bands.
    tighten : tuple of str
        Where a band reaches an excitation band that the nominal mode clears: the tolerance
        to tighten first (:func:`tightening`).
    """

    modes: tuple[ModeBand, ...]
    tolerances: tuple[Tolerance, ...]
    sensitivities: Sensitivities | None
    solves: int
    notes: tuple[str, ...]
    tighten: tuple[str, ...] = ()


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
    design: Design,
    tolerances: Sequence[Tolerance],
    points: np.ndarray,
    modes: int,
    directions: tuple[str, ...],
) -> tuple[dict[str, np.ndarray], float]:
    """Frequencies [Hz] of each direction at each point (rows), and the largest relative
    error estimate of those solves."""
    out = {d: np.full((len(points), modes), np.nan) for d in directions}
    worst = 0.0
    for i, point in enumerate(points):
        member = vary_within(design, tolerances, point)
        if directions == ("depth",):
            res = fe.solve(member, modes)
            found = {"depth": [(m.frequency_hz, m.estimated_error) for m in res.modes]}
        else:
            from beamtone.calc.directions import solve_directions

            solved = solve_directions(member, modes)
            found = {
                d.name: [(m.frequency_hz, m.estimated_error) for m in d.modes]
                for d in solved.directions
            }
        for d in directions:
            values = found.get(d, [])[:modes]
            out[d][i, : len(values)] = [f for f, _ in values]
            worst = max([worst, *(e for _, e in values)])
    return out, worst


def _effects(
    tolerances: Sequence[Tolerance], f0: float, contribution: np.ndarray, elasticity: np.ndarray
) -> tuple[InputEffect, ...]:
    effects = (
        InputEffect(
            key=t.key,
            elasticity=None if not math.isfinite(elasticity[j]) else float(elasticity[j]),
            # below 1e-9 of the frequency: the round-off of a plane through the solves
            contribution_hz=float(contribution[j]) if abs(contribution[j]) > 1e-9 * f0 else 0.0,
        )
        for j, t in enumerate(tolerances)
    )
    return tuple(sorted(effects, key=lambda e: -abs(e.contribution_hz)))


def _main_effects(
    tolerances: Sequence[Tolerance], points: np.ndarray, freqs: np.ndarray
) -> np.ndarray:
    """Change of each mode across each input's range from the check solves, shape
    (modes, inputs): the least-squares plane through the solves (for the full set of
    corners, the factorial main effects)."""
    low = np.array([t.low for t in tolerances])
    width = np.array([t.high - t.low for t in tolerances])
    u = (points - low) / np.where(width > 0, width, 1.0)
    A = np.column_stack([np.ones(len(points)), u])
    out = np.full((freqs.shape[1], len(tolerances)), np.nan)
    for k in range(freqs.shape[1]):
        ok = np.isfinite(freqs[:, k])
        if ok.sum() > len(tolerances):
            coef = np.linalg.lstsq(A[ok], freqs[ok, k], rcond=None)[0]
            out[k] = coef[1:]
    return out


def band(
    design: Design,
    result: FEResult,
    tolerances: Sequence[Tolerance],
    *,
    check: bool = True,
    samples: int | None = None,
    directions: Directions | None = None,
) -> BandResult:
    """Band, elasticities and contributions of every mode over the tolerances.

    Parameters
    ----------
    design : Design
        The design ``result`` solved.
    result : FEResult
        Its nominal depth-plane solution.
    tolerances : sequence of Tolerance
    check : bool
        Check the first-order depth-plane bands by full solves (corners, and sampling with
        more than four inputs).  Without it those bands are first order and say so.
    samples : int, optional
        Latin-hypercube points of the check with more than four inputs (default 4 per
        input, at least 16).
    directions : Directions, optional
        Every direction of the nominal design; their bands come from the same check solves
        (always made when given), their contributions from the least-squares plane
        through them.

    Returns
    -------
    BandResult
    """
    tolerances = tuple(tolerances)
    low = np.array([t.low for t in tolerances])
    high = np.array([t.high for t in tolerances])
    nominal = np.array([t.nominal for t in tolerances])
    n_modes = len(result.modes)
    # First-order sensitivities exist for the Euler-Bernoulli and Timoshenko elements; a
    # member solved by any other theory gets its depth-plane bands from the check solves.
    first_order = getattr(design.solved_member(), "theory", EULER_BERNOULLI) in FIRST_ORDER_THEORIES
    sens = sensitivities(design, result, tolerances) if first_order else None
    fitted: list[tuple[str, tuple]] = [] if first_order else [("depth", result.modes)]
    fitted += [(d.name, d.modes) for d in _other_directions(directions)]
    check = check or not first_order
    errors = np.array([m.estimated_error for m in result.modes])
    notes: list[str] = []
    checked: dict[str, np.ndarray] = {}
    solves = 0
    method = CORNERS
    worst_error = float(np.max(errors)) if len(errors) else 0.0
    points = np.empty((0, len(tolerances)))
    dfdp = sens.frequency_derivatives if sens is not None else np.zeros((n_modes, len(low)))
    if (check or fitted) and tolerances:
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
        names = ("depth", *(name for name, _ in fitted if name != "depth"))
        checked, worst = _solve_points(design, tolerances, points, n_modes, names)
        worst_error = max(worst_error, worst)
        solves = len(points)
        notes.append(
            f"bands checked by {solves} full solves ({method}); exact where a mode is monotonic "
            "in each input over its range, an estimate otherwise"
        )
    if not check:
        notes.append("depth-plane bands are first order only (not checked by full solves)")
    notes.append("the tolerances are the user's; the band covers only the inputs given")
    out = []
    if sens is not None:
        out += _first_order_bands(
            result, tolerances, sens, checked.get("depth") if check else None, points,
            method, worst_error,
        )  # fmt: skip
    for name, modes in fitted:
        freqs = checked[name]
        slope = _main_effects(tolerances, points, freqs)
        for i, m in enumerate(modes[:n_modes]):
            col = freqs[:, i]
            col = col[np.isfinite(col)]
            lo = float(min(col.min(), m.frequency_hz)) if len(col) else m.frequency_hz
            hi = float(max(col.max(), m.frequency_hz)) if len(col) else m.frequency_hz
            with np.errstate(divide="ignore", invalid="ignore"):
                el = slope[i] / (high - low) * nominal / m.frequency_hz
            el[nominal == 0.0] = np.nan
            out.append(
                ModeBand(
                    number=m.number,
                    frequency_hz=m.frequency_hz,
                    low_hz=lo,
                    high_hz=hi,
                    method=method,
                    first_order=(math.nan, math.nan),
                    checked=(lo, hi),
                    tolerance_hz=2.0 * worst_error * m.frequency_hz,
                    effects=_effects(tolerances, m.frequency_hz, slope[i], el),
                    direction=name,
                )
            )
    if not first_order:
        notes.append(
            "no first-order sensitivities for this bending theory: every band comes from the "
            "check solves, elasticities and contributions from the least-squares plane "
            "through them"
        )
    others = [name for name, _ in fitted if name != "depth"]
    if others:
        notes.append(
            "width-plane, torsion and axial bands come from the check solves; their "
            "contributions from the least-squares plane through them (not first order)"
        )
    replaced = [b.number for b in out if b.direction == "depth" and b.method != FIRST_ORDER]
    if replaced and sens is not None:
        notes.insert(
            0,
            "first order was off by more than the band's tolerance for depth-plane mode"
            + ("s " if len(replaced) > 1 else " ")
            + ", ".join(map(str, replaced))
            + ": the checked band is reported",
        )
    return BandResult(tuple(out), tolerances, sens, solves, tuple(notes))


def _first_order_bands(
    result: FEResult,
    tolerances: tuple[Tolerance, ...],
    sens: Sensitivities,
    checked: np.ndarray | None,
    points: np.ndarray,
    method: str,
    worst_error: float,
) -> list[ModeBand]:
    """Depth-plane bands from the sensitivities, replaced by the check where first order is
    off by more than the band's tolerance."""
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
    out = []
    for i in range(len(result.modes)):
        fo = (float(fo_low[i]), float(fo_high[i]))
        tol_hz = _BAND_TOLERANCE * (fo[1] - fo[0]) + 2.0 * worst_error * float(f0[i])
        lo_hi = fo
        used = FIRST_ORDER
        chk = None
        moves = contribution[i]
        if checked is not None:
            col = checked[:, i]
            chk = (float(min(col.min(), f0[i])), float(max(col.max(), f0[i])))
            if abs(chk[0] - fo[0]) > tol_hz or abs(chk[1] - fo[1]) > tol_hz:
                lo_hi = chk
                used = method
                moves = _main_effects(tolerances, points, checked[:, i : i + 1])[0]
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
                effects=_effects(tolerances, float(f0[i]), moves, elast[i]),
            )
        )
    return out


def _other_directions(directions: Directions | None) -> list[Direction]:
    """The computed directions other than the depth plane that are not copies of it."""
    if directions is None:
        return []
    return [d for d in directions.directions[1:] if d.computed and not d.same_as and d.modes]


def same_as_bands(result: BandResult, directions: Directions | None) -> BandResult:
    """``result`` with the bands of a direction that repeats another (a round section's two
    bending planes) copied from that one."""
    if directions is None:
        return result
    extra = []
    for d in directions.directions[1:]:
        if d.same_as:
            extra += [
                replace(b, direction=d.name) for b in result.modes if b.direction == d.same_as
            ]
    return replace(result, modes=(*result.modes, *extra))


def tightening(result: BandResult, table: object | None) -> tuple[str, ...]:
    """For each mode that is clear at its nominal frequency but whose band reaches an
    excitation band: which tolerance moves it most (the first to tighten), in words.

    Parameters
    ----------
    result : BandResult
    table : excitation.MarginTable or None
        Margins computed over the bands (see :func:`calc.excitation.check_member`).
    """
    if table is None:
        return ()
    bands = {(b.direction, b.number): b for b in result.modes}
    out: list[str] = []
    seen: set[tuple[str, int]] = set()
    for row in table.rows:  # type: ignore[attr-defined]
        b = bands.get((row.direction, row.mode))
        if row.clear or b is None or (row.direction, row.mode) in seen:
            continue
        line = next(
            (
                ln
                for ln in table.lines  # type: ignore[attr-defined]
                if ln.excitation == row.excitation and ln.order == row.order
            ),
            None,
        )
        if line is None:
            continue
        f = b.frequency_hz
        if line.order is not None and line.band_low_hz <= f <= line.band_high_hz:
            continue  # inside at its nominal value: tightening a tolerance does not help
        if line.order is None and f < line.low_hz:
            continue
        seen.add((row.direction, row.mode))
        toward_up = line.order is not None and line.band_low_hz > f
        reach = _excursions(result.tolerances, b, toward_up)
        first = max(reach, key=lambda kv: kv[1])[0] if reach else None
        where = (
            f"{row.direction} mode {row.mode} ({f:.4g} Hz, band {b.low_hz:.4g}-{b.high_hz:.4g} Hz)"
        )
        what = f"the {row.excitation} band" + (
            f" (order {row.order:g})" if row.order is not None else " (lower limit)"
        )
        if first is None:
            out.append(f"{where} reaches {what} within its tolerances")
            continue
        side = "up" if toward_up else "down"
        moves = dict(reach)[first]
        out.append(
            f"{where} reaches {what} within its tolerances; tighten {first.key} first "
            f"(it moves this mode {side} toward the line by about {moves:.3g} Hz within its "
            "range)"
        )
    return tuple(out)


def _excursions(
    tolerances: tuple[Tolerance, ...], band: ModeBand, up: bool
) -> list[tuple[InputEffect, float]]:
    """Each input's move of the mode toward a line above (``up``) or below, from its nominal
    value to the end of its range that moves the mode that way [Hz], where positive."""
    by_key = {t.key: t for t in tolerances}
    out = []
    for e in band.effects:
        t = by_key.get(e.key)
        if t is None or e.contribution_hz == 0.0 or t.high == t.low:
            continue
        above = (t.high - t.nominal) / (t.high - t.low)  # share of the range above nominal
        below = 1.0 - above
        raising = e.contribution_hz > 0.0
        share = (above if raising else below) if up else (below if raising else above)
        move = abs(e.contribution_hz) * share
        if move > 0.0:
            out.append((e, move))
    return out
