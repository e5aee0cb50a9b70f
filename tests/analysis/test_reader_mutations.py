"""Mutation property test of the Touchstone reader (issue 13).

Valid files of every form (1.x one-, two- and three-ports; 2.0 Full and Lower/Upper; RI, MA
and DB; fixed-width, shortest round-trip and %g numbers; spaces, tabs, CR LF; comments; a
noise block) are damaged — bytes flipped, deleted, duplicated, truncated, text and unicode
inserted, huge tokens — and read. The outcome must be either a correct read, checked against
an independent slow reference parser written here (line by line, plain Python floats, the
rules of the Touchstone 1.1 and 2.0 specifications), or the one error type with a one-line
message naming the file; never another exception, a warning other than the reader's own, or
a long wait.

Run with ``--hypothesis-profile=long`` for at least 20,000 inputs (tests/conftest.py).
"""

from __future__ import annotations

import math
import re
import time
import warnings

import numpy as np
from hypothesis import given, strategies as st

from refplane.analysis.files import touchstone
from refplane.analysis.errors import AnalysisError
from refplane.analysis.files.touchstone import TouchstoneWarning

UNITS = {"hz": 1.0, "khz": 1e3, "mhz": 1e6, "ghz": 1e9}
NUMBER = re.compile(r"[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?")


# ------------------------------------------------------------------ valid files


@st.composite
def valid_files(draw):
    """(file name, bytes) of a valid Touchstone file."""
    version = draw(st.sampled_from([1, 1, 2]))
    ports = draw(st.sampled_from([1, 2, 2, 3]))
    fmt = draw(st.sampled_from(["RI", "MA", "DB"]))
    unit = draw(st.sampled_from(["Hz", "kHz", "MHz", "GHz"]))
    style = draw(st.sampled_from(["%.17g", "%.16e", "%g", "%+.6e"]))
    sep = draw(st.sampled_from([" ", "  ", "\t", " \t "]))
    eol = draw(st.sampled_from(["\n", "\n", "\r\n"]))
    points = draw(st.integers(1, 5))
    rng = np.random.default_rng(draw(st.integers(0, 2**32 - 1)))
    freq = np.cumsum(rng.uniform(0.5, 3.0, points)).round(6)
    s = (rng.uniform(-0.9, 0.9, (points, ports, ports))
         + 1j * rng.uniform(-0.9, 0.9, (points, ports, ports)))
    matrix = "full"
    if version == 2 and ports == 2:
        matrix = draw(st.sampled_from(["full", "lower", "upper"]))
    if matrix == "lower":
        order = [(0, 0), (1, 0), (1, 1)]
    elif matrix == "upper":
        order = [(0, 0), (0, 1), (1, 1)]
    elif ports == 2 and version == 1:
        order = [(0, 0), (1, 0), (0, 1), (1, 1)]
    else:
        order = [(i, j) for i in range(ports) for j in range(ports)]

    def pair(v):
        if fmt == "RI":
            a, b = v.real, v.imag
        elif fmt == "MA":
            a, b = abs(v), math.degrees(math.atan2(v.imag, v.real))
        else:
            a, b = 20 * math.log10(abs(v)), math.degrees(math.atan2(v.imag, v.real))
        return [style % a, style % b]

    lines = [f"! invented data for a reader test{sep}25 °C"]
    if version == 2:
        lines += ["[Version] 2.0", f"# {unit} S {fmt} R 50", f"[Number of Ports] {ports}"]
        if ports == 2:
            lines.append("[Two-Port Data Order] 12_21")
        lines.append(f"[Number of Frequencies] {points}")
        if matrix != "full":
            lines.append(f"[Matrix Format] {matrix.title()}")
        lines.append("[Network Data]")
    else:
        lines.append(f"# {unit} S {fmt} R 50")
    for k in range(points):
        values = [style % freq[k]]
        for i, j in order:
            values += pair(s[k, i, j])
        if ports <= 2:
            lines.append(sep.join(values))
        else:
            first, rest = values[:1 + 2 * ports], values[1 + 2 * ports:]
            lines.append(sep.join(first))
            while rest:
                lines.append(sep + sep.join(rest[:2 * ports]))
                rest = rest[2 * ports:]
        if draw(st.booleans()) and k == 0:
            lines[-1] += " ! a comment after the numbers"
    if version == 1 and ports == 2 and draw(st.booleans()):
        lines.append("! noise parameters")
        lines.append(sep.join(style % x for x in (freq[0], 1.2, 0.4, 30.0, 0.3)))
    if version == 2:
        lines.append("[End]")
    name = f"dut.s{ports}p" if version == 1 or draw(st.booleans()) else "dut.ts"
    return name, (eol.join(lines) + eol).encode("utf-8")


# ------------------------------------------------------------------ mutations

