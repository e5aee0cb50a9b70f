"""Uncertainty options shared by ``read`` and ``fit``: what is known about the measurement's errors.

Options
-------
``--residual D,M,T``      an instrument's corrected performance: directivity and source match in
                          dB, tracking in ±dB, e.g. 40dB,35dB,0.1dB (or plain magnitudes)
``--cal CAL.json``        apply a saved calibration to the raw sweep first, and carry the
                          uncertainty propagated from its standards
``--noise auto|none|N``   trace noise: estimated from the sweep (auto, the default once any
                          uncertainty is asked for), none, or σ per axis (0.001 or -60dB)
``--repeat FILE``         a repeated sweep of the same device (repeatable): noise from the scatter
``--delay-u T``, ``--length-u L``, ``--vf-u V``, ``--loss-u DB``, ``--line-z0-u Z``
                          standard uncertainties of the offset line's values
``--u-method``            auto (linear; Monte Carlo where the linearisation is poor), linear or
                          monte-carlo; ``--draws N`` Monte Carlo draws (default 20000)
"""

from __future__ import annotations

import argparse
import math

from refplane.analysis.errors import AnalysisError
from refplane.cli.common import arg_type


def _parse_residual(text: str):
    from refplane.analysis.uncertainty.residual import parse_residual

    return parse_residual(text)


def _parse_noise(text: str):
    t = text.strip().lower().replace(" ", "")
    if t in ("auto", "none"):
        return t
    try:
        value = 10 ** (-abs(float(t[:-2])) / 20) if t.endswith("db") else float(t)
    except ValueError:
        raise AnalysisError(f"{text!r}: give auto, none, or the noise per axis as 0.001 or -60dB") from None
    if not (math.isfinite(value) and value >= 0):
        raise AnalysisError(f"{text!r}: the noise must be at least 0")
    return value


def _nonneg(parse):
    def convert(text: str) -> float:
        value = parse(text)
        if not (math.isfinite(value) and value >= 0):
            raise AnalysisError(f"{text!r}: an uncertainty must be at least 0")
        return value
    return convert


def _plain(text: str) -> float:
    try:
        return float(text)
    except ValueError:
        raise AnalysisError(f"{text!r} is not a number") from None


def _db(text: str) -> float:
    t = text.strip().lower().replace(" ", "")
    return _plain(t[:-2] if t.endswith("db") else t)


def add_uncertainty_options(parser: argparse.ArgumentParser, *, offsets: bool = True) -> None:
    """Add the uncertainty options (see the module notes)."""
    from refplane.analysis.units import parse_length, parse_resistance, parse_time

    g = parser.add_argument_group(
        "uncertainty",
        "Say what is known about the measurement's errors; every reading then carries its "
        "expanded uncertainty (about 95 %, coverage factor k = 2).")
    g.add_argument("--residual", type=arg_type(_parse_residual, "residual terms"), metavar="D,M,T",
                   help="corrected directivity, source match (dB) and tracking (±dB), e.g. 40dB,35dB,0.1dB")
    g.add_argument("--cal", metavar="CAL.json",
                   help="apply a saved calibration (refplane correct --save-cal) to the raw sweep, "
                        "with the uncertainty propagated from its standards")
    g.add_argument("--noise", type=arg_type(_parse_noise, "noise"), metavar="auto|none|N",
                   help="trace noise per axis: auto (from the sweep; default), none, or e.g. 0.001 or -60dB")
    g.add_argument("--repeat", action="append", default=[], metavar="FILE",
                   help="another sweep of the same device (repeatable); the noise is taken from the scatter")
    if offsets:
        g.add_argument("--delay-u", dest="u_delay_s", type=arg_type(_nonneg(parse_time), "delay"), metavar="T",
                       help="standard uncertainty of --delay, e.g. 5ps")
        g.add_argument("--length-u", dest="u_length_m", type=arg_type(_nonneg(parse_length), "length"),
                       metavar="L", help="standard uncertainty of --length, e.g. 2mm")
        g.add_argument("--vf-u", dest="u_vf", type=arg_type(_nonneg(_plain), "velocity factor"), metavar="V",
                       help="standard uncertainty of --vf, e.g. 0.01")
        g.add_argument("--loss-u", dest="u_loss_db", type=arg_type(_nonneg(_db), "loss"), metavar="DB",
                       help="standard uncertainty of --loss (dB at the same frequency), e.g. 0.05dB")
        g.add_argument("--line-z0-u", dest="u_line_z0_ohm", type=arg_type(_nonneg(parse_resistance), "impedance"),
                       metavar="Z", help="standard uncertainty of --line-z0, e.g. 1")
    g.add_argument("--u-method", choices=("auto", "linear", "monte-carlo"), default="auto",
                   help="how the uncertainty is propagated (default auto: linear, Monte Carlo where needed)")
    g.add_argument("--draws", type=int, default=20000, metavar="N",
                   help="Monte Carlo draws per reading (default 20000)")


