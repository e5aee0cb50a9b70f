"""``refplane check``: test sweeps (files and folders) against limits and list pass or fail."""

from __future__ import annotations

import argparse
import sys

from refplane.cli.common import arg_type, format_table, print_json

_EPILOG = """\
limits (QUANTITY OP VALUE over F1:F2):
  vswr <= 1.5 over 144MHz:148MHz          return_loss_db >= 20 over 0.8GHz:0.96GHz
  s21_db >= -0.5 over 1MHz:1GHz            r_ohm >= 45 over 10MHz:100MHz
  QUANTITY: a reading key of 'refplane read --json' (vswr, return_loss_db, r_ohm, x_ohm,
  z_mag_ohm, gamma_mag, gamma_deg, series_l_h, series_c_f, q, ...) or s21_db, s21_deg
  (two-port sweeps). OP: <= or >=. Each band frequency needs its unit. A limit file holds
  one limit per line; '#' starts a comment.

decisions:
  Without --uncertainty a file passes when every reading in each band is on the allowed
  side of its limit (swept points and the band edges, interpolated). With --uncertainty
  QUANTITY=U (expanded, k = 2) a reading within U of the limit is 'indeterminate'
  (guard bands w = U, JCGM 106:2012).

exit status: 0 every file passed; 1 a file failed or is indeterminate; 2 bad input, or a
file could not be read (it is listed with its reason; the others are still checked).

examples:
  refplane check cables/ --limit "vswr <= 1.3 over 800MHz:960MHz" --csv cables.csv
  refplane check lot42/*.s1p --limits antenna.limits --json > lot42.json
  refplane check duts/ --cal port1.json --delay 85ps --limits parts.limits --report lot.html

Caution: measure with the device disconnected from any transmitter; discharge long cables
and antennas before connecting them to the analyzer.
"""


def _parse_residual(text: str):
    from refplane.analysis.uncertainty.residual import parse_residual

    return parse_residual(text)


