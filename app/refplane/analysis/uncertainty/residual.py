"""Residual error terms of a corrected reflection measurement (EURAMET cg-12).

After correction, what is left of the error model is, to first order,

    Γm = Γ + D + T·Γ + M·Γ²

with residual directivity D, residual reflection tracking T and residual source match M
(EURAMET cg-12, *Guidelines on the evaluation of vector network analysers*). An instrument's
data sheet states their magnitudes for a corrected port; their phases are unknown, so each is
a circular complex contribution of fixed magnitude and uniformly distributed phase: its
standard uncertainty per axis (real or imaginary part) is magnitude/√2 (an arcsine
distribution). The worst case for |Γ| is D + T·|Γ| + M·|Γ|².

How the magnitudes are written (data-sheet style): directivity and source match as positive
dB below full reflection (40 dB → |D| = 10^(−40/20) = 0.01), tracking as ±dB of the
reflection's magnitude (0.1 dB → |T| = 10^(0.1/20) − 1 ≈ 0.0116). A plain number is the
magnitude itself.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from refplane.analysis.errors import AnalysisError


@dataclass(frozen=True)
class ResidualTerms:
    """Magnitudes of the residual directivity, tracking and source match (dimensionless).

    Attributes
    ----------
    directivity, tracking, source_match : float
        |D|, |T| and |M|, each at least 0.
    """

    directivity: float
    tracking: float
    source_match: float

    def __post_init__(self) -> None:
        for name in ("directivity", "tracking", "source_match"):
            value = getattr(self, name)
            if not (isinstance(value, (int, float)) and math.isfinite(value) and value >= 0):
                raise AnalysisError(f"the residual {name.replace('_', ' ')} must be a number of at least 0")

    def amplitudes(self, gamma) -> np.ndarray:
        """The three circular contributions' magnitudes at ``gamma``: shape ``gamma.shape + (3,)``.

        |D|, |T|·|Γ| and |M|·|Γ|², in that order.
        """
        mag = np.abs(np.asarray(gamma, dtype=np.complex128))
        return np.stack([np.full(mag.shape, self.directivity), self.tracking * mag,
                         self.source_match * mag**2], axis=-1)

    def worst_case(self, gamma) -> np.ndarray:
        """The worst-case bound of |Γ|'s error, D + T·|Γ| + M·|Γ|² (EURAMET cg-12)."""
        return np.sum(self.amplitudes(gamma), axis=-1)

    def describe(self) -> str:
        """"directivity 40.0 dB, source match 35.0 dB, tracking ±0.100 dB"."""
        def db(x):
            return "∞ dB" if x == 0 else f"{-20 * math.log10(x):.1f} dB"

        return (f"directivity {db(self.directivity)}, source match {db(self.source_match)}, "
                f"tracking ±{20 * math.log10(1 + self.tracking):.3f} dB")


def _magnitude(text: str, what: str, tracking: bool) -> float:
    t = text.strip().lower().replace(" ", "")
    try:
        if t.endswith("db"):
            db = float(t[:-2])
            if not math.isfinite(db):
                raise ValueError
            if tracking:
                return 10 ** (abs(db) / 20) - 1
            return 10 ** (-abs(db) / 20)
        value = float(t)
    except ValueError:
        raise AnalysisError(f"{text!r} is not a {what} (write e.g. 40dB, or a magnitude such as 0.01)") from None
    if not (math.isfinite(value) and value >= 0):
        raise AnalysisError(f"the {what} {text!r} must be a magnitude of at least 0")
    return value


def parse_residual(text: str) -> ResidualTerms:
    """Parse "D,M,T" as an instrument states its corrected performance.

    Examples
    --------
    >>> r = parse_residual("40dB,35dB,0.1dB")
    >>> round(r.directivity, 6), round(r.source_match, 6), round(r.tracking, 6)
    (0.01, 0.017783, 0.011579)
    """
    parts = [p for p in str(text).split(",")]
    if len(parts) != 3:
        raise AnalysisError(f"{text!r}: give three values D,M,T (directivity, source match, tracking), "
                            "e.g. 40dB,35dB,0.1dB")
    d = _magnitude(parts[0], "residual directivity", False)
    m = _magnitude(parts[1], "residual source match", False)
    t = _magnitude(parts[2], "residual tracking", True)
    return ResidualTerms(directivity=d, tracking=t, source_match=m)
