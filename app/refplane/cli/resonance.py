"""``refplane resonance``: where a sweep resonates, where it matches best, how wide its bands are."""

from __future__ import annotations

import argparse

from refplane.cli.common import arg_type, format_table, print_json

#: Shown in the help of every antenna command.
CAUTION = (
    "caution: measure antennas with the analyzer only, never with a transmitter connected; never "
    "connect the analyzer to a line a transmitter can feed (a key-down destroys its input); discharge a "
    "long antenna or cable to ground before connecting it. "
    "RF exposure limits apply whenever an antenna is driven; follow local codes and licensed practice.")


def _parse_vswr(text: str) -> float:
    from refplane.analysis.errors import AnalysisError

    try:
        value = float(text.strip().split(":")[0])
    except ValueError:
        raise AnalysisError(f"{text!r} is not a VSWR (write e.g. 2 or 1.5)") from None
    if not value > 1.0 or value != value or value == float("inf"):
        raise AnalysisError(f"a VSWR limit must be above 1, not {text!r}")
    return value


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.units import parse_band

    p = sub.add_parser(
        "resonance", help="resonances, best match and VSWR bands of an antenna or resonator",
        description="Find every resonance of a reflection sweep (reactance crossing zero, series or "
                    "parallel, with the resistance and Q there), the frequency of lowest VSWR, each "
                    "band where VSWR stays at or below a limit, and the largest |Z|. Everything is "
                    "found between swept points, not at the nearest one.",
        epilog=CAUTION)
    p.add_argument("file", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweep")
    p.add_argument("--port", type=int, default=1, metavar="N", help="read S_NN of port N (default 1)")
    p.add_argument("--vswr", dest="vswr_limits", action="append", metavar="S",
                   type=arg_type(_parse_vswr, "VSWR"),
                   help="VSWR limit of the bands, e.g. 2 or 1.5 (repeatable; default 2)")
    p.add_argument("--band", dest="band_hz", type=arg_type(parse_band, "band"), metavar="F1:F2",
                   help="look only between these frequencies, e.g. 6.5MHz:7.8MHz")
    p.add_argument("--json", action="store_true", help="print JSON instead of tables")
    from refplane.cli.offsets import add_offset_options

    add_offset_options(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.antenna.resonance import analyse
    from refplane.analysis.units import format_frequency, format_si
    from refplane.cli.offsets import read_with_offsets

    sweep, removed, notes = read_with_offsets(args)
    limits = args.vswr_limits or [2.0]
    report = analyse(sweep, args.port, vswr_limits=limits, band_hz=args.band_hz)
    if args.json:
        out = {"file": args.file, **report.json()}
        if removed:
            out["lines_removed"] = removed
        print_json(out)
        return 0
    print(f"{args.file}  port {args.port}  (reference {report.z0_ohm:g} Ω, "
          f"{format_frequency(report.band_hz[0])} to {format_frequency(report.band_hz[1])})")
    for note in notes:
        print(note)
    print()
    if report.resonances:
        rows = [(format_frequency(r.freq_hz), r.kind, format_si(r.r_ohm, "Ω"),
                 f"{r.q:.4g}" if r.q == r.q else "—") for r in report.resonances]
        print(format_table(["resonance", "kind", "R", "Q"], rows))
    else:
        print("no resonance: the reactance keeps one sign over the sweep")
    b = report.best
    print()
    vswr_text = "∞" if b.vswr == float("inf") else f"{b.vswr:.4g}"
    print(f"best match: VSWR {vswr_text} (return loss {b.return_loss_db:.2f} dB) at {format_frequency(b.freq_hz)}")
    print(f"largest |Z|: {format_si(report.max_z.z_mag_ohm, 'Ω')} at {format_frequency(report.max_z.freq_hz)}")
    print()
    if report.bands:
        rows = []
        for band in report.bands:
            edge = (" (sweep starts inside)" if band.clipped_low else "") + \
                   (" (sweep ends inside)" if band.clipped_high else "")
            rows.append((f"≤ {band.vswr_limit:g}", format_frequency(band.start_hz), format_frequency(band.stop_hz),
                         format_frequency(band.centre_hz), format_si(band.width_hz, "Hz") + edge))
        print(format_table(["VSWR", "from", "to", "centre", "width"], rows))
    else:
        print("no band: VSWR stays above " + ", ".join(f"{s:g}" for s in limits) + " over the sweep")
    return 0
