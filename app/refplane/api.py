"""Refplane's Python API for scripts and notebooks: plain functions with keyword arguments.

Everything named in ``__all__`` is stable: names, arguments and the shapes of results change
only with notice. Everything else in the ``refplane`` package is private and may change.

Frequencies, delays and lengths may be numbers in SI units (hertz, seconds, metres) or text
with units ("145MHz", "85ps", "20cm"), as on the command line. Bad input raises
:class:`AnalysisError` with one plain line.

>>> import refplane                                   # doctest: +SKIP
>>> sweep = refplane.read("antenna.s1p")              # doctest: +SKIP
>>> refplane.readings(sweep, at=["145MHz"])[0]["vswr"]  # doctest: +SKIP

The package itself (``import refplane``) offers the same functions lazily, except
:func:`report`, which is ``refplane.write_report`` there (``refplane.report`` is the package
that draws reports).
"""

from __future__ import annotations

import os
from typing import Iterable

from refplane.analysis.errors import AnalysisError
from refplane.analysis.sweep import Sweep

__all__ = [
    "AnalysisError", "Sweep",
    "read", "write", "readings",
    "remove_offsets", "add_offsets", "estimate_plane",
    "calibrate", "load_calibration", "save_calibration", "correct",
    "fit",
    "limit", "read_limits", "check", "check_files",
    "report", "write_report",
    "to_network", "from_network",
]


def _hz(value) -> float:
    from refplane.analysis.units import parse_frequency

    return parse_frequency(value) if isinstance(value, str) else float(value)


def _hz_list(values) -> list[float]:
    if isinstance(values, (str, int, float)):
        values = [values]
    return [_hz(v) for v in values]


def _band(band) -> tuple[float, float] | None:
    if band is None:
        return None
    if isinstance(band, str):
        from refplane.analysis.units import parse_band

        return parse_band(band)
    low, high = band
    return _hz(low), _hz(high)


def _sweep(obj) -> Sweep:
    return obj if isinstance(obj, Sweep) else read(obj)


def read(path: str | os.PathLike) -> Sweep:
    """Read a Touchstone (.s1p, .s2p, …, .ts) or CSV sweep.

    Returns
    -------
    Sweep
        Frozen: ``freq_hz`` (n,), ``s`` (n, ports, ports), ``z0_ohm`` (ports,), ``name``,
        ``source``, ``comments``.
    """
    from refplane.analysis.files.loading import read_sweep

    return read_sweep(path)


def write(sweep: Sweep, path: str | os.PathLike, *, overwrite: bool = False) -> str:
    """Write a sweep as Touchstone (the name must end .sNp for its N ports); returns the path.

    Refuses to replace an existing file unless ``overwrite``; writes atomically.
    """
    from refplane.analysis.files import touchstone

    return os.fspath(touchstone.write(sweep, path, comments=sweep.comments, overwrite=overwrite))


def readings(sweep: Sweep | str | os.PathLike, *, at, port: int = 1) -> list[dict]:
    """Everything Refplane reads at chosen frequencies, one dict per frequency.

    Parameters
    ----------
    sweep : Sweep or path
    at : frequency or sequence of frequencies
        Numbers in hertz or text with units ("145MHz"); inside the sweep (interpolated
        between swept points, never extrapolated).
    port : int
        Port whose reflection is read.

    Returns
    -------
    list of dict
        The keys of ``refplane read --json``: ``freq_hz``, ``gamma_re``, ``gamma_im``,
        ``gamma_mag``, ``gamma_deg``, ``r_ohm``, ``x_ohm``, ``z_mag_ohm``, ``series_l_h``,
        ``series_c_f``, ``parallel_r_ohm``, ``parallel_x_ohm``, ``vswr``,
        ``return_loss_db``, ``q``; ``None`` where a value does not apply.
    """
    from refplane.analysis.readings import read_points

    sw = _sweep(sweep)
    freqs = _hz_list(at)
    result = read_points(sw, freqs, port=port)
    return [result.readout.at(i).json_point() for i in range(len(freqs))]


def _line(delay, length, vf, loss, line_z0):
    from refplane.analysis.lines.deembed import LineOffset
    from refplane.analysis.units import parse_length, parse_loss, parse_time

    if (delay is None) == (length is None):
        raise AnalysisError("give the line's delay, or its length and velocity factor (one of the two)")
    kw = {}
    if loss is not None:
        kw["loss_db"], kw["loss_ref_hz"] = parse_loss(loss) if isinstance(loss, str) else (float(loss[0]), _hz(loss[1]))
    if line_z0 is not None:
        kw["line_z0_ohm"] = float(line_z0)
    if length is not None:
        if vf is None:
            raise AnalysisError("a length needs the line's velocity factor (vf=0.66, say)")
        return LineOffset.from_length(parse_length(length) if isinstance(length, str) else float(length), float(vf), **kw)
    return LineOffset(delay_s=parse_time(delay) if isinstance(delay, str) else float(delay), **kw)


