"""Time domain from a reflection sweep: impulse and step responses, distance to each event, gating.

Transforms
----------
The reflection Γ(f) measured at N frequencies is turned into a response against round-trip
time t by an inverse FFT (Hines and Stinehelfer, "Time-domain oscillographic microwave
network analysis using frequency-domain data", IEEE Trans. MTT-22, 1974). A distance along
the line is d = vf·c·t/2 (round trip halved).

*Band-pass* (any sweep): the N points, windowed by a window of N points, are transformed as
they are; the response is complex and only its magnitude means something (the carrier of the
band's centre is in it). The alias-free range is 1/Δf; the resolution is the window's −6 dB
main-lobe width in bins over the swept span N·Δf.

*Low-pass* (a reflection with a real impulse response): the spectrum must sit on a harmonic
grid f_k = k·Δf, k = 0…K, including DC, so that Γ(−f) = Γ(f)* fills in the negative
frequencies. A sweep already on such a grid (start = step) is used as it is. Any other sweep
is resampled onto the harmonic grid of its own top frequency and (nearly) its own step:
Γ·e^(+j2πf·t_c), with t_c the round-trip delay of the strongest event, varies slowly, so it is
interpolated linearly and the delay put back (the error of linear interpolation of a phasor
turning by θ between points is about θ²/8 of its size; after taking t_c out θ is small for
the main event). The DC value, unless the sweep has a point at 0 Hz, is extrapolated: a straight line through the
lowest five points of the slowly varying Γ·e^(+j2πf·t_c), its real part taken (a passive
one-port's DC reflection is real). The reported DC error is the larger of the discarded
imaginary part and the difference from a quadratic through the same points. An error ε at
DC adds ε/M to every impulse sample and a ramp growing to ε over the range to the step
response. To avoid resampling and most of the extrapolation, sweep from Δf to K·Δf in
steps of Δf (start frequency = step); the lower Δf, the smaller the DC error. The two-sided
span is 2·K·Δf, so the resolution is twice as fine as band-pass over the same sweep.

Windows
-------
Rectangular, Hann, Hamming, Blackman and Kaiser (Kaiser and Schafer, "On the use of the
I0-sinh window for spectrum analysis", IEEE Trans. ASSP-28, 1980; β = 6 unless stated). Each
window's −3 dB and −6 dB main-lobe widths (in bins) and its highest sidelobe (dB) are
measured from its own zero-padded transform and reported with the result; F. J. Harris,
"On the use of windows for harmonic analysis with the discrete Fourier transform", Proc.
IEEE 66, 1978, table 1, lists the published values the tests check against.

Events
------
Local peaks of |impulse| are events when they rise above the larger of |ρ| = 0.01 (40 dB
return loss) and twice the window's highest sidelobe below the strongest peak (so a strong
event's sidelobes are not reported as faults); a peak within one resolution cell of a
stronger one belongs to it. They are listed strongest first, at most 50. In low-pass mode ρ carries its
sign (+ towards higher impedance or an open, − towards lower or a short).

Loss compensation: an event at round-trip time t has travelled twice through the cable up to
it. Given the cable's line model (:class:`refplane.analysis.lines.deembed.LineOffset`, its losses
belonging to its delay), the fraction x = (t/2)/τ_cable of its one-way loss A(f) in nepers
lies on the way, and an ideal event's impulse peak is ρ times the peak of the transform of
w_k·e^(−2x·(γl(f_k) − j2πf_kτ)) over Σ w_k — the loss, and the spread the skin effect's phase
causes (a causal line lowers and widens the peak). Each event's ρ is divided by that factor.

Impedance profile (low-pass): from the step response ρ_s(t), Z(t) = Z0·(1 + ρ_s)/(1 − ρ_s)
— exact for the first change of impedance; later ones are approximate, as the waves reaching
them have already been partly reflected (no layer peeling).

Gating
------
A span [t1, t2] of the band-pass response is kept by a gate that is 1 inside and falls to 0
with a raised-cosine edge one resolution cell wide on each side; the gated response is
transformed back onto the sweep's own frequencies. Gating in time is a convolution in
frequency, so the gated sweep rolls off within a few gate-transform widths of both band edges
(the edge effect) and is lowered everywhere by the energy of the event's sidelobes the gate
cuts off (gating loss). The correction used here divides the gated sweep by the gate's own
response to a unit reflection placed at the gate's centre — the same window, the same gate,
a flat Γ = 1·e^(−j2πf·t_g) — which renormalises the band edges, the gating loss and the
window in one step (described as gate normalisation with edge-effect compensation in J.
Dunsmore, *Handbook of Microwave Component Measurements*, Wiley, 2012, ch. 6 on time-domain
gating; from memory). A lone reflection inside the gate then comes back exactly (Γ = 1 gives
1 by construction). Without it, the sweep is only divided by the window.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import numpy as np

from refplane.analysis.lines.deembed import SPEED_OF_LIGHT_M_S, LineOffset, check_velocity_factor
from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep

#: Window names accepted by :func:`parse_window` (Kaiser also as "kaiser:β").
WINDOW_NAMES = ("rectangular", "hann", "hamming", "blackman", "kaiser")
#: The Kaiser window's β when none is given.
DEFAULT_KAISER_BETA = 6.0
#: Events smaller than this |ρ| are never listed (40 dB return loss).
RHO_FLOOR = 0.01
#: Points below the lowest swept one used to extrapolate to DC.
DC_POINTS = 5
#: At most this many events are listed (the strongest).
MAX_EVENTS = 50
#: Zero padding of the transforms (time samples per resolution step).
PAD = 4
#: Share of the period shown before t = 0 (the window's sidelobes of an event at the plane).
PRE_TIME = 0.05

_LABELS = {"rectangular": "rectangular", "hann": "Hann", "hamming": "Hamming", "blackman": "Blackman",
           "kaiser": "Kaiser"}


@dataclass(frozen=True)
class WindowSpec:
    """A window and what it costs: main-lobe widths and highest sidelobe.

    Attributes
    ----------
    name : str
        One of :data:`WINDOW_NAMES`.
    beta : float or None
        The Kaiser window's β (``None`` for the others).
    width_3db_bins, width_6db_bins : float
        Full main-lobe width at −3 dB and −6 dB, in DFT bins (1 bin = 1/span).
    sidelobe_db : float
        The highest sidelobe relative to the main lobe, dB (negative).
    """

    name: str
    beta: float | None
    width_3db_bins: float
    width_6db_bins: float
    sidelobe_db: float

    @property
    def label(self) -> str:
        """Plain name, with β for Kaiser: "Kaiser β=6"."""
        return _LABELS[self.name] + (f" β={self.beta:g}" if self.beta is not None else "")

    def values(self, n: int) -> np.ndarray:
        """The window's n values (symmetric, peak 1 at the middle)."""
        return window_values(self.name, n, self.beta)


