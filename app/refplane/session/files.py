"""Session files: the whole :class:`~refplane.session.model.Session` as versioned JSON.

A session file records *where* the sweeps are, never the measurements themselves: each sweep
file by its path relative to the session file (and the absolute path as a fallback), with its
size and SHA-256, so a file that changed or went missing since is reported plainly, never
used silently. Model curves drawn over traces (a fitted model) are stored as numbers, since
they exist in no file. A session file holds data only: no code, no file of another program.

Layout (version 1)::

    {"format": "refplane-session", "version": 1,
     "traces": [{"file": "leaded_resistor.s1p", "file_absolute": "/…/leaded_resistor.s1p",
                 "size": 41234, "sha256": "…", "name": "…", "colour": "#0072B2", "visible": true,
                 "port": 1, "offsets": [{"delay_s": 1e-9, …} | null, …],
                 "velocity_factors": [0.66 | null, …],
                 "overlays": [{"name": "fitted model", "z0_ohm": 50, "freq_hz": […],
                               "re": […], "im": […]}]}],
     "markers": [{"trace": 0, "freq_hz": 470e6}],
     "band_hz": [f1, f2] | null, "current_trace": 0 | null, "current_marker": 0 | null,
     "display": {"upper_plot": "return_loss", …, "delta_markers": [0, 1] | null},
     "fit": {"band_text": "", "model": "auto", "measurement": "reflection", "overlay_trace": 0 | null},
     "calibration": {"standards": {"short": "cal/short.s1p", …}, "definitions_file": … | null,
                     "saved_terms_file": … | null, "devices": […]}}

Traces and markers refer to each other by position in these lists (ids are not kept).
"""

from __future__ import annotations

import dataclasses
import math
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Callable, Mapping

from refplane.analysis.errors import AnalysisError

FORMAT = "refplane-session"
#: The version this program writes; it reads this one and every older one it can migrate.
VERSION = 1
#: Older version → function turning a document of that version into the next one.
MIGRATIONS: dict[int, Callable[[dict], dict]] = {}
#: Session files larger than this are refused (a session holds paths and settings, not data).
MAX_BYTES = 64 * 1024 * 1024
SUFFIX = ".refplane"


# ----------------------------------------------------------------------------- writing
def file_digest(path: str | os.PathLike) -> tuple[int, str]:
    """(size in bytes, SHA-256 hex digest) of a file."""
    import hashlib  # imported when used: the window checks session names at start-up

    h = hashlib.sha256()
    size = 0
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            h.update(block)
            size += len(block)
    return size, h.hexdigest()


def _memory_json(memory) -> dict | None:
    """The stored trace inline (it is a snapshot, not a file: it may differ from every file)."""
    if memory is None:
        return None
    g = memory.sweep.s[:, 0, 0]
    return {"name": memory.name, "z0_ohm": float(memory.sweep.z0_ohm[0].real),
            "freq_hz": _finite_list(memory.sweep.freq_hz), "re": _finite_list(g.real),
            "im": _finite_list(g.imag)}


def _relative(path: str, folder: Path) -> str:
    try:
        return os.path.relpath(os.path.abspath(path), folder)
    except ValueError:  # another drive (Windows): only the absolute path can say where it is
        return os.path.abspath(path)


def _offset_json(offset) -> dict | None:
    if offset is None:
        return None
    return {f.name: getattr(offset, f.name) for f in dataclasses.fields(offset)}


def _finite_list(values) -> list[float]:
    return [float(v) for v in values]


