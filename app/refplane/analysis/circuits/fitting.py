"""Fit an equivalent circuit to a sweep: parameters with standard errors, and the model choice.

What is minimised
-----------------
The residual is the complex error of the *measured quantity*, real and imaginary parts
stacked: for a reflection sweep Γ_model − S11 (Γ referred to the port's Z0); for a
series-through or shunt-through sweep S21_model − S21 (see
:mod:`refplane.analysis.readings.two_port_impedance`). This is well conditioned everywhere on the
chart: opens and shorts are finite points (|Γ| = 1) rather than infinite or zero
impedances, and it weights every point by the analyzer's own, roughly uniform, error in
the measured quantity, so the least-squares fit is the maximum-likelihood one for that
noise. The relative impedance error |Z_model − Z|/|Z| is reported beside it
(:attr:`FitResult.residual_rel`) because it is the figure a person reads ("0.4 %").

How
---
Parameters are fitted as their natural logarithms, so they stay positive and a
nanohenry and a kilohm are equally easy steps for the solver; the start is the model's
closed-form estimate (:meth:`CircuitModel.estimate`), plus a few starts around it, and
``scipy.optimize.least_squares`` refines. Standard errors come from the Jacobian J (central
differences in log-parameters) and the residual: cov = s²·(JᵀJ)⁻¹ with s² = SSR/(N − k),
N = 2·points real residuals and k parameters; a parameter's error is p·σ(ln p) (first
order). Derived figures (self-resonant frequency) carry errors propagated the same way.

Choosing the model
------------------
Automatic choice fits every distinct circuit (aliases once) and ranks them by AICc, the
small-sample Akaike criterion for Gaussian residuals,
AICc = N·ln(SSR/N) + 2k + 2k(k + 1)/(N − k − 1). Among the circuits within 2 of the best
AICc the one with fewest parameters wins (the simplest adequate model). Residuals below
1e-8 RMS, far under any instrument's noise, count as equal, so noise-free data does not rank
on rounding. The winner is then named by :func:`refplane.analysis.circuits.models.reading_for`
(a series R-L-C that behaves as a capacitor is reported as ``capacitor``, and so on).
On sweeps longer than :data:`SCREEN_POINTS` the candidates are compared on that many points
spread evenly over the band, and the chosen circuit is then fitted to every point.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from refplane.analysis.circuits.models import CIRCUITS, MODELS, CircuitModel, get_model, reading_for, rename, unit_of
from refplane.analysis.errors import AnalysisError
from refplane.analysis.readings.impedance import gamma_to_z, z_to_gamma
from refplane.analysis.sweep import Sweep
from refplane.analysis.units import format_frequency, format_si

#: RMS residual below which fits count as exact (see the module notes).
RESIDUAL_FLOOR = 1e-8

#: Longest sweep on which the candidate circuits are compared point for point (see _fit).
SCREEN_POINTS = 1000

#: AICc margin within which a simpler circuit is preferred.
SIMPLER_WITHIN = 2.0

#: What a fit was made from: how the command line and the window name it.
MEASUREMENTS = ("reflection", "series-through", "shunt-through")


@dataclass(frozen=True)
class RankEntry:
    """One candidate of an automatic model choice."""

    model_id: str
    #: Number of free parameters.
    n_params: int
    #: AICc of the fit (lower is better).
    aicc: float
    #: AICc minus the best candidate's.
    delta_aicc: float
    #: RMS complex residual of the measured quantity.
    residual_rms: float
    #: RMS relative impedance error, as a fraction.
    residual_rel: float

    def json(self) -> dict:
        """The entry as the command line's JSON prints it."""
        return {"model": self.model_id, "n_params": self.n_params, "aicc": self.aicc,
                "delta_aicc": self.delta_aicc, "residual_rms": self.residual_rms,
                "residual_rel": self.residual_rel}


