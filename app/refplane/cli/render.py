"""``refplane render``: draw sweeps on a Smith chart, with markers and a readout legend, to PNG or SVG.

Runs without a display (Qt's offscreen platform), so it works on servers and in scripts.
``--session FILE`` draws a saved session exactly as the window showed it (the same traces,
offsets, markers and options, from the same resolved scene). Every input is checked before
Qt is touched, so bad input gives one line and status 2 even where Qt cannot start.
"""

from __future__ import annotations

import argparse
import os

from refplane.cli.common import arg_type


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.units import parse_frequency

    p = sub.add_parser(
        "render", help="draw a Smith chart picture (PNG or SVG) without opening the window",
        description="Draw one or more sweeps on a Smith chart with markers and a legend of "
                    "readings, and save it as a PNG or SVG picture. Needs no display.")
    p.add_argument("files", nargs="*", metavar="FILE", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweeps")
    p.add_argument("--session", metavar="SESSION", help="draw a saved session (.refplane) as the window showed it")
    p.add_argument("--at", dest="at_hz", action="append", default=[], metavar="F",
                   type=arg_type(parse_frequency, "frequency"),
                   help="place a marker at this frequency on every trace, e.g. 470MHz (repeatable)")
    p.add_argument("--port", type=int, default=1, metavar="N", help="draw S_NN of port N (default 1)")
    p.add_argument("-o", "--output", required=True, metavar="OUT",
                   help="picture to write: a .png or .svg file name")
    p.add_argument("--size", default="900x1000", metavar="WxH", type=arg_type(_parse_size, "size"),
                   help="picture size in pixels (default 900x1000)")
    p.add_argument("--vswr", type=float, metavar="S", help="also draw the constant-VSWR circle of S (> 1)")
    p.add_argument("--admittance", action="store_true", help="also draw the admittance grid")
    p.add_argument("--theme", choices=("light", "dark"), default=None,
                   help="colours (default light, or the session's own)")
    p.add_argument("--force", action="store_true", help="replace OUT if it exists")
    from refplane.cli.offsets import add_offset_options

    add_offset_options(p)
    p.set_defaults(run=run)


def _parse_size(text: str) -> tuple[int, int]:
    # The size parser lives with the picture code but imports no Qt at parse time.
    from refplane.analysis.errors import AnalysisError

    w, sep, h = str(text).lower().replace("×", "x").partition("x")
    try:
        width, height = int(w), int(h)
    except ValueError:
        raise AnalysisError(f"{text!r} is not a size; write it like 900x1000") from None
    if not sep or not (64 <= width <= 8000 and 64 <= height <= 8000):
        raise AnalysisError(f"{text!r}: width and height must each be 64 to 8000 pixels")
    return width, height


def build_session(args: argparse.Namespace):
    """The session to draw, built and checked without Qt: (session, notes).

    Raises
    ------
    AnalysisError
        For contradictory options, an unreadable sweep or session, a port a sweep does not
        have, or a marker frequency outside a sweep.
    """
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.files.loading import read_sweep
    from refplane.cli.offsets import apply_offsets
    from refplane.session.model import Session

    if args.vswr is not None and not args.vswr > 1:
        raise AnalysisError(f"--vswr {args.vswr:g}: a VSWR circle needs a value above 1")
    if args.session:
        used = [flag for flag, on in (("FILE", args.files), ("--at", args.at_hz), ("--port", args.port != 1),
                                      ("offsets", _offsets_given(args))) if on]
        if used:
            raise AnalysisError(f"--session draws the session as it was saved; leave out {', '.join(used)}")
        from refplane.session.files import open_session

        session, notes = open_session(args.session)
        changes = {}
        if args.vswr is not None:
            changes["vswr_circle"] = args.vswr
        if args.admittance:
            changes["admittance_grid"] = True
        if args.theme:
            changes["theme"] = args.theme
        session.set_display(**changes)
        return session, notes
    if not args.files:
        raise AnalysisError("name at least one sweep FILE, or a saved session with --session")
    session = Session()
    session.set_display(theme=args.theme or "light", vswr_circle=args.vswr, admittance_grid=args.admittance)
    for path in args.files:
        sweep, _notes = apply_offsets(args, read_sweep(path))  # the same line removed from each
        tid = session.add_sweep(sweep, port=args.port)
        for f in args.at_hz:
            session.add_marker(tid, f)
    return session, []


def _offsets_given(args) -> bool:
    # Every reference-plane option stores under a name starting "offset_" (cli/offsets.py).
    return any(value is not None for name, value in vars(args).items() if name.startswith("offset_"))


def run(args: argparse.Namespace) -> int:
    import sys

    # Check the output before reading anything, so a refusal costs nothing.
    _check_output(args.output, args.force)
    session, notes = build_session(args)
    for note in notes:
        print(f"refplane render: note: {note}", file=sys.stderr)

    os.environ["QT_QPA_PLATFORM"] = "offscreen"  # before Qt is imported: no display needed
    os.environ.setdefault("QT_LOGGING_RULES", "qt.qpa.*=false")  # no platform chatter on stderr
    from refplane.views.render import draw_session

    path = draw_session(session, args.output, size=args.size, overwrite=args.force)
    print(f"wrote {path}")
    return 0


def _check_output(output: str, force: bool) -> None:
    from pathlib import Path

    from refplane.analysis.errors import AnalysisError

    target = Path(output)
    if target.suffix.lower() not in (".png", ".svg"):
        raise AnalysisError(f"unknown picture type {target.suffix or '(none)'!r}; use .png or .svg",
                            file=output)
    if target.exists() and not force:
        raise AnalysisError("the file exists already; refusing to overwrite it (add --force to replace it)",
                            file=output)
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise AnalysisError(f"the folder {folder} does not exist", file=output)
