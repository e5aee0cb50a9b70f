"""The variable-width number pass (touchstone.numbers.any_width) against Python's float().

Reference for every value: Python's ``float(text)``, which is correctly rounded (IEEE 754
round-half-to-even of the exact decimal value; Python language reference, "Floating point
literals", and the ``float`` documentation). Every accepted number must be bit-for-bit equal
to it. Text is written the ways files in the wild are: ``repr`` (shortest round trip, as
scikit-rf writes), ``'%.17g'``, fixed and exponent formats, and hand-made shapes (signs,
leading zeros, '.5', '5.', integers, 15-24 digit mantissas).
"""

from __future__ import annotations

import random

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from refplane.analysis.files.touchstone.numbers import any_width

SEPARATORS = [" ", "  ", "\t", " \t ", "   "]


def _block(lines: list[list[str]], rng: random.Random, ends: str = "\n") -> bytes:
    text = ""
    for tokens in lines:
        lead = rng.choice(["", "", " ", "\t"])
        text += lead + "".join(t + rng.choice(SEPARATORS) for t in tokens[:-1]) + tokens[-1]
        text += rng.choice(["", "", " ", "\t"]) + ends
    return text.encode("ascii")


def _check(lines: list[list[str]], block: bytes) -> None:
    parsed = any_width(block)
    assert parsed is not None, block[:200]
    values, first = parsed
    tokens = [t for line in lines for t in line]
    # Reference: Python's correctly rounded float() of each token.
    expected = np.array([float(t) for t in tokens], dtype=np.float64)
    assert values.shape == expected.shape
    wrong = np.flatnonzero(values.view(np.uint64) != expected.view(np.uint64))
    assert wrong.size == 0, [(tokens[i], values[i], expected[i]) for i in wrong[:5]]
    starts = np.zeros(len(tokens), dtype=bool)
    starts[np.cumsum([0] + [len(line) for line in lines[:-1]])] = True
    assert np.array_equal(first, starts)


def _formats(x: float, rng: random.Random) -> str:
    fmt = rng.choice(["repr", "%.17g", "%.16g", "%.15g", "%.6f", "%.12f", "%.18e", "%.3e",
                      "%.9g", "%.1f", "%.20f"])
    return repr(x) if fmt == "repr" else fmt % x


def _random_value(rng: random.Random) -> float:
    kind = rng.random()
    if kind < 0.5:
        return rng.uniform(-1, 1)  # reflection coefficients, RI
    if kind < 0.7:
        return rng.uniform(-180, 180)  # angles in degrees, MA and DB
    if kind < 0.8:
        return rng.uniform(-80, 5)  # magnitudes in dB
    if kind < 0.9:
        return float(rng.randrange(1, 10 ** 11))  # frequencies in Hz
    return rng.uniform(-1, 1) * 10.0 ** rng.randint(-12, 12)


def _hand_made(rng: random.Random) -> str:
    sign = rng.choice(["", "", "-", "+"])
    digits = "".join(rng.choice("0123456789") for _ in range(rng.randint(1, 24)))
    cut = rng.randint(0, len(digits))
    body = rng.choice([digits, digits[:cut] + "." + digits[cut:], "." + digits, digits + ".",
                       "0" * rng.randint(1, 4) + digits[:cut] + "." + digits[cut:]])
    if rng.random() < 0.2:
        body += rng.choice(["e", "E"]) + rng.choice(["", "+", "-"]) + str(rng.randint(0, 30))
    return sign + body


@pytest.mark.parametrize("seed", range(6))
def test_random_tokens_of_every_shape_equal_python_float(seed):
    rng = random.Random(seed)
    lines = []
    for _ in range(3000):
        count = rng.choice([9, 9, 9, 3, 1, 4])
        line = []
        for _ in range(count):
            if rng.random() < 0.3:
                line.append(_hand_made(rng))
            else:
                line.append(_formats(_random_value(rng), rng))
        lines.append(line)
    # Numbers longer than 40 characters are left to the careful reader (None), by design.
    lines = [[t for t in line if len(t) <= 40] or ["0"] for line in lines]
    _check(lines, _block(lines, rng))