def parse_window(text: str) -> tuple[str, float | None]:
    """A window name as (name, β): "kaiser" → ("kaiser", 6.0), "kaiser:9" → ("kaiser", 9.0), "hann"."""
    raw = str(text).strip().lower()
    name, _, arg = raw.partition(":")
    name = {"rect": "rectangular", "none": "rectangular", "hanning": "hann"}.get(name.strip(), name.strip())
    if name not in WINDOW_NAMES:
        raise AnalysisError(f"unknown window {text!r}; use one of {', '.join(WINDOW_NAMES)} (kaiser:β for a β)")
    if name != "kaiser":
        if arg:
            raise AnalysisError(f"only the Kaiser window takes a parameter, not {text!r}")
        return name, None
    if not arg.strip():
        return name, DEFAULT_KAISER_BETA
    try:
        beta = float(arg)
    except ValueError:
        raise AnalysisError(f"{text!r}: the Kaiser β must be a number, e.g. kaiser:6") from None
    if not (math.isfinite(beta) and 0.0 <= beta <= 40.0):
        raise AnalysisError(f"{text!r}: the Kaiser β must lie from 0 to 40")
    return name, beta


def window_values(name: str, n: int, beta: float | None = None, *, periodic: bool = False) -> np.ndarray:
    """Window values; ``periodic`` gives the DFT-even form Harris tabulates."""
    m = n + 1 if periodic else n
    if name == "rectangular":
        w = np.ones(m)
    elif name == "hann":
        w = np.hanning(m)
    elif name == "hamming":
        w = np.hamming(m)
    elif name == "blackman":
        w = np.blackman(m)
    elif name == "kaiser":
        w = np.kaiser(m, DEFAULT_KAISER_BETA if beta is None else beta)
    else:
        raise AnalysisError(f"unknown window {name!r}")
    return w[:n] if periodic else w


