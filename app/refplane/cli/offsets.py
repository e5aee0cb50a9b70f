"""Offset options shared by ``read`` and ``render``: remove a length of line before reading.

Options
-------
``--delay T``             one-way delay of the line to remove, e.g. 1.01ns, 250ps
``--length L --vf V``     the same as a physical length and velocity factor, e.g. 20cm 0.66
                          (instead of ``--delay``; each needs the other)
``--loss DB@F``           one-way conductor loss at a frequency, e.g. 0.4dB@1GHz (grows as √f)
``--dielectric-loss DB@F`` one-way dielectric loss at a frequency, e.g. 0.1dB@1GHz (grows as f)
``--skin-phase``          the √f loss carries its equal phase (the causal skin-effect model that
                          real cable follows). This is the default; ``--no-skin-phase`` works
                          the loss alone, as earlier versions did
``--z0-follows-skin``     work the line as its full R, L, G, C line: its impedance (``--line-z0``
                          or the port's reference) is the high-frequency value and rises at
                          low frequency as the skin-effect law says (implies ``--skin-phase``)
``--line-z0 Z``           the line's impedance, e.g. 75 (default: the port's reference)
``--offset-port N|all``   the port the line sits at. Default: the port being read (``--port``,
                          port 1 when there is none); ``all`` puts the same line at every port.

A negative delay or length (written ``--delay=-1ns``) adds the line instead of removing it.
Contradictory or malformed options end the command with one line and status 2.
"""

from __future__ import annotations

import argparse

from refplane.analysis.errors import AnalysisError
from refplane.cli.common import arg_type


def _parse_vf(text: str) -> float:
    from refplane.analysis.lines.deembed import check_velocity_factor

    return check_velocity_factor(text)


def _parse_line_z0(text: str) -> float:
    from refplane.analysis.units import parse_resistance

    value = parse_resistance(text)
    if not value > 0:
        raise AnalysisError(f"{text!r}: the line impedance must be above zero")
    return value


def _parse_port(text: str) -> int | str:
    if text.strip().lower() == "all":
        return "all"
    try:
        value = int(text)
    except ValueError:
        raise AnalysisError(f"{text!r} is not a port number (or 'all')") from None
    if value < 1:
        raise AnalysisError(f"port {value} does not exist; ports are numbered from 1")
    return value


def add_offset_options(parser: argparse.ArgumentParser) -> None:
    """Add the line-offset options (see the module notes) to a sub-command's parser."""
    from refplane.analysis.units import parse_length, parse_loss, parse_time

    group = parser.add_argument_group(
        "reference plane",
        "Remove a length of transmission line (cable, adapter, fixture) between the analyzer's "
        "reference plane and the device before reading.")
    how = group.add_mutually_exclusive_group()
    how.add_argument("--delay", dest="offset_delay_s", metavar="T", type=arg_type(parse_time, "delay"),
                     help="one-way delay of the line, e.g. 1.01ns or 250ps")
    how.add_argument("--length", dest="offset_length_m", metavar="L", type=arg_type(parse_length, "length"),
                     help="physical length of the line, e.g. 20cm, 0.2m or 8in (needs --vf)")
    group.add_argument("--vf", dest="offset_vf", metavar="V", type=arg_type(_parse_vf, "velocity factor"),
                       help="velocity factor of the line for --length, e.g. 0.66 for solid-polyethylene coax")
    group.add_argument("--loss", dest="offset_loss", metavar="DB@F", type=arg_type(parse_loss, "loss"),
                       help="one-way conductor loss of the line, e.g. 0.4dB@1GHz (taken to grow as √f)")
    group.add_argument("--dielectric-loss", dest="offset_dielectric_loss", metavar="DB@F",
                       type=arg_type(parse_loss, "loss"),
                       help="one-way dielectric loss of the line, e.g. 0.1dB@1GHz (taken to grow as f)")
    phase = group.add_mutually_exclusive_group()
    phase.add_argument("--skin-phase", dest="offset_skin_phase", action="store_true", default=None,
                       help="the √f loss carries its equal phase, the causal skin-effect model of real "
                            "cable (the default)")
    phase.add_argument("--no-skin-phase", dest="offset_skin_phase", action="store_false",
                       help="the √f loss without its phase (the loss-only form of earlier versions)")
    group.add_argument("--z0-follows-skin", dest="offset_z0_follows_skin", action="store_true", default=None,
                       help="the line's impedance is its high-frequency value and rises at low frequency "
                            "as the skin-effect law says (implies --skin-phase)")
    group.add_argument("--line-z0", dest="offset_line_z0_ohm", metavar="Z",
                       type=arg_type(_parse_line_z0, "impedance"),
                       help="the line's characteristic impedance, e.g. 75 (default: the port's reference)")
    group.add_argument("--offset-port", dest="offset_port", metavar="N", type=arg_type(_parse_port, "port"),
                       help="port the line sits at, or 'all' (default: the port being read)")


