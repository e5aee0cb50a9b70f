"""Values of any SI quantity typed with a metric prefix: "31 ps", "9 fF", "0.2 nH", "50 ohm".

Source: the SI prefixes (pico 1e-12, femto 1e-15, nano 1e-9, micro 1e-6, milli 1e-3, mega 1e6,
giga 1e9) and their case (m milli, M mega) are fixed by the BIPM SI brochure, 9th edition, table 7.
Writing "ohm" for Ω, "u" for µ and "pf" for pF is common practice on keyboards and parts lists.
"""

from __future__ import annotations

import pytest

from refplane.analysis.errors import AnalysisError
from refplane.analysis.units import parse_capacitance, parse_inductance, parse_quantity


@pytest.mark.parametrize("text, unit, value", [
    ("31 ps", "s", 31e-12),
    ("31ps", "s", 31e-12),
    ("9 fF", "F", 9e-15),
    ("9 pf", "F", 9e-12),          # unit's case forgiven after a prefix (common practice)
    ("0.2 nH", "H", 0.2e-9),
    ("2 uH", "H", 2e-6),
    ("2 µH", "H", 2e-6),
    ("2 mH", "H", 2e-3),           # milli
    ("2 MH", "H", 2e6),            # mega: the prefix's case matters
    ("50 ohm", "Ω", 50.0),
    ("50 Ω", "Ω", 50.0),
    ("1.5 GΩ/s", "Ω/s", 1.5e9),
    ("1.5 GOhm/s", "Ω/s", 1.5e9),
    ("-1.2e-27 F/Hz", "F/Hz", -1.2e-27),
    ("3 fF/Hz^2", "F/Hz²", 3e-15),
    ("4e-9", "H", 4e-9),            # a bare number is in the unit itself
    ("4e-9 H", "H", 4e-9),
])
def test_parse_quantity(text, unit, value):
    assert parse_quantity(text, unit) == pytest.approx(value, rel=1e-15)


def test_prefixed_values_round_once():
    # 31 × 10⁻¹² must be the float nearest 3.1e-11, as the literal 31e-12 is.
    assert parse_quantity("31 ps", "s") == 31e-12
    assert parse_capacitance("9 fF") == 9e-15
    assert parse_inductance("9 nH") == 9e-9


@pytest.mark.parametrize("text, unit", [
    ("9 f", "F"),       # a prefix alone: femtofarads or farads? refused, not guessed
    ("9 fH", "F"),      # another quantity's unit
    ("1 ms", "F"),
    ("lots", "H"),
    ("", "H"),
    ("9 xF", "F"),
])
def test_parse_quantity_refuses(text, unit):
    with pytest.raises(AnalysisError):
        parse_quantity(text, unit)


def test_message_names_the_quantity():
    with pytest.raises(AnalysisError, match="capacitance"):
        parse_capacitance("9 nH")