@functools.lru_cache(maxsize=64)
def window_spec(name: str, beta: float | None = None) -> WindowSpec:
    """Measure a window's main-lobe widths and highest sidelobe from its zero-padded transform."""
    if name == "kaiser" and beta is None:
        beta = DEFAULT_KAISER_BETA
    n, over = 512, 64
    w = window_values(name, n, beta, periodic=True)
    mag = np.abs(np.fft.rfft(w, n * over))
    db = 20.0 * np.log10(np.maximum(mag / mag[0], 1e-300))
    bins = np.arange(db.size) / over

    def width(level: float) -> float:
        i = int(np.argmax(db < level))
        x0, x1, y0, y1 = bins[i - 1], bins[i], db[i - 1], db[i]
        return 2.0 * float(x0 + (level - y0) * (x1 - x0) / (y1 - y0))

    rising = np.nonzero(np.diff(db) > 0)[0]
    first_null = int(rising[0]) if rising.size else db.size - 1
    side = float(np.max(db[first_null:])) if first_null < db.size - 1 else -math.inf
    return WindowSpec(name=name, beta=beta if name == "kaiser" else None, width_3db_bins=width(-3.0103),
                      width_6db_bins=width(-6.0206), sidelobe_db=side)


@dataclass(frozen=True)
class Event:
    """One reflection along the line.

    Attributes
    ----------
    time_s : float
        Round-trip time from the reference plane.
    distance_m : float
        vf·c·time_s/2.
    rho : float
        Reflection coefficient of the event: signed in low-pass mode, a magnitude in
        band-pass mode; loss-compensated when a cable model was given.
    return_loss_db : float
        −20·log10|ρ|.
    """

    time_s: float
    distance_m: float
    rho: float
    return_loss_db: float

    def json(self) -> dict:
        return {"distance_m": self.distance_m, "time_s": self.time_s, "rho": self.rho,
                "return_loss_db": self.return_loss_db}


@dataclass(frozen=True)
class TimeReading:
    """A marker's reading on a time response.

    Attributes
    ----------
    distance_m, time_s : float
        Where (distance along the line, round-trip time).
    impulse : float
        The impulse response there (ρ of an event at its peak; a magnitude in band-pass mode).
    step : float or None
        Low-pass step response there (the reflection seen up to that point).
    impedance_ohm : float or None
        Low-pass impedance profile there.
    """

    distance_m: float
    time_s: float
    impulse: float
    step: float | None
    impedance_ohm: float | None