def offset_from_args(args: argparse.Namespace):
    """The single :class:`LineOffset` the options describe, or ``None`` when none were given.

    Raises
    ------
    AnalysisError
        For ``--vf`` without ``--length`` (or the reverse), or ``--line-z0`` with no line.
    """
    from refplane.analysis.lines.deembed import LineOffset

    delay = getattr(args, "offset_delay_s", None)
    length = getattr(args, "offset_length_m", None)
    vf = getattr(args, "offset_vf", None)
    loss = getattr(args, "offset_loss", None)
    dielectric = getattr(args, "offset_dielectric_loss", None)
    line_z0 = getattr(args, "offset_line_z0_ohm", None)
    skin_phase = getattr(args, "offset_skin_phase", None)  # None: the model's default (causal)
    z0_skin = bool(getattr(args, "offset_z0_follows_skin", None))
    if length is not None and vf is None:
        raise AnalysisError("--length needs --vf (the line's velocity factor, e.g. 0.66)")
    if vf is not None and length is None:
        raise AnalysisError("--vf applies to --length; give the line's length too (or use --delay)")
    if delay is None and length is None and loss is None and dielectric is None:
        if skin_phase is not None or z0_skin:
            raise AnalysisError("--skin-phase and --z0-follows-skin describe a line's loss; "
                                "give its --loss (and --delay, or --length and --vf) too")
        if line_z0 is not None:
            raise AnalysisError("--line-z0 describes a line; give its --delay (or --length and --vf) too")
        if getattr(args, "offset_port", None) is not None:
            raise AnalysisError("--offset-port needs a line: give --delay (or --length and --vf) or --loss")
        return None
    kw = {}
    if loss is not None:
        kw["loss_db"], kw["loss_ref_hz"] = loss
    if dielectric is not None:
        value, ref = dielectric
        if loss is None:
            kw["loss_ref_hz"] = ref
        # The dielectric loss grows as f: restate it at the conductor loss's frequency.
        kw["dielectric_loss_db"] = value * (kw["loss_ref_hz"] / ref)
    if skin_phase is not None:
        kw["skin_phase"] = bool(skin_phase)
    if z0_skin:
        kw["z0_follows_skin"] = True
    if line_z0 is not None:
        kw["line_z0_ohm"] = line_z0
    if length is not None:
        try:
            return LineOffset.from_length(length, vf, **kw)
        except AnalysisError as exc:  # name the options the user gave, not the derived delay
            raise AnalysisError(f"--length {length:g} m with --vf {vf:g} gives no usable line "
                                f"({exc.reason})") from None
    return LineOffset(delay_s=delay or 0.0, **kw)


def offsets_from_args(args: argparse.Namespace, sweep) -> tuple | None:
    """Per-port offsets for ``sweep`` from the options, or ``None`` when no line was given.

    The line goes at ``--offset-port`` if given (``all``: every port), else at the port
    being read (``args.port``), else at port 1.

    Raises
    ------
    AnalysisError
        For contradictory options or a port the sweep does not have.
    """
    offset = offset_from_args(args)
    if offset is None:
        return None
    target = getattr(args, "offset_port", None)
    if target is None:
        target = getattr(args, "port", None) or 1
    if target == "all":
        return (offset,) * sweep.n_ports
    sweep.check_port(target)
    return tuple(offset if port == target else None for port in range(1, sweep.n_ports + 1))


