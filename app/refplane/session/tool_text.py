"""Text of the tool panels (antenna, cable, time domain, uncertainty): results into words and cells.

Like :mod:`refplane.session.present`, nothing here computes an RF value: it writes down the
fields of analysis results, so a panel, a copied text and a test read the same numbers.
"""

from __future__ import annotations

import math

from refplane.analysis.units import format_frequency, format_si
from refplane.session.present import number

#: Shown in the antenna panel beside anything that involves power.
ANTENNA_CAUTION = (
    "Matching parts and feedlines at transmitter power carry high voltage and current: rate "
    "every part with a wide margin above the figures shown, and mind heating. RF exposure "
    "limits apply whenever an antenna is driven. Never connect the analyzer to a line a "
    "transmitter can feed. Follow local codes and licensed practice.")

#: Words for each network topology.
TOPOLOGY_WORDS = {
    "L": "L-network", "pi": "Pi network", "T": "T network", "quarter-wave": "quarter-wave transformer",
    "open-stub": "open shunt stub", "short-stub": "shorted shunt stub", "none": "no network",
}


def si(value: float | None, unit: str, digits: int = 4) -> str:
    """``format_si`` without the bare trailing point it leaves on whole numbers ("910 fF", not "910. fF")."""
    text = format_si(value, unit, digits)
    head, sep, tail = text.partition(" ")
    return (head[:-1] if head.endswith(".") else head) + sep + tail


def _freq(f: float | None) -> str:
    return "—" if f is None or not math.isfinite(f) else format_frequency(f, 6)


def z_text(z: complex) -> str:
    """An impedance as "R ± jX Ω" (∞ for an open)."""
    z = complex(z)
    if not (math.isfinite(z.real) and math.isfinite(z.imag)):
        return "∞"
    sign = "−" if z.imag < 0 else "+"
    return f"{number(z.real, '', 2)} {sign} j{number(abs(z.imag), 'Ω', 2)}"


# --------------------------------------------------------------------- resonance
def resonance_rows(report) -> list[list[str]]:
    """One row per resonance: frequency, kind, R there, loaded Q."""
    return [[_freq(r.freq_hz), r.kind, number(r.r_ohm, "Ω", 1),
             "—" if not math.isfinite(r.q) else f"{r.q:.3g}"] for r in report.resonances]


def band_rows(report) -> list[list[str]]:
    """One row per band under the VSWR limit: start, stop, centre, width (≥/≤ when clipped)."""
    rows = []
    for b in report.bands:
        start = ("≤ " if b.clipped_low else "") + _freq(b.start_hz)
        stop = ("≥ " if b.clipped_high else "") + _freq(b.stop_hz)
        width = ("≥ " if (b.clipped_low or b.clipped_high) else "") + si(b.width_hz, "Hz", 4)
        rows.append([start, stop, _freq(b.centre_hz), width])
    return rows


def best_sentence(report, vswr_limit: float) -> str:
    """Where the match is best, and how many bands stay under the limit."""
    b = report.best
    head = (f"Best match {number(b.vswr, '', 2)}:1 (return loss {number(b.return_loss_db, 'dB', 1)}) "
            f"at {_freq(b.freq_hz)}.")
    n = len(report.bands)
    bands = (f"No band stays at or below VSWR {vswr_limit:g}." if n == 0 else
             f"{n} band{'s' if n > 1 else ''} at or below VSWR {vswr_limit:g}"
             f"{' (≥/≤: runs past the end of the sweep)' if any(x.clipped_low or x.clipped_high for x in report.bands) else ''}.")
    return f"{head} {bands}"


# ---------------------------------------------------------------------- feedline
def feedline_rows(result) -> list[tuple[str, str]]:
    """(label, text) pairs at the one frequency of ``result`` (a FeedlineResult of one point)."""
    k = 0
    rows = [
        ("Frequency", _freq(float(result.freq_hz[k]))),
        ("Z at the radio", z_text(result.z_radio_ohm[k])),
        ("SWR at the radio", number(float(result.vswr_radio[k]), "", 2)),
        ("Z at the antenna", z_text(result.z_antenna_ohm[k])),
        ("SWR at the antenna", number(float(result.vswr_antenna[k]), "", 2)),
        ("Matched loss", number(float(result.matched_loss_db[k]), "dB", 2)),
        ("Extra loss from mismatch", number(float(result.mismatch_loss_extra_db[k]), "dB", 2)),
        ("Total loss", number(float(result.total_loss_db[k]), "dB", 2)),
    ]
    if result.power_at_antenna_w is not None and result.power_w:
        p = float(result.power_at_antenna_w[k])
        rows.append((f"Power at antenna (of {si(result.power_w, 'W', 3)})",
                     "—" if not math.isfinite(p) else si(p, "W", 3)))
        if math.isfinite(p):
            rows.append(("Heat in the line", si(result.power_w - p, "W", 3)))
    return rows