def session_document(session, path: str | os.PathLike) -> dict:
    """The JSON document of ``session`` as it would be saved at ``path``.

    Raises
    ------
    AnalysisError
        When a trace has no file to point to (a sweep made in the window, such as a corrected
        device): a session records files, so such a trace must be saved as a sweep first.
    """
    folder = Path(os.path.abspath(path)).parent
    traces = session.traces()
    index = {t.id: i for i, t in enumerate(traces)}
    out_traces = []
    for t in traces:
        if not t.source or not os.path.isfile(t.source):
            raise AnalysisError(f"the trace {t.name!r} comes from no file on disk; save it as a sweep "
                                "first (Reference plane ▸ Save corrected sweep), then save the session",
                                file=os.fspath(path))
        size, digest = file_digest(t.source)
        out_traces.append({
            "file": _relative(t.source, folder),
            "file_absolute": os.path.abspath(t.source),
            "size": size,
            "sha256": digest,
            "name": t.name,
            "colour": t.colour,
            "visible": t.visible,
            "port": t.port,
            "offsets": [_offset_json(o) for o in t.offsets],
            "velocity_factors": list(t.velocity_factors),
            "overlays": [{"name": name, "z0_ohm": float(ov.z0_ohm[0].real),
                          "freq_hz": _finite_list(ov.freq_hz),
                          "re": _finite_list(ov.s[:, 0, 0].real), "im": _finite_list(ov.s[:, 0, 0].imag)}
                         for name, ov in t.overlays.items()],
        })
    markers = session.markers()
    m_index = {m.id: i for i, m in enumerate(markers)}
    d = session.display
    display = {f.name: getattr(d, f.name) for f in dataclasses.fields(d)}
    display["delta_markers"] = ([m_index[d.delta_markers[0]], m_index[d.delta_markers[1]]]
                                if d.delta_markers and all(m in m_index for m in d.delta_markers) else None)
    display["chart_view"] = list(d.chart_view) if d.chart_view else None
    for key in ("upper_view", "lower_view"):
        display[key] = list(getattr(d, key)) if getattr(d, key) else None
    display["log_y"] = list(d.log_y)
    fit = session.fit
    cal = session.calibration
    return {
        "format": FORMAT,
        "version": VERSION,
        "traces": out_traces,
        "markers": [{"trace": index[m.trace_id], "freq_hz": m.freq_hz,
                     **({"follows": m.follows} if m.follows else {})} for m in markers],
        "band_hz": list(session.band) if session.band else None,
        "current_trace": index.get(session.current_trace),
        "current_marker": m_index.get(session.current_marker),
        "display": display,
        "memory": _memory_json(session.memory),
        "fit": {"band_text": fit.band_text, "model": fit.model, "measurement": fit.measurement,
                "overlay_trace": index.get(fit.overlay_trace) if fit.overlay_trace is not None else None},
        "calibration": {
            "standards": {role: _relative(p, folder) for role, p in cal.standards.items()},
            "definitions_file": _relative(cal.definitions_file, folder) if cal.definitions_file else None,
            "saved_terms_file": _relative(cal.saved_terms_file, folder) if cal.saved_terms_file else None,
            "devices": [_relative(p, folder) for p in cal.devices],
        },
        "tools": {name: _tools_json(value) for name, value in session.tools().items()},
    }


def _tools_json(value) -> dict:
    from refplane.session import tools

    return tools.to_json(value)


