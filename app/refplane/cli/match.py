"""``refplane match``: matching networks of buyable parts for a load at one frequency."""

from __future__ import annotations

import argparse

from refplane.cli.common import arg_type, format_table, print_json
from refplane.cli.feedline import parse_power

_EPILOG = """\
networks (parts are listed from the load toward the source):
  L             every two-part network that exists for the load (two or four)
  pi, T         low-pass Pi and T of a chosen loaded Q (--q; default 3, or more where the load needs it)
  quarter-wave  a line to the nearer real point (for a complex load), then a quarter wave of √(R·Rs)
  open-stub,    a line of the target impedance, then an open or shorted stub of it in shunt
  short-stub

caution: matching parts at transmitter power carry high voltage and current; rate each part with a
wide margin above the peak voltage and RMS current shown (--power). RF exposure limits apply whenever
an antenna is driven. Never connect the analyzer to a line a transmitter can feed. Follow local codes
and licensed practice.
"""


def _parse_target(text: str) -> float:
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.units import parse_resistance

    value = parse_resistance(text)
    if not value > 0:
        raise AnalysisError(f"{text!r}: the target must be a resistance above zero")
    return value


def _parse_q(text: str) -> float:
    from refplane.analysis.errors import AnalysisError

    try:
        value = float(text)
    except ValueError:
        raise AnalysisError(f"{text!r} is not a loaded Q (write e.g. 3)") from None
    if not (value > 0 and value != float("inf")):
        raise AnalysisError(f"a loaded Q must be above zero, not {text!r}")
    return value


def _plain(text: str) -> str:
    """``390.0 nH`` → ``390 nH``, ``1.500 nF`` → ``1.5 nF``: standard values without trailing zeros."""
    number, _, unit = text.partition(" ")
    if "." in number:
        number = number.rstrip("0").rstrip(".")
    return f"{number} {unit}".strip()


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.units import parse_frequency
    from refplane.cli.offsets import _parse_vf

    p = sub.add_parser(
        "match", help="matching networks (L, Pi, T, quarter-wave, stubs) with standard part values",
        description="Design matching networks for the load at one frequency: exact part values, the "
                    "nearest standard values (IEC 60063 E12/E24/E96), the VSWR and the VSWR < 2 band "
                    "with those parts, the voltage and current each part carries at a given power, and "
                    "the Bode–Fano limit: the widest band any lossless network could match.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweep")
    p.add_argument("--at", dest="at_hz", required=True, metavar="F", type=arg_type(parse_frequency, "frequency"),
                   help="design frequency, e.g. 14.2MHz")
    p.add_argument("--port", type=int, default=1, metavar="N", help="the load is S_NN of port N (default 1)")
    p.add_argument("--to", dest="target_ohm", metavar="Z", type=arg_type(_parse_target, "resistance"),
                   help="resistance to match to (default: the port's reference, e.g. 50)")
    p.add_argument("--power", dest="power_w", metavar="W", type=arg_type(parse_power, "power"),
                   help="power into the network, e.g. 100W: gives each part's peak voltage and RMS current")
    p.add_argument("--series", default="E24", type=str.upper, choices=("E12", "E24", "E96"),
                   help="standard series for rounded values (default E24)")
    p.add_argument("--q", dest="q", metavar="Q", type=arg_type(_parse_q, "loaded Q"),
                   help="loaded Q of the Pi and T networks (default 3, or 1.5 × the least the load allows)")
    p.add_argument("--coax-vf", dest="coax_vf", default=0.66, metavar="V", type=arg_type(_parse_vf, "velocity factor"),
                   help="velocity factor of the coax for lines and stubs (default 0.66)")
    p.add_argument("--json", action="store_true", help="print JSON instead of tables")
    from refplane.cli.offsets import add_offset_options

    add_offset_options(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.antenna.matching import CAUTION, match_sweep
    from refplane.analysis.units import format_frequency, format_si
    from refplane.cli.offsets import read_with_offsets

    sweep, removed, notes = read_with_offsets(args)
    result = match_sweep(sweep, args.at_hz, port=args.port, target_ohm=args.target_ohm, series=args.series,
                         power_w=args.power_w, q=args.q, vf=args.coax_vf)
    if args.json:
        out = {"file": args.file, "port": args.port, **result.json()}
        if removed:
            out["lines_removed"] = removed
        print_json(out)
        return 0
    zl = result.load_ohm
    print(f"{args.file}  port {args.port}: load {zl.real:.4g} {'+' if zl.imag >= 0 else '−'} j{abs(zl.imag):.4g} Ω "
          f"at {format_frequency(result.freq_hz)}, matched to {result.target_ohm:g} Ω, {result.series} values")
    for note in notes:
        print(note)
    for net in result.networks:
        print()
        q = f" (loaded Q {net.q:.3g})" if net.q else ""
        band = (f"{format_frequency(net.band_vswr2_hz[0])} to {format_frequency(net.band_vswr2_hz[1])}"
                + (" (reaches the sweep's edge)" if net.band_clipped else "")
                if net.band_vswr2_hz else "none")
        print(f"{net.topology}{q}: VSWR {net.vswr_standard:.3g} with standard values; VSWR < 2 from {band}")
        if not net.parts:
            print("  nothing needed: the load is already matched")
            continue
        rows = []
        for part in net.parts:
            if part.kind == "line":
                value = f"{format_si(part.value, 'm')} of {part.line_z0_ohm:.4g} Ω ({part.electrical_deg:.1f}°)"
                std = f"{part.end} stub" if part.end else "line"
            else:
                value = format_si(part.value, part.unit)
                std = _plain(format_si(part.standard_value, part.unit, 4))
            row = [f"{part.place} {part.kind}", value, std]
            if args.power_w is not None:
                row += ["—" if part.peak_voltage_v is None else format_si(part.peak_voltage_v, "V", 4),
                        "—" if part.rms_current_a is None else format_si(part.rms_current_a, "A", 4)]
            rows.append(row)
        headers = ["part (from the load)", "exact", result.series]
        if args.power_w is not None:
            headers += ["peak V", "RMS I"]
        print(format_table(headers, rows))
    print()
    if result.bode_fano:
        bf = result.bode_fano
        print(f"Bode–Fano limit: no lossless network keeps VSWR ≤ {bf.vswr_limit:g} over more than "
              f"{format_si(bf.max_width_hz, 'Hz')} for this load (fitted as {bf.model_id}, "
              f"{bf.basis}, fit misfit {bf.fit_residual_rel:.1%}).")
    for note in result.notes:
        print(note)
    if args.power_w is not None:
        print()
        print(f"At {format_si(args.power_w, 'W', 4)}: {CAUTION}")
    return 0
