"""The regression corpus of issue 13: every malformed, unusual or hostile file is read right
or refused with one short line naming the file, the line and the reason.

The corpus is made by ``tests/make_hardening_corpus.py`` (fixed seed); the expected values of
the files that must be read come from the Touchstone 2.0 specification (matrix format and
data order rules), the definition of RI/MA/DB data (Touchstone 1.1/2.0: MA is linear
magnitude and angle in degrees, DB is 20·log10 of the magnitude), and the JSON layouts
documented in ``refplane.analysis.calibration.calfile`` and ``refplane.analysis.calibration.standards``.
"""

from __future__ import annotations

import errno
import importlib.util
import json
import os
import pathlib
import stat
import threading
import warnings

import numpy as np
import pytest

from refplane.analysis.errors import AnalysisError, SweepFileError
from refplane.analysis.files.fileio import MAX_INPUT_BYTES
from refplane.analysis.files.loading import read_sweep
from refplane.analysis.files.touchstone import TouchstoneWarning

TESTS = pathlib.Path(__file__).resolve().parents[1]
CORPUS = TESTS / "corpus" / "hardening"
MANIFEST = json.loads((CORPUS / "manifest.json").read_text(encoding="utf-8"))
#: One line, "about 200 characters" (issue 13): reason ≤ 220, the file shown ≤ 80.
MAX_MESSAGE = 320


