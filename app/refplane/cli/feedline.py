"""``refplane feedline``: what the radio sees through a feedline, and how much power reaches the antenna."""

from __future__ import annotations

import argparse

from refplane.cli.common import arg_type, format_table, print_json
from refplane.cli.resonance import CAUTION

POWER_CAUTION = (
    "At transmitter power: the power lost in the line heats it, and high SWR raises the voltage on it; "
    "stay inside the cable's and connectors' ratings. RF exposure limits apply whenever the antenna is "
    "driven. Never connect the analyzer to a line a transmitter can feed. Follow local codes and "
    "licensed practice.")


def _num(value, pattern: str) -> str:
    """A number for a table cell: ∞ for infinity, — for a value that does not apply."""
    value = float(value)
    if value != value:
        return "—"
    if value in (float("inf"), float("-inf")):
        return "∞"
    return pattern.format(value)


def parse_power(text: str) -> float:
    """Watts from text: ``100``, ``100W``, ``1.5kW``, ``500mW``."""
    from refplane.analysis.errors import AnalysisError

    raw = text.strip().replace(" ", "")
    scale = 1.0
    for suffix, factor in (("kw", 1e3), ("mw", 1e-3), ("w", 1.0)):
        if raw.lower().endswith(suffix):
            raw, scale = raw[: -len(suffix)], factor
            break
    try:
        value = float(raw) * scale
    except ValueError:
        raise AnalysisError(f"{text!r} is not a power (write e.g. 100W or 1.5kW)") from None
    if not (value >= 0 and value != float("inf")):
        raise AnalysisError(f"a power must be zero or more watts, not {text!r}")
    return value


def _parse_nonnegative_length(text: str) -> float:
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.units import parse_length

    value = parse_length(text)
    if value < 0:
        raise AnalysisError(f"a feedline length must not be negative, not {text!r}")
    return value


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.units import parse_frequency, parse_loss
    from refplane.cli.offsets import _parse_line_z0, _parse_vf

    p = sub.add_parser(
        "feedline", help="impedance, SWR and loss budget through a feedline, either way",
        description="From the impedance at the antenna (the file, measured at the feedpoint), work out "
                    "what the radio sees at the other end of a feedline: impedance, SWR, the line's "
                    "matched loss, its total loss with this mismatch, and the power that reaches the "
                    "antenna. With --toward antenna the file was measured at the radio end and the "
                    "line is removed instead.",
        epilog=CAUTION)
    p.add_argument("file", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweep")
    p.add_argument("--length", dest="length_m", required=True, metavar="L",
                   type=arg_type(_parse_nonnegative_length, "length"),
                   help="physical length of the feedline, e.g. 20m, 65ft")
    p.add_argument("--vf", dest="vf", required=True, metavar="V", type=arg_type(_parse_vf, "velocity factor"),
                   help="velocity factor of the line, e.g. 0.66 (solid polyethylene) or 0.82 (foam)")
    p.add_argument("--loss", dest="loss", metavar="DB@F", type=arg_type(parse_loss, "loss"),
                   help="matched loss of the whole length at one frequency, e.g. 1.2dB@14MHz "
                        "(scaled with frequency by the line model; default lossless)")
    p.add_argument("--line-z0", dest="line_z0_ohm", metavar="Z", type=arg_type(_parse_line_z0, "impedance"),
                   help="the line's impedance, e.g. 75 or 450 (default: the port's reference)")
    p.add_argument("--power", dest="power_w", metavar="W", type=arg_type(parse_power, "power"),
                   help="power the transmitter puts into the line, e.g. 100W")
    p.add_argument("--at", dest="at_hz", action="append", required=True, metavar="F",
                   type=arg_type(parse_frequency, "frequency"), help="frequency, e.g. 14.2MHz (repeatable)")
    p.add_argument("--toward", choices=("radio", "antenna"), default="radio",
                   help="radio: the file is at the antenna (default); antenna: the file is at the radio end")
    p.add_argument("--port", type=int, default=1, metavar="N", help="read S_NN of port N (default 1)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.antenna.feedline import toward_antenna, toward_radio
    from refplane.analysis.lines.deembed import LineOffset
    from refplane.analysis.readings.impedance import gamma_to_z
    from refplane.analysis.files.loading import read_sweep
    from refplane.analysis.readings.markers import gamma_at
    from refplane.analysis.units import format_frequency, format_si

    sweep = read_sweep(args.file)
    sweep.check_port(args.port)
    z_port = complex(sweep.z0_ohm[args.port - 1])
    z_ref = z_port.real
    kw = {}
    if args.loss is not None:
        kw["loss_db"], kw["loss_ref_hz"] = args.loss
    if args.line_z0_ohm is not None:
        kw["line_z0_ohm"] = args.line_z0_ohm
    line = LineOffset.from_length(args.length_m, args.vf, **kw)
    z = gamma_to_z(gamma_at(sweep, args.at_hz, args.port), z_port)
    work = toward_radio if args.toward == "radio" else toward_antenna
    result = work(args.at_hz, z, line, z_ref_ohm=z_ref, power_w=args.power_w)
    if args.json:
        print_json({"file": args.file, "port": args.port, "toward": args.toward, "z_ref_ohm": z_ref,
                    "line": {"length_m": args.length_m, "vf": args.vf, "delay_s": line.delay_s,
                             "loss_db": line.loss_db, "loss_ref_hz": line.loss_ref_hz,
                             "line_z0_ohm": line.line_z0_ohm},
                    "power_w": args.power_w, "points": result.json_points()})
        return 0

    def zt(v):
        v = complex(v)
        if abs(v) == float("inf") or v != v:
            return "∞"
        # Rounding leaves a trace of reactance (1e-13 Ω) on a real load; show it as zero.
        v = complex(v.real if abs(v.real) > 1e-9 * abs(v) else 0.0, v.imag if abs(v.imag) > 1e-9 * abs(v) else 0.0)
        return f"{v.real:.4g} {'+' if v.imag >= 0 else '−'} j{abs(v.imag):.4g} Ω"

    where = "the antenna (file)" if args.toward == "radio" else "the radio end (file)"
    print(f"{args.file}  port {args.port}: measured at {where}; line: {line.describe(args.vf)}")
    rows = []
    for k, f in enumerate(result.freq_hz):
        row = [format_frequency(f), zt(result.z_radio_ohm[k]), _num(result.vswr_radio[k], "{:.3g}"),
               zt(result.z_antenna_ohm[k]), _num(result.vswr_antenna[k], "{:.3g}"),
               _num(result.matched_loss_db[k], "{:.2f} dB"), _num(result.total_loss_db[k], "{:.2f} dB")]
        if result.power_at_antenna_w is not None:
            row.append(format_si(float(result.power_at_antenna_w[k]), "W", 4))
        rows.append(row)
    headers = ["frequency", "Z at radio", "SWR radio", "Z at antenna", "SWR antenna", "matched loss", "total loss"]
    if result.power_at_antenna_w is not None:
        headers.append(f"at antenna of {format_si(args.power_w, 'W', 4)}")
    print(format_table(headers, rows))
    print(f"SWR is relative to {z_ref:g} Ω; total loss = matched loss + the extra loss the mismatch causes.")
    if args.power_w:
        print()
        print(POWER_CAUTION)
    return 0