@dataclass(frozen=True, eq=False)
class TimeResponse:
    """A reflection sweep in the time domain.

    Attributes
    ----------
    mode : str
        "lowpass" or "bandpass".
    window : WindowSpec
        The window used, with its widths and sidelobe level.
    velocity_factor : float
        For the distance axis.
    time_s : ndarray
        Round-trip time of each sample, from a little before 0 to the end of the range.
    impulse : ndarray
        Impulse response: real (low-pass, an event's peak reads its ρ) or the magnitude
        (band-pass).
    step : ndarray or None
        Low-pass step response (ρ seen up to each time); ``None`` in band-pass mode.
    impedance_ohm : ndarray or None
        Low-pass impedance profile Z0·(1 + ρ_step)/(1 − ρ_step) (inf where ρ_step ≥ 1).
    z0_ohm : float
        The reference impedance the profile is built on.
    resolution_s, range_s : float
        The window's −6 dB impulse width, and the alias-free range 1/Δf, both in round-trip time.
    freq_step_hz : float
        Δf of the grid transformed.
    resampled : bool
        True when a low-pass transform had to resample the sweep onto a harmonic grid.
    dc_value, dc_error : float or None
        The extrapolated DC reflection and its estimated error (low-pass only).
    events : tuple of Event
        Events above ``threshold``, strongest first.
    threshold : float
        The |ρ| an event had to exceed.
    loss_compensated : bool
        True when each event's ρ was corrected for the cable's loss up to it.
    """

    mode: str
    window: WindowSpec
    velocity_factor: float
    time_s: np.ndarray
    impulse: np.ndarray
    step: np.ndarray | None
    impedance_ohm: np.ndarray | None
    z0_ohm: float
    resolution_s: float
    range_s: float
    freq_step_hz: float
    resampled: bool
    dc_value: float | None
    dc_error: float | None
    events: tuple[Event, ...]
    threshold: float
    loss_compensated: bool = False

    @property
    def metres_per_second(self) -> float:
        """Distance per second of round-trip time: vf·c/2."""
        return self.velocity_factor * SPEED_OF_LIGHT_M_S / 2.0

    @property
    def distance_m(self) -> np.ndarray:
        """Distance of each sample along the line."""
        return self.time_s * self.metres_per_second

    @property
    def resolution_m(self) -> float:
        return self.resolution_s * self.metres_per_second

    @property
    def range_m(self) -> float:
        return self.range_s * self.metres_per_second

    def reading_at(self, distance_m: float) -> "TimeReading":
        """What a marker at ``distance_m`` reads (linear between samples)."""
        t = float(distance_m) / self.metres_per_second
        if not self.time_s[0] <= t <= self.time_s[-1]:
            raise AnalysisError(f"{distance_m:g} m lies outside the range shown "
                                f"({self.time_s[0] * self.metres_per_second:.4g} m to {self.range_m:.4g} m)")
        impulse = float(np.interp(t, self.time_s, self.impulse))
        step = float(np.interp(t, self.time_s, self.step)) if self.step is not None else None
        impedance = None
        if step is not None:
            impedance = self.z0_ohm * (1.0 + step) / (1.0 - step) if step < 1.0 else math.inf
        return TimeReading(distance_m=float(distance_m), time_s=t, impulse=impulse, step=step,
                           impedance_ohm=impedance)

    def json(self) -> dict:
        """The figures of ``refplane tdr --json`` (without file and port)."""
        return {"mode": self.mode, "window": self.window.label, "vf": self.velocity_factor,
                "resolution_m": self.resolution_m, "range_m": self.range_m,
                "events": [e.json() for e in self.events]}


def _uniform(freq_hz: np.ndarray) -> bool:
    steps = np.diff(freq_hz)
    return bool(np.allclose(steps, steps[0], rtol=1e-6, atol=0.0))


def _strongest_delay(freq_hz: np.ndarray, gamma: np.ndarray) -> float:
    """Round-trip time of the strongest event, from the band-pass magnitude (rough, ±1 sample)."""
    n = freq_hz.size
    df = (freq_hz[-1] - freq_hz[0]) / (n - 1)
    if _uniform(freq_hz):
        values = gamma
    else:
        grid = np.linspace(freq_hz[0], freq_hz[-1], n)
        values = np.interp(grid, freq_hz, gamma.real) + 1j * np.interp(grid, freq_hz, gamma.imag)
    size = _fft_size(2 * n)
    mag = np.abs(np.fft.ifft(values * np.kaiser(n, DEFAULT_KAISER_BETA), size))
    k = int(np.argmax(mag))
    if k > size * (1.0 - PRE_TIME):
        k -= size
    return k / (size * df)


def _fft_size(n: int) -> int:
    from scipy.fft import next_fast_len

    return int(next_fast_len(int(n)))


def _check(sweep: Sweep, port: int) -> tuple[np.ndarray, np.ndarray]:
    if not isinstance(sweep, Sweep):
        raise AnalysisError("the time domain needs a sweep")
    sweep.check_port(port)
    f = sweep.freq_hz
    if f.size < 8:
        raise AnalysisError(f"the time domain needs at least 8 swept points; found {f.size}")
    if np.any(np.diff(f) <= 0):
        raise AnalysisError("the frequencies must rise from point to point")
    if f[0] < 0:
        raise AnalysisError("the frequencies must not be negative")
    return f, sweep.reflection(port)


