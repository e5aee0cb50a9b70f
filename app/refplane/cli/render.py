"""``refplane render``: draw sweeps on a Smith chart, with markers and a readout legend, to PNG or SVG.

Runs without a display (Qt's offscreen platform), so it works on servers and in scripts.
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
    p.add_argument("files", nargs="+", metavar="FILE", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweeps")
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
    p.add_argument("--theme", choices=("light", "dark"), default="light", help="colours (default light)")
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


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.loading import read_sweep

    if args.vswr is not None and not args.vswr > 1:
        raise AnalysisError(f"--vswr {args.vswr:g}: a VSWR circle needs a value above 1")
    # Check the output before reading anything, so a refusal costs nothing.
    _check_output(args.output, args.force)

    sweeps = [read_sweep(path) for path in args.files]
    from refplane.cli.offsets import apply_offsets

    sweeps = [apply_offsets(args, sweep)[0] for sweep in sweeps]  # the same line removed from each

    os.environ["QT_QPA_PLATFORM"] = "offscreen"  # before Qt is imported: no display needed
    os.environ.setdefault("QT_LOGGING_RULES", "qt.qpa.*=false")  # no platform chatter on stderr
    from refplane.views.render import render_picture
    from refplane.views.theme import THEMES

    path = render_picture(sweeps, args.output, at_hz=args.at_hz, port=args.port, size=args.size,
                          overwrite=args.force, theme=THEMES[args.theme], vswr=args.vswr,
                          admittance=args.admittance)
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