def _generator():
    spec = importlib.util.spec_from_file_location("make_hardening_corpus",
                                                  TESTS / "make_hardening_corpus.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def _load(path: pathlib.Path):
    name = path.name
    if name.endswith(".standards.json"):
        from refplane.analysis.calibration.standards import load_standards

        return load_standards(path)
    if name.endswith(".cal.json"):
        from refplane.analysis.calibration.calfile import load_calibration

        return load_calibration(path)
    return read_sweep(path)


def check_refusal(exc: AnalysisError, path, line, contains) -> None:
    """The message rules of issue 13: one line, short, the file named, the right line."""
    text = str(exc)
    assert "\n" not in text and "\r" not in text, text
    assert not any(ord(c) < 32 for c in text), text
    assert len(text) <= MAX_MESSAGE, (len(text), text)
    assert exc.file is not None and os.fspath(path).endswith(pathlib.Path(exc.file).name)
    if line is not None:
        assert exc.line == line, text
    assert contains in text, text


def test_committed_corpus_is_what_the_script_makes():
    # The corpus is reproducible: the generator (fixed seed) makes exactly these bytes.
    made = {name: content for name, content, _ in _generator().cases()}
    on_disk = {p.name for p in CORPUS.iterdir() if p.name != "manifest.json"}
    assert on_disk == set(made)
    for name, content in made.items():
        assert (CORPUS / name).read_bytes() == content, name


@pytest.mark.parametrize("name", sorted(MANIFEST))
def test_corpus_file(name):
    expect = MANIFEST[name]
    path = CORPUS / name
    if expect["expect"] == "error":
        with warnings.catch_warnings():
            warnings.simplefilter("error")  # no RuntimeWarning on the way to the message
            with pytest.raises(AnalysisError) as info:
                _load(path)
        check_refusal(info.value, path, expect["line"], expect["contains"])
        return
    if expect["expect"] == "warning":
        with pytest.warns(TouchstoneWarning) as record:
            result = _load(path)
        assert any(expect["contains"] in str(w.message) for w in record), \
            [str(w.message) for w in record]
    else:
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            result = _load(path)
    if "n_points" in expect:
        assert result.n_points == expect["n_points"]
    if "s" in expect:
        want = np.array(expect["s"])
        np.testing.assert_allclose(result.s[0], want[..., 0] + 1j * want[..., 1],
                                   rtol=1e-12, atol=1e-15)
    if "comment" in expect:
        assert expect["comment"] in result.comments
    if "uncertainties" in expect:
        for kind, values in expect["uncertainties"].items():
            got = getattr(result, kind).uncertainties
            assert set(got) == set(values)
            for key, value in values.items():
                assert got[key] == pytest.approx(value, rel=1e-12)


def test_lower_21_12_against_the_specification_example():
    # Touchstone 2.0 specification: a Lower two-port point "1 0.1 0.2 0.3 0.4 0.5 0.6" (RI) is
    # S11 = 0.1+0.2j, S21 = S12 = 0.3+0.4j, S22 = 0.5+0.6j, whatever [Two-Port Data Order] says
    # (it applies to Full matrices). Before issue 13 the 21_12 branch was taken first.
    sweep = read_sweep(CORPUS / "lower_21_12_ri.ts")
    s = sweep.s[0]
    assert s[0, 0] == 0.1 + 0.2j and s[1, 0] == 0.3 + 0.4j and s[0, 1] == 0.3 + 0.4j
    assert s[1, 1] == 0.5 + 0.6j
    assert sweep.freq_hz[0] == 1e9


def test_standard_uncertainties_round_trip(tmp_path):
    # A standards file's <key>_u companions come back on the Standard in SI (offset loss in
    # Ω/s: 0.1 GΩ/s = 1e8 Ω/s) and are written back in the file's units.
    from refplane.analysis.calibration.standards import load_standards, save_standards

    kit = load_standards(CORPUS / "with_u.standards.json")
    assert kit.short.uncertainties == {"offset_delay_s": 0.5e-12, "offset_loss_ohm_per_s": 1e8}
    assert dict(kit.checks)["offset open"].uncertainties == {"c0_f": 1e-15}
    assert kit.open.uncertainties == {}
    out = save_standards(kit, tmp_path / "again.json")
    obj = json.loads(out.read_text())
    assert obj["short"]["offset_delay_s_u"] == 0.5e-12
    assert obj["short"]["offset_loss_gohm_per_s_u"] == pytest.approx(0.1, rel=1e-15)
    assert load_standards(out).short.uncertainties == kit.short.uncertainties


def test_standard_refuses_bad_uncertainty():
    from refplane.analysis.calibration.standards import Standard

    with pytest.raises(AnalysisError, match="not a numeric field"):
        Standard("short", uncertainties={"colour": 1.0})
    with pytest.raises(AnalysisError, match="finite number ≥ 0"):
        Standard("short", uncertainties={"l0_h": float("nan")})


# ------------------------------------------------------------------ files that are not files


def _refused_quickly(path, contains, seconds: float = 20.0):
    """Read ``path`` in a thread; it must be refused (not hang) within ``seconds``."""
    outcome = {}

    def run():
        try:
            read_sweep(path)
        except BaseException as exc:  # noqa: BLE001 - recorded and checked below
            outcome["exc"] = exc

    thread = threading.Thread(target=run, daemon=True)
    thread.start()
    thread.join(seconds)
    assert not thread.is_alive(), f"reading {path} did not finish in {seconds} s"
    exc = outcome.get("exc")
    assert isinstance(exc, SweepFileError), repr(exc)
    check_refusal(exc, path, None, contains)
    return exc


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no named pipes here")
def test_named_pipe_is_refused_at_once(tmp_path):
    fifo = tmp_path / "pipe.s1p"
    os.mkfifo(fifo)
    _refused_quickly(fifo, "named pipe", seconds=5)


@pytest.mark.parametrize("device", ["/dev/zero", "/dev/urandom"])
def test_link_to_a_device_is_refused_at_once(tmp_path, device):
    if not os.path.exists(device):
        pytest.skip(f"no {device}")
    link = tmp_path / "endless.s2p"
    link.symlink_to(device)
    _refused_quickly(link, "character device", seconds=5)


def test_huge_file_of_nul_bytes_is_refused_at_the_first_block(tmp_path):
    # A sparse file: 1 GB of NUL bytes on disk costs nothing; reading must stop at once.
    path = tmp_path / "zeros.s1p"
    with open(path, "wb") as handle:
        handle.truncate(1_000_000_000)
    exc = _refused_quickly(path, "NUL", seconds=5)
    assert exc.line == 1


def test_file_over_the_size_limit_is_refused_by_its_size(tmp_path):
    path = tmp_path / "big.s1p"
    with open(path, "wb") as handle:
        handle.truncate(MAX_INPUT_BYTES + 1)
    _refused_quickly(path, "GiB", seconds=5)


def test_large_generated_cases(tmp_path):
    # A 2,000,000-character token is shown shortened; a 40 MB line is refused after 8 MiB
    # (before issue 13 the fast pass re-joined the pending text with every block: quadratic).
    for path, expect in _generator().large_cases(tmp_path):
        exc = _refused_quickly(path, expect["contains"], seconds=30)
        assert exc.line == expect["line"]


def test_port_counts_in_absurd_file_names(tmp_path):
    # .s0…02p is a two-port; .s99…9p (200 digits) is refused in one line, not by Python's
    # integer-conversion limit.
    for path, expect in _generator().name_cases(tmp_path):
        if expect["expect"] == "ok":
            assert read_sweep(path).n_ports == 2
        else:
            _refused_quickly(path, expect["contains"])


def test_folder_missing_file_and_long_path(tmp_path):
    _refused_quickly(tmp_path, "folder")
    _refused_quickly(tmp_path / "absent.s1p", "no such file")
    long_name = tmp_path / ("x" * 300 + ".s1p")
    exc = _refused_quickly(long_name, "longer than the system allows")
    assert len(str(exc)) <= MAX_MESSAGE
    deep = tmp_path.joinpath(*["d" * 200] * 30, "a.s1p")
    _refused_quickly(deep, "longer than the system allows")


def test_unreadable_file(tmp_path):
    if hasattr(os, "geteuid") and os.geteuid() == 0:
        pytest.skip("the superuser can read any file")
    path = tmp_path / "locked.s1p"
    path.write_text("# GHz S RI R 50\n1 0 0\n")
    path.chmod(0)
    try:
        _refused_quickly(path, "permission denied")
    finally:
        path.chmod(stat.S_IRUSR | stat.S_IWUSR)


def test_control_characters_in_a_file_name_are_shown_escaped(tmp_path):
    path = tmp_path / "bad\x1b[31mname\n.s1p"
    path.write_text("# GHz S RI R 50\n1 0.1 zz\n")
    with pytest.raises(SweepFileError) as info:
        read_sweep(path)
    text = str(info.value)
    assert "\x1b" not in text and "\n" not in text and "\\x1b" in text and "\\n" in text


# ------------------------------------------------------------------ writing


def test_full_disk_and_read_only_folder_name_the_output_not_its_temporary(tmp_path, monkeypatch):
    from refplane.analysis.files import fileio

    target = tmp_path / "out.txt"

    def full(tmp):
        raise OSError(errno.ENOSPC, "No space left on device", tmp)

    with pytest.raises(SweepFileError) as info:
        fileio.write_atomic(target, full)
    assert str(info.value) == f"{target}: cannot write the file: the disk is full"
    assert list(tmp_path.iterdir()) == []

    def read_only(*args, **kwargs):
        raise OSError(errno.EROFS, "Read-only file system")

    monkeypatch.setattr(fileio.tempfile, "mkstemp", read_only)
    with pytest.raises(SweepFileError, match="read-only file system") as info:
        fileio.write_text_atomic(target, "x")
    assert str(info.value).startswith(str(target))
    monkeypatch.undo()
    with pytest.raises(SweepFileError, match="does not exist"):
        fileio.write_text_atomic(tmp_path / "absent" / "out.txt", "x")


def test_interrupted_write_keeps_the_old_file_and_leaves_no_temporary(tmp_path):
    from refplane.analysis.files import fileio

    target = tmp_path / "keep.txt"
    target.write_text("old content\n")

    def interrupted(tmp):
        pathlib.Path(tmp).write_text("half")
        raise KeyboardInterrupt  # what SIGINT, and SIGTERM under the command line, become

    with pytest.raises(KeyboardInterrupt):
        fileio.write_atomic(target, interrupted, overwrite=True)
    assert target.read_text() == "old content\n"
    assert [p.name for p in tmp_path.iterdir()] == ["keep.txt"]