def _parse_uncertainty(text: str) -> tuple[str, float]:
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.limits import QUANTITIES

    key, sep, value = str(text).partition("=")
    key = key.strip().lower()
    if not sep or key not in QUANTITIES:
        raise AnalysisError(f"{text!r}: write it as QUANTITY=U, e.g. vswr=0.05 (QUANTITY one of the limit quantities)")
    try:
        u = float(value)
    except ValueError:
        raise AnalysisError(f"{text!r}: {value!r} is not a number (in the quantity's own unit)") from None
    if not u >= 0 or u == float("inf"):
        raise AnalysisError(f"{text!r}: the expanded uncertainty must be a finite number, not negative")
    return key, u


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.limits import parse_limit

    p = sub.add_parser(
        "check", help="test sweeps against limits over bands (files and folders, in parallel)",
        description="Test every sweep in the given files and folders (recursively: Touchstone "
                    "and CSV) against limits over frequency bands, and list pass or fail per file "
                    "with the worst frequency and the margin, plus statistics per limit.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("paths", nargs="+", metavar="PATH", help="sweep files and folders")
    p.add_argument("--limit", dest="limits", action="append", default=[], metavar="EXPR",
                   type=arg_type(parse_limit, "limit"),
                   help="a limit, e.g. 'vswr <= 1.5 over 144MHz:148MHz' (repeatable)")
    p.add_argument("--limits", dest="limit_file", metavar="FILE", help="a file of limits, one per line")
    p.add_argument("--port", type=int, default=1, metavar="N",
                   help="port whose reflection is read (default 1); s21_db/s21_deg always read S21")
    p.add_argument("--cal", metavar="CAL.json", help="correct every sweep with saved error terms first")
    p.add_argument("--interpolate", action="store_true",
                   help="with --cal: allow sweeps on other frequencies (error terms interpolated)")
    p.add_argument("--residual", dest="residual", metavar="D,M,T", type=arg_type(_parse_residual, "residual terms"),
                   help="the instrument's corrected performance, e.g. 40dB,35dB,0.1dB (directivity, source "
                        "match, tracking): every reflection reading's expanded uncertainty is then worked out "
                        "and a result too close to its limit is indeterminate")
    p.add_argument("--uncertainty", dest="uncertainty", action="append", default=[], metavar="QUANTITY=U",
                   type=arg_type(_parse_uncertainty, "uncertainty"),
                   help="expanded uncertainty (k = 2) of a quantity, the same at every frequency, "
                        "e.g. vswr=0.05; readings within U of a limit are indeterminate (repeatable)")
    p.add_argument("--jobs", type=int, default=None, metavar="N",
                   help="worker processes (default: one per core when the batch is big enough to repay "
                        "starting them, else one)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a list")
    p.add_argument("--csv", metavar="OUT.csv", help="also write the results as CSV for a spreadsheet")
    p.add_argument("--report", metavar="OUT.html", help="also write a report (.html or .pdf)")
    p.add_argument("--force", action="store_true", help="replace existing --csv/--report files")
    from refplane.cli.offsets import add_offset_options

    add_offset_options(p)
    p.set_defaults(run=run)


def _fail(message: str) -> int:
    print(f"refplane check: {message}", file=sys.stderr)
    return 2


class _Progress:
    """A one-line progress bar on a terminal's stderr; nothing when stderr is not a terminal."""

    def __init__(self, stream) -> None:
        self.stream = stream
        self.shown = False

    def __call__(self, done: int, total: int) -> None:
        width = 30
        filled = int(width * done / max(total, 1))
        self.stream.write(f"\rchecking [{'#' * filled}{'.' * (width - filled)}] {done}/{total} files")
        self.stream.flush()
        self.shown = True

    def close(self) -> None:
        if self.shown:
            self.stream.write("\r" + " " * 60 + "\r")
            self.stream.flush()


def preparation_from_args(args: argparse.Namespace):
    """The :class:`~refplane.batch.Preparation` the options describe (shared with ``report``)."""
    from refplane.batch import Preparation
    from refplane.cli.offsets import offset_from_args

    cal = None
    if getattr(args, "cal", None):
        from refplane.analysis.calibration.calfile import load_calibration

        cal = load_calibration(args.cal)
    return Preparation(port=args.port, calibration=cal, interpolate=getattr(args, "interpolate", False),
                       offset=offset_from_args(args), offset_port=getattr(args, "offset_port", None),
                       uncertainty=dict(getattr(args, "uncertainty", []) or []),
                       residual=getattr(args, "residual", None))


def _check_outputs(args) -> str | None:
    from pathlib import Path

    for opt, path, kinds in (("--csv", args.csv, (".csv",)), ("--report", args.report, (".html", ".htm", ".pdf"))):
        if not path:
            continue
        if not path.lower().endswith(kinds):
            return f"{opt} {path}: name the file {' or '.join(kinds)}"
        if Path(path).exists() and not args.force:
            return f"{path} exists already; use --force to replace it"
    return None


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.limits import read_limits
    from refplane.batch import collect_files, run_checks

    limits = list(args.limits)
    if args.limit_file:
        limits.extend(read_limits(args.limit_file))
    if not limits:
        return _fail("give at least one --limit EXPR or a --limits FILE")
    if args.jobs is not None and args.jobs < 1:
        return _fail("--jobs needs a number of processes, 1 or more")
    if args.port < 1:
        return _fail(f"port {args.port} does not exist; ports are numbered from 1")
    problem = _check_outputs(args)
    if problem:
        return _fail(problem)
    prep = preparation_from_args(args)
    files = collect_files(args.paths)
    progress = _Progress(sys.stderr) if sys.stderr.isatty() else None
    try:
        batch = run_checks(files, limits, prep, jobs=args.jobs, progress=progress)
    finally:
        if progress:
            progress.close()

    if args.csv:
        from refplane.batch import write_check_csv

        write_check_csv(batch, args.csv, overwrite=args.force)
    if args.report:
        from refplane.report.build import report_for_paths

        readable = [f.file for f in batch.files if f.decision != "unreadable"]
        report_for_paths(readable, args.report, limits=limits, prep=prep, overwrite=args.force,
                         batch=batch)
    if args.json:
        print_json(batch.json())
    else:
        _print_human(batch)
        for path in (args.csv, args.report):
            if path:
                print(f"wrote {path}")
    return batch.exit_status


def _print_human(batch) -> None:
    from refplane.analysis.limits import format_number

    word = {"pass": "pass", "fail": "FAIL", "indeterminate": "indeterminate", "unreadable": "unreadable"}
    for f in batch.files:
        if f.decision == "unreadable":
            print(f"{word[f.decision]:<13} {f.file}: {f.reason}")
            continue
        print(f"{word[f.decision]:<13} {f.file}")
        for r in f.results:
            if r.decision != "pass":
                print(f"{'':<15}{r.sentence()}")
    rows = []
    for st in batch.statistics:
        unit = f" {st.limit.unit}" if st.limit.unit else ""
        rows.append([st.limit.text, str(st.count), format_number(st.mean) + unit, format_number(st.spread) + unit,
                     format_number(st.worst) + unit, format_number(st.cpk) if st.cpk is not None else "—"])
    if rows:
        print()
        print("across the batch (each file's worst reading in the band):")
        print(format_table(["limit", "files", "mean", "spread", "worst", "Cpk"], rows))
    s = batch.summary
    print()
    print(f"{s['files']} files: {s['passed']} passed, {s['failed']} failed, {s['indeterminate']} indeterminate, "
          f"{s['unreadable']} unreadable")
    rules = sorted({r.rule for f in batch.files for r in f.results})
    for rule in rules:
        print(f"decision rule: {rule}")
    if any(st.cpk is not None for st in batch.statistics):
        print("Cpk: one-sided (limit − mean)/(3·spread) or (mean − limit)/(3·spread) "
              "(NIST/SEMATECH e-Handbook of Statistical Methods, 6.1.6)")