@dataclass(frozen=True)
class FitResult:
    """A fitted equivalent circuit.

    Attributes
    ----------
    model_id : str
        The model (see :data:`refplane.analysis.circuits.models.MODELS`).
    params, stderr : dict of str to float
        Fitted values and their standard errors, SI, keyed by the model's parameter keys.
    residual_rms : float
        RMS complex residual of the measured quantity (S11, or S21 for a through).
    residual_rel : float
        RMS of |Z_model − Z|/|Z| over the band, a fraction (0.004 = 0.4 %).
    band_hz : (float, float)
        First and last frequency used.
    n_points : int
        Number of frequency points used.
    ranking : tuple of RankEntry
        Candidates of an automatic choice, best first (only the fitted model otherwise).
    derived : dict of str to float
        ``srf_hz`` and ``srf_hz_stderr`` (self-resonance, when the circuit has one inside
        reason; NaN when it has none), ``q`` and ``q_at_hz`` (Q = |X|/R of the fitted model
        at the band's geometric centre).
    z0_ohm : float
        The reference impedance of the measurement.
    measurement : str
        ``"reflection"``, ``"series-through"`` or ``"shunt-through"``.
    port : int
        The reflection port, or the driving port of a through.
    automatic : bool
        True when the model was chosen automatically.
    ranked_points : int
        Number of points the ranking was computed on: every point, or for sweeps longer than
        :data:`SCREEN_POINTS` that many spread evenly over the band (the reported fit itself
        always uses every point in the band).
    """

    model_id: str
    params: dict[str, float]
    stderr: dict[str, float]
    residual_rms: float
    residual_rel: float
    band_hz: tuple[float, float]
    n_points: int
    ranking: tuple[RankEntry, ...]
    derived: dict[str, float]
    z0_ohm: float = 50.0
    measurement: str = "reflection"
    port: int = 1
    automatic: bool = False
    ranked_points: int = 0
    criterion: str = field(default="AICc")

    @property
    def model(self) -> CircuitModel:
        """The fitted model."""
        return MODELS[self.model_id]

    def impedance(self, freq_hz) -> np.ndarray:
        """The fitted model's impedance at ``freq_hz`` (above 0 Hz)."""
        return self.model.impedance(freq_hz, self.params)

    def q_at(self, freq_hz: float) -> float:
        """Quality factor |X|/R of the fitted model at ``freq_hz``."""
        z = complex(self.impedance(float(freq_hz)))
        return abs(z.imag) / z.real if z.real > 0 else math.inf

    def to_sweep(self, freq_hz, *, z0_ohm: float | None = None, name: str | None = None) -> Sweep:
        """The model as a 1-port reflection sweep over ``freq_hz`` (points at 0 Hz are left out).

        Parameters
        ----------
        freq_hz : array_like
            Frequencies, increasing; typically the measured sweep's, for a dashed overlay.
        z0_ohm : float, optional
            Reference of the reflection (default: the measurement's).
        name : str, optional
            Label of the sweep (default "fit: <model id>").
        """
        f = np.asarray(freq_hz, dtype=np.float64)
        f = f[f > 0]
        if f.size == 0:
            raise AnalysisError("no frequencies above 0 Hz to draw the fitted model at")
        z0 = self.z0_ohm if z0_ohm is None else float(z0_ohm)
        gamma = z_to_gamma(self.impedance(f), z0)
        return Sweep(freq_hz=f.copy(), s=gamma.reshape(-1, 1, 1).copy(), z0_ohm=np.array([complex(z0)]),
                     name=name or f"fit: {self.model_id}", source=None,
                     comments=(f"model fitted by Refplane: {self.sentence()}",))

    def value_text(self, key: str) -> str:
        """One parameter as "9.10 nH ± 0.20 nH" (digits to match its error).

        A parameter the data does not determine reads "≈ 0 fF (not determined by the data)"
        when the fit drove it to the bottom of its range (the element is not seen at all).
        """
        value, err, unit = self.params[key], self.stderr.get(key, math.nan), unit_of(key)
        if math.isinf(err):
            return f"{_bare_value(value, unit)} (not determined by the data)"
        return format_with_error(value, err, unit)

    def sentence(self) -> str:
        """The fit in one plain sentence.

        Examples
        --------
        "75.20 Ω ± 0.05 Ω in series with 9.10 nH ± 0.20 nH (residual 0.4 %)"
        """
        text = self.model.phrase.format(**{k: self.value_text(k) for k in self.model.param_names})
        srf = self.derived.get("srf_hz", math.nan)
        # A resonance the data does not pin down (an element not seen) is left unsaid.
        if math.isfinite(srf) and not math.isinf(self.derived.get("srf_hz_stderr", math.nan)):
            text += f"; self-resonant at {format_with_error(srf, self.derived.get('srf_hz_stderr', math.nan), 'Hz')}"
            if not self.band_hz[0] <= srf <= self.band_hz[1]:
                text += " (outside the fitted band: an extrapolation)"
        text = text[0].upper() + text[1:]
        return f"{text} (residual {format_percent(self.residual_rel)})"

    def table_rows(self) -> list[tuple[str, str, str]]:
        """(key, value, ± error) rows for a table, one per parameter, in the model's order.

        Value and error share one prefix and one last decimal place, as in the sentence.
        """
        rows = []
        for key in self.model.param_names:
            if math.isinf(self.stderr.get(key, math.nan)):
                rows.append((key, _bare_value(self.params[key], unit_of(key)), "not determined"))
                continue
            value, _, err = self.value_text(key).partition(" ± ")
            rows.append((key, value, f"± {err}" if err else "± —"))
        return rows

    def json(self) -> dict:
        """The result as ``refplane fit --json`` prints it."""
        return {
            "model": self.model_id,
            "automatic": self.automatic,
            "params": dict(self.params),
            "stderr": dict(self.stderr),
            "residual_rms": self.residual_rms,
            "residual_rel": self.residual_rel,
            "criterion": self.criterion,
            "ranking": [r.json() for r in self.ranking],
            "derived": dict(self.derived),
            "band_hz": list(self.band_hz),
            "n_points": self.n_points,
            "ranked_points": self.ranked_points,
            "measurement": self.measurement,
            "port": self.port,
            "z0_ohm": self.z0_ohm,
            "sentence": self.sentence(),
        }