# ---------------------------------------------------------------------- matching
def network_keys(networks) -> list[str]:
    """A stable key per network: topology and its rank among networks of that topology ("L 2")."""
    seen: dict[str, int] = {}
    keys = []
    for n in networks:
        seen[n.topology] = seen.get(n.topology, 0) + 1
        keys.append(f"{n.topology} {seen[n.topology]}")
    return keys


def network_label(network, key: str) -> str:
    """A short label for a list: "L-network 1: shunt C, series L"."""
    words = TOPOLOGY_WORDS.get(network.topology, network.topology)
    rank = key.split(" ")[-1]
    count = f" {rank}" if network.topology == "L" else ""
    q = f" (Q {network.q:.3g})" if network.q else ""
    parts = ", ".join(f"{p.place} {'line' if p.kind == 'line' and p.place == 'series' else 'stub' if p.kind == 'line' else p.kind}"
                      for p in network.parts)
    return f"{words}{count}{q}: {parts}" if parts else words


def part_rows(network) -> list[list[str]]:
    """One row per part, from the load toward the source: part, exact, standard value, peak V, RMS A."""
    rows = []
    for p in network.parts:
        if p.kind == "line":
            what = f"{p.place} {'line' if p.place == 'series' else 'stub'} {p.line_z0_ohm:.4g} Ω" + (
                f", {p.end} end" if p.end else "")
            exact = f"{si(p.value, 'm', 4)} ({p.electrical_deg:.1f}°)"
            standard = "cut to length"
        else:
            what = f"{p.place} {p.kind}"
            exact = si(p.value, p.unit, 4)
            standard = si(p.standard_value, p.unit, 3) if p.standard_value is not None else "—"
        volts = "—" if p.peak_voltage_v is None else si(p.peak_voltage_v, "V pk", 3)
        amps = "—" if p.rms_current_a is None else si(p.rms_current_a, "A rms", 3)
        rows.append([what, exact, standard, volts, amps])
    return rows


def network_sentence(network, series: str) -> str:
    """VSWR with exact and rounded parts, and the 2:1 band with the rounded parts."""
    parts = (f"VSWR {number(network.vswr_exact, '', 3)} with exact parts, "
             f"{number(network.vswr_standard, '', 3)} with {series} parts")
    if network.band_vswr2_hz is None:
        band = "no band below VSWR 2 with those parts"
    else:
        lo, hi = network.band_vswr2_hz
        more = " (reaches the sweep's end)" if network.band_clipped else ""
        band = f"below VSWR 2 from {_freq(lo)} to {_freq(hi)} ({si(hi - lo, 'Hz', 3)}){more}"
    return f"{parts}; {band}."


def bode_fano_sentence(match) -> str:
    """The widest 2:1 band any lossless network could give this load, or why it is not known."""
    bf = match.bode_fano
    if bf is None:
        return "No Bode–Fano limit for this load (its circuit could not be fitted)."
    rough = " (rough: the fitted circuit follows the load poorly)" if bf.fit_residual_rel > 0.1 else ""
    approx = ", approximate" if "approximate" in bf.basis else ""
    return (f"Best possible with any lossless network: VSWR ≤ {bf.vswr_limit:g} over at most "
            f"{si(bf.max_width_hz, 'Hz', 3)} (Bode–Fano, from a fitted {bf.model_id} circuit{approx}){rough}.")


def match_heading(match) -> str:
    """The load and target the networks were designed for."""
    power = f", {si(match.power_w, 'W', 3)}" if match.power_w else ""
    return (f"Load {z_text(match.load_ohm)} at {_freq(match.freq_hz)}, matched to "
            f"{number(match.target_ohm, 'Ω', 1)}{power}; parts from the load toward the radio.")