def test_scikit_rf_layout_two_port_lines():
    # As scikit-rf 2.2 writes a two-port file: repr of each float (shortest round trip),
    # single spaces, nine numbers a line.
    rng = random.Random(7)
    lines = []
    for k in range(20000):
        freq = 1e6 + k * 29995.0
        line = [repr(freq)] + [repr(rng.uniform(-1, 1) * rng.choice([1, 1, 1e-2, 1e-3]))
                               for _ in range(8)]
        lines.append(line)
    _check(lines, ("\n".join(" ".join(line) for line in lines) + "\n").encode())


def test_scikit_rf_written_file_is_read_exactly(tmp_path):
    skrf = pytest.importorskip("skrf")
    rng = np.random.default_rng(11)
    n = 2000
    freq = skrf.Frequency.from_f(np.linspace(1e6, 6e9, n), unit="Hz")
    s = rng.uniform(-1, 1, (n, 2, 2)) + 1j * rng.uniform(-1, 1, (n, 2, 2))
    for form in ("ri", "ma", "db"):
        net = skrf.Network(frequency=freq, s=s, z0=50, name=f"t_{form}")
        net.write_touchstone(str(tmp_path / f"t_{form}"), form=form)
        text = (tmp_path / f"t_{form}.s2p").read_text()
        lines = [line.split() for line in text.splitlines()
                 if line.strip() and line[0] not in "!#"]
        assert len(lines) == n and all(len(line) == 9 for line in lines)
        _check(lines, ("\n".join(" ".join(line) for line in lines) + "\n").encode())


def test_hard_rounding_cases():
    # 2**53 + 1 and its neighbours lie exactly half-way between two doubles (round half to
    # even decides); the long-double path must hand them to float(). Other values: the
    # largest and smallest normal doubles' usual texts and long runs of nines (from memory,
    # common test values for correctly rounded conversion).
    tokens = ["9007199254740993", "9007199254740993.0", "9007199254740995", "-9007199254740993",
              "4503599627370496.5", "4503599627370497.5", "0.1", "0.30000000000000004",
              "1.7976931348623157e308", "2.2250738585072014e-308", "5e-324",
              "9999999999999999999", "0.9999999999999999999", "99999999999999999999.0",
              "1844674407370955161.5", "18446744073709551615", "18446744073709551616",
              "0.000000000000000000000001", "123456789012345678901234", ".5", "5.", "-.5",
              "+5.", "007.50", "-0", "0.0", "+0.000", "1e0", "1E+00", "1e-0"]
    _check([tokens], (" ".join(tokens) + "\n").encode())


def test_both_sides_of_the_double_division_limits():
    # Mantissas just below and at 2**53 = 9007199254740992, and 22 or 23 digits after the
    # point: the first are divided in double precision, the others in extended precision.
    # Reference: Python's correctly rounded float() (IEEE 754 division is correctly rounded
    # when both operands are exact doubles: Clinger's fast path, from memory).
    tokens = ["9007199254740991", "9007199254740992", "0.9007199254740991",
              "0.9007199254740992", "900719925474099.1", "9007199254740.993",
              "0.0000000000000000000001", "0.00000000000000000000001",
              "0.0000000000009007199254740991", "0.00000000000090071992547409921",
              "1234567.891011121", "-0.000000000000000000000123",
              ".00000000000000000000001", ".12345678901234567890123", "-.00000000000000000000005"]
    rng = random.Random(11)
    for digits in range(1, 24):
        for _ in range(40):
            text = str(rng.randrange(10 ** (digits - 1), 10 ** digits))
            point = rng.randrange(0, digits + 1)
            tokens.append(text[:point] + "." + text[point:])
    _check([tokens[i:i + 9] for i in range(0, len(tokens), 9)],
           "\n".join(" ".join(tokens[i:i + 9]) for i in range(0, len(tokens), 9)).encode()
           + b"\n")


