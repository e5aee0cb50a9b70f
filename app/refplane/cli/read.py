"""``refplane read``: impedance readouts of a sweep at chosen frequencies."""

from __future__ import annotations

import argparse

from refplane.cli.common import arg_type, format_table, print_json


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.units import parse_frequency

    p = sub.add_parser(
        "read", help="read impedance at chosen frequencies",
        description="Read a sweep's reflection at chosen frequencies (interpolated between "
                    "swept points, never extrapolated) as Γ, R + jX, series L or C, VSWR, "
                    "return loss and Q.")
    p.add_argument("file", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweep")
    p.add_argument("--at", dest="at_hz", action="append", required=True, metavar="F",
                   type=arg_type(parse_frequency, "frequency"),
                   help="frequency to read at, e.g. 470MHz, '470 MHz', 470M, 4.7e8 (repeatable)")
    p.add_argument("--port", type=int, default=1, metavar="N", help="read S_NN of port N (default 1)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    from refplane.cli.offsets import add_offset_options

    add_offset_options(p)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.loading import read_sweep
    from refplane.analysis.readings import read_points

    from refplane.cli.offsets import apply_offsets, offsets_json

    sweep = read_sweep(args.file)
    removed = offsets_json(args, sweep)
    sweep, notes = apply_offsets(args, sweep)
    result = read_points(sweep, args.at_hz, port=args.port)
    if args.json:
        print_json({
            "file": args.file,
            "port": args.port,
            "z0_ohm": result.z0_ohm,
            **({"lines_removed": removed} if removed else {}),
            "points": [result.readout.at(i).json_point() for i in range(len(args.at_hz))],
        })
    else:
        print(f"{args.file}  port {args.port}  (reference {result.z0_ohm:g} Ω)")
        for note in notes:
            print(note)
        print(readout_table(result.readout, len(args.at_hz)))
    return 0


def readout_table(readout, count: int) -> str:
    """The human table of ``count`` points of a many-point readout."""
    from refplane.session.present import readout_cells

    headers = None
    rows = []
    for i in range(count):
        cells = readout_cells(readout.at(i))
        headers = list(cells)
        rows.append(list(cells.values()))
    return format_table(headers or [], rows)