def harmonic_grid(freq_hz: np.ndarray, gamma: np.ndarray) -> tuple[np.ndarray, np.ndarray, bool, float, float]:
    """Γ on the harmonic grid 0, Δf, …, K·Δf for a low-pass transform (see the module notes).

    Returns
    -------
    (grid_hz, values, resampled, dc_value, dc_error)
    """
    f = np.asarray(freq_hz, dtype=np.float64)
    top = float(f[-1])
    step_meas = float(np.median(np.diff(f)))
    k = max(int(round(top / step_meas)), 8)
    step = top / k
    grid = step * np.arange(k + 1)
    t_c = _strongest_delay(f, gamma)
    measured = f > 0
    on_grid = _uniform(f[measured]) and abs(float(np.diff(f[measured])[0]) - step) <= 1e-9 * step
    first = int(round(f[measured][0] / step)) if on_grid else -1
    on_grid = on_grid and abs(f[measured][0] - first * step) <= 1e-6 * step and first >= 1
    turn = np.exp(2j * np.pi * t_c * f)
    u = gamma * turn                               # slowly varying near the main event
    # DC: a straight line through the lowest points (and a quadratic for the error).
    low = np.nonzero(measured)[0][:DC_POINTS]
    if low.size < 3:
        raise AnalysisError("the low-pass transform needs at least 3 swept points above 0 Hz")
    x = f[low]
    line = np.polyfit(x, u[low], 1)
    quad = np.polyfit(x, u[low], 2)
    dc_line = complex(line[-1])
    dc = float(dc_line.real)
    dc_error = float(max(abs(dc_line.imag), abs(dc_line - complex(quad[-1]))))
    if f[0] == 0.0:
        dc, dc_error = float(np.real(gamma[0])), 0.0      # measured: nothing to extrapolate
    if on_grid:
        values = np.empty(k + 1, dtype=np.complex128)
        values[first:] = gamma[measured]
        if first > 1:
            fill = grid[1:first]
            values[1:first] = (np.interp(fill, np.r_[0.0, x], np.r_[dc, u[low]].real)
                               + 1j * np.interp(fill, np.r_[0.0, x], np.r_[dc, u[low]].imag)) \
                * np.exp(-2j * np.pi * t_c * fill)
        values[0] = dc
        return grid, values, False, dc, dc_error
    fx = np.r_[0.0, f[measured]]
    fu = np.r_[dc, u[measured]]
    values = (np.interp(grid, fx, fu.real) + 1j * np.interp(grid, fx, fu.imag)) * np.exp(-2j * np.pi * t_c * grid)
    values[0] = dc
    return grid, values, True, dc, dc_error


def _loss_factor(weights: np.ndarray, freq_hz: np.ndarray, cable: LineOffset, time_s: float,
                 lowpass: bool, size: int) -> float:
    """How much the cable up to round-trip time ``time_s`` lowers an ideal event's impulse peak.

    The peak of the transform of w·e^(−2x·(γl − j2πfτ)) over Σw: the cable's loss and the
    spread its skin-effect phase causes, for the fraction x of the cable on the way.
    """
    if cable.delay_s <= 0:
        raise AnalysisError("the cable model for loss compensation needs a delay above zero")
    x = max(time_s, 0.0) / 2.0 / cable.delay_s
    excess = cable.gamma_l(freq_hz) - 2j * np.pi * cable.delay_s * freq_hz
    spectrum = weights * np.exp(-2.0 * x * excess)
    if lowpass:
        total = 2.0 * float(np.sum(weights)) - float(weights[0])
        peak = np.max(np.abs(np.fft.irfft(spectrum, size))) * size / total
    else:
        peak = np.max(np.abs(np.fft.ifft(spectrum, size))) * size / float(np.sum(weights))
    return float(peak)


def _find_events(time_s, impulse, resolution_s, range_s, window: WindowSpec, signed: bool,
                 compensate) -> tuple[tuple[Event, ...], float]:
    mag = np.abs(impulse)
    inside = (time_s >= -0.5 * resolution_s) & (time_s < range_s - resolution_s)
    if not np.any(inside):
        return (), RHO_FLOOR
    strongest = float(np.max(mag[inside]))
    threshold = max(RHO_FLOOR, 2.0 * strongest * 10.0 ** (window.sidelobe_db / 20.0))
    peak = np.zeros(mag.size, dtype=bool)
    peak[1:-1] = (mag[1:-1] > mag[:-2]) & (mag[1:-1] >= mag[2:])
    candidates = np.nonzero(peak & inside & (mag > threshold))[0]
    order = candidates[np.argsort(-mag[candidates], kind="stable")]
    kept: list[int] = []
    for i in order:
        if all(abs(time_s[i] - time_s[j]) > resolution_s for j in kept):
            kept.append(int(i))
            if len(kept) == MAX_EVENTS:
                break
    events = []
    for i in kept:
        # A parabola through the peak and its neighbours places it between samples.
        y0, y1, y2 = mag[i - 1], mag[i], mag[i + 1]
        den = y0 - 2 * y1 + y2
        shift = 0.5 * (y0 - y2) / den if den != 0 else 0.0
        t = float(time_s[i] + shift * (time_s[1] - time_s[0]))
        rho = float(impulse[i] if signed else mag[i])
        if compensate is not None:
            rho /= compensate(t)
        events.append((t, rho))
    events.sort(key=lambda e: -abs(e[1]))
    return tuple(Event(time_s=t, distance_m=0.0, rho=r, return_loss_db=float(-20.0 * math.log10(abs(r))))
                 for t, r in events), threshold