@pytest.mark.parametrize("widest", [1, 2, 3, 5, 8, 16, 17, 40])
def test_line_starts_behind_blank_runs_of_every_width(widest):
    # Which numbers begin a line, behind indentation, runs of spaces and tabs, CR LF line
    # ends and empty lines, with blank runs up to `widest` bytes (the line-start marking
    # covers runs of up to 16 bytes, and locates the line ends beyond that). Reference:
    # the lines as written (Touchstone: one point per line for one- and two-ports).
    rng = random.Random(widest)
    text, lines = "", []
    for _ in range(300):
        # Short numbers too: a run must not reach past the number before it.
        tokens = [rng.choice([repr(rng.uniform(-1, 1)), "5", "7.", "-1", "0.5"])
                  for _ in range(rng.randint(1, 5))]
        lines.append(tokens)
        room = max(1, widest)
        lead = " " * rng.randint(0, room - 1)
        seps = [rng.choice([" ", "\t"]) * rng.randint(1, room) for _ in tokens[:-1]]
        end = rng.choice(["\n", "\r\n", " \n", "\n\n", "\t\r\n"])
        text += lead + "".join(t + g for t, g in zip(tokens, seps)) + tokens[-1] + end
    _check(lines, text.encode())


def test_numbers_at_both_ends_of_a_block():
    # Windows before the block's first byte and past its last one are padded, not read.
    for text in ["7", "1.5", "-0.25\n", "12345678901234567.5", "1 2", "0.1\n0.2", ".5 5."]:
        lines = [line.split() for line in text.split("\n") if line.split()]
        parsed = any_width(text.encode())
        values = parsed[0]
        # Reference: Python's float() of each token.
        assert values.tolist() == [float(t) for line in lines for t in line]


def test_overlong_token_is_left_to_the_careful_reader():
    assert any_width(b"0.5 " + b"1" * 41 + b"\n") is None


@pytest.mark.parametrize("bad", ["1.2.3", "1-2", "--1", "+-1", "1e", ".", "-", "+", "nan",
                                 "inf", "0x10", "1,5", "1.5.", "e5", "1e5.5", "1..", "..1",
                                 "1e+", "1ee5", "12a", "1.0d0", "١", "1_000"])
def test_not_a_plain_number_is_refused(bad):
    # Python's float() accepts some of these ("nan", "inf", "1_000"), Touchstone numbers do
    # not (Touchstone 2.0 specification: numbers are decimal, optionally in E notation):
    # the pass hands the block to the careful reader by returning None.
    good = "0.25 -0.5 1000000.0"
    block = f"{good} {bad} 0.125\n{good}\n".encode()
    assert any_width(block) is None


@pytest.mark.parametrize("bad", ["1.2.3", "1-2", "--1", "+-1", "1e", "nan", "inf", "1,5",
                                 "1e5.5", "1e+", "1ee5", "12a", "1.0d0", "1.5f", "1e-5-", "7/8",
                                 "1e-5e", "0.5\xb0", "1_000", "2*3"])
def test_not_a_plain_number_is_refused_beside_e_notation(bad):
    # Among numbers in E notation the pass locates the letters and the signs after them by
    # counting; any other odd byte must still be refused (same specification as above).
    block = f"0.25 1.5e-07 -2E+3 {bad}\n0.5 1e5 7.0\n".encode("latin-1")
    assert any_width(block) is None


def test_many_numbers_in_e_notation_equal_python_float():
    # More letters than the pass locates one by one: every number is then checked byte by
    # byte instead (reference: Python's correctly rounded float, as everywhere here).
    rng = random.Random(7)
    lines = [[f"{rng.uniform(-1, 1):.6e}", repr(rng.uniform(-1, 1)), "0.5"]
             for _ in range(5000)]
    _check(lines, _block(lines, rng))


_DECIMAL = st.from_regex(
    r"\A[+-]?([0-9]{1,17}(\.[0-9]{0,17})?|\.[0-9]{1,22})([eE][+-]?[0-9]{1,2})?\Z")


@settings(max_examples=300, deadline=None)
@given(st.lists(st.lists(st.one_of(
    _DECIMAL,
    st.floats(allow_nan=False, allow_infinity=False).map(repr),
    st.floats(allow_nan=False, allow_infinity=False).map(lambda x: "%.17g" % x)),
    min_size=1, max_size=9), min_size=1, max_size=40), st.randoms(use_true_random=False))
def test_generated_numbers_equal_python_float(lines, rng):
    lines = [[t for t in line if "inf" not in t and "nan" not in t] or ["0"] for line in lines]
    # Numbers longer than 40 characters are left to the careful reader (None), by design.
    lines = [[t for t in line if len(t) <= 40] or ["0"] for line in lines]
    _check(lines, _block(lines, rng))