def _bare_value(value: float, unit: str) -> str:
    # At the edge of the fitting range the value only says "none seen" or "no limit seen".
    lo, hi = _RANGE[unit]
    if value <= lo * 1.001:
        return f"≈ 0 {unit}"
    if value >= hi / 1.001:
        return f"∞ {unit}"
    return format_si(value, unit, 4)


def format_percent(fraction: float) -> str:
    """A fraction as a percentage with two significant figures at most: 0.0042 → "0.42 %"."""
    if not math.isfinite(fraction):
        return "— %"
    pct = 100.0 * fraction
    if pct >= 10:
        return f"{pct:.0f} %"
    if pct >= 0.1:
        return f"{pct:.2g} %"
    if pct >= 0.001:
        return f"{pct:.1g} %"
    return "< 0.001 %"


def format_with_error(value: float, err: float, unit: str) -> str:
    """Value ± error with the value shown to the error's second significant figure.

    Examples
    --------
    >>> format_with_error(9.1034e-9, 2.1e-10, "H")
    '9.10 nH ± 0.21 nH'
    """
    if math.isinf(err):
        return f"{format_si(value, unit, 4)} (not determined by the data)"
    if not math.isfinite(err) or not math.isfinite(value) or value == 0:
        return format_si(value, unit, 4)
    if err < 1e-6 * abs(value):  # an exact fit of clean data: the error rounds to nothing
        shown = format_si(value, unit, 6)
        return f"{shown} ± 0 {shown.partition(' ')[2]}".rstrip()
    # The value's metric prefix, then as many decimals as show the error to two figures.
    number, _, prefixed = format_si(value, unit, 6).partition(" ")
    scale = value / float(number)
    decimals = min(max(1 - math.floor(math.log10(err / abs(scale))), 0), 6)
    return f"{value / scale:.{decimals}f} {prefixed} ± {err / abs(scale):.{decimals}f} {prefixed}"