def save_session(session, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Write ``session`` to ``path`` atomically (refusing to replace a file unless ``overwrite``)."""
    from refplane.analysis.files.fileio import write_text_atomic

    doc = session_document(session, path)
    import json

    text = json.dumps(doc, indent=1, allow_nan=False, ensure_ascii=False)
    return write_text_atomic(path, text + "\n", overwrite=overwrite)


# ----------------------------------------------------------------------------- reading
@dataclass(frozen=True)
class SessionFile:
    """One sweep file a session names, found (or not) on disk now."""

    index: int
    """Position of its trace in the session."""
    recorded: str
    """The path as recorded (relative to the session file where possible)."""
    path: str | None
    """Where the file is now, or None when it is nowhere to be found."""
    status: str
    """"ok", "changed" (size or SHA-256 differ from when the session was saved) or "missing"."""

    def note(self) -> str:
        """A plain sentence for a changed or missing file ("" when all is well)."""
        name = os.path.basename(self.recorded)
        if self.status == "changed":
            return f"{name} changed since the session was saved; opened the current file"
        if self.status == "missing":
            return f"{name} is missing (looked for {self.recorded}): locate it or skip it"
        return ""


@dataclass(frozen=True)
class SessionDocument:
    """A session file read and checked, with what was found of its sweep files."""

    path: str
    """The session file."""
    data: dict
    """The document, migrated to :data:`VERSION` and checked."""
    files: tuple[SessionFile, ...]
    """One per trace, in order."""

    @property
    def notes(self) -> tuple[str, ...]:
        """Sentences about changed or missing files."""
        return tuple(f.note() for f in self.files if f.status != "ok")


class _Checker:
    """Checks a document's shape, naming the key path in every message."""

    def __init__(self, file: str):
        self.file = file

    def fail(self, where: str, reason: str):
        raise AnalysisError(f"{where}: {reason}", file=self.file)

    def obj(self, value, where: str) -> dict:
        if not isinstance(value, dict):
            self.fail(where, "expected an object")
        return value

    def lst(self, value, where: str, *, max_len: int = 10_000_000) -> list:
        if not isinstance(value, list):
            self.fail(where, "expected a list")
        if len(value) > max_len:
            self.fail(where, f"more than {max_len} entries")
        return value

    def num(self, value, where: str, *, null: bool = False, positive: bool = False) -> float | None:
        if value is None and null:
            return None
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            self.fail(where, "expected a number")
        try:
            value = float(value)
        except OverflowError:
            self.fail(where, "the number is too large")
        if not math.isfinite(value):
            self.fail(where, "expected a finite number")
        if positive and not value > 0:
            self.fail(where, "expected a number above zero")
        return value

    def int_(self, value, where: str, *, lo: int = 0, hi: int = 1 << 31, null: bool = False) -> int | None:
        if value is None and null:
            return None
        if isinstance(value, bool) or not isinstance(value, int) or not lo <= value <= hi:
            self.fail(where, f"expected a whole number from {lo} to {hi}")
        return value

    def text(self, value, where: str, *, null: bool = False, max_len: int = 4096) -> str | None:
        if value is None and null:
            return None
        if not isinstance(value, str):
            self.fail(where, "expected text")
        if len(value) > max_len:
            self.fail(where, f"text longer than {max_len} characters")
        return value

    def flag(self, value, where: str) -> bool:
        if not isinstance(value, bool):
            self.fail(where, "expected true or false")
        return value


def _check(doc: dict, file: str) -> dict:
    """Check every field of a current-version document; returns it unchanged when sound."""
    c = _Checker(file)
    traces = c.lst(doc.get("traces", []), "traces", max_len=1000)
    for i, t in enumerate(traces):
        w = f"traces[{i}]"
        c.obj(t, w)
        c.text(t.get("file"), f"{w}.file")
        c.text(t.get("file_absolute"), f"{w}.file_absolute", null=True)
        c.int_(t.get("size"), f"{w}.size", hi=1 << 62)
        digest = c.text(t.get("sha256"), f"{w}.sha256")
        if len(digest) != 64 or any(ch not in "0123456789abcdef" for ch in digest):
            c.fail(f"{w}.sha256", "expected 64 hexadecimal digits")
        c.text(t.get("name", ""), f"{w}.name")
        colour = c.text(t.get("colour", "#0072B2"), f"{w}.colour")
        if not (len(colour) == 7 and colour[0] == "#" and all(ch in "0123456789abcdefABCDEF" for ch in colour[1:])):
            c.fail(f"{w}.colour", "expected a colour written #rrggbb")
        c.flag(t.get("visible", True), f"{w}.visible")
        c.int_(t.get("port", 1), f"{w}.port", lo=1, hi=99)
        for j, o in enumerate(c.lst(t.get("offsets", []), f"{w}.offsets", max_len=99)):
            if o is None:
                continue
            c.obj(o, f"{w}.offsets[{j}]")
            for key, value in o.items():
                # Switches of the line model (skin_phase, z0_follows_skin) are true/false.
                if not isinstance(value, bool):
                    c.num(value, f"{w}.offsets[{j}].{key}", null=True)
        for j, v in enumerate(c.lst(t.get("velocity_factors", []), f"{w}.velocity_factors", max_len=99)):
            c.num(v, f"{w}.velocity_factors[{j}]", null=True, positive=True)
        for j, ov in enumerate(c.lst(t.get("overlays", []), f"{w}.overlays", max_len=16)):
            ww = f"{w}.overlays[{j}]"
            c.obj(ov, ww)
            c.text(ov.get("name"), f"{ww}.name")
            c.num(ov.get("z0_ohm"), f"{ww}.z0_ohm", positive=True)
            arrays = [c.lst(ov.get(k), f"{ww}.{k}") for k in ("freq_hz", "re", "im")]
            if len({len(a) for a in arrays}) != 1 or not arrays[0]:
                c.fail(ww, "freq_hz, re and im must be lists of the same, non-zero length")
            for k, a in zip(("freq_hz", "re", "im"), arrays):
                for n, v in enumerate(a):
                    c.num(v, f"{ww}.{k}[{n}]")
    n_traces = len(traces)
    markers = c.lst(doc.get("markers", []), "markers", max_len=10_000)
    for i, m in enumerate(markers):
        c.obj(m, f"markers[{i}]")
        c.int_(m.get("trace"), f"markers[{i}].trace", hi=max(n_traces - 1, 0))
        if n_traces == 0:
            c.fail(f"markers[{i}].trace", "there are no traces to place it on")
        c.num(m.get("freq_hz"), f"markers[{i}].freq_hz")
        if m.get("follows") is not None:
            from refplane.session.searches import parse

            c.text(m["follows"], f"markers[{i}].follows")
            try:
                parse(m["follows"])
            except AnalysisError as exc:
                c.fail(f"markers[{i}].follows", str(exc))
    band = doc.get("band_hz")
    if band is not None:
        band = c.lst(band, "band_hz")
        if len(band) != 2:
            c.fail("band_hz", "expected two frequencies")
        for j, v in enumerate(band):
            c.num(v, f"band_hz[{j}]")
    c.int_(doc.get("current_trace"), "current_trace", hi=max(n_traces - 1, 0), null=True)
    c.int_(doc.get("current_marker"), "current_marker", hi=max(len(markers) - 1, 0), null=True)
    display = c.obj(doc.get("display", {}), "display")
    from refplane.session.model import DisplayOptions

    known = {f.name for f in dataclasses.fields(DisplayOptions)}
    for key in display:
        if key not in known:
            c.fail(f"display.{key}", "not a display option this program knows")
    for key in ("upper_plot", "lower_plot", "theme"):
        if key in display:
            c.text(display[key], f"display.{key}")
    for key in ("log_frequency", "admittance_grid"):
        if key in display:
            c.flag(display[key], f"display.{key}")
    if "vswr_circle" in display:
        c.num(display["vswr_circle"], "display.vswr_circle", null=True)
    if "chart_z0_ohm" in display:
        c.num(display["chart_z0_ohm"], "display.chart_z0_ohm", null=True)
    memory = doc.get("memory")
    if memory is not None:
        memory = c.obj(memory, "memory")
        c.text(memory.get("name", ""), "memory.name")
        c.num(memory.get("z0_ohm"), "memory.z0_ohm")
        lengths = {len(c.lst(memory.get(k), f"memory.{k}", max_len=10_000_000)) for k in ("freq_hz", "re", "im")}
        if len(lengths) != 1:
            c.fail("memory", "freq_hz, re and im must have the same length")
    if "log_y" in display:
        for j, v in enumerate(c.lst(display["log_y"], "display.log_y")):
            c.text(v, f"display.log_y[{j}]")
    for key, size in (("chart_view", 4), ("delta_markers", 2), ("upper_view", 4), ("lower_view", 4)):
        value = display.get(key)
        if value is not None:
            value = c.lst(value, f"display.{key}")
            if len(value) != size:
                c.fail(f"display.{key}", f"expected {size} numbers")
            for j, v in enumerate(value):
                if key == "delta_markers":
                    c.int_(v, f"display.{key}[{j}]", hi=max(len(markers) - 1, 0))
                else:
                    c.num(v, f"display.{key}[{j}]")
    fit = c.obj(doc.get("fit", {}), "fit")
    c.text(fit.get("band_text", ""), "fit.band_text")
    c.text(fit.get("model", "auto"), "fit.model")
    c.text(fit.get("measurement", "reflection"), "fit.measurement")
    c.int_(fit.get("overlay_trace"), "fit.overlay_trace", hi=max(n_traces - 1, 0), null=True)
    cal = c.obj(doc.get("calibration", {}), "calibration")
    for role, p in c.obj(cal.get("standards", {}), "calibration.standards").items():
        c.text(p, f"calibration.standards.{role}")
    c.text(cal.get("definitions_file"), "calibration.definitions_file", null=True)
    c.text(cal.get("saved_terms_file"), "calibration.saved_terms_file", null=True)
    for j, p in enumerate(c.lst(cal.get("devices", []), "calibration.devices", max_len=1000)):
        c.text(p, f"calibration.devices[{j}]")
    from refplane.session import tools as tool_registry

    for name, obj in c.obj(doc.get("tools", {}), "tools").items():
        if name not in tool_registry.REGISTRY:
            c.fail(f"tools.{name}", "not a tool this program knows")
        c.obj(obj, f"tools.{name}")
        for key, value in obj.items():
            if isinstance(value, list):
                for j, v in enumerate(value):
                    if not (v is None or isinstance(v, (str, bool)) or c.num(v, f"tools.{name}.{key}[{j}]") is not None):
                        c.fail(f"tools.{name}.{key}[{j}]", "expected a number, text, true/false or null")
            elif isinstance(value, (int, float)) and not isinstance(value, bool):
                c.num(value, f"tools.{name}.{key}")
            elif not (value is None or isinstance(value, (str, bool))):
                c.fail(f"tools.{name}.{key}", "expected a number, text, true/false, null or a list")
    return doc


def _locate(entry: dict, folder: Path) -> str | None:
    candidates = [folder / entry["file"]]
    if entry.get("file_absolute"):
        candidates.append(Path(entry["file_absolute"]))
    for candidate in candidates:
        if candidate.is_file():
            return str(candidate)
    return None


def read_session(path: str | os.PathLike) -> SessionDocument:
    """Read and check a session file, and look for each sweep file it names.

    Raises
    ------
    AnalysisError
        For a file that is not a session, is damaged or hand-edited into nonsense (the message
        names the key), or was written by a newer Refplane.
    """
    file = os.fspath(path)
    try:
        if not os.path.isfile(file):
            raise AnalysisError("no such session file" if not os.path.exists(file)
                                else "not a regular file", file=file)
        if os.path.getsize(file) > MAX_BYTES:
            raise AnalysisError(f"larger than {MAX_BYTES // (1024 * 1024)} MB: not a session file", file=file)
        with open(file, "rb") as handle:
            raw = handle.read()
    except OSError as exc:
        raise AnalysisError(exc.strerror or str(exc), file=file) from None
    import json

    try:
        doc = json.loads(raw.decode("utf-8-sig"), parse_constant=lambda name: _bad_constant(name, file))
    except UnicodeDecodeError:
        raise AnalysisError("not a session file (not UTF-8 text)", file=file) from None
    except json.JSONDecodeError as exc:
        raise AnalysisError(f"line {exc.lineno}: damaged or truncated session file ({exc.msg})", file=file) from None
    except RecursionError:
        raise AnalysisError("nested too deeply to be a session file", file=file) from None
    if not isinstance(doc, dict) or doc.get("format") != FORMAT:
        raise AnalysisError("not a Refplane session file (no \"format\": \"refplane-session\")", file=file)
    version = doc.get("version")
    if isinstance(version, bool) or not isinstance(version, int) or version < 1:
        raise AnalysisError("the session file has no valid version number", file=file)
    if version > VERSION:
        raise AnalysisError(f"written by a newer Refplane (session version {version}; this one reads up "
                            f"to {VERSION}); update Refplane to open it", file=file)
    while version < VERSION:
        if version not in MIGRATIONS:
            raise AnalysisError(f"session version {version} cannot be read by this Refplane", file=file)
        doc = MIGRATIONS[version](doc)
        version += 1
        doc["version"] = version
    doc = _check(doc, file)
    folder = Path(os.path.abspath(file)).parent
    found = []
    for i, entry in enumerate(doc.get("traces", [])):
        where = _locate(entry, folder)
        if where is None:
            status = "missing"
        else:
            try:
                size, digest = file_digest(where)
            except OSError:
                where, status = None, "missing"
            else:
                status = "ok" if (size, digest) == (entry["size"], entry["sha256"]) else "changed"
        found.append(SessionFile(index=i, recorded=entry["file"], path=where, status=status))
    return SessionDocument(path=file, data=doc, files=tuple(found))


def _bad_constant(name: str, file: str):
    raise AnalysisError(f"{name} is not a number a session file may hold", file=file)


def _resolve_path(p: str | None, folder: Path) -> str | None:
    if p is None:
        return None
    return str(folder / p) if not os.path.isabs(p) else p


def build_session(doc: SessionDocument, sweeps: Mapping[int, object], session=None):
    """Fill ``session`` (a new one by default) from a read document and its sweeps.

    ``sweeps`` maps a trace's position to its :class:`~refplane.analysis.sweep.Sweep`; a
    position left out (a missing file the user skipped) drops that trace and its markers.
    Returns (session, notes): notes are sentences about what could not be restored as it was.
    """
    import numpy as np

    from refplane.analysis.lines.deembed import LineOffset
    from refplane.analysis.sweep import Sweep
    from refplane.session.model import Session

    session = session if session is not None else Session()
    data = doc.data
    folder = Path(os.path.abspath(doc.path)).parent
    notes: list[str] = list(doc.notes)
    ids: dict[int, int] = {}
    offset_fields = {f.name for f in dataclasses.fields(LineOffset)}
    for i, entry in enumerate(data.get("traces", [])):
        sweep = sweeps.get(i)
        if sweep is None:
            continue
        port = entry.get("port", 1)
        if port > sweep.n_ports:
            notes.append(f"{entry['name']}: port {port} is not in the file any more; showing port 1")
            port = 1
        tid = session.add_sweep(sweep, name=entry.get("name", sweep.name), port=port,
                                colour=entry.get("colour"))
        ids[i] = tid
        session.set_visible(tid, entry.get("visible", True))
        offsets = entry.get("offsets", [])
        if offsets:
            try:
                built = []
                for o in offsets:
                    unknown = set(o or {}) - offset_fields
                    if unknown:
                        raise AnalysisError(f"unknown offset keys {sorted(unknown)}")
                    built.append(LineOffset(**o) if o is not None else LineOffset())
                session.set_offsets(tid, built)
            except (AnalysisError, TypeError, ValueError) as exc:
                notes.append(f"{entry['name']}: the reference-plane offsets could not be restored ({exc})")
        for port_no, vf in enumerate(entry.get("velocity_factors", []), start=1):
            if vf is not None and port_no <= sweep.n_ports:
                try:
                    session.set_velocity_factor(tid, port_no, vf)
                except AnalysisError as exc:
                    notes.append(f"{entry['name']}: velocity factor of port {port_no} not restored ({exc})")
        for ov in entry.get("overlays", []):
            f = np.asarray(ov["freq_hz"], dtype=np.float64)
            g = np.asarray(ov["re"], dtype=np.float64) + 1j * np.asarray(ov["im"], dtype=np.float64)
            try:
                curve = Sweep(freq_hz=f, s=g.reshape(-1, 1, 1), z0_ohm=np.array([complex(ov["z0_ohm"])]),
                              name=ov["name"], source=None, comments=())
                session.set_overlay(tid, ov["name"], curve)
            except AnalysisError as exc:
                notes.append(f"{entry['name']}: the curve {ov['name']!r} could not be restored ({exc})")
    marker_ids: dict[int, int] = {}
    for j, m in enumerate(data.get("markers", [])):
        tid = ids.get(m["trace"])
        if tid is None:
            continue
        try:
            marker_ids[j] = session.add_marker(tid, m["freq_hz"], follows=m.get("follows"))
        except AnalysisError:
            notes.append(f"marker {j + 1} at {m['freq_hz']:g} Hz lies outside its sweep now; left out")
    display = dict(data.get("display", {}))
    pair = display.get("delta_markers")
    display["delta_markers"] = (tuple(marker_ids[k] for k in pair)
                                if pair and all(k in marker_ids for k in pair) else None)
    for key in ("chart_view", "upper_view", "lower_view", "log_y"):
        if display.get(key) is not None:
            display[key] = tuple(display[key])
    try:
        session.set_display(**display)
    except AnalysisError as exc:
        raise AnalysisError(f"display: {exc}", file=doc.path) from None
    if data.get("band_hz"):
        try:
            session.set_band(tuple(data["band_hz"]))
        except AnalysisError as exc:
            raise AnalysisError(f"band_hz: {exc}", file=doc.path) from None
    fit = data.get("fit", {})
    overlay = ids.get(fit.get("overlay_trace")) if fit.get("overlay_trace") is not None else None
    try:
        session.set_fit(band_text=fit.get("band_text", ""), model=fit.get("model", "auto"),
                        measurement=fit.get("measurement", "reflection"), overlay_trace=overlay)
    except AnalysisError as exc:
        raise AnalysisError(f"fit: {exc}", file=doc.path) from None
    if data.get("memory") is not None:
        mem = data["memory"]
        try:
            f = np.asarray(mem["freq_hz"], float)
            g = np.asarray(mem["re"], float) + 1j * np.asarray(mem["im"], float)
            from refplane.session.model import Memory

            session.set_memory(Memory(sweep=Sweep(freq_hz=f, s=g.reshape(-1, 1, 1),
                                                  z0_ohm=np.array([complex(mem["z0_ohm"])]),
                                                  name=mem.get("name", "memory")),
                                      name=mem.get("name", "memory")))
        except (AnalysisError, ValueError) as exc:
            notes.append(f"the stored trace could not be restored ({exc})")
    cal = data.get("calibration", {})
    session.set_calibration(
        standards={r: _resolve_path(p, folder) for r, p in cal.get("standards", {}).items()},
        definitions_file=_resolve_path(cal.get("definitions_file"), folder),
        saved_terms_file=_resolve_path(cal.get("saved_terms_file"), folder),
        devices=[_resolve_path(p, folder) for p in cal.get("devices", [])])
    from refplane.session import tools as tool_registry

    for name, obj in data.get("tools", {}).items():
        try:
            session.set_tool(name, tool_registry.from_json(name, obj))
        except (AnalysisError, TypeError, ValueError) as exc:
            raise AnalysisError(f"tools.{name}: {exc}", file=doc.path) from None
    if data.get("current_trace") is not None and data["current_trace"] in ids:
        session.set_current_trace(ids[data["current_trace"]])
    current = data.get("current_marker")
    session.set_current_marker(marker_ids.get(current, -1) if current is not None else -1)
    return session, notes


def open_session(path: str | os.PathLike, *, skip_missing: bool = False):
    """Read a session file and its sweeps (here, synchronously); returns (session, notes).

    Raises
    ------
    AnalysisError
        As :func:`read_session`; for a sweep file that is missing (unless ``skip_missing``)
        or cannot be read.
    """
    from refplane.analysis.files.loading import read_sweep

    doc = read_session(path)
    sweeps = {}
    for f in doc.files:
        if f.status == "missing":
            if skip_missing:
                continue
            raise AnalysisError(f.note(), file=doc.path)
        sweeps[f.index] = read_sweep(f.path)
    return build_session(doc, sweeps)


def is_session_file(path: str | os.PathLike) -> bool:
    """True for a name ending in the session suffix (``.refplane``)."""
    return os.fspath(path).lower().endswith(SUFFIX)
