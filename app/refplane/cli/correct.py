"""``refplane correct``: calibrate from measured standards and correct saved device sweeps."""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

_EPILOG = """\
examples:
  refplane correct --short s.s1p --open o.s1p --load l.s1p dut.s1p -o dut_fixed.s1p
  refplane correct --short s.s1p --open o.s1p --load l.s1p --standards kit.json \\
                   --save-cal port1.json
  refplane correct --cal port1.json sweeps/*.s1p -o corrected/
  refplane correct --short s.s2p --open o.s2p --load l.s2p --through t.s2p \\
                   --isolation i.s2p amp.s2p -o amp_fixed.s2p
  refplane correct --cal port1.json --standards kit.json --recheck open=o2.s1p --recheck load=l2.s1p
  refplane correct --short s.s1p --open o.s1p --load l.s1p --standards kit.json dut.s1p \\
                   -o dut_fixed.s1p --write-u csv --json

The calibration doctor looks at every calibration: standards that look swapped, an offset
delay missing from the kit description, steps in the error terms (a connector moved),
passive devices reading |Γ| > 1, check standards against their uncertainty, and with
--recheck standards measured again later against a saved calibration (drift). Each finding
is one sentence with its band; the verdict is good, usable with care, or redo it.
The uncertainty propagated from the standards (their "_u" values in the standards file and
their sweeps' noise) is saved with --save-cal, and --write-u writes every corrected
device's readouts with their expanded uncertainties (k = 2) beside its Touchstone file.

Corrected files are Touchstone, named <input name>_corrected.sNp inside a folder when
several devices are given. Inputs are never overwritten; existing outputs only with --force.
The quality verdict, the doctor's findings and any warnings go to stderr (or, with --json,
into one JSON object on stdout).

Caution when measuring the standards: discharge long cables before connecting them to the
analyzer, and never connect a line that a transmitter may still feed.
"""


def _named_file(text: str) -> tuple[str, str]:
    name, sep, path = text.partition("=")
    if not sep or not name.strip() or not path.strip():
        raise argparse.ArgumentTypeError(f"{text!r}: write it as NAME=FILE")
    return name.strip(), path.strip()


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "correct", help="calibrate from measured standards and correct sweeps",
        description="Solve the error terms of port 1 from measured short, open and load "
                    "(and, for S21, a through and optionally an isolation measurement), then "
                    "write corrected copies of device sweeps. Or save the error terms with "
                    "--save-cal and apply them later with --cal.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("duts", nargs="*", metavar="DUT", help="device sweep(s) to correct")
    p.add_argument("-o", "--output", metavar="OUT",
                   help="output file (one device) or folder (several devices)")
    g = p.add_argument_group("measured standards")
    g.add_argument("--short", metavar="S", help="sweep of the short")
    g.add_argument("--open", metavar="O", help="sweep of the open")
    g.add_argument("--load", metavar="L", help="sweep of the load")
    g.add_argument("--through", metavar="T", help="2-port sweep of the through (corrects S21)")
    g.add_argument("--isolation", metavar="I",
                   help="2-port sweep with both ports terminated (leakage to subtract)")
    g.add_argument("--extra", action="append", default=[], type=_named_file, metavar="NAME=FILE",
                   help="a further standard defined under 'additional' in the standards file "
                        "(repeatable; more than three standards are solved by least squares)")
    g.add_argument("--check", action="append", default=[], type=_named_file, metavar="NAME=FILE",
                   help="a check standard defined under 'checks' in the standards file; "
                        "compared with its definition after correction (repeatable)")
    g.add_argument("--standards", metavar="STD.json",
                   help="definitions of the standards (default: ideal short, open, load, through)")
    c = p.add_mutually_exclusive_group()
    c.add_argument("--save-cal", metavar="CAL.json", help="save the error terms to this file")
    c.add_argument("--cal", metavar="CAL.json", help="use saved error terms instead of standards")
    g.add_argument("--recheck", action="append", default=[], type=_named_file, metavar="NAME=FILE",
                   help="a standard measured again later (short, open, load or a defined one); with --cal, "
                        "judged against the saved calibration to see whether it has drifted (repeatable)")
    p.add_argument("--write-u", choices=("csv", "json"), default=None,
                   help="also write each corrected device's readouts with their expanded uncertainties "
                        "beside it: <output stem>_u.csv or _u.json")
    p.add_argument("--json", action="store_true",
                   help="print the calibration, the doctor's findings and the files written as JSON")
    p.add_argument("--diagnose", action="store_true",
                   help="solve the calibration and report the doctor's findings only (no device needed)")
    p.add_argument("--interpolate", action="store_true",
                   help="allow sweeps on other frequencies (interpolated, with a warning); "
                        "by default mismatched frequencies are refused")
    p.add_argument("--force", action="store_true", help="replace existing output files")
    p.set_defaults(run=run)


def _fail(message: str) -> int:
    print(f"refplane correct: {message}", file=sys.stderr)
    return 2


