"""``refplane fit``: name a part's parasitics by fitting an equivalent circuit to its sweep."""

from __future__ import annotations

import argparse

from refplane.cli.common import arg_type, format_table, print_json

# Kept here as plain text so that `refplane --help` does not import the analysis modules.
_MODEL_IDS = ("auto", "series-rl", "series-rc", "series-rlc", "parallel-rc", "parallel-rl",
              "parallel-rlc", "resistor-leads", "capacitor", "inductor")

_EPILOG = """\
models and their parameter keys (SI units):
  series-rl       r_ohm, l_h             Z = R + jωL
  series-rc       r_ohm, c_f             Z = R + 1/(jωC)
  series-rlc      r_ohm, l_h, c_f        Z = R + jωL + 1/(jωC)
  parallel-rc     r_ohm, c_f             Y = 1/R + jωC
  parallel-rl     r_ohm, l_h             Y = 1/R + 1/(jωL)
  parallel-rlc    r_ohm, l_h, c_f        Y = 1/R + 1/(jωL) + jωC
  resistor-leads  r_ohm, l_h, c_f        (R + jωL) bridged by C
  capacitor       esr_ohm, esl_h, c_f    ESR + jω·ESL + 1/(jωC)  (series-rlc, capacitor names)
  inductor        r_ohm, l_h, c_f        (R + jωL) bridged by C  (resistor-leads, inductor reading)
  auto            fit every circuit, rank by AICc, keep the simplest adequate one

through mountings (2-port sweeps, both ports at one real Z0):
  --through series   part in series between the ports:  Z = 2·Z0·(1 − S21)/S21
  --through shunt    part from the line to ground:      Z = Z0·S21/(2·(1 − S21))
"""


def add_parser(sub: argparse._SubParsersAction) -> None:
    from refplane.analysis.units import parse_band

    p = sub.add_parser(
        "fit", help="fit an equivalent circuit (R, L, C, ESR, ESL, self-resonance)",
        description="Fit an equivalent circuit to a sweep and name its parts with standard errors: "
                    "lead inductance, ESR, ESL, winding capacitance, self-resonant frequency.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("file", help="Touchstone (.s1p, .s2p, …, .ts) or CSV sweep")
    p.add_argument("--model", default="auto", choices=_MODEL_IDS, metavar="MODEL",
                   help="circuit to fit: " + ", ".join(_MODEL_IDS) + " (default auto)")
    p.add_argument("--band", dest="band_hz", type=arg_type(parse_band, "band"), metavar="F1:F2",
                   help="fit only the swept points inside this band, e.g. 100MHz:1GHz")
    p.add_argument("--port", type=int, default=None, metavar="N",
                   help="fit the reflection S_NN of port N (needed for a sweep of more than one port); "
                        "with --through, the driving port (1: S21, 2: S12)")
    p.add_argument("--through", choices=("series", "shunt"), default=None,
                   help="fit a 2-port sweep from transmission, the part mounted in series or in shunt")
    p.add_argument("--json", action="store_true", help="print JSON instead of a sentence and a table")
    from refplane.cli.uncertainty_options import _parse_residual

    g = p.add_argument_group(
        "uncertainty", "Add the calibration's systematic errors to the fit's statistical ones: each "
        "parameter then carries a combined expanded uncertainty (k = 2), found by refitting draws.")
    g.add_argument("--residual", type=arg_type(_parse_residual, "residual terms"), metavar="D,M,T",
                   help="corrected directivity, source match (dB) and tracking (±dB), e.g. 40dB,35dB,0.1dB")
    g.add_argument("--cal", metavar="CAL.json",
                   help="apply a saved calibration to the raw sweep first and count its propagated uncertainty")
    g.add_argument("--u-draws", type=int, default=60, metavar="N",
                   help="refits for the systematic part (default 60)")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from refplane.analysis.circuits.fitting import fit_sweep, ranking_rows
    from refplane.analysis.files.loading import read_sweep
    from refplane.analysis.units import format_frequency, format_si

    from refplane.analysis.uncertainty.fitunc import fit_uncertainty

    sweep = read_sweep(args.file)
    cal_u = None
    if args.cal:
        from refplane.analysis.calibration.calfile import load_calibration
        from refplane.analysis.calibration.solve import correct

        cal = load_calibration(args.cal)
        sweep = correct(cal, sweep, interpolate=True).sweep
        cal_u = cal.uncertainty
    result = fit_sweep(sweep, model=args.model, band_hz=args.band_hz, port=args.port, through=args.through)
    unc = None
    if result.measurement == "reflection" or (args.residual is None and cal_u is None):
        if cal_u is not None and result.port != 1:
            cal_u = None
        unc = fit_uncertainty(result, sweep.freq_hz, sweep.reflection(result.port) if result.measurement ==
                              "reflection" else sweep.s[:, 1, 0], residual=args.residual, calibration=cal_u,
                              draws=args.u_draws)
    if args.json:
        out = {"file": args.file, **result.json()}
        if unc is not None:
            out["combined"] = unc.json()
        print_json(out)
        return 0
    low, high = result.band_hz
    if result.measurement == "reflection":
        what = f"reflection of port {result.port}"
    else:
        what = f"{result.measurement} transmission (driven from port {result.port})"
    print(f"{args.file}: {what}, {result.n_points} points, "
          f"{format_frequency(low)} to {format_frequency(high)}, reference {result.z0_ohm:g} Ω")
    print(result.sentence())
    print()
    if unc is not None and unc.draws:
        from refplane.analysis.circuits.fitting import format_with_error
        from refplane.analysis.circuits.models import unit_of

        rows = [(k, v, e, format_with_error(result.params[k], unc.expanded[k], unit_of(k)).partition(" ± ")[2])
                for k, v, e in result.table_rows()]
        print(format_table(["parameter", "value", "std. error", "combined U (k = 2)"],
                           [(k, v, e, f"± {c}" if c else "—") for k, v, e, c in rows]))
        print(f"combined U: the fit's statistical error and the systematic part from {unc.draws} refits "
              f"({'; '.join(unc.sources)}), about 95 %")
    else:
        print(format_table(["parameter", "value", "std. error"], result.table_rows()))
    derived = []
    if "srf_hz" in result.derived:
        from refplane.analysis.circuits.fitting import format_with_error

        srf = result.derived["srf_hz"]
        derived.append(("self-resonance",
                        format_with_error(srf, result.derived.get("srf_hz_stderr", float("nan")), "Hz")
                        if srf == srf else "none"))
    derived.append((f"Q at {format_si(result.derived['q_at_hz'], 'Hz', 4)}", f"{result.derived['q']:.4g}"))
    print()
    print(format_table(["derived", "value"], derived))
    if len(result.ranking) > 1:
        print()
        how = "chosen automatically: " if result.automatic else ""
        print(f"{how}candidates by AICc (lower is better; within 2 of the best the simplest is kept)")
        print(format_table(["model", "parameters", "ΔAICc", "residual"],
                           ranking_rows(result)))
    return 0
