"""``refplane cable``: a cable's impedance, delay, velocity factor or length, and loss, from an
open and a short sweep of it."""

from __future__ import annotations

import argparse

from refplane.cli.common import arg_type, print_json

CAUTION = (
    "Caution: a long cable can hold a static charge that damages an analyzer's port; discharge "
    "it (briefly join centre conductor and shield) before connecting it, as your equipment's "
    "maker advises. Never connect an analyzer to a line that a transmitter may feed: disconnect "
    "and make safe the transmitter first, following local codes and licensed practice.")


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.units import parse_band, parse_frequency, parse_length
    from refplane.cli.offsets import _parse_vf

    p = sub.add_parser(
        "cable", help="characterise a cable from an open and a short sweep",
        description="Characterise one cable from two sweeps of it: far end open, then far end "
                    "shorted (same frequencies). Prints the characteristic impedance (its "
                    "high-frequency value), the one-way delay, the velocity factor (given "
                    "--length) or the length (given --vf), and the one-way loss split into a "
                    "conductor (√f) and a dielectric (f) part, with the residual of the fit. "
                    "Z0 = √(Zoc·Zsc), tanh(γl) = √(Zsc/Zoc); see docs/cables.md.",
        epilog=CAUTION)
    p.add_argument("--open", dest="open_file", required=True, metavar="O",
                   help="sweep of the cable with its far end open (Touchstone or CSV)")
    p.add_argument("--short", dest="short_file", required=True, metavar="S",
                   help="sweep of the cable with its far end shorted, on the same frequencies")
    how = p.add_mutually_exclusive_group()
    how.add_argument("--length", type=arg_type(parse_length, "length"), metavar="L",
                     help="physical length of the cable, e.g. 10m or 33ft: the velocity factor follows")
    how.add_argument("--vf", type=arg_type(_parse_vf, "velocity factor"), metavar="V",
                     help="velocity factor of the cable, e.g. 0.66: the length follows")
    p.add_argument("--band", type=arg_type(parse_band, "band"), metavar="F1:F2",
                   help="use only this band, e.g. 10MHz:1GHz (default: the whole sweep)")
    p.add_argument("--port", type=int, default=1, metavar="N", help="use S_NN of port N (default 1)")
    p.add_argument("--loss-ref", dest="loss_ref_hz", type=arg_type(parse_frequency, "frequency"),
                   default=1e9, metavar="F", help="frequency to state the loss at (default 1GHz)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a summary")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.lines.cable import characterise_cable
    from refplane.analysis.files.loading import read_sweep

    cable = characterise_cable(read_sweep(args.open_file), read_sweep(args.short_file), port=args.port,
                               length_m=args.length, velocity_factor=args.vf, band_hz=args.band,
                               loss_ref_hz=args.loss_ref_hz)
    if args.json:
        print_json(cable.json())
    else:
        print(summary(args, cable))
    return 0


def summary(args: argparse.Namespace, cable) -> str:
    """The human summary of a cable characterisation."""
    from refplane.analysis.units import format_frequency

    ref = format_frequency(cable.loss_ref_hz)
    low, high = cable.band_hz
    lines = [
        f"{args.open_file} (open) and {args.short_file} (short), port {args.port}: {cable.n_points} points, "
        f"{format_frequency(low)} to {format_frequency(high)}",
        f"  impedance        {cable.z0_fit_ohm:.2f} Ω (high-frequency value; "
        f"{abs(cable.z0_ohm[0]):.2f} Ω at {format_frequency(low)})",
        f"  one-way delay    {cable.delay_s * 1e9:.4f} ns",
    ]
    if args.length is not None:
        lines.append(f"  velocity factor  {cable.velocity_factor:.4f} (for the given length {cable.length_m:g} m)")
    elif args.vf is not None:
        lines.append(f"  length           {cable.length_m:.4f} m (for the given velocity factor {args.vf:g})")
    lines += [
        f"  one-way loss     {cable.loss_db:.3f} dB at {ref}: conductor {cable.loss_conductor_db:.3f} dB (√f), "
        f"dielectric {cable.loss_dielectric_db:.3f} dB (f)",
    ]
    if cable.loss_db_per_100m is not None:
        lines.append(f"  loss per 100 m   {cable.loss_db_per_100m:.2f} dB at {ref}")
    lines.append(f"  residual         {cable.residual:.4f} RMS of |Γ_model − Γ| over both sweeps")
    ref_text = ref.replace(" ", "")
    lines.append(f"To remove this cable: refplane read FILE --delay={cable.delay_s * 1e9:.5f}ns "
                 f"--loss {cable.loss_conductor_db:.4f}dB@{ref_text} "
                 f"--dielectric-loss {cable.loss_dielectric_db:.4f}dB@{ref_text} "
                 f"--line-z0 {cable.z0_fit_ohm:.3f} --z0-follows-skin --at F")
    return "\n".join(lines)