def wants_uncertainty(args: argparse.Namespace) -> bool:
    """True when any uncertainty option was given."""
    return any(getattr(args, k, None) for k in ("residual", "cal", "noise", "repeat", "u_delay_s",
                                                 "u_length_m", "u_vf", "u_loss_db", "u_line_z0_ohm")) \
        or getattr(args, "u_method", "auto") != "auto"


def offset_uncertainty(args: argparse.Namespace):
    """The :class:`OffsetUncertainty` of the options, or None."""
    from refplane.analysis.uncertainty.reading import OffsetUncertainty

    ud, ul, uv = (getattr(args, k, None) for k in ("u_delay_s", "u_length_m", "u_vf"))
    uloss, uz = getattr(args, "u_loss_db", None), getattr(args, "u_line_z0_ohm", None)
    if not any(v is not None for v in (ud, ul, uv, uloss, uz)):
        return None
    if (ul is not None or uv is not None) and getattr(args, "offset_length_m", None) is None:
        raise AnalysisError("--length-u and --vf-u go with --length and --vf")
    if ud is not None and getattr(args, "offset_delay_s", None) is None:
        raise AnalysisError("--delay-u goes with --delay")
    if uloss is not None and getattr(args, "offset_loss", None) is None:
        raise AnalysisError("--loss-u goes with --loss")
    if uz is not None and getattr(args, "offset_line_z0_ohm", None) is None:
        raise AnalysisError("--line-z0-u goes with --line-z0")
    kw = {"loss_db": uloss or 0.0, "line_z0_ohm": uz or 0.0}
    if ul is not None or uv is not None:
        return OffsetUncertainty.from_length(args.offset_length_m, args.offset_vf, ul or 0.0, uv or 0.0, **kw)
    return OffsetUncertainty(delay_s=ud or 0.0, **kw)


def prepare(args: argparse.Namespace, sweep):
    """Apply ``--cal`` to a raw sweep and gather the uncertainty options.

    Returns
    -------
    (plane_sweep, options, notes) : tuple
        The sweep at the calibration plane, the :class:`UncertaintyOptions` (None when no
        uncertainty was asked for) and plain notes for the human output.
    """
    from refplane.analysis.uncertainty.reading import UncertaintyOptions

    notes: list[str] = []
    calibration_u = cal = None
    if getattr(args, "cal", None):
        from refplane.analysis.calibration.calfile import load_calibration
        from refplane.analysis.calibration.solve import correct

        cal = load_calibration(args.cal)
        result = correct(cal, sweep, interpolate=True)
        notes += [f"note: {w}" for w in result.warnings]
        notes.append(f"calibration {args.cal} applied (quality: {cal.quality})")
        sweep = result.sweep
        calibration_u = cal.uncertainty
        if calibration_u is None:
            notes.append("note: this calibration file holds no propagated uncertainty (saved by an older "
                         "Refplane); only the other sources are counted")
    if not wants_uncertainty(args):
        return sweep, None, notes
    noise = args.noise or "auto"
    if args.repeat:
        from refplane.analysis.files.loading import read_sweep
        from refplane.analysis.calibration.standards import grids_match
        from refplane.analysis.uncertainty.noise import repeat_noise

        port = getattr(args, "port", None) or 1
        others = [read_sweep(p) for p in args.repeat]
        for path, other in zip(args.repeat, others):
            if not grids_match(other.freq_hz, sweep.freq_hz):
                raise AnalysisError("a repeated sweep must have the same frequencies as the first", file=path)
            other.check_port(port)
        traces = [sweep.reflection(port)] + [o.reflection(port) for o in others]
        if cal is not None:
            # The noise that matters is the corrected sweeps' scatter: correct the repeats too.
            from refplane.analysis.calibration.solve import correct

            traces = [sweep.reflection(port)] + [correct(cal, o, interpolate=True).sweep.reflection(port)
                                                 for o in others]
        noise = repeat_noise(traces)
    if args.draws < 100:
        raise AnalysisError("--draws must be at least 100")
    options = UncertaintyOptions(residual=args.residual, calibration=calibration_u, noise=noise,
                                 offset_u=offset_uncertainty(args), method=args.u_method, draws=args.draws)
    if args.residual is None and calibration_u is None:
        notes.append("note: no --residual or --cal given: the ± covers trace noise and interpolation "
                     "only, not the calibration's own errors")
    return sweep, options, notes


def sources_text(options, u) -> str:
    """One line naming what the ± is made of, with the method."""
    parts = []
    if options.residual is not None:
        parts.append(f"residual terms ({options.residual.describe()})")
    if options.calibration is not None:
        parts.append("the calibration's standards")
    if isinstance(options.noise, str):
        if options.noise == "auto":
            parts.append("trace noise (estimated from the sweep)")
    elif getattr(options.noise, "ndim", 0):
        parts.append("trace noise (from repeated sweeps)")
    else:
        parts.append(f"trace noise σ = {float(options.noise):.2g}")
    if options.interpolation:
        parts.append("interpolation between points")
    if options.offset_u is not None:
        parts.append("the offset line's values")
    methods = sorted(set(u.method))
    return ("± is the expanded uncertainty (about 95 %, k = 2; " + " and ".join(methods) + ") from: "
            + ", ".join(parts))