# ---------------------------------------------------------------------------------------
# The fit itself.

@dataclass(frozen=True)
class _Data:
    freq_hz: np.ndarray
    target: np.ndarray     # Γ of the measurement against z_ref
    z_ohm: np.ndarray      # the measured impedance
    z_ref: float           # reference for the residual's Γ
    scale: float           # |Δ measured| = scale · |ΔΓ(z_ref)|
    z0_ohm: float
    measurement: str
    port: int


@dataclass(frozen=True)
class _Trial:
    model: CircuitModel
    log_p: np.ndarray
    ssr: float
    n_real: int
    jac: np.ndarray
    residual_rel: float

    @property
    def params(self) -> dict[str, float]:
        return dict(zip(self.model.param_names, np.exp(self.log_p)))

    @property
    def residual_rms(self) -> float:
        return math.sqrt(self.ssr / (self.n_real / 2))

    @property
    def aicc(self) -> float:
        n, k = self.n_real, self.model.n_params
        ssr = max(self.ssr, (n / 2) * RESIDUAL_FLOOR**2)
        return n * math.log(ssr / n) + 2 * k + 2 * k * (k + 1) / (n - k - 1)


#: Physical range of each kind of parameter; the solver's steps are held inside it, so a
#: model that does not describe the data cannot run off to 1e300 and stall the search.
_RANGE = {"Ω": (1e-9, 1e12), "H": (1e-18, 1e3), "F": (1e-21, 1e3)}


def _limits(model: CircuitModel) -> tuple[np.ndarray, np.ndarray]:
    lo, hi = zip(*(_RANGE[unit_of(k)] for k in model.param_names))
    return np.log(lo), np.log(hi)


def _gammas(model: CircuitModel, data: _Data, log_p: np.ndarray) -> np.ndarray:
    """Γ(Z; z_ref) of the model for one parameter vector (k,) or many at once (m, k)."""
    lo, hi = _limits(model)
    p = np.exp(np.clip(np.atleast_2d(log_p), lo, hi))
    w = 2 * np.pi * data.freq_hz[None, :]
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        z = model._z(w, *(p[:, i:i + 1] for i in range(p.shape[1])))
        g = (z - data.z_ref) / (z + data.z_ref)
    return np.where(np.isinf(z), 1.0 + 0j, g)


def _stack(d: np.ndarray) -> np.ndarray:
    out = np.concatenate([d.real, d.imag], axis=-1)
    # A wild trial step can overflow; a large finite residual sends the solver back.
    return np.where(np.isfinite(out), out, 1e3)


def _residual(model: CircuitModel, data: _Data, log_p: np.ndarray) -> np.ndarray:
    return _stack((_gammas(model, data, log_p)[0] - data.target) * data.scale)


def _jacobian(model: CircuitModel, data: _Data, log_p: np.ndarray, step: float = 1e-6) -> np.ndarray:
    """Central differences in log-parameters, all 2k evaluations in one vectorised call."""
    k = log_p.size
    h = np.eye(k) * step
    rows = _stack((_gammas(model, data, np.vstack([log_p + h, log_p - h])) - data.target) * data.scale)
    return ((rows[:k] - rows[k:]) / (2 * step)).T


def _starts(model: CircuitModel, data: _Data) -> list[np.ndarray]:
    ok = np.isfinite(data.z_ohm) & (data.z_ohm != 0)
    first = np.clip(np.log(np.array(list(model.estimate(data.freq_hz[ok], data.z_ohm[ok]).values()))),
                    *_limits(model))
    starts = [first]
    # The estimate is exact for clean data; with noise, or for a model that does not
    # describe the data, the solver can stall on a flat stretch, so also try each
    # parameter a decade either side.
    for i in range(first.size):
        for shift in (-math.log(10.0), math.log(10.0)):
            s = first.copy()
            s[i] += shift
            starts.append(s)
    return starts


