"""The settings of each tool panel: one frozen record per panel, registered by name.

A panel reads its record with ``session.tool(name)`` and changes it with
``session.set_tool(name, **changes)``; the session announces ``toolChanged(name)`` and saves
the record in session files (:mod:`refplane.session.tools`). Fields hold plain JSON kinds
(numbers, text, booleans, ``None``); SI units, the unit in the name.
"""

from __future__ import annotations

from dataclasses import dataclass

from refplane.session.tools import register


@register("antenna")
@dataclass(frozen=True)
class AntennaSettings:
    """Resonance, feedline and matching at the current marker (the antenna panel)."""

    vswr_limit: float = 2.0
    """VSWR at or below which a band counts as usable."""
    feed_length_m: float = 0.0
    """Physical length of the feedline between radio and antenna (0: no feedline)."""
    feed_vf: float = 0.66
    """Velocity factor of the feedline."""
    feed_loss_db: float = 0.0
    """Matched loss of the whole feedline at ``feed_loss_ref_hz``, dB."""
    feed_loss_ref_hz: float = 14e6
    """Frequency at which ``feed_loss_db`` is given."""
    feed_line_z0_ohm: float | None = None
    """The feedline's impedance; ``None``: the port's reference."""
    feed_toward: str = "radio"
    """``"radio"``: the trace is at the antenna; ``"antenna"``: the trace was measured at the radio end."""
    power_w: float = 100.0
    """Transmitter power into the feedline and into the matching network, watts."""
    target_ohm: float | None = None
    """Resistance the networks match to; ``None``: the port's reference."""
    series: str = "E24"
    """Preferred-number series the part values are rounded to: E12, E24 or E96."""
    network: str = ""
    """Key of the chosen network (``tool_text.network_keys``, e.g. "L 1"); "" chooses the first."""
    draw_path: bool = True
    """Draw the chosen network's path from the load to the centre on the chart."""


@register("cable")
@dataclass(frozen=True)
class CableSettings:
    """Cable characterisation from an open and a short sweep (the cable panel)."""

    open_trace: str = ""
    """Name of the trace of the cable with its far end open ("" none chosen)."""
    short_trace: str = ""
    """Name of the trace of the cable with its far end shorted."""
    known: str = "length"
    """What is given: ``"length"`` (the velocity factor follows), ``"vf"`` (the length follows) or ``"none"``."""
    length_m: float = 1.0
    """The cable's physical length when ``known == "length"``."""
    vf: float = 0.66
    """The cable's velocity factor when ``known == "vf"``."""
    band_text: str = ""
    """Band to use, e.g. "10 MHz : 1 GHz"; "" the whole sweep."""
    loss_ref_hz: float = 1e9
    """Frequency the losses are stated at."""


@register("time_domain")
@dataclass(frozen=True)
class TimeDomainSettings:
    """The time-domain view of the current trace."""

    mode: str = "lowpass"
    """``"lowpass"`` (impulse, step and impedance) or ``"bandpass"`` (impulse magnitude, any sweep)."""
    show: str = "impulse"
    """What is plotted: ``"impulse"``, ``"step"`` or ``"impedance"`` (the last two low-pass only)."""
    window: str = "kaiser"
    """Window: rectangular, hann, hamming, blackman or kaiser."""
    kaiser_beta: float = 6.0
    """β of the Kaiser window."""
    vf: float = 0.66
    """Velocity factor for the distance axis (round trip halved)."""
    gate_start_m: float | None = None
    """Near end of the gate span along the line; ``None``: no gate."""
    gate_stop_m: float | None = None
    """Far end of the gate span."""
    markers_m: tuple = ()
    """Distances of the time-domain markers."""
    gate_overlay: bool = True
    """While a gate is set, draw the gated sweep dashed over its trace (follows a drag live)."""


@register("uncertainty")
@dataclass(frozen=True)
class UncertaintySettings:
    """What is known about the measurement's errors; every marker reading then carries its ±."""

    enabled: bool = False
    """Show the expanded uncertainty (k = 2, about 95 %) beside the readings."""
    use_residual: bool = True
    """Count the instrument's corrected performance stated below."""
    directivity_db: float = 40.0
    """Effective (corrected) directivity, dB below full reflection: |D| = 10^(−dB/20)."""
    source_match_db: float = 35.0
    """Effective (corrected) source match, dB: |M| = 10^(−dB/20)."""
    tracking_db: float = 0.1
    """Reflection tracking, ±dB: |T| = 10^(dB/20) − 1."""
    calibration_file: str = ""
    """A saved calibration whose propagated uncertainty applies (the sweeps read were corrected by it); "" none."""
    noise: str = "auto"
    """Trace noise: ``"auto"`` (estimated from each sweep), ``"none"``, or ``"level"`` (``noise_level``)."""
    noise_level: float = 0.001
    """Trace noise σ per axis of Γ when ``noise == "level"``."""
    interpolation: bool = True
    """Count the bound on reading between swept points."""
    offset_delay_u_s: float = 0.0
    """Standard uncertainty of the reference-plane offset's one-way delay (the port read)."""
    offset_loss_u_db: float = 0.0
    """Standard uncertainty of the offset's conductor loss, dB at its reference frequency."""
    offset_line_z0_u_ohm: float = 0.0
    """Standard uncertainty of the offset line's impedance."""
    method: str = "auto"
    """``"auto"`` (linear; Monte Carlo where the linearisation is poor), ``"linear"`` or ``"monte-carlo"``."""


@register("limits")
@dataclass(frozen=True)
class LimitsSettings:
    """Limits tested on the current trace and drawn on the plots (the limits panel)."""

    expressions: tuple = ()
    """Limit expressions as typed, e.g. "vswr <= 2 over 140MHz:150MHz" (grammar: ``analysis.limits``)."""
