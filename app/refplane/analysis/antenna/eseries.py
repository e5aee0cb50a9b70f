"""Preferred values of parts: the E12, E24 and E96 series of IEC 60063, and rounding to them.

The tables are the published ones, written out, not a formula: E12 and E24 date from before
the series were made strictly geometric and keep their historical values (2.7, 3.0, 3.3, 3.6,
3.9, 4.3, 4.7 and 8.2, where 10^(k/24) rounds to 2.6, 2.9, 3.2, 3.5, 3.8, 4.2, 4.6 and 8.3).
E96 coincides with 10^(k/96) rounded to three figures.

Rounding picks the value nearest in *ratio* (the smaller |log(standard/value)|), as the
series are spaced evenly in ratio (common practice); the next decade's first value counts, so
9.6 rounds to 10 in E12.
"""

from __future__ import annotations

import math

import numpy as np

from refplane.analysis.errors import AnalysisError

#: IEC 60063 E12 (tolerance ±10 %), one decade.
E12 = (1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2)

#: IEC 60063 E24 (tolerance ±5 %), one decade.
E24 = (1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0,
       3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1)

#: IEC 60063 E96 (tolerance ±1 %), one decade.
E96 = (1.00, 1.02, 1.05, 1.07, 1.10, 1.13, 1.15, 1.18, 1.21, 1.24, 1.27, 1.30,
       1.33, 1.37, 1.40, 1.43, 1.47, 1.50, 1.54, 1.58, 1.62, 1.65, 1.69, 1.74,
       1.78, 1.82, 1.87, 1.91, 1.96, 2.00, 2.05, 2.10, 2.15, 2.21, 2.26, 2.32,
       2.37, 2.43, 2.49, 2.55, 2.61, 2.67, 2.74, 2.80, 2.87, 2.94, 3.01, 3.09,
       3.16, 3.24, 3.32, 3.40, 3.48, 3.57, 3.65, 3.74, 3.83, 3.92, 4.02, 4.12,
       4.22, 4.32, 4.42, 4.53, 4.64, 4.75, 4.87, 4.99, 5.11, 5.23, 5.36, 5.49,
       5.62, 5.76, 5.90, 6.04, 6.19, 6.34, 6.49, 6.65, 6.81, 6.98, 7.15, 7.32,
       7.50, 7.68, 7.87, 8.06, 8.25, 8.45, 8.66, 8.87, 9.09, 9.31, 9.53, 9.76)

SERIES = {"E12": E12, "E24": E24, "E96": E96}


def series_values(name: str) -> tuple[float, ...]:
    """One decade of the named series (``"E12"``, ``"E24"`` or ``"E96"``, any case)."""
    key = str(name).strip().upper()
    if key not in SERIES:
        raise AnalysisError(f"unknown series {name!r}; choose E12, E24 or E96")
    return SERIES[key]


def nearest(value: float, series: str = "E24") -> float:
    """The value of ``series`` nearest to ``value`` in ratio (same sign; 0 stays 0).

    Examples
    --------
    >>> nearest(0.92e-12, "E12"), nearest(38.8e-9, "E24"), nearest(46.1e-9, "E96")
    (1e-12, 3.9e-08, 4.64e-08)
    """
    table = series_values(series)
    v = float(value)
    if not math.isfinite(v):
        raise AnalysisError(f"cannot round {value!r} to a standard value")
    if v == 0.0:
        return 0.0
    mag = abs(v)
    decade = math.floor(math.log10(mag))
    best = None
    for d in (decade - 1, decade, decade + 1):
        for m in table:
            cand = m * 10.0 ** d
            err = abs(math.log(cand / mag))
            if best is None or err < best[0]:
                best = (err, m, d)
    _, m, d = best
    digits = 3 if table is E96 else 2
    # Rebuild from the table's digits so the result prints cleanly (3.9e-08, not 3.9000000000000004e-08).
    out = float(f"{m:.{digits - 1}f}e{d}")
    return math.copysign(out, v)


def nearest_array(values, series: str = "E24") -> np.ndarray:
    """:func:`nearest` over an array."""
    return np.array([nearest(v, series) for v in np.ravel(values)]).reshape(np.shape(values))
