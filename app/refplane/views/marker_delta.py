"""The difference between two marker readouts, as display cells (no Qt here).

Differences are plain subtractions of the two :class:`~refplane.analysis.impedance.Readout`
values (b − a); they are formatted with the analysis layer's unit formatting.
"""

from __future__ import annotations

import math

from refplane.analysis.impedance import Readout
from refplane.analysis.units import format_frequency

#: Rows of the difference column, in the order of :func:`refplane.analysis.readings.readout_cells`.
DELTA_ROWS = {
    "Frequency": ("freq_hz", "Hz"),
    "R": ("r_ohm", "Ω"),
    "X": ("x_ohm", "Ω"),
    "|Z|": ("z_mag_ohm", "Ω"),
    "|Γ|": ("gamma_mag", ""),
    "∠Γ": ("gamma_deg", "°"),
    "VSWR": ("vswr", ""),
    "Return loss": ("return_loss_db", "dB"),
}


def delta_cells(a: Readout, b: Readout) -> dict[str, str]:
    """Cells of b − a for the rows in :data:`DELTA_ROWS`; other rows are left out."""
    out = {}
    for label, (field, unit) in DELTA_ROWS.items():
        d = getattr(b, field) - getattr(a, field)
        if not math.isfinite(d):
            out[label] = "—"
        elif label == "Frequency":
            out[label] = ("+" if d >= 0 else "−") + format_frequency(abs(d), 6)
        else:
            # The same decimals as the marker cells, so a difference never shows more digits
            # than the values it comes from.
            decimals = {"gamma_mag": 4, "gamma_deg": 1, "vswr": 3}.get(field, 2)
            text = f"{d:+.{decimals}f}"
            if float(text) == 0:
                text = f"{0:.{decimals}f}"
            out[label] = f"{text} {unit}".replace("-", "−").strip()
    return out
