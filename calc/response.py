"""Steady-state forced response by modal superposition of the computed modes.

With an assumed modal damping ratio zeta (the same for every mode) and a harmonic force of
amplitude F at x_F and circular frequency Omega, the displacement amplitude at x is

    u(x) = | sum_i phi_i(x) phi_i(x_F) F / (omega_i^2 - Omega^2 + 2 j zeta omega_i Omega) |

over the mass-normalized modes phi_i already computed by finite elements (common practice;
any vibration textbook's chapter on multi-degree-of-freedom forced response).  The velocity
and acceleration amplitudes are Omega u and Omega^2 u.  Each mode's dynamic amplification is
the single-degree-of-freedom factor 1 / sqrt((1 - r^2)^2 + (2 zeta r)^2), r = Omega/omega_i.

What this leaves out, and says so: modes above the highest computed one (their share is
small where the forcing frequency is well below it; the last computed mode's share at the
forcing point is reported as a guide, not a bound); rigid-body motion (a member free to
move as a rigid body gets no response here); damping other than light, equal, viscous modal
damping.  Damping is the most uncertain input: the response near resonance is inversely
proportional to it.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np

from beamtone.calc.errors import InputError
from beamtone.calc.excitation import Excitation, lines

__all__ = [
    "DAMPING_CAUTION",
    "ForcedResponse",
    "LineResponse",
    "PointResponse",
    "amplification",
    "forced_response",
    "modal_displacement",
]

DAMPING_CAUTION = (
    "The damping ratio is assumed, and damping is uncertain: near resonance the response is "
    "inversely proportional to it. Treat the amplitudes as estimates; measure where it matters."
)

_RANGE_POINTS = 65  # frequencies sampled across a range line, besides its ends and peaks


def amplification(r: float | np.ndarray, zeta: float) -> float | np.ndarray:
    """Dynamic amplification of a damped single-degree-of-freedom system [-].

    Parameters
    ----------
    r : float or ndarray
        Frequency ratio Omega / omega_n [-].
    zeta : float
        Damping ratio [-].

    Examples
    --------
    >>> round(float(amplification(1.0, 0.02)), 2), round(float(amplification(0.8, 0.02)), 2)
    (25.0, 2.77)
    """
    r = np.asarray(r, dtype=float)
    out = 1.0 / np.sqrt((1.0 - r**2) ** 2 + (2.0 * zeta * r) ** 2)
    return float(out) if out.ndim == 0 else out


@dataclass(frozen=True)
class PointResponse:
    """Steady-state amplitudes at one point.

    Attributes
    ----------
    name : str
        ``"force"`` for the forcing point, else the attachment's key (``"mass[0]"``).
    at : float
        Position from the left end [m].
    displacement : float
        Amplitude [m].
    velocity : float
        Amplitude [m/s].
    acceleration : float
        Amplitude [m/s^2].
    frequency_hz : float
        Forcing frequency of these amplitudes [Hz] (for a range: where the displacement
        here is largest).
    """

    name: str
    at: float
    displacement: float
    velocity: float
    acceleration: float
    frequency_hz: float


@dataclass(frozen=True)
class LineResponse:
    """One excitation line's response.

    Attributes
    ----------
    excitation : str
    order : float
    low_hz, high_hz : float
        The line [Hz].
    amplification : tuple of float
        Each computed mode's dynamic amplification (for a range, the largest over it) [-].
    force : float or None
        Force amplitude [N]; None where the excitation gives no force.
    force_at : float or None
        [m]
    points : tuple of PointResponse
        The forcing point first, then every attachment; empty without a force.
    last_mode_share : float
        |u_N - u_(N-1)| / |u_N| at the forcing point: how much the highest computed mode
        adds (a guide to truncation, not a bound) [-]; 0 without a force.
    """

    excitation: str
    order: float
    low_hz: float
    high_hz: float
    amplification: tuple[float, ...]
    force: float | None
    force_at: float | None
    points: tuple[PointResponse, ...]
    last_mode_share: float


@dataclass(frozen=True)
class ForcedResponse:
    """Forced response of every excitation line.

    Attributes
    ----------
    damping_ratio : float
        The assumed modal damping ratio [-].
    modes_used : int
        Computed modes in the modal sum.
    lines : tuple of LineResponse
    notes : tuple of str
        What the response leaves out, where it matters.
    """

    damping_ratio: float
    modes_used: int
    lines: tuple[LineResponse, ...]
    notes: tuple[str, ...]


def _shapes(modes: Sequence[object], at: Sequence[float]) -> np.ndarray:
    """Mass-normalized deflections phi_i(x) at the points, shape (points, modes) [kg^-1/2]."""
    from beamtone.calc.fe import interpolate

    return np.array(
        [
            [interpolate(m.x, m.w_modal, m.theta_modal, x) for m in modes]  # type: ignore[attr-defined]
            for x in at
        ]
    ).reshape(len(at), len(modes))


def modal_displacement(
    modes: Sequence[object],
    damping_ratio: float,
    force: float,
    force_at: float,
    at: Sequence[float],
    frequency_hz: float | np.ndarray,
) -> np.ndarray:
    """Complex displacement amplitudes by modal superposition [m].

    Parameters
    ----------
    modes : sequence of fe.Mode
        Mass-normalized modes (``x``, ``w_modal``, ``theta_modal``, ``omega``).
    damping_ratio : float
        Modal damping ratio [-].
    force : float
        Force amplitude [N].
    force_at : float
        Where it acts [m].
    at : sequence of float
        Where the displacement is wanted [m].
    frequency_hz : float or ndarray
        Forcing frequencies [Hz].

    Returns
    -------
    ndarray, shape (len(at), number of frequencies)
    """
    omega = np.array([m.omega for m in modes])  # type: ignore[attr-defined]
    phi_f = _shapes(modes, [force_at])[0]
    phi = _shapes(modes, at)
    big = 2.0 * math.pi * np.atleast_1d(np.asarray(frequency_hz, dtype=float))
    denominator = (
        omega[None, :] ** 2 - big[:, None] ** 2 + 2j * damping_ratio * omega[None, :] * big[:, None]
    )
    return (phi * phi_f[None, :]) @ (force / denominator).T


def _frequencies(low: float, high: float, natural_hz: np.ndarray, zeta: float) -> np.ndarray:
    if high <= low:
        return np.array([low])
    peaks = natural_hz * math.sqrt(max(1.0 - 2.0 * zeta**2, 0.0))
    inside = [f for f in np.concatenate([natural_hz, peaks]) if low < f < high]
    return np.unique(np.concatenate([np.linspace(low, high, _RANGE_POINTS), inside]))


def forced_response(
    member: object,
    result: object,
    excitations: Iterable[Excitation],
    damping_ratio: float,
) -> ForcedResponse:
    """Each excitation line's modal amplification and, with a force, the amplitudes.

    Parameters
    ----------
    member : model.Member
        The member (for the attachments' positions).
    result : fe.FEResult
        Its computed modes.
    excitations : iterable of Excitation
    damping_ratio : float
        Assumed modal damping ratio, 0 < zeta < 1 [-].

    Returns
    -------
    ForcedResponse
    """
    zeta = damping_ratio
    if not (math.isfinite(zeta) and 0.0 < zeta < 1.0):
        raise InputError("damping_ratio", zeta, "a damping ratio above 0 and below 1, e.g. 0.02")
    modes = tuple(result.modes)  # type: ignore[attr-defined]
    natural = np.array([m.frequency_hz for m in modes])
    notes: list[str] = []
    rigid = int(result.rigid_body_modes)  # type: ignore[attr-defined]
    attachments = [(f"mass[{i}]", m.at) for i, m in enumerate(member.masses)]  # type: ignore[attr-defined]
    attachments += [(f"spring[{i}]", s.at) for i, s in enumerate(member.springs)]  # type: ignore[attr-defined]
    out: list[LineResponse] = []
    top = float(natural.max()) if len(natural) else 0.0
    for excitation in excitations:
        with_force = excitation.force is not None and excitation.force_at is not None
        if with_force and rigid:
            notes.append(
                f"{excitation.name}: no amplitudes, the member is free to move as a rigid body "
                "and the rigid-body response is not modelled"
            )
        for line in lines(excitation):
            if line.order is None:
                continue
            freqs = _frequencies(line.low_hz, line.high_hz, natural, zeta)
            amp = tuple(
                float(np.max(amplification(freqs / f_i, zeta))) if f_i > 0 else math.nan
                for f_i in natural
            )
            if line.high_hz >= top:
                notes.append(
                    f"{excitation.name} order {line.order:g} reaches {line.high_hz:.4g} Hz, at "
                    f"or above the highest computed mode ({top:.4g} Hz): modes near it are "
                    "left out; compute more modes"
                )
            points: list[PointResponse] = []
            share = 0.0
            if with_force and not rigid:
                assert excitation.force is not None and excitation.force_at is not None
                where = [("force", excitation.force_at), *attachments]
                u = np.abs(
                    modal_displacement(
                        modes, zeta, excitation.force, excitation.force_at,
                        [x for _, x in where], freqs,
                    )
                )  # fmt: skip
                for k, (name, x) in enumerate(where):
                    j = int(np.argmax(u[k]))
                    big = 2.0 * math.pi * float(freqs[j])
                    d = float(u[k, j])
                    points.append(PointResponse(name, x, d, big * d, big**2 * d, float(freqs[j])))
                j0 = int(np.argmax(u[0]))
                if len(modes) > 1 and u[0, j0] > 0.0:
                    pair = [
                        modal_displacement(
                            use, zeta, excitation.force, excitation.force_at,
                            [excitation.force_at], freqs[j0],
                        )[0, 0]
                        for use in (modes, modes[:-1])
                    ]  # fmt: skip
                    share = float(abs(pair[0] - pair[1]) / abs(pair[0]))
            out.append(
                LineResponse(
                    excitation.name, float(line.order), line.low_hz, line.high_hz, amp,
                    excitation.force, excitation.force_at, tuple(points), share,
                )
            )  # fmt: skip
    return ForcedResponse(zeta, len(modes), tuple(out), tuple(dict.fromkeys(notes)))