def _same(a: str | os.PathLike, b: str | os.PathLike) -> bool:
    try:
        return Path(a).resolve() == Path(b).resolve()
    except OSError:
        return False


def _output_paths(duts, sweeps, output: str) -> list[Path]:
    from refplane.analysis.errors import AnalysisError

    out = Path(output)
    several = len(duts) > 1
    if several and out.exists() and not out.is_dir():
        raise AnalysisError("with several devices -o must name a folder, and this is a file", file=output)
    if several or out.is_dir() or output.endswith(("/", os.sep)):
        paths = [out / f"{Path(d).stem}_corrected.s{s.n_ports}p" for d, s in zip(duts, sweeps)]
    else:
        want = f".s{sweeps[0].n_ports}p"
        if out.suffix.lower() != want:
            raise AnalysisError(f"name the output {want} (the device is a {sweeps[0].n_ports}-port sweep), "
                                "or give a folder", file=output)
        paths = [out]
    seen: dict[Path, str] = {}
    for d, p in zip(duts, paths):
        key = p.resolve()
        if key in seen:
            raise AnalysisError(f"{seen[key]} and {d} would both be written to {p}; "
                                "give the inputs different names")
        seen[key] = d
    return paths


def _several(args, paths) -> bool:
    """Whether -o names a folder of outputs (made if missing) rather than one file."""
    return len(paths) > 1 or Path(args.output).is_dir() or args.output.endswith(("/", os.sep))


def _check_can_make(folder: Path) -> None:
    """The nearest existing folder above ``folder`` must be writable (it will be made)."""
    from refplane.analysis.errors import AnalysisError

    above = folder
    while not above.exists() and above != above.parent:
        above = above.parent
    if not above.is_dir():
        raise AnalysisError(f"cannot make the folder: {above} is a file", file=folder)
    if not os.access(above, os.W_OK):
        raise AnalysisError(f"cannot make the folder: {above} is read-only", file=folder)


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.calibration.solve import calibrate, correct
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.files.fileio import check_output
    from refplane.analysis.files.loading import read_sweep

    standards_given = [n for n in ("short", "open", "load", "through", "isolation")
                       if getattr(args, n)] + (["extra"] if args.extra else []) + \
        (["check"] if args.check else []) + (["standards"] if args.standards and not args.recheck else [])
    if args.recheck and not args.cal:
        return _fail("--recheck compares standards measured again with a saved calibration: give --cal")
    if args.cal:
        if standards_given:
            return _fail("--cal already holds the error terms; leave out "
                         + ", ".join(f"--{n}" for n in standards_given))
    else:
        missing = [f"--{n}" for n in ("short", "open", "load") if not getattr(args, n)]
        if missing:
            return _fail(f"give {', '.join(missing)} (the measured standards), or --cal with saved error terms")
    if not args.duts and not args.save_cal and not args.recheck and not args.diagnose:
        return _fail("give at least one device sweep to correct (or --save-cal to only save the calibration, "
                     "or --diagnose to only hear the doctor)")
    if args.duts and not args.output:
        return _fail("give -o OUT: an output file for one device, a folder for several")
    if args.output and not args.duts:
        return _fail("-o was given but no device sweep to correct")

    inputs = [p for p in (args.short, args.open, args.load, args.through, args.isolation,
                          args.standards, args.cal) if p]
    inputs += [f for _, f in args.extra + args.check + args.recheck] + list(args.duts)
    if args.save_cal:
        if any(_same(args.save_cal, p) for p in inputs):
            return _fail(f"{args.save_cal} is one of the inputs; refusing to overwrite it")
        if Path(args.save_cal).exists() and not args.force:
            return _fail(f"{args.save_cal} exists already; use --force to replace it")
        check_output(args.save_cal, overwrite=True)  # writable? before any work

    # Read every device first: a bad one stops the run before anything is written.
    duts = [read_sweep(d) for d in args.duts]
    paths = _output_paths(args.duts, duts, args.output) if duts else []
    u_paths = [_u_path(p, args.write_u) for p in paths] if args.write_u else []
    for p in paths + u_paths:
        if any(_same(p, i) for i in inputs):
            return _fail(f"the output {p} is one of the inputs; refusing to overwrite it")
        if p.exists() and not args.force:
            return _fail(f"{p} exists already; use --force to replace it")
        if _several(args, paths):
            _check_can_make(p.parent)  # the output folder is made if need be
        else:
            check_output(p, overwrite=True)  # writable? checked before any work, not after

    from refplane.analysis.uncertainty.doctor import diagnose

    std = measured = checks = None
    if args.cal:
        from refplane.analysis.calibration.calfile import load_calibration

        cal = load_calibration(args.cal)
        if args.standards:
            from refplane.analysis.calibration.standards import load_standards

            std = load_standards(args.standards)
    else:
        cal, measured, checks, std = _calibrate_from_args(args, calibrate, read_sweep)
    # Every device is corrected before anything is written, so a bad one leaves no files behind.
    corrected = [correct(cal, d, interpolate=args.interpolate) for d in duts]
    recheck = {name: read_sweep(path) for name, path in args.recheck}
    if std is not None:
        for name in recheck:
            std.reflect(name)  # an unknown name stops here, with a plain message
    diagnosis = diagnose(cal, measured=measured, standards=std, checks=checks,
                         devices=[(d, r.sweep) for d, r in zip(args.duts, corrected)], recheck=recheck)

    log = sys.stderr
    print(f"calibration quality: {cal.quality}. {cal.verdict}".rstrip(), file=log)
    for w in cal.warnings:
        print(f"warning: {w}", file=log)
    for chk in cal.checks:
        print(chk.summary(), file=log)
    if not args.json:
        print(f"calibration doctor: {diagnosis.verdict}", file=log)
        for f in diagnosis.findings:
            print(f"  - {f.sentence}", file=log)
        for n in diagnosis.notes:
            print(f"  ({n})", file=log)
        if cal.uncertainty is None:
            print("  (no propagated uncertainty: this calibration file was saved without one)", file=log)
    written: list[str] = []
    if args.save_cal:
        from refplane.analysis.calibration.calfile import save_calibration

        save_calibration(cal, args.save_cal, overwrite=args.force)
        written.append(args.save_cal)
        if not args.json:
            print(f"saved error terms: {args.save_cal}")
    if paths:
        if _several(args, paths):
            try:
                Path(args.output).mkdir(parents=True, exist_ok=True)
            except OSError as exc:
                from refplane.analysis.files.fileio import path_problem

                raise AnalysisError(f"cannot make the folder: {path_problem(exc)}",
                                    file=args.output) from None
    from refplane.analysis.files import touchstone

    for i, (src, result, path) in enumerate(zip(args.duts, corrected, paths)):
        for w in result.warnings:
            print(f"warning: {w}", file=log)
        notes = (f"corrected copy of {src}",) + result.sweep.comments + \
            tuple(f"warning: {w}" for w in result.warnings)
        touchstone.write(result.sweep, path, comments=notes, overwrite=args.force)
        written.append(str(path))
        if not args.json:
            print(f"wrote {path}")
        if args.write_u:
            _write_u(u_paths[i], result.sweep, cal, src, args.force)
            written.append(str(u_paths[i]))
            if not args.json:
                print(f"wrote {u_paths[i]}")
    if args.json:
        from refplane.cli.common import print_json

        out = {
            "calibration": {"source": args.cal or "standards", "quality": cal.quality, "verdict": cal.verdict,
                            "warnings": list(cal.warnings), "checks": [c.summary() for c in cal.checks]},
            "doctor": diagnosis.json(),
            "uncertainty": _uncertainty_summary(cal),
            "written": written,
        }
        print_json(out)
    return 0