def _per_port(sweep: Sweep, line, port) -> tuple:
    if port == "all":
        return (line,) * sweep.n_ports
    sweep.check_port(port)
    return tuple(line if p == port else None for p in range(1, sweep.n_ports + 1))


def remove_offsets(sweep: Sweep, *, delay=None, length=None, vf: float | None = None, loss=None,
                   line_z0: float | None = None, port: int | str = 1) -> Sweep:
    """The sweep with a length of line removed in front of a port (the reference plane moved).

    Parameters
    ----------
    delay : float or str
        One-way delay (seconds, or "85ps"); or give ``length`` and ``vf`` instead.
    length : float or str
        Physical length (metres, or "20cm"), with ``vf`` the velocity factor.
    loss : str or (dB, frequency)
        One-way loss at a frequency, "0.4dB@1GHz" or ``(0.4, 1e9)``; grows as √f.
    line_z0 : float
        The line's impedance (default: the port's reference impedance).
    port : int or "all"
        Where the line is.
    """
    from refplane.analysis.lines import deembed

    return deembed.remove_offsets(sweep, _per_port(sweep, _line(delay, length, vf, loss, line_z0), port))


def add_offsets(sweep: Sweep, *, delay=None, length=None, vf: float | None = None, loss=None,
                line_z0: float | None = None, port: int | str = 1) -> Sweep:
    """The sweep as it would read through an added length of line (arguments as :func:`remove_offsets`)."""
    from refplane.analysis.lines import deembed

    return deembed.add_offsets(sweep, _per_port(sweep, _line(delay, length, vf, loss, line_z0), port))


def estimate_plane(sweep: Sweep, *, standard: str = "open", port: int = 1, band=None,
                   vf: float | None = None):
    """Estimate the line in front of an open or short (delay, loss, length for ``vf``).

    Returns
    -------
    PlaneEstimate
        ``delay_s``, ``loss_db`` at ``loss_ref_hz``, ``length_m`` (with ``vf``), ``residual``.
    """
    from refplane.analysis.lines.plane import estimate_plane as _estimate

    return _estimate(_sweep(sweep), standard=standard, port=port, band_hz=_band(band), velocity_factor=vf)


def calibrate(*, short, open, load, through=None, isolation=None, standards=None,  # noqa: A002
              interpolate: bool = False):
    """Solve error terms from measured standards (sweeps or paths).

    Parameters
    ----------
    short, open, load : Sweep or path
        The measured standards (port 1 reflection).
    through, isolation : Sweep or path, optional
        Two-port measurements for transmission correction.
    standards : str or StandardSet, optional
        A standards file (or object) defining them; ideal standards when omitted.

    Returns
    -------
    Calibration
        With ``quality``, ``verdict`` and ``warnings`` saying how good it is.
    """
    from refplane.analysis.calibration.solve import calibrate as _calibrate
    from refplane.analysis.calibration.standards import StandardSet, load_standards

    if isinstance(standards, (str, os.PathLike)):
        standards = load_standards(standards)
    measured = {"short": _sweep(short), "open": _sweep(open), "load": _sweep(load)}
    return _calibrate(measured, standards or StandardSet(),
                      through=_sweep(through) if through is not None else None,
                      isolation=_sweep(isolation) if isolation is not None else None,
                      interpolate=interpolate)


def load_calibration(path: str | os.PathLike):
    """Read error terms saved by ``refplane correct --save-cal`` or :func:`save_calibration`."""
    from refplane.analysis.calibration.calfile import load_calibration as _load

    return _load(path)


def save_calibration(calibration, path: str | os.PathLike, *, overwrite: bool = False) -> str:
    """Save error terms as JSON (atomically; an existing file only with ``overwrite``)."""
    from refplane.analysis.calibration.calfile import save_calibration as _save

    return os.fspath(_save(calibration, path, overwrite=overwrite))


def correct(sweep: Sweep, calibration, *, interpolate: bool = False) -> Sweep:
    """Apply a calibration to a device sweep; the result's comments say what was corrected."""
    from refplane.analysis.calibration.solve import correct as _correct

    return _correct(calibration, _sweep(sweep), interpolate=interpolate).sweep