def time_response(sweep: Sweep, *, port: int = 1, mode: str = "lowpass", window: str = "kaiser",
                  velocity_factor: float = 1.0, cable: LineOffset | None = None) -> TimeResponse:
    """Transform a reflection sweep to the time domain and find the events along the line.

    Parameters
    ----------
    sweep : Sweep
        The sweep; S_NN of ``port`` is used.
    port : int
        1-based port.
    mode : {"lowpass", "bandpass"}
        Low-pass (impulse and step with sign, impedance profile; resamples onto a harmonic
        grid and extrapolates DC when needed) or band-pass (impulse magnitude, any grid).
    window : str
        A window name, see :func:`parse_window` ("kaiser" is Kaiser with β = 6).
    velocity_factor : float
        For distances (default 1: electrical length in air).
    cable : LineOffset, optional
        The cable's line model (its losses belong to its delay) for loss compensation of
        each event's size.

    Returns
    -------
    TimeResponse

    Examples
    --------
    >>> td = time_response(read_sweep("cable.s1p"), velocity_factor=0.66)   # doctest: +SKIP
    >>> [(e.distance_m, e.rho) for e in td.events]                           # doctest: +SKIP
    """
    key = str(mode).strip().lower().replace("-", "")
    if key not in ("lowpass", "bandpass"):
        raise AnalysisError(f"the mode must be 'lowpass' or 'bandpass', not {mode!r}")
    vf = check_velocity_factor(velocity_factor)
    name, beta = parse_window(window)
    spec = window_spec(name, beta)
    if cable is not None and not isinstance(cable, LineOffset):
        raise AnalysisError("the cable model must be a line offset")
    f, gamma = _check(sweep, port)
    z0 = float(np.real(sweep.z0_ohm[port - 1]))
    if key == "lowpass":
        grid, values, resampled, dc, dc_error = harmonic_grid(f, gamma)
        k = grid.size - 1
        step = float(grid[1])
        w_full = spec.values(2 * k + 1)
        w = w_full[k:]
        size = _fft_size(PAD * 2 * k)
        raw = np.fft.irfft(values * w, size)          # real: Γ(−f) = Γ(f)*
        norm = size / float(np.sum(w_full))
        span = 2.0 * k * step
        period = 1.0 / step
        weights, wfreq = w, grid
    else:
        if not _uniform(f):
            grid = np.linspace(f[0], f[-1], f.size)
            t_c = _strongest_delay(f, gamma)
            u = gamma * np.exp(2j * np.pi * t_c * f)
            values = (np.interp(grid, f, u.real) + 1j * np.interp(grid, f, u.imag)) * np.exp(-2j * np.pi * t_c * grid)
            resampled = True
        else:
            grid, values, resampled = f, gamma, False
        n = grid.size
        step = float((grid[-1] - grid[0]) / (n - 1))
        w = spec.values(n)
        size = _fft_size(PAD * n)
        raw = np.fft.ifft(values * w, size)
        norm = size / float(np.sum(w))
        span = n * step
        period = 1.0 / step
        dc = dc_error = None
        weights, wfreq = w, grid
    dt = period / size
    # Reorder one period to run from a little before 0 to the end of the range.
    lead = int(round(PRE_TIME * size))
    order = np.r_[np.arange(size - lead, size), np.arange(size - lead)]
    time_s = (np.arange(size) - lead) * dt
    raw = raw[order]
    impulse = raw * norm if key == "lowpass" else np.abs(raw) * norm
    step_resp = impedance = None
    if key == "lowpass":
        step_resp = np.cumsum(raw)
        with np.errstate(divide="ignore", invalid="ignore"):
            impedance = np.where(step_resp < 1.0, z0 * (1.0 + step_resp) / (1.0 - step_resp), np.inf)
    resolution = spec.width_6db_bins / span
    compensate = None
    if cable is not None:
        def compensate(t: float) -> float:
            return _loss_factor(weights, wfreq, cable, t, key == "lowpass", size)
    events, threshold = _find_events(time_s, impulse, resolution, period, spec, key == "lowpass", compensate)
    scale = vf * SPEED_OF_LIGHT_M_S / 2.0
    events = tuple(Event(e.time_s, e.time_s * scale, e.rho, e.return_loss_db) for e in events)
    return TimeResponse(mode=key, window=spec, velocity_factor=vf, time_s=time_s, impulse=impulse, step=step_resp,
                        impedance_ohm=impedance, z0_ohm=z0, resolution_s=resolution, range_s=period,
                        freq_step_hz=step, resampled=resampled, dc_value=dc, dc_error=dc_error, events=events,
                        threshold=threshold, loss_compensated=cable is not None)


