"""``refplane plane``: find the line in front of an open or short (delay, loss, length)."""

from __future__ import annotations

import argparse

from refplane.cli.common import arg_type, print_json

_CAUTION = (
    "Caution: a long cable can carry a static charge that damages an analyzer's port; discharge "
    "it (briefly join centre conductor and shield) before connecting it, as your equipment's "
    "maker advises. Never connect a line that a transmitter may still feed.")


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.units import parse_band, parse_frequency
    from refplane.cli.offsets import _parse_vf

    p = sub.add_parser(
        "plane", help="find the line in front of an open or short",
        description="Estimate the one-way delay and loss of a cable or fixture from a sweep of it "
                    "ended in an open or a short, i.e. the line to remove to move the reference "
                    "plane to its far end. The line's impedance is taken as the port's reference "
                    "(at high frequency) and the standard as ideal; the residual says how well that "
                    "holds. The loss is split into a conductor (√f) and a dielectric (f) term, and the "
                    "line model that explains the reading best is reported (see docs/cables.md). "
                    "The summary ends with the 'refplane read' options that remove the line found.",
        epilog=_CAUTION)
    p.add_argument("file", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweep")
    p.add_argument("--standard", required=True, type=str.lower, choices=("open", "short"),
                   help="what ends the line")
    p.add_argument("--port", type=int, default=1, metavar="N", help="use S_NN of port N (default 1)")
    p.add_argument("--band", type=arg_type(parse_band, "band"), metavar="F1:F2",
                   help="use only this band, e.g. 10MHz:1GHz (default: the whole sweep)")
    p.add_argument("--vf", type=arg_type(_parse_vf, "velocity factor"), metavar="V",
                   help="velocity factor, to report a physical length, e.g. 0.66")
    p.add_argument("--loss-ref", dest="loss_ref_hz", type=arg_type(parse_frequency, "frequency"),
                   default=1e9, metavar="F", help="frequency to state the loss at (default 1GHz)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a summary")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.files.loading import read_sweep
    from refplane.analysis.lines.plane import estimate_plane

    sweep = read_sweep(args.file)
    est = estimate_plane(sweep, standard=args.standard, port=args.port, band_hz=args.band,
                         velocity_factor=args.vf, loss_ref_hz=args.loss_ref_hz)
    if args.json:
        print_json({**est.json(), "file": args.file, "port": args.port, "standard": est.standard,
                    "n_points": est.n_points, "typical_error": est.typical_error,
                    "verdict": est.verdict()})
    else:
        print(summary(args.file, args.port, est, args.vf))
    return 0


def summary(file: str, port: int, est, vf: float | None) -> str:
    """The human summary of a plane estimate."""
    from refplane.analysis.units import format_frequency

    low, high = est.band_hz
    lines = [
        f"{file}  port {port}: {est.standard} at the far end, {est.n_points} points, "
        f"{format_frequency(low)} to {format_frequency(high)}",
        f"  one-way delay  {est.delay_s * 1e9:.4f} ns",
    ]
    if est.length_m is not None:
        lines.append(f"  length         {est.length_m * 100:.2f} cm at velocity factor {vf:g}")
    lines.append(f"  one-way loss   {est.loss_db:.3f} dB at {format_frequency(est.loss_ref_hz)} (conductor, "
                 "taken to grow as √f)")
    if est.dielectric_loss_db:
        lines.append(f"                 {est.dielectric_loss_db:.3f} dB at {format_frequency(est.loss_ref_hz)} "
                     "(dielectric, taken to grow as f)")
    lines += [
        f"  line model     {_MODEL_WORDS[est.model]}",
        f"  residual       {est.residual:.4f} RMS of |Γ − Γ_{est.standard}| after removing the line "
        f"(median {est.typical_error:.4f})",
        f"  {est.verdict()}",
    ]
    if vf is not None and est.length_m is not None:
        how = f"--length={est.length_m * 100:.3f}cm --vf {vf:g}"
    else:
        how = f"--delay={est.delay_s * 1e9:.5f}ns"
    return "\n".join(lines) + "\nTo remove this line: refplane read FILE " + remove_options(est, how) + " --at F"


_MODEL_WORDS = {
    "loss only": "√f loss without phase (explains this reading better than the causal model)",
    "causal": "causal skin effect: the √f loss carries its equal phase",
    "full line": "full line: causal skin effect, impedance rising at low frequency as the skin law says",
}


def remove_options(est, how: str) -> str:
    """The ``refplane read`` options that remove the line of ``est`` (every term of its model)."""
    from refplane.analysis.units import format_frequency

    ref = format_frequency(est.loss_ref_hz).replace(" ", "")
    parts = [how, f"--loss {est.loss_db:.4f}dB@{ref}"]
    if est.dielectric_loss_db:
        parts.append(f"--dielectric-loss {est.dielectric_loss_db:.4f}dB@{ref}")
    if est.z0_follows_skin:
        parts.append("--z0-follows-skin")
    elif est.loss_db:
        # The causal phase is the default; say so either way, so the line is removed as found.
        parts.append("--skin-phase" if est.skin_phase else "--no-skin-phase")
    return " ".join(parts)