_INSERTS = [b"#", b"# MHz Z RI R 75", b"[End]", b"[Network Data]", b"!", b"nan", b"inf",
            b"1e999", b"-", b".", b"e", b"\x00", b"\r", b"\n", b"\t", b"[Number of Ports] 3",
            b"[Reference] 50 75", "°µ€ ž 漢".encode("utf-8"), b"\xff\xfe", b"\xb0",
            b"! Port Impedance 60 0", b"[Noise Data]", b"1 2 3 4 5", b"0x10", b"1_000",
            b"\xef\xbb\xbf"]


@st.composite
def mutated(draw):
    name, data = draw(valid_files())
    data = bytearray(data)
    for _ in range(draw(st.integers(0, 3))):
        kind = draw(st.sampled_from(["flip", "delete", "duplicate", "truncate", "insert",
                                     "huge", "unicode"]))
        at = draw(st.integers(0, max(len(data) - 1, 0)))
        if kind == "flip" and data:
            data[at] = draw(st.integers(0, 255))
        elif kind == "delete":
            del data[at:at + draw(st.integers(1, 12))]
        elif kind == "duplicate":
            data[at:at] = data[at:at + draw(st.integers(1, 40))]
        elif kind == "truncate":
            del data[at:]
        elif kind == "insert":
            data[at:at] = draw(st.sampled_from(_INSERTS))
        elif kind == "huge":
            data[at:at] = draw(st.sampled_from([b"7", b"0", b" ", b"-1"])) * \
                draw(st.integers(100, 20_000))
        else:
            data[at:at] = draw(st.text(max_size=6)).encode("utf-8", "surrogatepass")
    return name, bytes(data)


# ------------------------------------------------------------------ the reference parser


class Refused(Exception):
    """The reference parser refuses the file."""


class Beyond(Exception):
    """Something the reference parser does not model (the comparison is skipped)."""


