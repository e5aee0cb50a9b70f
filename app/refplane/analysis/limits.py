"""Limits over a band and the decisions they give: pass, fail, or (with uncertainties) indeterminate.

Grammar
-------
One limit is written ``QUANTITY OP VALUE over F1:F2``::

    vswr <= 1.5 over 144MHz:148MHz
    return_loss_db >= 20 over 0.8GHz:0.96GHz
    s21_db >= -0.5 over 1MHz:1GHz
    r_ohm >= 45 over 10MHz:100MHz
    series_l_h <= 12nH over 100MHz:500MHz

- QUANTITY is a reading key of ``refplane read --json`` (``vswr``, ``return_loss_db``,
  ``r_ohm``, ``x_ohm``, ``gamma_mag``, …, see :data:`QUANTITIES`), or ``s21_db`` /
  ``s21_deg`` (transmission from port 1 to port 2, two-port sweeps only).
- OP is ``<=`` (at most) or ``>=`` (at least).
- VALUE is a number, optionally with the quantity's unit and a metric prefix
  (``12nH``, ``45ohm``, ``45Ω``, ``20dB``, ``-0.5dB``, ``10deg``).
- F1:F2 is the band, lower frequency first, each frequency with its unit (``144MHz``,
  ``0.8GHz``, ``470M``); a bare number is refused because "144" could mean anything.
- Words are separated by spaces; ``over`` may be written in any case. A limit file holds one
  limit per line; blank lines and text after ``#`` are ignored.

Evaluation
----------
A limit is tested at every swept point inside the band and at the band edges themselves
(values there are interpolated as everywhere else in Refplane: the complex S-parameter
linearly between the neighbouring swept points, see :mod:`refplane.analysis.readings.markers`). The
band must lie inside the sweep; Refplane does not extrapolate. A point where the quantity has
no value (series C while the part is inductive, say) does not conform.

The margin is how far inside the limit the reading is, in the quantity's unit: ``VALUE − reading``
for ``<=`` and ``reading − VALUE`` for ``>=``; negative means outside. The worst point is the
one with the smallest margin.

Decisions (JCGM 106:2012, clause 8)
----------------------------------
Without an uncertainty the decision is *simple acceptance* (a guard band of zero): pass when
every margin is at least zero, otherwise fail.

With an expanded uncertainty ``U`` (coverage factor k = 2) of the quantity at each swept point
the decision uses guard bands of width ``w = U`` on both sides of the limit:

- pass: the reading is at least ``U`` inside the limit at every tested point (guarded
  acceptance: for a Gaussian distribution of the measurand each point then conforms with a
  probability of at least Φ(2) ≈ 97.7 %);
- fail: the reading lies more than ``U`` outside the limit at some point (guarded rejection:
  non-conformance there with at least the same probability);
- indeterminate: neither; the reading is too close to the limit for its uncertainty.

The rule is written into every result (:attr:`LimitResult.rule`) so a report states it.
"""

from __future__ import annotations

import math
import os
import re
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep

#: Quantities a limit can test: key → (unit for VALUE, plain description).
QUANTITIES: dict[str, tuple[str, str]] = {
    "gamma_re": ("", "real part of the reflection coefficient"),
    "gamma_im": ("", "imaginary part of the reflection coefficient"),
    "gamma_mag": ("", "magnitude of the reflection coefficient |Γ|"),
    "gamma_deg": ("deg", "angle of the reflection coefficient"),
    "r_ohm": ("ohm", "resistance R of Z = R + jX"),
    "x_ohm": ("ohm", "reactance X of Z = R + jX"),
    "z_mag_ohm": ("ohm", "magnitude of the impedance |Z|"),
    "series_l_h": ("H", "equivalent series inductance"),
    "series_c_f": ("F", "equivalent series capacitance"),
    "parallel_r_ohm": ("ohm", "parallel-equivalent resistance"),
    "parallel_x_ohm": ("ohm", "parallel-equivalent reactance"),
    "vswr": ("", "voltage standing-wave ratio"),
    "return_loss_db": ("dB", "return loss"),
    "q": ("", "quality factor |X|/R"),
    "s21_db": ("dB", "transmission gain 20·log10|S21| (two-port sweeps)"),
    "s21_deg": ("deg", "transmission phase of S21 (two-port sweeps)"),
}