def fit(sweep: Sweep, *, model: str = "auto", band=None, port: int | None = None, through: str | None = None):
    """Fit an equivalent circuit (see ``refplane fit --help`` for the models).

    Returns
    -------
    FitResult
        ``params`` and ``stderr`` (SI, keyed like ``r_ohm``, ``l_h``, ``c_f``), ``derived``
        (e.g. ``srf_hz``), and ``sentence()`` in plain words.
    """
    from refplane.analysis.circuits.fitting import fit_sweep

    return fit_sweep(_sweep(sweep), model=model, band_hz=_band(band), port=port, through=through)


def limit(text: str):
    """Parse a limit such as ``"vswr <= 1.5 over 144MHz:148MHz"`` (see the limits grammar)."""
    from refplane.analysis.limits import parse_limit

    return parse_limit(text)


def read_limits(path: str | os.PathLike) -> tuple:
    """Read a limit file: one limit per line, ``#`` starts a comment."""
    from refplane.analysis.limits import read_limits as _read

    return _read(path)


def _limits(limits) -> list:
    if isinstance(limits, str):
        limits = [limits]
    return [limit(x) if isinstance(x, str) else x for x in limits]


def check(sweep: Sweep, limits, *, port: int = 1, uncertainty: dict | None = None) -> tuple:
    """Test a sweep against limits.

    Parameters
    ----------
    limits : str, Limit or sequence of them
    uncertainty : dict, optional
        Expanded uncertainty (k = 2) per quantity key, a number or one per swept point;
        readings within it of a limit are "indeterminate" (JCGM 106 guard bands).

    Returns
    -------
    tuple of LimitResult
        ``decision`` ("pass", "fail", "indeterminate"), ``worst_freq_hz``, ``worst_value``,
        ``margin``, ``rule``, ``json()``.
    """
    from refplane.analysis.limits import evaluate_limits

    return evaluate_limits(_limits(limits), _sweep(sweep), port=port, u=uncertainty)


def check_files(paths: Iterable[str | os.PathLike], limits, *, port: int = 1, calibration=None,
                uncertainty: dict | None = None, jobs: int | None = None):
    """Check files and folders (recursively) against limits, in parallel processes.

    Returns
    -------
    BatchResult
        ``files`` (each with ``decision`` and ``results``), ``statistics`` per limit,
        ``summary`` counts, ``json()``; and the helper :func:`refplane.batch.write_check_csv`.
    """
    from refplane.batch import Preparation, collect_files, run_checks

    if isinstance(paths, (str, os.PathLike)):
        paths = [paths]
    if isinstance(calibration, (str, os.PathLike)):
        calibration = load_calibration(calibration)
    prep = Preparation(port=port, calibration=calibration, uncertainty=dict(uncertainty or {}))
    return run_checks(collect_files(list(paths)), _limits(limits), prep, jobs=jobs)


def report(sweeps, path: str | os.PathLike, *, at=(), limits=(), fit: str | None = None, port: int = 1,
           title: str = "Refplane measurement report", overwrite: bool = False) -> str:
    """Write a report (``.html``: self-contained, pictures inline; ``.pdf``: a page per sweep).

    Parameters
    ----------
    sweeps : Sweep, path, or a sequence of them
    at : frequencies of markers to read on every sweep
    limits : limits to test on every sweep
    fit : str, optional
        An equivalent-circuit model to fit ("auto" to choose) and state in words.

    Returns
    -------
    str
        The path written.
    """
    from refplane.report.build import sweep_report, write_report

    if isinstance(sweeps, (Sweep, str, os.PathLike)):
        sweeps = [sweeps]
    sections = []
    freqs = _hz_list(at) if at else []
    for item in sweeps:
        sw = _sweep(item)
        file = os.fspath(item) if not isinstance(item, Sweep) else sw.source
        sections.append(sweep_report(sw, file=file, port=port, at_hz=freqs, limits=_limits(limits),
                                     fit_model=fit))
    return os.fspath(write_report(sections, path, overwrite=overwrite, title=title))


#: The same as :func:`report`; the name under which ``import refplane`` offers it.
write_report = report


def to_network(sweep: Sweep):
    """The sweep as a scikit-rf ``Network`` (scikit-rf imported only when called)."""
    return sweep.to_network()


def from_network(network, *, name: str | None = None) -> Sweep:
    """A sweep from a scikit-rf ``Network`` (one reference impedance per port)."""
    return Sweep.from_network(network, name=name)
