"""SI text to numbers and back: "470 MHz", "20 cm", "1.01 ns", "0.4dB@1GHz".

Parsing is forgiving about spacing and case of the unit where that is unambiguous
("470M", "470 mhz"), and strict about everything else: text that is not a number with a
known unit raises :class:`AnalysisError`.
"""

from __future__ import annotations

import math
import re

from refplane.analysis.errors import AnalysisError

# Metric prefixes. "M" is mega for frequencies (a practitioner writes "470M"); milli is "m".
_PREFIX = {
    "f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "μ": 1e-6, "m": 1e-3,
    "": 1.0, "k": 1e3, "K": 1e3, "M": 1e6, "G": 1e9, "T": 1e12,
}
_NUMBER = r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?"
_SPLIT = re.compile(rf"^\s*({_NUMBER})\s*([^\s\d].*?)?\s*$")


def _split(text: str, what: str) -> tuple[float, str]:
    if not isinstance(text, str):
        text = str(text)
    match = _SPLIT.match(text)
    if not match:
        raise AnalysisError(f"{text!r} is not a {what} (expected a number with an optional unit)")
    value = float(match.group(1))
    if not math.isfinite(value):
        raise AnalysisError(f"{text!r} is not a finite {what}")
    return value, (match.group(2) or "").strip()


def parse_frequency(text: str) -> float:
    """Parse a frequency in Hz from text such as "470MHz", "470 MHz", "470M", "4.7e8", "50kHz".

    Parameters
    ----------
    text : str
        A number, optionally followed by a prefix and/or "Hz" in any case.

    Returns
    -------
    float
        The frequency in hertz.

    Examples
    --------
    >>> parse_frequency("2.4GHz")
    2400000000.0
    >>> parse_frequency("470M")
    470000000.0
    """
    value, unit = _split(text, "frequency")
    if unit.lower().endswith("hz"):
        prefix = unit[:-2]
    else:
        prefix = unit
    # Case matters only for m/M; for frequencies "m" (milli-hertz) is never meant.
    table = {"": 1.0, "k": 1e3, "m": 1e6, "g": 1e9, "t": 1e12}
    key = prefix.lower()
    if key not in table:
        raise AnalysisError(f"{text!r}: unknown frequency unit {unit!r} (use Hz, kHz, MHz or GHz)")
    return value * table[key]


def _parse_with_unit(text: str, what: str, units: dict[str, float], hint: str,
                     extra_prefixes: dict[str, float] | None = None) -> float:
    value, unit = _split(text, what)
    prefixes = {**_PREFIX, **(extra_prefixes or {})}
    if unit in units:
        return value * units[unit]
    for base, scale in units.items():
        if base and unit.endswith(base) and unit[: -len(base)] in prefixes:
            return value * scale * prefixes[unit[: -len(base)]]
    raise AnalysisError(f"{text!r}: unknown {what} unit {unit!r} (use {hint})")


def parse_time(text: str) -> float:
    """Parse a time (a delay) in seconds: "1.01 ns", "250ps", "1e-9" (bare numbers are seconds)."""
    return _parse_with_unit(text, "time", {"": 1.0, "s": 1.0}, "s, ns or ps")


def parse_length(text: str) -> float:
    """Parse a length in metres: "20 cm", "0.2 m", "3.5mm", "12 in", "2 ft" (bare numbers are metres)."""
    value, unit = _split(text, "length")
    imperial = {"in": 0.0254, "inch": 0.0254, "inches": 0.0254, "\"": 0.0254,
                "ft": 0.3048, "foot": 0.3048, "feet": 0.3048}
    if unit.lower() in imperial:
        return value * imperial[unit.lower()]
    return _parse_with_unit(text, "length", {"": 1.0, "m": 1.0}, "m, cm, mm, in or ft",
                            extra_prefixes={"c": 1e-2})


def parse_resistance(text: str) -> float:
    """Parse a resistance in ohms: "50", "50 ohm", "75Ω", "1k"."""
    value, unit = _split(text, "resistance")
    for suffix in ("ohms", "ohm", "Ω", "R"):
        if unit.lower().endswith(suffix.lower()):
            unit = unit[: -len(suffix)]
            break
    if unit not in _PREFIX:
        raise AnalysisError(f"{text!r}: unknown resistance unit (use ohm, or a prefix such as k)")
    return value * _PREFIX[unit]


def parse_loss(text: str) -> tuple[float, float]:
    """Parse a one-way loss at a frequency: "0.4dB@1GHz" → (0.4, 1e9).

    A bare "0.4dB" or "0.4" is taken at 1 GHz.

    Returns
    -------
    (loss_db, ref_hz) : tuple of float
    """
    if not isinstance(text, str):
        text = str(text)
    loss_text, _, freq_text = text.partition("@")
    value, unit = _split(loss_text, "loss")
    if unit.lower() not in ("", "db"):
        raise AnalysisError(f"{text!r}: loss must be in dB, written like 0.4dB@1GHz")
    if value < 0:
        raise AnalysisError(f"{text!r}: loss must not be negative")
    ref_hz = parse_frequency(freq_text) if freq_text.strip() else 1e9
    if ref_hz <= 0:
        raise AnalysisError(f"{text!r}: the loss reference frequency must be above zero")
    return value, ref_hz