def apply_offsets(args: argparse.Namespace, sweep):
    """Remove the line the options describe from ``sweep``.

    Returns
    -------
    (sweep, notes) : tuple
        The corrected sweep (the input itself when no line was given) and plain lines
        saying what was removed, one per port with a line.
    """
    from refplane.analysis.lines.deembed import describe_offsets, remove_offsets

    offsets = offsets_from_args(args, sweep)
    if offsets is None:
        return sweep, ()
    _check_reasonable(args, offsets, sweep)
    vf = getattr(args, "offset_vf", None)
    notes = tuple(f"port {port}: line removed: {o.describe(vf)}"
                  for port, o in enumerate(offsets, start=1) if o is not None)
    import numpy as np

    with np.errstate(all="ignore"):
        try:
            corrected = remove_offsets(sweep, offsets)
        except AnalysisError as exc:
            if "not finite" not in exc.reason:
                raise
            raise AnalysisError("the line options give numbers too large to compute with "
                                "(check --delay, --length and --loss)") from None
    return corrected.replace(comments=sweep.comments + describe_offsets(offsets)), notes


#: Largest one-way line loss accepted at the sweep's top frequency; far beyond any cable,
#: and small enough that removing it (a gain of twice as many dB) stays a finite number.
MAX_LOSS_DB = 300.0
#: Largest phase (radians) of the line at the top frequency: beyond this a double no longer
#: resolves a turn of phase, so the result would be noise.
MAX_PHASE_RAD = 1e12


def _check_reasonable(args: argparse.Namespace, offsets, sweep) -> None:
    """Refuse line options whose effect at the sweep's top frequency cannot be computed,
    naming the option (not the sweep)."""
    import math

    top_hz = float(sweep.freq_hz[-1])
    for o in offsets:
        if o is None:
            continue
        phase = 2 * math.pi * top_hz * abs(o.delay_s)
        if not math.isfinite(phase) or phase > MAX_PHASE_RAD:
            which = "--length" if getattr(args, "offset_length_m", None) is not None else "--delay"
            raise AnalysisError(f"{which}: a line delay of {o.delay_s:.3g} s is far too long for "
                                f"a sweep up to {top_hz:.4g} Hz (more than {MAX_PHASE_RAD:.0e} "
                                "radians of phase)")
        if o.loss_db:
            at_top = o.loss_db * math.sqrt(top_hz / o.loss_ref_hz) if o.loss_ref_hz > 0 else math.inf
            if not math.isfinite(at_top) or at_top > MAX_LOSS_DB:
                raise AnalysisError(f"--loss: {o.loss_db:.3g} dB at {o.loss_ref_hz:.4g} Hz is "
                                    f"more than {MAX_LOSS_DB:g} dB at the sweep's top frequency; "
                                    "no cable loses that much")


def offsets_json(args: argparse.Namespace, sweep) -> list[dict]:
    """The removed lines as JSON-ready dicts (one per port with a line), for ``--json`` output."""
    offsets = offsets_from_args(args, sweep) or ()
    return [{"port": port, "delay_s": o.delay_s, "loss_db": o.loss_db, "loss_ref_hz": o.loss_ref_hz,
             "dielectric_loss_db": o.dielectric_loss_db, "skin_phase": o.skin_phase,
             "z0_follows_skin": o.z0_follows_skin, "line_z0_ohm": o.line_z0_ohm}
            for port, o in enumerate(offsets, start=1) if o is not None]


def read_with_offsets(args: argparse.Namespace):
    """Read ``args.file``, check ``args.port``, and remove the lines the plane options name.

    Returns (sweep with the lines removed, the removed lines as JSON, notes to print).
    """
    from refplane.analysis.files.loading import read_sweep

    sweep = read_sweep(args.file)
    sweep.check_port(args.port)
    removed = offsets_json(args, sweep)
    sweep, notes = apply_offsets(args, sweep)
    return sweep, removed, notes