def _thin(data: _Data, count: int) -> _Data:
    """Every so-many point of the data, ``count`` points spread evenly across the band."""
    idx = np.unique(np.round(np.linspace(0, data.freq_hz.size - 1, count)).astype(int))
    return dataclasses.replace(data, freq_hz=data.freq_hz[idx], target=data.target[idx], z_ohm=data.z_ohm[idx])


def _fit_model(model: CircuitModel, data: _Data, start: np.ndarray | None = None) -> _Trial:
    from scipy.optimize import least_squares

    def solve(x0: np.ndarray, budget: int):
        sol = least_squares(lambda p: _residual(model, data, p), x0, method="lm",
                            jac=lambda p: _jacobian(model, data, p),
                            xtol=1e-13, ftol=1e-13, gtol=1e-13, max_nfev=budget)
        return sol.x, float(np.sum(sol.fun**2))

    exact = data.freq_hz.size * RESIDUAL_FLOOR**2
    starts = _starts(model, data) if start is None else [start]
    k = starts[0].size
    # The closed-form start gets the full budget; the others are screened briefly and only
    # the best of them, if it beats the first, is refined. A model that does not describe
    # the data wanders along a valley and would otherwise use every evaluation it is given.
    best = solve(starts[0], 100 * (k + 1))
    if best[1] > exact and len(starts) > 1:
        screened = min((solve(x0, 10 * (k + 1)) for x0 in starts[1:]), key=lambda t: t[1])
        if screened[1] < best[1]:
            refined = solve(screened[0], 100 * (k + 1))
            best = refined if refined[1] < screened[1] else screened
    log_p = np.clip(best[0], *_limits(model))
    ssr = float(np.sum(_residual(model, data, log_p) ** 2))
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        z = model._z(2 * np.pi * data.freq_hz, *np.exp(log_p))
    ok = np.isfinite(data.z_ohm) & (data.z_ohm != 0) & np.isfinite(z)
    rel = float(np.sqrt(np.mean(np.abs((z[ok] - data.z_ohm[ok]) / data.z_ohm[ok]) ** 2))) if ok.any() else math.nan
    return _Trial(model=model, log_p=log_p, ssr=ssr, n_real=2 * data.freq_hz.size,
                  jac=_jacobian(model, data, log_p), residual_rel=rel)


def _covariance(trial: _Trial) -> np.ndarray:
    """Covariance of the log-parameters, s²·(JᵀJ)⁻¹.

    A parameter the data does not determine (its Jacobian column is nil, e.g. a shunt C
    driven to its lower limit on data without one, or the whole problem is singular) gets
    an infinite variance and no covariance with the others; the rest are computed without it.
    """
    k = trial.model.n_params
    dof = trial.n_real - k
    s2 = trial.ssr / dof
    jtj = trial.jac.T @ trial.jac
    cov = np.zeros((k, k))
    d = np.sqrt(np.abs(np.diag(jtj)))
    if not np.all(np.isfinite(d)) or not np.any(d > 0):
        return np.diag(np.full(k, np.inf))
    free = d > 1e-9 * d.max()
    sub = np.ix_(free, free)
    # Equilibrate before inverting: columns can differ by many decades.
    scaled = jtj[sub] / np.outer(d[free], d[free])
    if np.linalg.cond(scaled) > 1e14:
        return np.diag(np.full(k, np.inf))
    cov[sub] = s2 * np.linalg.inv(scaled) / np.outer(d[free], d[free])
    cov[~free, ~free] = np.inf
    return cov