@dataclass(frozen=True, eq=False)
class GatedSweep:
    """A sweep with everything outside a span of distance gated away.

    Attributes
    ----------
    sweep : Sweep
        One-port sweep of the gated reflection, on the transformed (uniform) frequencies.
    start_m, stop_m : float
        The gate's span in distance (flat part).
    start_s, stop_s : float
        The same in round-trip time.
    edge_s : float
        Width of each raised-cosine edge, outside the span.
    window : WindowSpec
        The window of the band-pass transform.
    renormalised : bool
        True when divided by the gate's own response to a unit reflection (see the module notes).
    """

    sweep: Sweep
    start_m: float
    stop_m: float
    start_s: float
    stop_s: float
    edge_s: float
    window: WindowSpec
    renormalised: bool


def _gate_shape(t: np.ndarray, start: float, stop: float, edge: float) -> np.ndarray:
    g = ((t >= start) & (t <= stop)).astype(np.float64)
    if edge > 0:
        for lo, hi, rising in ((start - edge, start, True), (stop, stop + edge, False)):
            part = (t > lo) & (t < hi)
            x = (t[part] - lo) / edge
            g[part] = 0.5 - 0.5 * np.cos(np.pi * (x if rising else 1.0 - x))
    return g


@dataclass(frozen=True, eq=False)
class GatePlan:
    """What a gate needs that does not depend on where it sits: prepared once, applied per drag.

    Build with :func:`prepare_gate`; :meth:`apply` then costs one gate shape, two products
    and two FFTs (the transforms of the data and of the window alone are kept).
    """

    sweep: Sweep
    port: int
    window: WindowSpec
    freq_hz: np.ndarray
    response: np.ndarray
    unit_response: np.ndarray
    step_hz: float
    size: int

    @property
    def period_s(self) -> float:
        return 1.0 / self.step_hz

    def apply(self, start_m: float, stop_m: float, *, velocity_factor: float = 1.0,
              renormalise: bool = True) -> GatedSweep:
        """The gated sweep for the span ``start_m`` … ``stop_m`` (see :func:`gate`)."""
        vf = check_velocity_factor(velocity_factor)
        start_m, stop_m = float(start_m), float(stop_m)
        if not (math.isfinite(start_m) and math.isfinite(stop_m)) or not stop_m > start_m:
            raise AnalysisError("the gate's far end must lie beyond its near end")
        period, n, size = self.period_s, self.freq_hz.size, self.size
        scale = vf * SPEED_OF_LIGHT_M_S / 2.0
        t1, t2 = start_m / scale, stop_m / scale
        if t2 - t1 >= period * (1.0 - 2 * PRE_TIME) or t1 < -PRE_TIME * period or t2 > period * (1 - PRE_TIME):
            raise AnalysisError(f"the gate must lie within the range of this sweep, "
                                f"{-PRE_TIME * period * scale:.3g} m to {(1 - PRE_TIME) * period * scale:.3g} m "
                                f"at velocity factor {vf:g}")
        dt = period / size
        idx = np.arange(size)
        edge = self.window.width_6db_bins / (n * self.step_hz)
        t = np.where(idx >= size * (1.0 - PRE_TIME), idx - size, idx) * dt
        gated = np.fft.fft(self.response * _gate_shape(t, t1, t2, edge))[:n]
        if renormalise:
            # The gate's response to a unit reflection at its centre, with that delay taken back
            # out: the window's own response (an event at 0) under the gate moved to centre on 0.
            half = 0.5 * (t2 - t1)
            t_sym = np.where(idx >= size // 2, idx - size, idx) * dt
            ref = np.fft.fft(self.unit_response * _gate_shape(t_sym, -half, half, edge))[:n]
        else:
            ref = self.window.values(n).astype(np.complex128)
        if np.any(np.abs(ref) < 1e-6):
            raise AnalysisError("the gate leaves nothing at some frequencies (a window falling to zero at the "
                                "band edges, e.g. Hann, cannot be divided out there); use the Kaiser window")
        out = gated / ref
        spec = self.window
        note = (f"Refplane: gated {start_m:g} m to {stop_m:g} m at velocity factor {vf:g} ({spec.label} band-pass "
                f"transform, {'renormalised by the gate' if renormalise else 'window divided out'})")
        sweep = self.sweep
        gated_sweep = Sweep(freq_hz=self.freq_hz.copy(), s=out.reshape(-1, 1, 1), z0_ohm=sweep.z0_ohm[self.port - 1],
                            name=f"{sweep.name} gated", source=sweep.source, comments=sweep.comments + (note,))
        return GatedSweep(sweep=gated_sweep, start_m=start_m, stop_m=stop_m, start_s=t1, stop_s=t2, edge_s=edge,
                          window=spec, renormalised=renormalise)


def prepare_gate(sweep: Sweep, *, port: int = 1, window: str = "kaiser") -> GatePlan:
    """Transform a sweep once for gating at any span (see :func:`gate`)."""
    name, beta = parse_window(window)
    spec = window_spec(name, beta)
    f, gamma = _check(sweep, port)
    if not _uniform(f):
        grid = np.linspace(f[0], f[-1], f.size)
        t_c = _strongest_delay(f, gamma)
        u = gamma * np.exp(2j * np.pi * t_c * f)
        values = (np.interp(grid, f, u.real) + 1j * np.interp(grid, f, u.imag)) * np.exp(-2j * np.pi * t_c * grid)
    else:
        grid, values = f, gamma
    n = grid.size
    w = spec.values(n)
    size = _fft_size(PAD * n)
    padded = np.zeros(size, dtype=np.complex128)
    padded[:n] = values * w
    response = np.fft.ifft(padded)
    padded[:n] = w
    padded[n:] = 0.0
    unit = np.fft.ifft(padded)
    return GatePlan(sweep=sweep, port=port, window=spec, freq_hz=np.asarray(grid, dtype=np.float64),
                    response=response, unit_response=unit, step_hz=float((grid[-1] - grid[0]) / (n - 1)), size=size)


def gate(sweep: Sweep, start_m: float, stop_m: float, *, port: int = 1, velocity_factor: float = 1.0,
         window: str = "kaiser", renormalise: bool = True) -> GatedSweep:
    """Keep only the reflections between ``start_m`` and ``stop_m`` along the line.

    Parameters
    ----------
    sweep : Sweep
        The sweep; S_NN of ``port`` is gated.
    start_m, stop_m : float
        The span to keep, in metres at ``velocity_factor`` (start below stop).
    port : int
        1-based port.
    velocity_factor : float
        For the distance ↔ time conversion.
    window : str
        Window of the band-pass transform (see :func:`parse_window`).
    renormalise : bool
        Divide by the gate's own response to a unit reflection at its centre (the edge-effect
        and gating-loss correction; see the module notes). False divides by the window only.

    Returns
    -------
    GatedSweep

    Notes
    -----
    For a gate dragged along the line, :func:`prepare_gate` once and ``plan.apply(...)``
    per position does the same with half the transforms.
    """
    vf = check_velocity_factor(velocity_factor)
    return prepare_gate(sweep, port=port, window=window).apply(start_m, stop_m, velocity_factor=vf,
                                                               renormalise=renormalise)
