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