#: Quantities read from transmission (they need a sweep of two or more ports).
TRANSMISSION = ("s21_db", "s21_deg")

#: The decisions a limit can give.
DECISIONS = ("pass", "fail", "indeterminate")

EXAMPLE = "vswr <= 1.5 over 144MHz:148MHz"

RULE_SIMPLE = ("simple acceptance, no guard band (JCGM 106:2012, clause 8, w = 0): "
               "pass when every reading in the band is on the allowed side of the limit")
RULE_GUARDED = ("guard bands of one expanded uncertainty U (k = 2) (JCGM 106:2012, clause 8, w = U): "
                "pass when every reading is at least U inside the limit, fail when one lies more than "
                "U outside it, otherwise indeterminate")

_VALUE_UNITS = {
    "ohm": ("ohms", "ohm", "Ω", "R"),
    "H": ("H",),
    "F": ("F",),
    "dB": ("dB", "db"),
    "deg": ("deg", "°"),
}
_PREFIX = {"f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "μ": 1e-6, "m": 1e-3,
           "": 1.0, "k": 1e3, "M": 1e6, "G": 1e9}
_NUMBER = re.compile(r"^([-+−]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)(.*)$")
_OP = re.compile(r"^\s*([A-Za-z_][A-Za-z0-9_]*)\s*(<=|>=|=<|=>|<|>|==|=|≤|≥)?\s*(.*)$", re.S)


@dataclass(frozen=True)
class Limit:
    """One parsed limit: ``quantity op value over low_hz:high_hz``.

    Attributes
    ----------
    quantity : str
        A key of :data:`QUANTITIES`.
    op : str
        ``"<="`` or ``">="``.
    value : float
        The limit, in the quantity's SI unit (ohms, henries, dB, degrees, or none).
    band_hz : (float, float)
        Lower and upper frequency of the band, hertz.
    text : str
        The expression as written (for messages and reports).
    """

    quantity: str
    op: str
    value: float
    band_hz: tuple[float, float]
    text: str

    @property
    def unit(self) -> str:
        """The unit of ``value`` and of readings and margins of this quantity ("" when none)."""
        return QUANTITIES[self.quantity][0]

    def canonical(self) -> str:
        """The limit written back in the grammar, with frequencies in their usual units."""
        from refplane.analysis.units import format_frequency

        low, high = (format_frequency(f).replace(" ", "") for f in self.band_hz)
        return f"{self.quantity} {self.op} {self.value:g} over {low}:{high}"


def _closest(word: str, choices: Sequence[str]) -> str:
    import difflib

    near = difflib.get_close_matches(word.lower(), list(choices), n=1, cutoff=0.6)
    return f" (did you mean {near[0]}?)" if near else ""


def _parse_value(text: str, quantity: str, whole: str) -> float:
    match = _NUMBER.match(text.strip())
    if not match:
        raise AnalysisError(f"{whole!r}: {text.strip()!r} is not a number; write the limit like '{EXAMPLE}'")
    value = float(match.group(1).replace("−", "-"))
    unit_text = match.group(2).strip()
    if not unit_text:
        return value
    unit = QUANTITIES[quantity][0]
    if unit and unit != "dB" and unit != "deg":
        for suffix in _VALUE_UNITS[unit]:
            if unit_text.endswith(suffix) and unit_text[: -len(suffix)] in _PREFIX:
                return value * _PREFIX[unit_text[: -len(suffix)]]
        if unit == "ohm" and unit_text in _PREFIX:  # "1k" for a resistance, as elsewhere
            return value * _PREFIX[unit_text]
    elif unit and unit_text in _VALUE_UNITS[unit]:
        return value
    shown = {"ohm": "Ω (or ohm)", "deg": "deg"}.get(unit, unit)
    if not unit:
        raise AnalysisError(f"{whole!r}: {quantity} has no unit, so {unit_text!r} does not belong after the number")
    raise AnalysisError(f"{whole!r}: {unit_text!r} is not a unit of {quantity}; "
                        f"give the number in {shown}, with a metric prefix if you like")


