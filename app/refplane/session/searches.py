"""Marker searches on a trace: where a marker goes for "best match", "resonance", "largest |Z|"
or "edge of the band where VSWR ≤ s", written as a short text a marker can keep and follow.

A search is named by a *spec*, a plain string stored with the marker (and in session files):

``best-match``
    minimum VSWR (maximum return loss);
``max-z``
    largest |Z|;
``series-resonance:N`` / ``parallel-resonance:N``
    the N-th (1-based) zero of X of that kind, in increasing frequency;
``band-low:S`` / ``band-high:S``
    the lower / upper edge of the stretch where VSWR ≤ S — the one holding the best match,
    else the widest.

The searches themselves are :mod:`refplane.analysis.antenna.resonance`; this module only
names them, runs them on a session trace and says in words what each one is.
"""

from __future__ import annotations

import math

from refplane.analysis.errors import AnalysisError

KINDS = ("best-match", "max-z", "series-resonance", "parallel-resonance", "band-low", "band-high")


def parse(spec: str) -> tuple[str, float | int | None]:
    """Split a spec into (kind, argument); AnalysisError for one this program does not know."""
    kind, _, arg = str(spec).partition(":")
    if kind not in KINDS:
        raise AnalysisError(f"unknown marker search {spec!r}")
    if kind in ("best-match", "max-z"):
        if arg:
            raise AnalysisError(f"the search {kind!r} takes no value")
        return kind, None
    try:
        value = float(arg)
    except ValueError:
        raise AnalysisError(f"the marker search {spec!r} needs a number after the colon") from None
    if kind.endswith("resonance"):
        if value != int(value) or value < 1:
            raise AnalysisError(f"the marker search {spec!r} needs a count from 1")
        return kind, int(value)
    if not (math.isfinite(value) and value > 1.0):
        raise AnalysisError(f"a VSWR limit must be a number above 1, not {arg!r}")
    return kind, value


def band_spec(vswr_limit: float) -> tuple[str, str]:
    """The two specs (low edge, high edge) of the band where VSWR ≤ ``vswr_limit``."""
    s = f"{float(vswr_limit):g}"
    parse(f"band-low:{s}")
    return f"band-low:{s}", f"band-high:{s}"


def chosen_band(sweep, port: int, vswr_limit: float):
    """The VSWR ≤ s band a band search means: the one holding the best match, else the widest.

    Returns None when the trace never gets that good.
    """
    from refplane.analysis.antenna.resonance import best_match, vswr_bands

    bands = vswr_bands(sweep, port, vswr_limit=vswr_limit)
    if not bands:
        return None
    best = best_match(sweep, port).freq_hz
    holding = [b for b in bands if b.start_hz <= best <= b.stop_hz]
    return holding[0] if holding else max(bands, key=lambda b: b.width_hz)


def run(sweep, port: int, spec: str) -> float | None:
    """The frequency a search finds on ``sweep``'s port ``port``, or None when there is none.

    Never raises for a trace without the feature (no resonance, no band); AnalysisError only
    for an unknown spec.
    """
    from refplane.analysis.antenna import resonance

    kind, arg = parse(spec)
    try:
        if kind == "best-match":
            return float(resonance.best_match(sweep, port).freq_hz)
        if kind == "max-z":
            peak = resonance.max_impedance(sweep, port)
            return float(peak.freq_hz)
        if kind.endswith("resonance"):
            wanted = kind.split("-")[0]
            found = [r for r in resonance.find_resonances(sweep, port) if r.kind == wanted]
            return float(found[arg - 1].freq_hz) if len(found) >= arg else None
        band = chosen_band(sweep, port, arg)
        if band is None:
            return None
        return float(band.start_hz if kind == "band-low" else band.stop_hz)
    except AnalysisError:
        return None  # e.g. a trace too short to search: the marker simply stays


def describe(spec: str) -> str:
    """What a search finds, in words, for the marker table and menus ("best match", "VSWR 2 band, low edge")."""
    kind, arg = parse(spec)
    if kind == "best-match":
        return "best match"
    if kind == "max-z":
        return "largest |Z|"
    if kind.endswith("resonance"):
        return f"{kind.split('-')[0]} resonance" + (f" {arg}" if arg > 1 else "")
    return f"VSWR {arg:g} band, {'low' if kind == 'band-low' else 'high'} edge"