def parts_text(match, network, key: str) -> str:
    """The chosen network as plain text to paste into notes or a parts list."""
    lines = [f"{network_label(network, key)}",
             match_heading(match),
             f"{'part':<24}{'exact':<22}{match.series:<14}{'peak V':<14}RMS A"]
    for row in part_rows(network):
        lines.append(f"{row[0]:<24}{row[1]:<22}{row[2]:<14}{row[3]:<14}{row[4]}")
    lines.append(network_sentence(network, match.series))
    lines.append(bode_fano_sentence(match))
    lines.append(ANTENNA_CAUTION)
    return "\n".join(lines)


# ------------------------------------------------------------------------- cable
#: Shown in the cable panel and the time-domain view.
CABLE_CAUTION = (
    "Discharge a cable before connecting it to the analyzer (briefly join centre and shield): "
    "long cables hold static charge that can destroy the analyzer's input. Never connect the "
    "analyzer to a line a transmitter may feed. Follow the equipment maker's guidance and local "
    "codes.")


def cable_rows(result) -> list[tuple[str, str]]:
    """(label, text) of a cable characterisation: one-way figures."""
    rows = [
        ("Impedance Z0", number(result.z0_fit_ohm, "Ω", 2)),
        ("Delay (one way)", si(result.delay_s, "s", 5)),
        ("Length", "—" if result.length_m is None else si(result.length_m, "m", 5)),
        ("Velocity factor", "—" if result.velocity_factor is None else f"{result.velocity_factor:.4f}"),
        (f"Loss at {_freq(result.loss_ref_hz)}", number(result.loss_db, "dB", 3)),
        ("  conductor (∝ √f)", number(result.loss_conductor_db, "dB", 3)),
        ("  dielectric (∝ f)", number(result.loss_dielectric_db, "dB", 3)),
        (f"Loss per 100 m at {_freq(result.loss_ref_hz)}",
         "— (give the length)" if result.loss_db_per_100m is None else number(result.loss_db_per_100m, "dB", 2)),
        ("Residual |ΔΓ| (RMS)", f"{result.residual:.2g}"),
        ("Band used", f"{_freq(result.band_hz[0])} – {_freq(result.band_hz[1])}"),
        ("Points used", str(result.n_points)),
    ]
    return rows


# -------------------------------------------------------------------- time domain
def time_summary(td) -> str:
    """Window, resolution and range of a time response, stated as on the plot."""
    mode = "low-pass" if td.mode == "lowpass" else "band-pass"
    text = (f"{mode}, {td.window.label} window (sidelobes {td.window.sidelobe_db:.0f} dB); "
            f"resolution {si(td.resolution_m, 'm', 3)}, range {si(td.range_m, 'm', 3)} "
            f"at velocity factor {td.velocity_factor:g}")
    if td.resampled:
        text += "; resampled onto a harmonic grid"
    if td.dc_error is not None and td.dc_error > 0.005:
        text += f"; DC extrapolated (± {td.dc_error:.2g})"
    return text


def event_rows(td) -> list[list[str]]:
    """One row per event, strongest first: distance, ρ, return loss."""
    return [[si(e.distance_m, "m", 4), f"{e.rho:+.3f}" if td.mode == "lowpass" else f"{e.rho:.3f}",
             number(e.return_loss_db, "dB", 1)] for e in td.events]


def time_marker_rows(td, distances_m) -> list[list[str]]:
    """One row per time-domain marker: number, distance, ρ (impulse), step ρ, impedance."""
    import math as _m

    rows = []
    for k, d in enumerate(distances_m, start=1):
        try:
            r = td.reading_at(d)
        except Exception:  # noqa: BLE001 - a marker outside the range shows dashes
            rows.append([str(k), si(d, "m", 4), "—", "—", "—"])
            continue
        z = "—" if r.impedance_ohm is None else ("∞" if not _m.isfinite(r.impedance_ohm)
                                                 else number(r.impedance_ohm, "Ω", 1))
        rows.append([str(k), si(d, "m", 4), f"{r.impulse:+.4f}", "—" if r.step is None else f"{r.step:+.4f}", z])
    return rows