def _derived(trial: _Trial, cov: np.ndarray, centre_hz: float) -> dict[str, float]:
    model = trial.model
    out: dict[str, float] = {}
    if model.has_resonance:
        def srf(lp):
            return model._srf(*np.exp(lp))

        value = srf(trial.log_p)
        err = math.nan
        if math.isfinite(value):
            grad = np.array([(srf(trial.log_p + h) - srf(trial.log_p - h)) / 2e-6
                             for h in np.eye(trial.log_p.size) * 1e-6])
            undetermined = ~np.isfinite(np.diag(cov))
            if np.any(undetermined & (grad != 0)):
                err = math.inf
            else:
                var = float(grad[~undetermined] @ cov[np.ix_(~undetermined, ~undetermined)] @ grad[~undetermined])
                err = math.sqrt(var) if var >= 0 else math.nan
        out["srf_hz"] = float(value)
        out["srf_hz_stderr"] = err
    z = complex(model._z(np.array([2 * np.pi * centre_hz]), *np.exp(trial.log_p))[0])
    out["q_at_hz"] = float(centre_hz)
    out["q"] = abs(z.imag) / z.real if z.real > 0 else math.inf
    return out


def _result(trial: _Trial, data: _Data, ranking: tuple[RankEntry, ...], *, report_as: CircuitModel,
            automatic: bool, ranked_points: int) -> FitResult:
    cov = _covariance(trial)
    params = trial.params
    sig = np.sqrt(np.clip(np.diag(cov), 0, np.inf))
    stderr = {k: float(params[k] * s) for k, s in zip(trial.model.param_names, sig)}
    centre = math.sqrt(data.freq_hz[0] * data.freq_hz[-1])
    derived = _derived(trial, cov, centre)
    if report_as.id != trial.model.id:
        params = rename(params, trial.model, report_as)
        stderr = rename(stderr, trial.model, report_as)
    return FitResult(
        model_id=report_as.id, params={k: float(v) for k, v in params.items()}, stderr=stderr,
        residual_rms=trial.residual_rms, residual_rel=trial.residual_rel,
        band_hz=(float(data.freq_hz[0]), float(data.freq_hz[-1])), n_points=int(data.freq_hz.size),
        ranking=ranking, derived=derived, z0_ohm=data.z0_ohm, measurement=data.measurement,
        port=data.port, automatic=automatic, ranked_points=ranked_points)


def _select_band(freq_hz: np.ndarray, band_hz: tuple[float, float] | None) -> np.ndarray:
    usable = freq_hz > 0
    if band_hz is None:
        mask = usable
    else:
        low, high = float(band_hz[0]), float(band_hz[1])
        if not (math.isfinite(low) and math.isfinite(high) and high > low):
            raise AnalysisError("the fit band needs an upper frequency above the lower")
        tol = 1e-12 * max(abs(high), 1.0)
        mask = usable & (freq_hz >= low - tol) & (freq_hz <= high + tol)
        if not mask.any():
            raise AnalysisError(
                f"the band {format_frequency(low)} to {format_frequency(high)} holds no swept point; "
                f"the sweep spans {format_frequency(freq_hz[0])} to {format_frequency(freq_hz[-1])}")
    return mask


def _fit(data: _Data, model: str) -> FitResult:
    n = data.freq_hz.size
    if model == "auto":
        candidates = [MODELS[c] for c in CIRCUITS if n >= MODELS[c].n_params + 1]
        if not candidates:
            raise AnalysisError(
                f"too few points to fit: {n} in the band; the simplest model needs at least 3")
    else:
        chosen = get_model(model)
        if n < chosen.n_params + 1:
            raise AnalysisError(
                f"too few points for model {chosen.id}: it has {chosen.n_params} parameters and needs "
                f"at least {chosen.n_params + 1} swept points in the band; found {n}")
        candidates = [MODELS[chosen.circuit]]
    # Long sweeps: candidates are compared on SCREEN_POINTS points spread evenly over the
    # band (a thousand points pin a two-terminal circuit down well), and the chosen one is
    # then refitted to every point, starting from where the comparison left it.
    screen = _thin(data, SCREEN_POINTS) if n > SCREEN_POINTS else data
    trials = [_fit_model(m, screen) for m in candidates]
    best_aicc = min(t.aicc for t in trials)
    order = sorted(trials, key=lambda t: t.aicc)
    centre = math.sqrt(data.freq_hz[0] * data.freq_hz[-1])

    def name(t: _Trial) -> str:
        return reading_for(t.model.id, t.params, centre) if model == "auto" else model

    ranking = tuple(RankEntry(model_id=name(t), n_params=t.model.n_params, aicc=t.aicc,
                              delta_aicc=t.aicc - best_aicc, residual_rms=t.residual_rms,
                              residual_rel=t.residual_rel) for t in order)
    if model == "auto":
        adequate = [t for t in order if t.aicc - best_aicc <= SIMPLER_WITHIN]
        winner = min(adequate, key=lambda t: (t.model.n_params, t.aicc))
        report_as, automatic = MODELS[name(winner)], True
    else:
        winner, report_as, automatic = trials[0], get_model(model), False
    if screen is not data:
        winner = _fit_model(winner.model, data, start=winner.log_p)
    return _result(winner, data, ranking, report_as=report_as, automatic=automatic,
                   ranked_points=int(screen.freq_hz.size))


