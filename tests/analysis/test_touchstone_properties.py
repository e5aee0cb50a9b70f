"""Property tests: random sweeps written by a small, independent writer (here, in the test)
in every legal option-line form, read back by Refplane.

Outside references: the Touchstone 1.1 and 2.0 specifications (option line, defaults,
normalisation of Y/Z/G/H in 1.x, column orders, [Reference]) and scikit-rf's network
conversions ``s2z``, ``s2y``, ``s2h``, ``s2g`` for the parameter values written.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from refplane.analysis.files import touchstone

N = pytest.importorskip("skrf.network")

UNITS = {"Hz": 1.0, "kHz": 1e3, "MHz": 1e6, "GHz": 1e9}
COMMENT_TEXT = st.text(alphabet="abc XYZ 0123456789.#[]=-_:", max_size=12)
SETTINGS = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@st.composite
def sweeps(draw, max_ports=4):
    ports = draw(st.integers(1, max_ports))
    points = draw(st.integers(1, 8))
    # Frequency grid: strictly increasing, from sub-hertz steps to tens of GHz.
    start = draw(st.one_of(st.just(0.0), st.floats(1e-3, 1e10, allow_nan=False)))
    steps = draw(st.lists(st.floats(1e-3, 1e9, allow_nan=False), min_size=points - 1,
                          max_size=points - 1))
    freq = start + np.concatenate([[0.0], np.cumsum(steps)])
    if points > 1 and not np.all(np.diff(freq) > 0):
        freq = start + np.arange(points) * 1e3
    seed = draw(st.integers(0, 2**32 - 1))
    rng = np.random.default_rng(seed)
    s = rng.normal(size=(points, ports, ports)) + 1j * rng.normal(size=(points, ports, ports))
    # Keep ‖S‖ below 1 so the Y, Z, G and H matrices exist and are well conditioned.
    s *= 0.7 / (ports * max(np.abs(s).max(), 1e-3))
    return freq, s


def _pairs(values: np.ndarray, fmt: str) -> list[float]:
    out = []
    for v in values:
        if fmt == "ri":
            out += [v.real, v.imag]
        elif fmt == "ma":
            out += [abs(v), np.degrees(np.angle(v))]
        else:
            out += [20 * np.log10(abs(v)), np.degrees(np.angle(v))]
    return out


def _matrices(kind: str, s: np.ndarray, z0) -> np.ndarray:
    # Source: scikit-rf's conversions (power waves; identical to pseudo-waves for real Z0).
    z0 = np.asarray(z0, dtype=float)
    return {"s": lambda: s, "z": lambda: N.s2z(s, z0), "y": lambda: N.s2y(s, z0),
            "h": lambda: N.s2h(s, z0), "g": lambda: N.s2g(s, z0)}[kind]()


def _normalise_v1(kind: str, m: np.ndarray, r: float) -> np.ndarray:
    # Source: Touchstone 1.1 — Z divided by R, Y multiplied by R; for hybrid parameters the
    # impedance-like entries are divided and the admittance-like ones multiplied.
    m = m.copy()
    if kind == "z":
        m /= r
    elif kind == "y":
        m *= r
    elif kind == "h":
        m[:, 0, 0] /= r
        m[:, 1, 1] *= r
    elif kind == "g":
        m[:, 0, 0] *= r
        m[:, 1, 1] /= r
    return m


def _random_case(draw, word: str) -> str:
    flags = draw(st.lists(st.booleans(), min_size=len(word), max_size=len(word)))
    return "".join(c.upper() if f else c.lower() for c, f in zip(word, flags))


class _Lines:
    """Collects output lines, sprinkling comments and blank lines, remembering the comments."""

    def __init__(self, draw):
        self.draw = draw
        self.lines: list[str] = []
        self.comments: list[str] = []

    def comment_line(self):
        if self.draw(st.integers(0, 4)) == 0:
            text = self.draw(COMMENT_TEXT)
            self.lines.append(f"!{text}")
            self.comments.append(text.strip())
        if self.draw(st.integers(0, 6)) == 0:
            self.lines.append(self.draw(st.sampled_from(["", "   ", "\t"])))

    def add(self, text: str):
        self.comment_line()
        if self.draw(st.integers(0, 4)) == 0:
            note = self.draw(COMMENT_TEXT)
            text = f"{text} !{note}"
            self.lines.append(text)
            self.comments.append(note.strip())
        else:
            self.lines.append(text)

    def text(self) -> str:
        return "\n".join(self.lines) + "\n"


def _number_lines(freq_value: float, numbers: list[float], ports: int, draw) -> list[str]:
    """One point: a single line for 1-/2-ports; rows wrapped at random for larger ones."""
    fmt = "%.17g"
    if ports <= 2:
        return [" ".join(fmt % v for v in [freq_value] + numbers)]
    lines = []
    per_row = 2 * ports
    for i in range(ports):
        row = numbers[i * per_row:(i + 1) * per_row]
        # Up to four pairs per line (Touchstone 1.1), split at random pair boundaries.
        pos = 0
        first = True
        while pos < len(row):
            take = 2 * draw(st.integers(1, min(4, (len(row) - pos) // 2)))
            chunk = row[pos:pos + take]
            lead = [freq_value] if (i == 0 and first) else []
            lines.append(" ".join(fmt % v for v in lead + chunk))
            pos += take
            first = False
    return lines


@st.composite
def v1_files(draw):
    freq, s = draw(sweeps())
    ports = s.shape[1]
    kinds = ["s", "y", "z"] + (["g", "h"] if ports == 2 else [])
    kind = draw(st.sampled_from(kinds))
    fmt = draw(st.sampled_from(["ri", "ma", "db"]))
    unit = draw(st.sampled_from(list(UNITS) + [None]))
    r = draw(st.sampled_from([None, 50.0, 75.0, 1.0, 12.5, 300.0]))
    # Tokens: omitted ones take the defaults GHz, S, MA, R 50 (Touchstone 1.1).
    tokens = []
    if unit is not None:
        tokens.append(_random_case(draw, unit))
    if kind != "s" or draw(st.booleans()):
        tokens.append(_random_case(draw, kind))
    if fmt != "ma" or draw(st.booleans()):
        tokens.append(_random_case(draw, fmt))
    if r is not None:
        tokens.append(_random_case(draw, "r") + " " + ("%g" % r))
    tokens = draw(st.permutations(tokens))
    unit_scale = UNITS[unit] if unit else 1e9
    r_ohm = r if r is not None else 50.0

    m = _normalise_v1(kind, _matrices(kind, s, [r_ohm] * ports), r_ohm)
    out = _Lines(draw)
    out.add("# " + " ".join(tokens))
    for k in range(len(freq)):
        if ports == 2:
            elems = [m[k, 0, 0], m[k, 1, 0], m[k, 0, 1], m[k, 1, 1]]  # 1.x order S11 S21 S12 S22
        else:
            elems = [m[k, i, j] for i in range(ports) for j in range(ports)]
        for line in _number_lines(freq[k] / unit_scale, _pairs(elems, fmt), ports, draw):
            out.add(line)
    out.comment_line()
    return out.text(), ports, freq, s, r_ohm, out.comments, fmt, unit_scale


def _check(path, ports, freq, s, z0, comments, fmt, unit_scale):
    sweep = touchstone.read(path)
    assert sweep.n_ports == ports
    np.testing.assert_allclose(sweep.freq_hz, (freq / unit_scale) * unit_scale, rtol=1e-15, atol=0)
    tol = 1e-12 if fmt == "ri" else 1e-9
    np.testing.assert_allclose(sweep.s, s, rtol=tol, atol=tol)
    np.testing.assert_allclose(sweep.z0_ohm, np.broadcast_to(z0, (ports,)))
    assert list(sweep.comments) == comments
    # The careful line-by-line pass reads the same file bit for bit alike.
    head, f2, s2 = touchstone._careful(str(path), None if str(path).endswith(".ts") else ports)
    assert np.array_equal(f2, sweep.freq_hz) and np.array_equal(s2, sweep.s)
    assert head.comments == comments


@SETTINGS
@given(case=v1_files())
def test_version_1_every_option_line_form(tmp_path_factory, case):
    text, ports, freq, s, r, comments, fmt, unit_scale = case
    path = tmp_path_factory.mktemp("v1") / f"p.s{ports}p"
    path.write_text(text)
    _check(path, ports, freq, s, r, comments, fmt, unit_scale)


@st.composite
def v2_files(draw):
    freq, s = draw(sweeps())
    ports = s.shape[1]
    kinds = ["s", "y", "z"] + (["g", "h"] if ports == 2 else [])
    kind = draw(st.sampled_from(kinds))
    fmt = draw(st.sampled_from(["ri", "ma", "db"]))
    unit = draw(st.sampled_from(list(UNITS)))
    z0 = np.array(draw(st.lists(st.sampled_from([50.0, 75.0, 25.0, 100.0]), min_size=ports,
                                max_size=ports)))
    order_21_12 = draw(st.booleans())
    # Source: Touchstone 2.0 — Y, Z, G and H are in siemens and ohms, not normalised.
    m = _matrices(kind, s, z0)
    out = _Lines(draw)
    kw = lambda word: "[" + _random_case(draw, word) + "]"  # noqa: E731 - keywords in any case
    out.add(kw("Version") + " 2.0")
    out.add("# " + " ".join(draw(st.permutations(
        [_random_case(draw, unit), _random_case(draw, kind), _random_case(draw, fmt), "R 50"]))))
    out.add(kw("Number of Ports") + f" {ports}")
    if ports == 2:
        out.add(kw("Two-Port Data Order") + (" 21_12" if order_21_12 else " 12_21"))
    out.add(kw("Number of Frequencies") + f" {len(freq)}")
    # [Reference] values may continue on the following lines.
    split = draw(st.integers(1, ports))
    out.add(kw("Reference") + " " + " ".join("%g" % v for v in z0[:split]))
    for v in z0[split:]:
        out.lines.append("%g" % v)
    out.add(kw("Network Data"))
    scale = UNITS[unit]
    for k in range(len(freq)):
        if ports == 2 and order_21_12:
            elems = [m[k, 0, 0], m[k, 1, 0], m[k, 0, 1], m[k, 1, 1]]
        else:
            elems = [m[k, i, j] for i in range(ports) for j in range(ports)]
        for line in _number_lines(freq[k] / scale, _pairs(elems, fmt), ports, draw):
            out.add(line)
    out.add(kw("End"))
    return out.text(), ports, freq, s, z0, out.comments, fmt, scale


@SETTINGS
@given(case=v2_files(), suffix=st.sampled_from(["ts", "snp"]))
def test_version_2_files(tmp_path_factory, case, suffix):
    text, ports, freq, s, z0, comments, fmt, unit_scale = case
    name = "p.ts" if suffix == "ts" else f"p.s{ports}p"
    path = tmp_path_factory.mktemp("v2") / name
    path.write_text(text)
    _check(path, ports, freq, s, z0, comments, fmt, unit_scale)


@settings(max_examples=25, deadline=None)
@given(data=sweeps(), fmt=st.sampled_from(["RI", "MA", "DB"]),
       unit=st.sampled_from(list(UNITS)), version=st.sampled_from(["1.1", "2.0"]))
def test_writer_round_trip(tmp_path_factory, data, fmt, unit, version):
    from refplane.analysis.sweep import Sweep

    freq, s = data
    sweep = Sweep(freq_hz=freq, s=s, z0_ohm=50.0)
    ports = s.shape[1]
    path = touchstone.write(sweep, tmp_path_factory.mktemp("w") / f"w.s{ports}p", fmt=fmt,
                            freq_unit=unit, version=version)
    back = touchstone.read(path)
    assert np.all(np.abs(back.freq_hz - freq) <= np.spacing(np.maximum(freq, 1e-300)))
    if fmt == "RI":
        assert np.array_equal(back.s, s)
    else:
        np.testing.assert_allclose(back.s, s, rtol=1e-13, atol=1e-15)
