"""The caution every output of beamtone carries: one wording, one place.

The command line, the app and the calculation record all show :data:`CAUTION`.
"""

from __future__ import annotations

__all__ = ["CAUTION"]

CAUTION = (
    "Caution: an early-stage estimate for linear, undamped vibration (bending in two planes, "
    "torsion and axial motion, taken as uncoupled). Confirm with detailed analysis and test, "
    "and follow the applicable codes and a licensed engineer wherever failure could hurt "
    "someone."
)
"""What the results leave out and whom to defer to, shown beside every result."""