def _check_model_id(model: str) -> str:
    if model != "auto":
        get_model(model)
    return model


def fit_reflection(freq_hz, gamma, z0_ohm: float = 50.0, *, model: str = "auto",
                   band_hz: tuple[float, float] | None = None, port: int = 1) -> FitResult:
    """Fit a circuit to a reflection measurement (S11 against ``z0_ohm``).

    Parameters
    ----------
    freq_hz : array_like, shape (n,)
        Increasing frequencies; points at 0 Hz are left out.
    gamma : array_like of complex, shape (n,)
        Measured reflection coefficient.
    z0_ohm : float
        Its (real) reference impedance.
    model : str
        A model id (:data:`refplane.analysis.circuits.models.MODEL_CHOICES`) or ``"auto"``.
    band_hz : (float, float), optional
        Fit only the points inside; default the whole sweep.
    port : int
        Recorded in the result (which port the reflection was).

    Returns
    -------
    FitResult

    Raises
    ------
    AnalysisError
        Unknown model, a band with no points, too few points for the model, bad numbers.
    """
    _check_model_id(model)
    f = np.asarray(freq_hz, dtype=np.float64)
    g = np.asarray(gamma, dtype=np.complex128)
    if f.ndim != 1 or g.shape != f.shape:
        raise AnalysisError("frequencies and reflection coefficients must be two lists of one length")
    if not np.all(np.isfinite(g)):
        raise AnalysisError("some reflection coefficients are not finite numbers")
    z0c = complex(z0_ohm)
    if not (math.isfinite(z0c.real) and z0c.real > 0) or abs(z0c.imag) > 1e-12 * abs(z0c):
        raise AnalysisError(f"a fit needs a real, positive reference impedance; this one is {z0c:g} Ω")
    z0 = z0c.real
    mask = _select_band(f, band_hz)
    data = _Data(freq_hz=f[mask], target=g[mask], z_ohm=gamma_to_z(g[mask], z0), z_ref=z0, scale=1.0,
                 z0_ohm=z0, measurement="reflection", port=port)
    return _fit(data, model)


def fit_impedance(freq_hz, z_ohm, *, z_ref_ohm: float = 50.0, model: str = "auto",
                  band_hz: tuple[float, float] | None = None, measurement: str = "reflection",
                  scale: float = 1.0, z0_ohm: float | None = None, port: int = 1) -> FitResult:
    """Fit a circuit to measured impedance, with the residual taken on Γ(Z; ``z_ref_ohm``).

    ``z_ref_ohm`` should be where the measurement's error is uniform: the port Z0 for a
    reflection, 2·Z0 for a series-through, Z0/2 for a shunt-through (then ``scale`` = 1/2
    makes the residual the S21 error in both cases; see :func:`fit_sweep`). Other parameters as
    :func:`fit_reflection`.
    """
    _check_model_id(model)
    f = np.asarray(freq_hz, dtype=np.float64)
    z = np.asarray(z_ohm, dtype=np.complex128)
    if f.ndim != 1 or z.shape != f.shape:
        raise AnalysisError("frequencies and impedances must be two lists of one length")
    if np.any(np.isnan(z)):
        raise AnalysisError("some impedances are not numbers")
    if measurement not in MEASUREMENTS:
        raise AnalysisError(f"unknown measurement {measurement!r}")
    mask = _select_band(f, band_hz)
    data = _Data(freq_hz=f[mask], target=z_to_gamma(z[mask], z_ref_ohm), z_ohm=z[mask],
                 z_ref=float(z_ref_ohm), scale=float(scale),
                 z0_ohm=float(z_ref_ohm if z0_ohm is None else z0_ohm), measurement=measurement, port=port)
    return _fit(data, model)