def reference_read(name: str, data: bytes):
    """Freq (Hz), S and reference Z0 of a Touchstone file, one line at a time, plain floats."""
    if b"\x00" in data:
        raise Refused("NUL")
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    m = re.search(r"\.s(\d+)p$", name, re.IGNORECASE)
    ext_ports = int(m.group(1)) if m else None
    # Line ends: LF or CR LF; bare CR only in a file without any LF (old Macintosh text).
    lines = re.split(rb"\r?\n", data) if b"\n" in data else data.split(b"\r")
    version, unit, param, fmt, r = 1, "ghz", "s", "ma", 50.0
    seen_option = False
    kw: dict[str, str] = {}
    in_data = False
    net_seen = False
    values: list[float] = []
    points: list[list[float]] = []
    noise = False
    ended = False
    last_f = -math.inf
    per_point = None
    ports = None
    saw_end = False
    for raw in lines:
        try:
            text = raw.decode("utf-8")
        except UnicodeDecodeError:
            try:
                text = raw.decode("cp1252")
            except UnicodeDecodeError:
                text = raw.decode("latin-1")
        text = text.split("!", 1)[0].strip()
        if not text:
            continue
        if ended:
            raise Refused("after [End]")
        if text.startswith("["):
            close = text.find("]")
            if close < 0:
                raise Refused("keyword")
            key = " ".join(text[1:close].split()).lower()
            value = text[close + 1:].strip()
            if key == "version":
                if kw or seen_option or version == 2 or value.split()[:1] not in (["2.0"], ["2.1"], ["2"]):
                    raise Refused("version")
                version = 2
                continue
            if version != 2:
                raise Refused("keyword in 1.x")
            if key == "end":
                if not net_seen:
                    raise Refused("end early")
                if values:
                    raise Refused("short point")
                ended = saw_end = True
                continue
            if key == "noise data":
                if not in_data or values:
                    raise Refused("noise")
                noise = True
                continue
            if in_data:
                raise Refused("keyword in data")
            if key == "network data":
                net_seen = True
                continue
            if key in ("reference", "begin information", "end information",
                       "mixed-mode order"):
                raise Beyond(key)
            if key not in ("number of ports", "two-port data order", "number of frequencies",
                           "number of noise frequencies", "matrix format"):
                raise Refused("unknown keyword")
            if key in kw and kw[key] != value.lower():
                raise Refused("twice")
            kw[key] = value.lower()
            continue
        if text.startswith("#"):
            if in_data:
                raise Refused("option after data")
            if not seen_option:
                seen_option = True
                toks = text[1:].split()
                kinds = set()
                i = 0
                while i < len(toks):
                    t = toks[i].lower()
                    if t in UNITS:
                        k = "u"; unit = t
                    elif t in ("s", "y", "z", "g", "h"):
                        k = "p"; param = t
                    elif t in ("ri", "ma", "db"):
                        k = "f"; fmt = t
                    elif t == "r":
                        k = "r"
                        if i + 1 >= len(toks) or not NUMBER.fullmatch(toks[i + 1]):
                            raise Refused("R")
                        r = float(toks[i + 1])
                        i += 1
                    else:
                        raise Beyond("option token")
                    if k in kinds:
                        raise Refused("option twice")
                    kinds.add(k)
                    i += 1
                if not (math.isfinite(r) and r > 0):
                    raise Refused("R")
            continue
        # numbers
        if not in_data:
            in_data = True
            if version == 2:
                if not net_seen:
                    raise Refused("no network data")
                try:
                    ports = int(kw["number of ports"])
                    n_freq = int(kw["number of frequencies"])
                except (KeyError, ValueError):
                    raise Beyond("2.0 counts") from None
                if ext_ports is not None and ext_ports != ports:
                    raise Refused("ports")
                if ports == 2 and "two-port data order" not in kw:
                    raise Refused("order")
                matrix = kw.get("matrix format", "full")
                if matrix not in ("full", "lower", "upper"):
                    raise Refused("matrix")
            else:
                if ext_ports is None:
                    raise Refused("ports")
                ports, matrix = ext_ports, "full"
            if param != "s":
                raise Beyond("not S")
            per_point = 1 + (ports * (ports + 1) if matrix != "full" else 2 * ports * ports)
        nums = []
        for tok in text.split():
            if len(tok) > 100:
                raise Refused("too long")
            if not (tok.isascii() and NUMBER.fullmatch(tok)):
                raise Refused("not a number")
            v = float(tok)
            if not math.isfinite(v):
                raise Refused("not finite")
            nums.append(v)
        if noise:
            if len(nums) != 5:
                raise Refused("noise row")
            continue
        if not values and version == 1 and ports == 2 and points and len(nums) == 5 \
                and nums[0] * UNITS[unit] <= last_f:
            noise = True
            continue
        if any(ord(c) < 32 and c not in "\t\r" for c in text):
            raise Refused("control")
        if ports <= 2 and len(nums) != per_point:
            raise Refused("count")
        values += nums
        if len(values) > per_point:
            raise Refused("count")
        if len(values) == per_point:
            f = values[0] * UNITS[unit]
            if not (math.isfinite(f) and f > last_f and f >= 0):
                raise Refused("frequency")
            last_f = f
            points.append(values)
            values = []
    if values:
        raise Refused("short point")
    if not points:
        raise Refused("no points")
    if version == 2:
        if len(points) != n_freq:
            raise Refused("count of frequencies")
        if noise:
            raise Beyond("2.0 noise counts")
    if version == 2 and matrix == "lower":
        order = [(i, j) for i in range(ports) for j in range(i + 1)]
    elif version == 2 and matrix == "upper":
        order = [(i, j) for i in range(ports) for j in range(i, ports)]
    elif ports == 2 and (version == 1 or kw.get("two-port data order") == "21_12"):
        order = [(0, 0), (1, 0), (0, 1), (1, 1)]
    else:
        order = [(i, j) for i in range(ports) for j in range(ports)]
    s = np.zeros((len(points), ports, ports), dtype=complex)
    for k, row in enumerate(points):
        for e, (i, j) in enumerate(order):
            a, b = row[1 + 2 * e], row[2 + 2 * e]
            if fmt == "ri":
                v = complex(a, b)
            else:
                mag = a if fmt == "ma" else 10.0 ** (a / 20.0)
                v = complex(mag * math.cos(math.radians(b)), mag * math.sin(math.radians(b)))
            if not (math.isfinite(v.real) and math.isfinite(v.imag)):
                raise Refused("overflow")
            s[k, i, j] = v
            if matrix != "full":
                s[k, j, i] = v
    freq = np.array([row[0] * UNITS[unit] for row in points])
    return freq, s, r


# ------------------------------------------------------------------ the property


def _check(tmp_path, name, data):
    path = tmp_path / name
    path.write_bytes(data)
    start = time.perf_counter()
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            warnings.simplefilter("ignore", TouchstoneWarning)
            sweep = touchstone.read(path)
    except AnalysisError as exc:
        text = str(exc)
        assert "\n" not in text and "\r" not in text
        assert text.startswith(str(path)), text
        assert len(text) <= 320, text
        return "refused"
    finally:
        assert time.perf_counter() - start < 5.0
    try:
        freq, s, r = reference_read(name, data)
    except Beyond:
        return "accepted"
    except Refused as why:
        raise AssertionError(f"accepted, but the reference parser refuses it ({why}):\n{data!r}")
    np.testing.assert_array_equal(sweep.freq_hz, freq)
    scale = max(float(np.abs(s).max()), 1e-300)
    np.testing.assert_allclose(sweep.s, s, rtol=1e-12, atol=1e-12 * scale)
    assert np.all(sweep.z0_ohm.real == r)
    return "accepted"


@given(case=valid_files())
def test_valid_files_read_like_the_reference(case, tmp_path_factory):
    name, data = case
    assert _check(tmp_path_factory.mktemp("valid"), name, data) == "accepted"


@given(case=mutated())
def test_mutated_files_read_right_or_refused_in_one_line(case, tmp_path_factory):
    name, data = case
    _check(tmp_path_factory.mktemp("mutated"), name, data)
