"""SI text parsing and formatting.

Sources: SI metric prefixes and the inch (exactly 25.4 mm) and foot (exactly 0.3048 m) are fixed by
definition (BIPM SI brochure; the 1959 international yard and pound agreement — from memory). The way
practitioners write frequencies ("470M" for 470 MHz) is common practice.
"""

from __future__ import annotations

import math

import pytest

from refplane.analysis.errors import AnalysisError
from refplane.analysis.units import (
    format_frequency,
    format_si,
    parse_band,
    parse_frequency,
    parse_length,
    parse_loss,
    parse_resistance,
    parse_time,
)


@pytest.mark.parametrize("text, hz", [
    # Every form the issue lists (SI prefixes k = 1e3, M = 1e6, G = 1e9; "470M" is common practice).
    ("470MHz", 470e6),
    ("470 MHz", 470e6),
    ("470M", 470e6),
    ("4.7e8", 470e6),
    ("2.4GHz", 2.4e9),
    ("50kHz", 50e3),
    # Case and spacing are forgiven where unambiguous (documented).
    ("470 mhz", 470e6),
    ("  1 GHz ", 1e9),
    ("100", 100.0),
    ("100 Hz", 100.0),
    (".5GHz", 0.5e9),
    ("1e3 kHz", 1e6),
])
def test_parse_frequency_forms(text, hz):
    assert parse_frequency(text) == pytest.approx(hz, rel=1e-15)


@pytest.mark.parametrize("text", ["", "MHz", "abc", "470 MHzz", "470 parsecs", "1e", "nan", "inf",
                                  "4.7.8", "470 M Hz x", "1,000 MHz"])
def test_parse_frequency_rejects_malformed(text):
    with pytest.raises(AnalysisError) as info:
        parse_frequency(text)
    assert repr(text) in str(info.value) or text.strip() in str(info.value)


@pytest.mark.parametrize("text, metres", [
    # SI: centi = 1e-2, milli = 1e-3; the inch is exactly 0.0254 m and the foot 0.3048 m (by definition).
    ("20 cm", 0.20),
    ("3.5mm", 3.5e-3),
    ("12 in", 12 * 0.0254),
    ("2 ft", 2 * 0.3048),
    ("0.2 m", 0.2),
    ("1.5", 1.5),
])
def test_parse_length(text, metres):
    assert parse_length(text) == pytest.approx(metres, rel=1e-15)


@pytest.mark.parametrize("text, seconds", [
    # SI prefixes n = 1e-9, p = 1e-12.
    ("1.01 ns", 1.01e-9),
    ("250ps", 250e-12),
    ("1e-9", 1e-9),
    ("3 us", 3e-6),
])
def test_parse_time(text, seconds):
    assert parse_time(text) == pytest.approx(seconds, rel=1e-15)


@pytest.mark.parametrize("text", ["1.01 nsec", "ns", "3 furlongs", "12 lightyears"])
def test_parse_time_and_length_reject_malformed(text):
    with pytest.raises(AnalysisError):
        parse_time(text)
    with pytest.raises(AnalysisError):
        parse_length(text)


def test_parse_resistance():
    assert parse_resistance("50") == 50.0
    assert parse_resistance("75 ohm") == 75.0
    assert parse_resistance("75Ω") == 75.0
    assert parse_resistance("1k") == 1e3
    with pytest.raises(AnalysisError):
        parse_resistance("75 volts")


def test_parse_loss():
    assert parse_loss("0.4dB@1GHz") == (pytest.approx(0.4), pytest.approx(1e9))
    assert parse_loss("0.4 dB @ 500 MHz") == (pytest.approx(0.4), pytest.approx(500e6))
    # A bare loss is at 1 GHz (documented).
    assert parse_loss("0.4dB") == (pytest.approx(0.4), pytest.approx(1e9))
    assert parse_loss("0.4") == (pytest.approx(0.4), pytest.approx(1e9))
    for bad in ("-1dB@1GHz", "0.4 W@1GHz", "0.4dB@0Hz", "0.4dB@fast", "dB@1GHz"):
        with pytest.raises(AnalysisError):
            parse_loss(bad)


def test_parse_band():
    assert parse_band("100MHz:1GHz") == (pytest.approx(100e6), pytest.approx(1e9))
    assert parse_band("144M:146M") == (pytest.approx(144e6), pytest.approx(146e6))
    for bad in ("100MHz", "1GHz:100MHz", "1GHz:1GHz", "a:b", ":1GHz"):
        with pytest.raises(AnalysisError):
            parse_band(bad)


def test_format_si():
    assert format_si(9.12e-9, "H") == "9.120 nH"   # documented example (trailing zeros kept)
    assert format_si(9e-9, "H") == "9.000 nH"
    assert format_si(10e-12, "F") == "10.00 pF"
    assert format_si(159.15494, "Ω") == "159.2 Ω"
    assert format_si(-3.3e-12, "F") == "-3.300 pF"
    assert format_si(0.0, "H") == "0 H"
    assert format_si(None, "H") == "—"
    assert format_si(math.nan, "H") == "—"
    assert format_si(math.inf, "Ω") == "∞ Ω"
    assert format_si(-math.inf, "Ω") == "-∞ Ω"
    # A value just under a prefix step that rounds up to 1000 moves to the next prefix...
    assert format_si(999.96e-9, "H") == "1.000 µH"
    # ...and one that does not stays with its own (999.9 nH, not "0.9999 µH").
    assert format_si(999.9e-9, "H") == "999.9 nH"


@pytest.mark.parametrize("hz, text", [
    (470e6, "470 MHz"),         # documented example
    (2.4e9, "2.4 GHz"),
    (1.2345e9, "1.2345 GHz"),
    (100e3, "100 kHz"),
    (145.2e6, "145.2 MHz"),
    (999.9e6, "999.9 MHz"),
    (1e9, "1 GHz"),
    (50.0, "50 Hz"),
])
def test_format_frequency(hz, text):
    assert format_frequency(hz) == text


@pytest.mark.parametrize("hz", [470e6, 2.4e9, 50e3, 1.2345e9, 145.2e6, 999.9e6])
def test_format_then_parse_round_trip(hz):
    # What the program shows can be typed back in.
    assert parse_frequency(format_frequency(hz)) == pytest.approx(hz, rel=1e-7)
