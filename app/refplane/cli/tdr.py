"""``refplane tdr``: a reflection sweep in the time domain — distance to each event, gating."""

from __future__ import annotations

import argparse
import math

from refplane.cli.common import arg_type, format_table, print_json

CAUTION = (
    "Caution: a long cable can hold a static charge that damages an analyzer's port; discharge "
    "it (briefly join centre conductor and shield) before connecting it, as your equipment's "
    "maker advises. Never connect an analyzer to a line that a transmitter may feed: disconnect "
    "and make safe the transmitter first, following local codes and licensed practice.")


def _parse_gate(text: str) -> tuple[float, float]:
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.units import parse_length

    near, sep, far = str(text).partition(":")
    if not sep:
        raise AnalysisError(f"{text!r}: write the gate as NEAR:FAR, e.g. 2.5m:3.5m")
    return parse_length(near), parse_length(far)


def _parse_window(text: str) -> str:
    from refplane.analysis.lines.time_domain import parse_window

    parse_window(text)
    return text


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.units import parse_loss
    from refplane.cli.offsets import _parse_vf

    p = sub.add_parser(
        "tdr", help="time domain of a reflection sweep: distance to each event, gating",
        description="Transform a reflection sweep to the time domain and list the events along the "
                    "line (distance, round-trip time, reflection coefficient ρ, return loss), strongest "
                    "first: local peaks above |ρ| = 0.01 and above twice the window's highest sidelobe "
                    "below the strongest peak. Low-pass mode gives ρ with its sign and an impedance "
                    "profile; it needs a harmonic grid (start = step) and otherwise resamples the sweep "
                    "and extrapolates DC, stating the error. Band-pass mode works on any sweep and gives "
                    "magnitudes. With --gate, the span is kept, the rest gated away, and the gated sweep "
                    "written as a Touchstone file (renormalised by the gate's own response to a unit "
                    "reflection, which corrects the band edges). See docs/cables.md.",
        epilog=CAUTION)
    p.add_argument("file", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweep")
    p.add_argument("--port", type=int, default=1, metavar="N", help="use S_NN of port N (default 1)")
    p.add_argument("--vf", type=arg_type(_parse_vf, "velocity factor"), default=1.0, metavar="V",
                   help="velocity factor for distances, e.g. 0.66 for solid-PE coax (default 1: "
                        "distances are electrical lengths in air)")
    p.add_argument("--mode", type=str.lower, choices=("lowpass", "bandpass"), default="lowpass",
                   help="low-pass (default; ρ with sign, impedance) or band-pass (magnitude, any sweep)")
    p.add_argument("--window", type=arg_type(_parse_window, "window"), default="kaiser", metavar="NAME",
                   help="rectangular, hann, hamming, blackman or kaiser (β 6; kaiser:9 for another β). "
                        "Default kaiser")
    p.add_argument("--cable-loss", type=arg_type(parse_loss, "loss"), metavar="DB@F",
                   help="the cable's conductor loss per 100 m, e.g. 20dB@1GHz (√f, with its phase), to "
                        "compensate each event's size for the cable up to it")
    p.add_argument("--cable-dielectric-loss", type=arg_type(parse_loss, "loss"), metavar="DB@F",
                   help="the cable's dielectric loss per 100 m, e.g. 4dB@1GHz (grows as f), with --cable-loss")
    p.add_argument("--gate", type=arg_type(_parse_gate, "gate"), metavar="D1:D2",
                   help="keep only this span of distance, e.g. 2.5m:3.5m, and write the gated sweep (-o)")
    p.add_argument("-o", "--output", metavar="OUT.s1p", help="where to write the gated sweep")
    p.add_argument("--force", action="store_true", help="replace an existing output file")
    p.add_argument("--json", action="store_true", help="print JSON instead of a summary")
    p.set_defaults(run=run)


def _cable(args):
    from refplane.analysis.lines.deembed import LineOffset

    if args.cable_loss is None and args.cable_dielectric_loss is None:
        return None
    conductor, ref = args.cable_loss if args.cable_loss is not None else (0.0, 1e9)
    dielectric = 0.0
    if args.cable_dielectric_loss is not None:
        value, d_ref = args.cable_dielectric_loss
        dielectric = value * ref / d_ref
    return LineOffset.from_length(100.0, args.vf, loss_db=conductor, loss_ref_hz=ref,
                                  dielectric_loss_db=dielectric, skin_phase=True)


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.lines.time_domain import gate, time_response
    from refplane.analysis.files.loading import read_sweep

    if args.output and not args.gate:
        raise AnalysisError("-o writes a gated sweep; give the span to keep with --gate D1:D2")
    if args.gate and not args.output:
        raise AnalysisError("--gate writes the gated sweep: give the file with -o OUT.s1p")
    sweep = read_sweep(args.file)
    td = time_response(sweep, port=args.port, mode=args.mode, window=args.window, velocity_factor=args.vf,
                       cable=_cable(args))
    gated = None
    if args.gate:
        from pathlib import Path

        from refplane.analysis.files import touchstone

        if Path(args.output).exists() and not args.force:
            raise AnalysisError(f"{args.output} exists already; use --force to replace it")
        gated = gate(sweep, *args.gate, port=args.port, velocity_factor=args.vf, window=args.window)
        touchstone.write(gated.sweep, args.output, comments=(f"gated copy of {args.file}",) + gated.sweep.comments,
                         overwrite=args.force)
    if args.json:
        print_json({"file": args.file, "port": args.port, **td.json()})
    else:
        print(summary(args.file, args.port, td))
    if gated is not None:
        import sys

        print(f"wrote {args.output} (gated {gated.start_m:g} m to {gated.stop_m:g} m)", file=sys.stderr)
    return 0


def _si(value: float, unit: str) -> str:
    from refplane.analysis.units import format_si

    return format_si(value, unit)


def summary(file: str, port: int, td) -> str:
    """The human summary of a time-domain transform."""
    from refplane.analysis.units import format_frequency

    mode = "low-pass" if td.mode == "lowpass" else "band-pass"
    w = td.window
    side = f"{w.sidelobe_db:.1f} dB".replace("-", "−")
    lines = [
        f"{file}  port {port}: {mode} time domain, {w.label} window (main lobe {w.width_6db_bins:.2f} bins "
        f"wide at −6 dB, highest sidelobe {side})",
        f"  velocity factor {td.velocity_factor:g}: resolution {_si(td.resolution_m, 'm')}, range "
        f"{_si(td.range_m, 'm')} (1/Δf with Δf = {format_frequency(td.freq_step_hz)})",
    ]
    if td.mode == "lowpass":
        how = "resampled onto a harmonic grid" if td.resampled else "on the sweep's own harmonic grid"
        lines.append(f"  DC extrapolated: Γ(0) = {td.dc_value:.4f} ± {td.dc_error:.4f} ({how})")
        if td.dc_error > 0.02:
            lines.append("  warning: the DC value is uncertain, so the step response and impedance profile "
                         "may be offset; sweep from a lower start, ideally start frequency = step")
    if td.loss_compensated:
        lines.append("  event sizes compensated for the cable's loss up to each")
    if not td.events:
        lines.append(f"  no events above |ρ| = {td.threshold:.3g}")
        return "\n".join(lines)
    lines.append(f"  events above |ρ| = {td.threshold:.3g}, strongest first:")
    headers = ["distance", "time", "ρ" if td.mode == "lowpass" else "|ρ|", "return loss"]
    if td.mode == "lowpass":
        headers.append("impedance beyond")
    rows = []
    for e in td.events:
        row = [_si(e.distance_m, "m"), _si(e.time_s, "s"), f"{e.rho:+.4f}" if td.mode == "lowpass" else f"{e.rho:.4f}",
               f"{e.return_loss_db:.2f} dB"]
        if td.mode == "lowpass":
            import numpy as np

            i = int(np.searchsorted(td.time_s, e.time_s + 2 * td.resolution_s))
            z = float(td.impedance_ohm[min(i, td.time_s.size - 1)])
            row.append(f"{z:.1f} Ω" if math.isfinite(z) else "open")
        rows.append(row)
    table = format_table(headers, rows)
    lines += ["  " + line for line in table.splitlines()]
    return "\n".join(lines)
