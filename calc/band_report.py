"""The calculation record's tolerance section: the tolerances, each mode's band, the inputs
that drive it, and (where a study was run) the sampled spread with its histogram.

Blocks of :mod:`calc.report` (plain data; ``beamtone.render`` writes them out).
"""

from __future__ import annotations

import numpy as np

from beamtone.calc.band import BandResult
from beamtone.calc.report import Alert, Block, Bullets, Paragraph, Table
from beamtone.calc.tolerances import COMPLIANCE

__all__ = ["band_blocks", "TOLERANCE_CAUTION"]

TOLERANCE_CAUTION = (
    "Tolerances, support stiffnesses and the sampling distribution are the user's: a band "
    "covers only the inputs given, over the ranges given, and the model's own assumptions "
    "still apply."
)
_BAR = 30


def band_blocks(bands: BandResult, study: object | None = None) -> tuple[Block, ...]:
    """Blocks of the tolerance section.

    Parameters
    ----------
    bands : BandResult
    study : scatter.ScatterResult, optional
        A sampled study of the same worksheet: percentiles and a histogram of mode 1.
    """
    tolerances = Table(
        ("input", "as written", "low [SI]", "high [SI]"),
        tuple(
            (
                t.key,
                (t.written or "-")
                + (" (varied as 1/k, rigid at 0)" if t.measure == COMPLIANCE else ""),
                f"{t.low:.6g}",
                f"{t.high:.6g}",
            )
            for t in bands.tolerances
        ),
        literal=(0,),
    )
    rows = []
    for b in bands.modes:
        top = "; ".join(
            f"{e.key} {e.contribution_hz:+.3g} Hz" for e in b.effects[:3] if e.contribution_hz
        )
        rows.append(
            (b.direction, str(b.number), f"{b.frequency_hz:.6g}", f"{b.low_hz:.6g}",
             f"{b.high_hz:.6g}", b.method, top or "-")
        )  # fmt: skip
    blocks: list[Block] = [
        Paragraph(
            "Each mode's band over the tolerances below. Depth-plane bands are first order "
            "(eigenvalue derivatives of the computed modes, Fox and Kapoor 1968), checked by "
            "full solves at the corners of the tolerance box (or sampled); the other "
            "directions' bands come from those solves. The contribution of an input is the "
            "change of the frequency across its range."
        ),
        tolerances,
        Table(
            ("direction", "mode", "f [Hz]", "low [Hz]", "high [Hz]", "band", "largest effects"),
            tuple(rows),
        ),
        Bullets(bands.notes),
    ]
    if bands.tighten:
        blocks.append(Bullets(bands.tighten))
    if study is not None:
        blocks += _study_blocks(study)
    blocks.append(Alert(TOLERANCE_CAUTION))
    return tuple(blocks)


def _study_blocks(study: object) -> list[Block]:
    from beamtone.calc.directions import LABELS
    from beamtone.calc.scatter import PERCENTILES, chance_words, histogram

    same_as = study.same_as  # type: ignore[attr-defined]
    shown = [d for d in study.directions if d not in same_as]  # type: ignore[attr-defined]
    rows, charts = [], []
    for name in shown:
        freqs = study.sampled_hz[name]  # type: ignore[attr-defined]
        percentiles = study.percentiles_of(name)  # type: ignore[attr-defined]
        for j in range(freqs.shape[1]):
            values = freqs[:, j][np.isfinite(freqs[:, j])]
            if not len(values):
                continue
            rows.append((LABELS[name], str(j + 1), *(f"{v:.6g}" for v in percentiles[:, j])))
            counts, edges = histogram(values, 12)
            top = max(int(counts.max()), 1)
            bins = tuple(
                (f"{a:.5g} - {b:.5g}", str(int(n)), "#" * round(_BAR * int(n) / top))
                for n, a, b in zip(counts, edges[:-1], edges[1:], strict=True)
            )
            charts.append(Table((f"{LABELS[name]} mode {j + 1} [Hz]", "samples", "histogram"),
                                bins, literal=(2,)))  # fmt: skip
    chances = tuple(
        (f"{c.excitation} " + ("lower limit" if c.order is None else f"order {c.order:g}"),
         f"{c.band_low_hz:.4g} - {c.band_high_hz:.4g}",
         chance_words(c.probability, c.standard_error, study.samples))  # type: ignore[attr-defined]
        for c in study.lines  # type: ignore[attr-defined]
    )  # fmt: skip
    if chances:
        any_band = chance_words(study.any_in_band, None, study.samples)  # type: ignore[attr-defined]
        chances += (("any band", "", any_band),)
    alike = [f"{LABELS[d]}: the same as the {LABELS[o]}" for d, o in same_as.items()]
    missing = [f"{LABELS[d]}: not computed ({why})" for d, why in study.not_computed]  # type: ignore[attr-defined]
    return [
        Paragraph(
            f"Sampled spread: {study.samples} samples ({study.method}) of every direction's "  # type: ignore[attr-defined]
            "modes, every input uniform over its range."
        ),
        Table(("direction", "mode", *(f"p{p:g} [Hz]" for p in PERCENTILES)), tuple(rows)),
        *charts,
        *(
            [
                Table(
                    ("excitation line", "band [Hz]", "chance of a mode of any direction in it"),
                    chances,
                )
            ]  # fmt: skip
            if chances
            else []
        ),
        Bullets((*alike, *missing, *study.notes)),  # type: ignore[attr-defined]
    ]
