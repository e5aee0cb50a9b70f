"""``refplane report``: a report a person can hand on, as one HTML file or a PDF."""

from __future__ import annotations

import argparse

from refplane.cli.common import arg_type

_EPILOG = """\
The HTML report is one self-contained file (pictures inline as SVG, no external links); the
PDF has one A4 page per sweep. Per sweep: file name and SHA-256, points and band, reference
impedance, calibration and offsets applied, the chart with markers, a return-loss plot and a
plot per limited quantity, the marker table (the same numbers as 'refplane read'), the fit
sentence (--fit), limit results with their decision rule, the cautions, the program version
and the date (UTC; $SOURCE_DATE_EPOCH fixes it for reproducible reports).

examples:
  refplane report antenna.s1p --at 145MHz --limit "vswr <= 1.5 over 144MHz:148MHz" -o antenna.html
  refplane report cap.s1p --fit capacitor --at 100MHz -o cap.pdf
  refplane report lot/*.s1p --cal port1.json --delay 85ps --limits cable.limits -o lot.html

Every report prints the usual cautions: never connect an analyzer port to an antenna system a
transmitter may still feed; discharge antennas and long cables first; mind RF exposure limits
and follow local codes and licensed practice.
"""


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.limits import parse_limit
    from refplane.analysis.units import parse_frequency

    p = sub.add_parser(
        "report", help="write a report (HTML or PDF) of sweeps, markers, fits and limits",
        description="Write a report of one or more sweeps that a customer or a colleague can read "
                    "without Refplane: one self-contained HTML file or a PDF.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("files", nargs="*", metavar="PATH", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweeps")
    p.add_argument("--session", metavar="SESSION",
                   help="report a saved session (.refplane): its traces, offsets, markers and fit")
    p.add_argument("-o", "--output", required=True, metavar="OUT", help="the report: a .html or .pdf file")
    p.add_argument("--at", dest="at_hz", action="append", default=[], metavar="F",
                   type=arg_type(parse_frequency, "frequency"),
                   help="place a marker and read it at this frequency, e.g. 470MHz (repeatable)")
    p.add_argument("--limit", dest="limits", action="append", default=[], metavar="EXPR",
                   type=arg_type(parse_limit, "limit"),
                   help="a limit, e.g. 'vswr <= 1.5 over 144MHz:148MHz' (repeatable)")
    p.add_argument("--limits", dest="limit_file", metavar="FILE", help="a file of limits, one per line")
    from refplane.cli.fit import _MODEL_IDS

    p.add_argument("--fit", dest="fit_model", metavar="MODEL", choices=_MODEL_IDS,
                   help="fit an equivalent circuit and print its sentence: " + ", ".join(_MODEL_IDS))
    p.add_argument("--port", type=int, default=1, metavar="N", help="port whose reflection is shown (default 1)")
    p.add_argument("--cal", metavar="CAL.json", help="correct every sweep with saved error terms first")
    p.add_argument("--interpolate", action="store_true",
                   help="with --cal: allow sweeps on other frequencies (error terms interpolated)")
    p.add_argument("--csv", metavar="OUT.csv",
                   help="also write the marker tables (--at) as CSV for a spreadsheet, units in the header")
    p.add_argument("--title", default="Refplane measurement report", help="the report's title")
    p.add_argument("--force", action="store_true", help="replace OUT if it exists")
    from refplane.cli.offsets import add_offset_options

    add_offset_options(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    import sys
    from pathlib import Path

    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.limits import read_limits
    from refplane.cli.check import preparation_from_args
    from refplane.report.build import report_sections, write_report

    if not args.output.lower().endswith((".html", ".htm", ".pdf")):
        raise AnalysisError("name the report .html or .pdf", file=args.output)
    for out in (args.output, args.csv):
        if out and Path(out).exists() and not args.force:
            print(f"refplane report: {out} exists already; use --force to replace it", file=sys.stderr)
            return 2
    if args.csv and not args.at_hz:
        raise AnalysisError("--csv writes the marker tables; give the markers with --at")
    limits = list(args.limits)
    if args.limit_file:
        limits.extend(read_limits(args.limit_file))
    if args.session:
        if args.files or args.at_hz or args.fit_model or args.cal:
            raise AnalysisError("--session reports the session as it was saved; leave out PATH, --at, --fit and --cal")
        from refplane.report.from_session import session_sections
        from refplane.session.files import open_session

        session, notes = open_session(args.session)
        for note in notes:
            print(f"refplane report: note: {note}", file=sys.stderr)
        sections = session_sections(session, limits=limits)
        if not sections:
            raise AnalysisError("the session has no traces to report", file=args.session)
    else:
        if not args.files:
            raise AnalysisError("name at least one sweep PATH, or a saved session with --session")
        prep = preparation_from_args(args)
        sections = report_sections(args.files, at_hz=args.at_hz, limits=limits, prep=prep,
                                   fit_model=args.fit_model)
    path = write_report(sections, args.output, overwrite=args.force, title=args.title)
    print(f"wrote {path}")
    if args.csv:
        from refplane.report.tables import write_markers_csv

        print(f"wrote {write_markers_csv(sections, args.csv, overwrite=args.force)}")
    return 0