def fit_sweep(sweep: Sweep, *, model: str = "auto", band_hz: tuple[float, float] | None = None,
              port: int | None = None, through: str | None = None) -> FitResult:
    """Fit a circuit to one sweep: a port's reflection, or a 2-port's transmission.

    Parameters
    ----------
    sweep : Sweep
        The measurement.
    model : str
        A model id or ``"auto"``.
    band_hz : (float, float), optional
        Fit only the points inside.
    port : int, optional
        Reflection: which port's S_NN (needed for sweeps of more than one port; 1 for a
        1-port). Through: the driving port (1 uses S21, 2 uses S12; default 1).
    through : {"series", "shunt"}, optional
        Fit the impedance from transmission: the part in series between the ports
        (Z = 2·Z0·(1 − S21)/S21) or shunting the line (Z = Z0·S21/(2·(1 − S21))).

    Raises
    ------
    AnalysisError
        A multi-port sweep with neither ``port`` nor ``through``, a through on a sweep that
        is not 2-port, and everything :func:`fit_reflection` refuses.
    """
    from refplane.analysis.readings.two_port_impedance import through_impedance, through_reference

    _check_model_id(model)
    try:
        if through is not None:
            drive = 1 if port is None else port
            _, z, z0 = through_impedance(sweep, through, drive_port=drive)
            z_ref, scale = through_reference(through, z0)
            return fit_impedance(sweep.freq_hz, z, z_ref_ohm=z_ref, model=model, band_hz=band_hz,
                                 measurement=f"{through}-through", scale=scale, z0_ohm=z0, port=drive)
        if port is None:
            if sweep.n_ports > 1:
                raise AnalysisError(
                    f"this is a {sweep.n_ports}-port sweep: choose the reflection to fit with a port "
                    "(--port N), or fit from transmission with --through series|shunt")
            port = 1
        sweep.check_port(port)
        return fit_reflection(sweep.freq_hz, sweep.reflection(port), sweep.z0_ohm[port - 1],
                              model=model, band_hz=band_hz, port=port)
    except AnalysisError as exc:
        if exc.file is None and sweep.source:
            raise AnalysisError(exc.reason, file=sweep.source) from None
        raise


def parameter_table(result: FitResult) -> list[tuple[str, str, str]]:
    """Rows (key, value, ± error) of a result; the one path the command line and window use."""
    return result.table_rows()


def ranking_rows(result: FitResult) -> list[tuple[str, str, str, str]]:
    """Rows (model, parameters, ΔAICc, residual) of a result's ranking, best first."""
    return [(r.model_id, str(r.n_params), f"{r.delta_aicc:.1f}", format_percent(r.residual_rel))
            for r in result.ranking]


def describe_models() -> list[tuple[str, str, str]]:
    """(id, parameter keys, topology) of every model, for help text."""
    return [(m.id, ", ".join(m.param_names), m.topology) for m in MODELS.values()]


def model_impedance(model_id: str, freq_hz, params: Mapping[str, float]) -> np.ndarray:
    """Shorthand for ``get_model(model_id).impedance(freq_hz, params)``."""
    return get_model(model_id).impedance(freq_hz, params)
