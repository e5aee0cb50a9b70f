"""Fitted circuit parameters with their combined uncertainty: statistical plus systematic.

The fit's own standard errors (:mod:`refplane.analysis.circuits.fitting`) say how well the noise lets
the parameters be pinned down; they say nothing about the calibration's residual errors, which
move every point of the sweep together. The systematic part is found by refitting
(JCGM 101, Monte Carlo): each draw perturbs the whole measured trace by the residual-term
model ΔΓ = D + T·Γ + M·Γ² and the same circuit is fitted again; the standard deviation of
each parameter over the draws is its systematic standard uncertainty. Then

    u_combined = √(u_statistical² + u_systematic²),     U = 2·u_combined  (k = 2)

(GUM, JCGM 100, 5.1: uncorrelated components add in quadrature).

How a draw is made, per source:

* stated residual terms: one uniformly distributed phase per term for the whole band (the
  terms fully correlated across frequency — the cautious choice for a fit, which would average
  away anything that changes from point to point);
* a calibration's propagated residual terms: a normal draw with the covariance at each
  frequency, from one set of six standard normal numbers for the whole band (the standards'
  definitions are the same at every frequency, so their errors are correlated across it).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from refplane.analysis.errors import AnalysisError


@dataclass(frozen=True)
class FitUncertainty:
    """Combined uncertainties of fitted parameters (SI, keyed like ``FitResult.params``).

    Attributes
    ----------
    statistical, systematic, combined : dict of str to float
        Standard uncertainties.
    expanded : dict of str to float
        2 × combined (k = 2, about 95 %).
    draws : int
        Refits made (0 when no systematic source was given).
    sources : tuple of str
    """

    statistical: dict
    systematic: dict
    combined: dict
    expanded: dict
    draws: int
    sources: tuple[str, ...] = field(default_factory=tuple)

    def json(self) -> dict:
        """For ``refplane fit --json``; non-finite values become ``None`` there."""
        return {"u_statistical": dict(self.statistical), "u_systematic": dict(self.systematic),
                "u_combined": dict(self.combined), "U": dict(self.expanded), "coverage_factor": 2,
                "systematic_draws": self.draws, "sources": list(self.sources)}


def fit_uncertainty(result, freq_hz, gamma, *, residual=None, calibration=None, draws: int = 60,
                    seed: int | None = 0) -> FitUncertainty:
    """Combine a reflection fit's standard errors with the systematic part from refitting draws.

    Parameters
    ----------
    result : FitResult
        A reflection fit of ``gamma``.
    freq_hz, gamma : ndarray
        The sweep it was fitted to (the fit's band is taken again).
    residual : ResidualTerms, optional
    calibration : CalibrationUncertainty, optional
        On ``freq_hz`` or interpolated onto it.
    draws : int
        Refits (tens are enough for a standard deviation to about ±10 %: 1/√(2·draws)).
    """
    from refplane.analysis.circuits.fitting import fit_reflection

    stat = {k: float(v) for k, v in result.stderr.items()}
    sources = []
    if result.measurement != "reflection" and (residual is not None or calibration is not None):
        raise AnalysisError("the systematic part is worked out for reflection fits only")
    if residual is None and calibration is None:
        combined = dict(stat)
        return FitUncertainty(stat, {k: 0.0 for k in stat}, combined, {k: 2 * v for k, v in combined.items()}, 0)
    if draws < 10:
        raise AnalysisError("give at least 10 draws for the systematic part")
    f = np.asarray(freq_hz, float)
    g = np.asarray(gamma, complex)
    rng = np.random.default_rng(seed)
    chol = None
    if calibration is not None:
        cov = calibration.on(f).cov
        vals, vecs = np.linalg.eigh(cov)
        chol = vecs * np.sqrt(np.clip(vals, 0, None))[:, None, :]
        sources.append("calibration's propagated residual terms")
    if residual is not None:
        sources.append(f"stated residual terms ({residual.describe()})")
    keys = list(result.params)
    samples = {k: [] for k in keys}
    for _ in range(draws):
        delta = np.zeros_like(g)
        if residual is not None:
            p = np.exp(2j * np.pi * rng.random(3))
            delta += residual.directivity * p[0] + residual.tracking * p[1] * g + residual.source_match * p[2] * g**2
        if chol is not None:
            x = chol @ rng.standard_normal(6)
            d, t, m = x[:, 0] + 1j * x[:, 1], x[:, 2] + 1j * x[:, 3], x[:, 4] + 1j * x[:, 5]
            delta += d + t * g + m * g**2
        try:
            refit = fit_reflection(f, g - delta, result.z0_ohm, model=result.model_id, band_hz=result.band_hz)
        except AnalysisError:
            continue
        for k in keys:
            samples[k].append(refit.params.get(k, math.nan))
    used = min(len(v) for v in samples.values())
    if used < 10:
        raise AnalysisError("too few refits succeeded to estimate the systematic part")
    sys_u = {k: float(np.nanstd(np.asarray(v), ddof=1)) for k, v in samples.items()}
    combined = {k: math.hypot(stat.get(k, 0.0), sys_u[k]) if math.isfinite(stat.get(k, 0.0)) else math.inf
                for k in keys}
    return FitUncertainty(stat, sys_u, combined, {k: 2 * v for k, v in combined.items()}, used, tuple(sources))