def parse_band(text: str) -> tuple[float, float]:
    """Parse a band "F1:F2" (each as :func:`parse_frequency`), returning (low_hz, high_hz)."""
    low, sep, high = str(text).partition(":")
    if not sep:
        raise AnalysisError(f"{text!r} is not a band; write it like 100MHz:1GHz")
    f1, f2 = parse_frequency(low), parse_frequency(high)
    if not f2 > f1:
        raise AnalysisError(f"{text!r}: the band's upper frequency must be above the lower")
    return f1, f2


# Other spellings of unit symbols a keyboard makes easy: "ohm" for Ω, "^2" for ², "u" for µ.
_UNIT_SPELLINGS = (("ohms", "Ω"), ("ohm", "Ω"), ("Ohm", "Ω"), ("^2", "²"), ("^3", "³"))


def parse_quantity(text: str, unit: str, what: str | None = None) -> float:
    """Parse a value of a quantity in SI units: ``parse_quantity("9 fF", "F")`` → 9e-15.

    A number may be followed by a metric prefix and the unit ("31 ps", "0.2nH", "9 fF",
    "1.5e-27 F/Hz", "50 ohm"). A bare number is taken in the unit itself. The prefix's case
    matters (m is milli, M is mega); the unit's case is forgiven after a prefix ("9 pf").

    Parameters
    ----------
    text : str
        The value as typed.
    unit : str
        The SI unit expected, e.g. ``"F"``, ``"H"``, ``"s"``, ``"Ω"``, ``"F/Hz²"``.
    what : str, optional
        The quantity's name for messages (default: the unit).

    Returns
    -------
    float
        The value in ``unit`` (without prefix).

    Raises
    ------
    AnalysisError
        When the text is not a number with that unit.

    Examples
    --------
    >>> parse_quantity("31 ps", "s")
    3.1e-11
    >>> parse_quantity("9 fF", "F")
    9e-15
    """
    what = what or f"value in {unit}"
    value, given = _split(text, what)
    for spelled, symbol in _UNIT_SPELLINGS:
        given = given.replace(spelled, symbol)
    if given in ("", unit):
        return value
    if given.endswith(unit) and given[: -len(unit)] in _PREFIX:
        return _scaled(value, _PREFIX[given[: -len(unit)]])
    # After a prefix, a unit written in the other case ("9 pf", "10 nh") is still clear.
    for prefix, scale in _PREFIX.items():
        if prefix and given.startswith(prefix) and given[len(prefix):].lower() == unit.lower():
            return _scaled(value, scale)
    raise AnalysisError(f"{text!r}: unknown unit {given!r} for a {what} (write it like 1.5 p{unit} "
                        f"or as a number in {unit})")


def _scaled(value: float, scale: float) -> float:
    # Dividing by the exact integer 10^k rounds once: "31 ps" is 3.1e-11, not 3.0999999999999996e-11.
    return value / round(1.0 / scale) if scale < 1.0 else value * scale


def parse_capacitance(text: str) -> float:
    """Parse a capacitance in farads: "9 fF", "1.2pF", "1e-12" (bare numbers are farads)."""
    return parse_quantity(text, "F", "capacitance")


def parse_inductance(text: str) -> float:
    """Parse an inductance in henries: "9 nH", "0.2nH", "1e-9" (bare numbers are henries)."""
    return parse_quantity(text, "H", "inductance")


_ENG = [(1e12, "T"), (1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"),
        (1e-6, "µ"), (1e-9, "n"), (1e-12, "p"), (1e-15, "f")]


def format_si(value: float | None, unit: str, digits: int = 4) -> str:
    """Format a value with a metric prefix: ``format_si(9.12e-9, "H")`` → "9.12 nH".

    ``None`` and NaN give "—"; infinities give "∞ unit".
    """
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "—"
    if math.isinf(value):
        return f"{'-' if value < 0 else ''}∞ {unit}".strip()
    if value == 0:
        return f"0 {unit}".strip()
    mag = abs(value)
    # Step up a prefix only when the value would round up to 1000 of the lower one.
    threshold = 1.0 - 0.5 * 10.0 ** -digits
    for scale, prefix in _ENG:
        if mag >= scale * threshold:
            break
    else:
        scale, prefix = _ENG[-1]
    # "#" keeps trailing zeros, so 9 nH reads "9.000 nH" beside "9.146 nH" in a column.
    return f"{value / scale:#.{digits}g} {prefix}{unit}".strip()


def format_frequency(freq_hz: float, digits: int = 7) -> str:
    """Format a frequency for display: 470e6 → "470 MHz", 1.2345e9 → "1.2345 GHz"."""
    text = format_si(float(freq_hz), "Hz", digits)
    number, _, unit = text.partition(" ")
    # Frequencies are read, not lined up in columns: drop format_si's trailing zeros.
    if "." in number and "e" not in number:
        number = number.rstrip("0").rstrip(".")
    return f"{number} {unit}" if unit else number