def _parse_band_edge(text: str, whole: str) -> float:
    from refplane.analysis.units import parse_frequency

    edge = text.strip()
    if not edge:
        raise AnalysisError(f"{whole!r}: the band needs two frequencies, written like 144MHz:148MHz")
    if re.fullmatch(r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?", edge):
        raise AnalysisError(f"{whole!r}: the frequency {edge!r} has no unit; write it like {edge}MHz or {edge}Hz")
    try:
        value = parse_frequency(edge)
    except AnalysisError as exc:
        raise AnalysisError(f"{whole!r}: {exc}") from None
    if value < 0:
        raise AnalysisError(f"{whole!r}: the frequency {edge!r} is negative")
    return value


def parse_limit(text: str) -> Limit:
    """Parse one limit expression (see the module notes for the grammar).

    Parameters
    ----------
    text : str
        For example ``"vswr <= 1.5 over 144MHz:148MHz"``.

    Returns
    -------
    Limit

    Raises
    ------
    AnalysisError
        With one line saying what is wrong: unknown quantity, missing or unknown operator,
        bad number or unit, missing ``over``, a band frequency without a unit, or a
        reversed or empty band.

    Examples
    --------
    >>> parse_limit("return_loss_db >= 20 over 0.8GHz:0.96GHz").band_hz
    (800000000.0, 960000000.0)
    """
    whole = " ".join(str(text).split())
    if not whole:
        raise AnalysisError(f"an empty limit; write it like '{EXAMPLE}'")
    match = _OP.match(whole)
    if not match:
        raise AnalysisError(f"{whole!r} does not start with a quantity; write it like '{EXAMPLE}'")
    quantity, op, rest = match.group(1), match.group(2), match.group(3)
    if quantity.lower() in QUANTITIES:
        quantity = quantity.lower()
    else:
        raise AnalysisError(f"{whole!r}: {quantity!r} is not a quantity a limit can test{_closest(quantity, QUANTITIES)}; "
                            f"use one of {', '.join(QUANTITIES)}")
    if op is None:
        raise AnalysisError(f"{whole!r}: after {quantity} comes <= (at most) or >= (at least)")
    op = {"≤": "<=", "≥": ">="}.get(op, op)
    if op not in ("<=", ">="):
        raise AnalysisError(f"{whole!r}: {op!r} is not an operator a limit uses; write <= (at most) or >= (at least)")
    parts = re.split(r"\s+over\s+|\s+over$|^over\s+", rest, maxsplit=1, flags=re.IGNORECASE)
    if len(parts) != 2:
        raise AnalysisError(f"{whole!r}: say where the limit applies with 'over F1:F2', "
                            "e.g. 'over 144MHz:148MHz'")
    value_text, band_text = parts[0].strip(), parts[1].strip()
    if not value_text:
        raise AnalysisError(f"{whole!r}: the limit's value is missing after {op}")
    value = _parse_value(value_text, quantity, whole)
    low_text, sep, high_text = band_text.partition(":")
    if not sep:
        raise AnalysisError(f"{whole!r}: the band {band_text!r} needs two frequencies, written like 144MHz:148MHz")
    low, high = _parse_band_edge(low_text, whole), _parse_band_edge(high_text, whole)
    if high < low:
        raise AnalysisError(f"{whole!r}: the band {band_text} is reversed; write the lower frequency first")
    if high == low:
        raise AnalysisError(f"{whole!r}: the band {band_text} is empty; its upper frequency must be above the lower")
    return Limit(quantity=quantity, op=op, value=value, band_hz=(low, high), text=whole)


def parse_limits_text(text: str, *, file: str | os.PathLike | None = None) -> tuple[Limit, ...]:
    """Parse the limits of a limit file's text: one per line, ``#`` starts a comment.

    Raises
    ------
    AnalysisError
        For the first malformed line (with the file and the line number), or when the text
        holds no limit at all.
    """
    limits = []
    for number, line in enumerate(str(text).splitlines(), start=1):
        body = line.split("#", 1)[0].strip()
        if not body:
            continue
        try:
            limits.append(parse_limit(body))
        except AnalysisError as exc:
            raise AnalysisError(exc.reason, file=file, line=number) from None
    if not limits:
        raise AnalysisError("holds no limit (one per line, like '" + EXAMPLE + "')", file=file)
    return tuple(limits)


def read_limits(path: str | os.PathLike) -> tuple[Limit, ...]:
    """Read a limit file (UTF-8 text, one limit per line, ``#`` comments).

    Raises
    ------
    AnalysisError
        When the file cannot be read or a line is malformed (file, line, reason).
    """
    from refplane.analysis.errors import SweepFileError

    name = os.fspath(path)
    try:
        with open(name, encoding="utf-8") as handle:
            text = handle.read()
    except FileNotFoundError:
        raise SweepFileError("no such file", file=name) from None
    except IsADirectoryError:
        raise SweepFileError("this is a folder, not a limit file", file=name) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise SweepFileError(f"cannot read the limit file ({exc})", file=name) from None
    return parse_limits_text(text, file=name)


@dataclass(frozen=True, eq=False)
class LimitResult:
    """A limit tested over one sweep.

    Attributes
    ----------
    limit : Limit
    decision : str
        "pass", "fail" or "indeterminate" (the last only when uncertainties were given).
    freq_hz : ndarray
        Frequencies tested: the band edges and every swept point between them.
    values : ndarray
        The quantity at ``freq_hz`` (NaN where it has no value).
    margins : ndarray
        Distance inside the limit at each frequency (negative: outside; NaN: no value).
    worst_freq_hz, worst_value, margin : float
        The point with the smallest margin (a point without a value counts as the worst,
        with NaN value and margin).
    rule : str
        The decision rule used, in words, with its source.
    u : ndarray or None
        Expanded uncertainty (k = 2) at ``freq_hz`` when one was given.
    """

    limit: Limit
    decision: str
    freq_hz: np.ndarray
    values: np.ndarray
    margins: np.ndarray
    worst_freq_hz: float
    worst_value: float
    margin: float
    rule: str
    u: np.ndarray | None = None

    @property
    def passed(self) -> bool | None:
        """True for pass, False for fail, None when indeterminate."""
        return {"pass": True, "fail": False}.get(self.decision)

    @property
    def u_at_worst(self) -> float | None:
        """Expanded uncertainty at the worst point, when uncertainties were given."""
        if self.u is None:
            return None
        i = int(np.argmin(np.abs(self.freq_hz - self.worst_freq_hz)))
        return float(self.u[i])

    @property
    def conformance_probability(self) -> float | None:
        """Probability that the worst point conforms, for a Gaussian with u = U/2 (JCGM 106, clause 7)."""
        ua = self.u_at_worst
        if ua is None or not math.isfinite(self.worst_value):
            return None
        lower, upper = (self.limit.value, None) if self.limit.op == ">=" else (None, self.limit.value)
        return conformance_probability(self.worst_value, ua / 2.0, lower=lower, upper=upper)

    def json(self) -> dict:
        """The result as ``refplane check --json`` prints it (NaN and ∞ become null there)."""
        out = {
            "limit": self.limit.text,
            "pass": self.passed,
            "decision": self.decision,
            "worst_freq_hz": self.worst_freq_hz,
            "worst_value": self.worst_value,
            "margin": self.margin,
            "unit": self.limit.unit,
            "rule": self.rule,
        }
        if self.u is not None:
            out["u_expanded_at_worst"] = self.u_at_worst
            out["conformance_probability"] = self.conformance_probability
        return out

    def sentence(self) -> str:
        """One plain line: "vswr <= 1.5 over 144MHz:148MHz: pass; worst 1.32 at 146 MHz (margin 0.18)"."""
        from refplane.analysis.units import format_frequency

        word = {"pass": "pass", "fail": "FAIL", "indeterminate": "indeterminate"}[self.decision]
        unit = f" {self.limit.unit}" if self.limit.unit else ""
        if math.isnan(self.worst_value):
            worst = f"no value of {self.limit.quantity} at {format_frequency(self.worst_freq_hz)}"
        else:
            worst = (f"worst {format_number(self.worst_value)}{unit} at {format_frequency(self.worst_freq_hz)} "
                     f"(margin {format_number(self.margin)}{unit}")
            ua = self.u_at_worst
            worst += f", U = {format_number(ua)}{unit})" if ua is not None else ")"
        return f"{self.limit.text}: {word}; {worst}"


def format_number(value: float, digits: int = 4) -> str:
    """A reading for sentences and tables: 4 significant digits, the minus sign typeset (−)."""
    if value is None or math.isnan(value):
        return "—"
    if math.isinf(value):
        return "−∞" if value < 0 else "∞"
    return f"{value:.{digits}g}".replace("-", "−")


def conformance_probability(y: float, u: float, *, lower: float | None = None,
                            upper: float | None = None) -> float:
    """Probability that a measurand lies inside ``[lower, upper]`` given a measured value.

    For a Gaussian distribution with expectation ``y`` and standard deviation ``u``
    (JCGM 106:2012, clause 7): p_c = Φ((T_U − y)/u) − Φ((T_L − y)/u), with a missing limit
    taken as infinite.

    Parameters
    ----------
    y : float
        Measured value (best estimate).
    u : float
        Standard uncertainty (k = 1), > 0.
    lower, upper : float, optional
        Tolerance limits T_L and T_U; give at least one.
    """
    if lower is None and upper is None:
        raise AnalysisError("a conformance probability needs at least one tolerance limit")
    if not u > 0:
        raise AnalysisError("the standard uncertainty must be above zero")

    def phi(z: float) -> float:
        return 0.5 * math.erfc(-z / math.sqrt(2.0))

    high = phi((upper - y) / u) if upper is not None else 1.0
    low = phi((lower - y) / u) if lower is not None else 0.0
    return high - low


def quantity_values(sweep: Sweep, quantity: str, freq_hz, *, port: int = 1) -> np.ndarray:
    """The quantity at frequencies inside the sweep (interpolated between swept points).

    Raises
    ------
    AnalysisError
        For an unknown quantity, a transmission quantity of a one-port sweep, a port the
        sweep does not have, or a frequency outside the sweep.
    """
    from refplane.analysis.readings.markers import interpolate

    if quantity not in QUANTITIES:
        raise AnalysisError(f"{quantity!r} is not a quantity a limit can test{_closest(quantity, QUANTITIES)}")
    at = np.atleast_1d(np.asarray(freq_hz, dtype=np.float64))
    where = sweep.source or sweep.name
    if quantity in TRANSMISSION:
        if sweep.n_ports < 2:
            raise AnalysisError(f"{quantity} needs a sweep of two ports; this one has {sweep.n_ports}", file=where)
        s21 = np.atleast_1d(interpolate(sweep.freq_hz, sweep.s[:, 1, 0], at))
        if quantity == "s21_db":
            with np.errstate(divide="ignore"):
                return 20.0 * np.log10(np.abs(s21))
        return np.degrees(np.angle(s21))
    from refplane.analysis.readings import impedance

    sweep.check_port(port)
    gamma = np.atleast_1d(interpolate(sweep.freq_hz, sweep.reflection(port), at))
    # The quantities read straight off Γ use the very functions Readout uses (same numbers,
    # a third of the work in a batch); the rest take the full readout.
    direct = {"gamma_re": lambda g: g.real, "gamma_im": lambda g: g.imag, "gamma_mag": np.abs,
              "gamma_deg": lambda g: np.degrees(np.angle(g)), "vswr": impedance.vswr,
              "return_loss_db": impedance.return_loss_db}
    with np.errstate(all="ignore"):
        if quantity in direct:
            values = direct[quantity](gamma)
        else:
            values = getattr(impedance.readout(at, gamma, float(sweep.z0_ohm[port - 1].real)), quantity)
    return np.array(values, dtype=np.float64)


def band_frequencies(sweep: Sweep, band_hz: tuple[float, float]) -> np.ndarray:
    """The band edges and every swept point strictly between them, in increasing order.

    Raises
    ------
    AnalysisError
        When the band reaches outside the sweep (Refplane does not extrapolate).
    """
    from refplane.analysis.readings.markers import check_inside
    from refplane.analysis.units import format_frequency

    low, high = band_hz
    f = sweep.freq_hz
    tol = 1e-12 * max(abs(f[-1]), 1.0)
    if low < f[0] - tol or high > f[-1] + tol:
        raise AnalysisError(
            f"the band {format_frequency(low)} to {format_frequency(high)} reaches outside the sweep "
            f"({format_frequency(f[0])} to {format_frequency(f[-1])}); Refplane does not extrapolate",
            file=sweep.source or sweep.name)
    edges = check_inside(f, [low, high])
    inner = f[(f > edges[0]) & (f < edges[1])]
    return np.concatenate(([edges[0]], inner, [edges[1]]))


def _expanded_u(u, sweep: Sweep, freq_hz: np.ndarray) -> np.ndarray:
    from refplane.analysis.readings.markers import interpolate

    arr = np.asarray(u, dtype=np.float64)
    if arr.ndim == 0:
        out = np.full(freq_hz.shape, float(arr))
    elif arr.shape == sweep.freq_hz.shape:
        out = np.real(interpolate(sweep.freq_hz, arr.astype(np.complex128), freq_hz))
    else:
        raise AnalysisError(f"{arr.size} uncertainties given for a sweep of {sweep.n_points} points; "
                            "give one per swept point, or one for all")
    if not np.all(np.isfinite(out)) or np.any(out < 0):
        raise AnalysisError("expanded uncertainties must be finite and not negative")
    return out


def evaluate_limit(limit: Limit, sweep: Sweep, *, port: int = 1, u=None) -> LimitResult:
    """Test one limit over a sweep.

    Parameters
    ----------
    limit : Limit
        From :func:`parse_limit`.
    sweep : Sweep
        The (calibrated, offset-corrected) sweep.
    port : int
        Port whose reflection the reflection quantities read (transmission quantities always
        read S21).
    u : float or ndarray of shape (n_points,), optional
        Expanded uncertainty (k = 2) of the quantity at each swept point, in the quantity's
        unit; interpolated linearly at the band edges. With it the decision uses guard bands
        and may be "indeterminate" (see the module notes).

    Returns
    -------
    LimitResult

    Raises
    ------
    AnalysisError
        When the band reaches outside the sweep, the quantity needs a two-port sweep, or
        the port does not exist.
    """
    freq = band_frequencies(sweep, limit.band_hz)
    values = quantity_values(sweep, limit.quantity, freq, port=port)
    with np.errstate(invalid="ignore"):
        margins = limit.value - values if limit.op == "<=" else values - limit.value
    # inf − inf (an open's VSWR against an infinite limit) has no meaning; treat like a missing value.
    key = np.where(np.isnan(margins), -np.inf, margins)
    i = int(np.argmin(key))
    if np.isnan(margins[i]):
        worst_value, margin = math.nan, math.nan
    else:
        worst_value, margin = float(values[i]), float(margins[i])
    missing = np.isnan(margins)
    if u is None:
        decision = "pass" if not missing.any() and np.all(margins >= 0) else "fail"
        return LimitResult(limit, decision, freq, values, margins, float(freq[i]), worst_value, margin,
                           RULE_SIMPLE)
    ue = _expanded_u(u, sweep, freq)
    with np.errstate(invalid="ignore"):
        rejected = missing | (margins < -ue)
        accepted = ~missing & (margins >= ue)
    if rejected.any():
        decision = "fail"
    elif accepted.all():
        decision = "pass"
    else:
        decision = "indeterminate"
    return LimitResult(limit, decision, freq, values, margins, float(freq[i]), worst_value, margin,
                       RULE_GUARDED, u=ue)


def evaluate_limits(limits: Sequence[Limit], sweep: Sweep, *, port: int = 1,
                    u: dict | None = None) -> tuple[LimitResult, ...]:
    """Test several limits over one sweep.

    Parameters
    ----------
    u : mapping, optional
        Expanded uncertainty (k = 2) per quantity key (a scalar or one value per swept
        point); quantities missing from it are decided without a guard band.
    """
    u = u or {}
    return tuple(evaluate_limit(lim, sweep, port=port, u=u.get(lim.quantity)) for lim in limits)


def overall_decision(results: Sequence[LimitResult]) -> str:
    """A sweep's decision over all its limits: fail beats indeterminate beats pass."""
    decisions = {r.decision for r in results}
    if "fail" in decisions:
        return "fail"
    if "indeterminate" in decisions:
        return "indeterminate"
    return "pass"


@dataclass(frozen=True)
class LimitStatistics:
    """How one limit came out across a batch of sweeps.

    The statistics are over each sweep's worst value in the band (the reading that decides
    the sweep), sweeps without a finite worst value left out.

    Attributes
    ----------
    limit : Limit
    count : int
        Sweeps with a finite worst value.
    mean, spread : float
        Mean and sample standard deviation (n − 1) of the worst values; NaN when undefined.
    worst : float
        The worst of the worst values (largest for ``<=``, smallest for ``>=``).
    worst_file : str or None
        Where it was found.
    cpk : float or None
        Process capability against the one-sided limit, ``(VALUE − mean)/(3·spread)`` for
        ``<=`` and ``(mean − VALUE)/(3·spread)`` for ``>=`` (the one-sided indices CPU and
        CPL of the NIST/SEMATECH e-Handbook of Statistical Methods, section 6.1.6). ``None``
        where it does not apply: fewer than two sweeps, or no spread.
    cpk_note : str
        Why Cpk is missing, or a reminder of what it assumes.
    """

    limit: Limit
    count: int
    mean: float
    spread: float
    worst: float
    worst_file: str | None
    cpk: float | None
    cpk_note: str

    def json(self) -> dict:
        """As ``refplane check --json`` prints it."""
        return {"limit": self.limit.text, "count": self.count, "mean": self.mean, "spread": self.spread,
                "worst": self.worst, "worst_file": self.worst_file, "cpk": self.cpk, "cpk_note": self.cpk_note,
                "unit": self.limit.unit}


def cpk_one_sided(mean: float, spread: float, value: float, op: str) -> float:
    """One-sided process capability index (NIST/SEMATECH e-Handbook, 6.1.6: CPU, CPL).

    ``(USL − μ)/(3σ)`` for an upper limit (``op == "<="``), ``(μ − LSL)/(3σ)`` for a lower one.
    """
    if not spread > 0:
        raise AnalysisError("process capability needs a spread above zero")
    return (value - mean) / (3.0 * spread) if op == "<=" else (mean - value) / (3.0 * spread)


def limit_statistics(limit: Limit, worst_values: Sequence[float],
                     files: Sequence[str] | None = None) -> LimitStatistics:
    """Mean, spread, worst and Cpk of one limit's worst values across a batch.

    Parameters
    ----------
    limit : Limit
    worst_values : sequence of float
        Each sweep's worst value for this limit (NaN for a sweep without one).
    files : sequence of str, optional
        The sweeps' names, same order, to say where the worst was.
    """
    vals = np.asarray(worst_values, dtype=np.float64)
    names = list(files) if files is not None else [None] * vals.size
    keep = np.isfinite(vals)
    v = vals[keep]
    kept_names = [n for n, k in zip(names, keep) if k]
    if v.size == 0:
        return LimitStatistics(limit, 0, math.nan, math.nan, math.nan, None, None,
                               "no sweep gave a finite value")
    j = int(np.argmax(v) if limit.op == "<=" else np.argmin(v))
    mean = float(np.mean(v))
    spread = float(np.std(v, ddof=1)) if v.size > 1 else math.nan
    if v.size < 2:
        cpk, note = None, "needs at least two sweeps"
    elif not spread > 0:
        cpk, note = None, "all sweeps read the same; no spread to judge"
    else:
        cpk = cpk_one_sided(mean, spread, limit.value, limit.op)
        note = ("one-sided, over each sweep's worst value; assumes a stable, roughly normal process"
                + (" (few sweeps: a rough figure)" if v.size < 30 else ""))
    return LimitStatistics(limit, int(v.size), mean, spread, float(v[j]), kept_names[j], cpk, note)