def _u_path(path: Path, kind: str) -> Path:
    return path.with_name(f"{path.stem}_u.{kind}")


def _write_u(path: Path, sweep, cal, src: str, force: bool) -> None:
    from refplane.analysis.uncertainty.export import write_uncertainty
    from refplane.analysis.uncertainty.reading import UncertaintyOptions, uncertain_points

    options = UncertaintyOptions(calibration=cal.uncertainty, noise="auto", interpolation=False, draws=4000)
    u = uncertain_points(sweep, sweep.freq_hz, port=1, options=options)
    sources = list(cal.uncertainty.sources) if cal.uncertainty is not None else \
        ["the calibration file holds no propagated uncertainty; trace noise only"]
    sources.append("trace noise of the device sweep (estimated from the sweep)")
    write_uncertainty(path, u, float(sweep.z0_ohm[0].real), sources=sources,
                      comments=(f"uncertainty of the corrected copy of {src} (port 1 reflection)",),
                      overwrite=force)


def _uncertainty_summary(cal) -> dict | None:
    import numpy as np

    cu = cal.uncertainty
    if cu is None:
        return None
    mags = cu.magnitudes()
    return {"sources": list(cu.sources), "noise": dict(cu.noise),
            "largest_standard_u": {k: float(np.max(v)) for k, v in mags.items()},
            "note": "standard uncertainties of the residual directivity, tracking and source match "
                    "propagated from the standards, largest over the band"}


def _calibrate_from_args(args, calibrate, read_sweep):
    import dataclasses

    from refplane.analysis.calibration.standards import StandardSet, load_standards
    from refplane.analysis.uncertainty.calprop import calibration_uncertainty

    std = load_standards(args.standards) if args.standards else StandardSet()
    measured = {"short": read_sweep(args.short), "open": read_sweep(args.open), "load": read_sweep(args.load)}
    for name, path in args.extra:
        measured[name] = read_sweep(path)
    checks = {name: read_sweep(path) for name, path in args.check}
    through = read_sweep(args.through) if args.through else None
    isolation = read_sweep(args.isolation) if args.isolation else None
    cal = calibrate(measured, std, through=through, isolation=isolation, checks=checks,
                    interpolate=args.interpolate)
    cal = dataclasses.replace(cal, uncertainty=calibration_uncertainty(measured, std))
    return cal, measured, checks, std
