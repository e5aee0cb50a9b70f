"""``refplane read``: impedance readouts of a sweep at chosen frequencies."""

from __future__ import annotations

import argparse

from refplane.cli.common import arg_type, format_table, print_json

_EPILOG = """\
examples:
  refplane read dut.s1p --at 470MHz
  refplane read dut.s1p --at 470MHz --residual 40dB,35dB,0.1dB --json
  refplane read raw_dut.s1p --at 470MHz --cal port1.json
  refplane read dut.s1p --at 470MHz --length 20cm --vf 0.66 --length-u 2mm --vf-u 0.01 --noise auto

With any uncertainty option each reading carries its expanded uncertainty (about 95 %,
coverage factor k = 2), e.g. "77.6 ± 0.8 Ω"; in JSON each point gains "u" (the same keys,
each an expanded uncertainty in the same unit), "coverage_factor" and "u_method".
"""


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.units import parse_frequency

    p = sub.add_parser(
        "read", help="read impedance at chosen frequencies",
        description="Read a sweep's reflection at chosen frequencies (interpolated between "
                    "swept points, never extrapolated) as Γ, R + jX, series L or C, VSWR, "
                    "return loss and Q.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweep")
    p.add_argument("--at", dest="at_hz", action="append", required=True, metavar="F",
                   type=arg_type(parse_frequency, "frequency"),
                   help="frequency to read at, e.g. 470MHz, '470 MHz', 470M, 4.7e8 (repeatable)")
    p.add_argument("--port", type=int, default=1, metavar="N", help="read S_NN of port N (default 1)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    from refplane.cli.offsets import add_offset_options
    from refplane.cli.uncertainty_options import add_uncertainty_options

    add_offset_options(p)
    add_uncertainty_options(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.files.loading import read_sweep
    from refplane.analysis.readings import read_points

    from refplane.cli.offsets import apply_offsets, offsets_from_args, offsets_json
    from refplane.cli.uncertainty_options import prepare, sources_text

    sweep = read_sweep(args.file)
    plane, options, u_notes = prepare(args, sweep)
    removed = offsets_json(args, plane)
    dut, notes = apply_offsets(args, plane)
    result = read_points(dut, args.at_hz, port=args.port)
    unc = None
    if options is not None:
        from refplane.analysis.uncertainty.reading import uncertain_points

        unc = uncertain_points(plane, args.at_hz, port=args.port, offsets=offsets_from_args(args, plane),
                               options=options)
    count = len(args.at_hz)
    if args.json:
        points = []
        for i in range(count):
            point = result.readout.at(i).json_point()
            if unc is not None:
                point["u"] = unc.json_point(i)
                point["coverage_factor"] = 2
                point["u_method"] = unc.method[i]
            points.append(point)
        out = {
            "file": args.file,
            "port": args.port,
            "z0_ohm": result.z0_ohm,
            **({"calibration": args.cal} if getattr(args, "cal", None) else {}),
            **({"lines_removed": removed} if removed else {}),
            "points": points,
        }
        if unc is not None:
            out["uncertainty"] = {
                "coverage_probability": unc.coverage_probability,
                "sources": {name: [float(v) for v in values] for name, values in unc.budget.items()},
                "notes": [n.removeprefix("note: ") for n in u_notes if n.startswith("note: ")],
            }
        print_json(out)
    else:
        print(f"{args.file}  port {args.port}  (reference {result.z0_ohm:g} Ω)")
        for note in (*u_notes, *notes):
            print(note)
        print(readout_table(result.readout, count, unc))
        if unc is not None:
            print(sources_text(options, unc))
    return 0


def readout_table(readout, count: int, uncertainty=None) -> str:
    """The human table of ``count`` points of a many-point readout (with ± when given)."""
    from refplane.session.present import readout_cells

    headers = None
    rows = []
    for i in range(count):
        u = uncertainty.json_point(i) if uncertainty is not None else None
        cells = readout_cells(readout.at(i), u)
        headers = list(cells)
        rows.append(list(cells.values()))
    return format_table(headers or [], rows)
