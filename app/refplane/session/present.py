"""Every rule that turns a number into text: marker cells, the difference row, trace labels,
hover text, the one-line summary, fit and plane-estimate sentences, copied tables.

The window's marker table, the command line's table, the legend of a rendered chart and
the report all format through here, so they cannot disagree. Nothing here computes RF
values: it takes readouts and results from the analysis layer and writes them down.

Two families of text live side by side:

- *display* text, for people: scaled units ("9.146 nH"), the true minus sign "−", thin
  grouping of thousands;
- *sheet* text (:func:`sheet_rows`), for spreadsheets: plain numbers in one fixed unit per
  column named in the header, ASCII minus, no grouping, so a copied table can be summed.
"""

from __future__ import annotations

import math
from typing import Mapping, Sequence

from refplane.analysis.readings.impedance import Readout
from refplane.analysis.units import format_frequency, format_si

#: Text of a quantity that is not defined for this reading (VSWR of an active load).
NOT_DEFINED_ACTIVE = "n/a (|Γ| > 1)"


def number(value: float, unit: str, decimals: int = 2) -> str:
    """A value with a fixed number of decimals and its unit: "75.20 Ω", "−∞ dB", "—" for NaN."""
    if math.isnan(value):
        return "—"
    if math.isinf(value):
        return f"{'−∞' if value < 0 else '∞'} {unit}".strip()
    text = f"{value:,.{decimals}f}".replace(",", " ").replace("-", "−")
    return f"{text} {unit}".strip()


def series_part(r: Readout) -> tuple[str, str]:
    """The equivalent series element as (label, value): ("L", "9.14 nH") or ("C", "3.39 pF")."""
    if not math.isnan(r.series_l_h):
        return "L", format_si(r.series_l_h, "H", 4)
    if not math.isnan(r.series_c_f):
        return "C", format_si(r.series_c_f, "F", 4)
    return "L/C", "—"


def _active(r: Readout) -> bool:
    return math.isfinite(r.gamma_mag) and r.gamma_mag > 1.0


def _u_decimals(u: float) -> int:
    """Decimal places that show an expanded uncertainty to one significant figure, or two when
    its first digit is 1 or 2 (GUM, JCGM 100, 7.2.6: at most two significant figures)."""
    exponent = math.floor(math.log10(u))
    lead = u / 10**exponent
    return max(0, -exponent + (1 if lead < 2.95 else 0))


def format_pm(value: float, u: float | None, unit: str, *, si: bool = False) -> str:
    """A value with its expanded uncertainty: "77.6 ± 0.8 Ω", "8.92 nH ± 0.31 nH".

    The value is rounded to the uncertainty's last shown digit. Without a finite ``u`` the
    plain value is returned (as :func:`number` or :func:`format_si` would show it).

    Examples
    --------
    >>> format_pm(77.634, 0.81, "Ω")
    '77.6 ± 0.8 Ω'
    >>> format_pm(8.923e-9, 0.27e-9, "H", si=True)
    '8.92 nH ± 0.27 nH'
    """
    if u is None or not math.isfinite(u) or not math.isfinite(value):
        return format_si(value, unit, 4) if si else number(value, unit)
    if si:
        num, _, prefixed = format_si(value, unit, 6).partition(" ")
        scale = value / float(num) if float(num) != 0 else 1.0
        scale = abs(scale)
    else:
        prefixed, scale = unit, 1.0
    shown_u = u / scale
    if shown_u == 0:
        return f"{number(value / scale, prefixed, 4)} ± 0"
    d = _u_decimals(shown_u)
    v_text = f"{value / scale:,.{d}f}".replace(",", " ").replace("-", "−")
    u_text = f"{shown_u:.{d}f}"
    if si:
        return f"{v_text} {prefixed} ± {u_text} {prefixed}".strip()
    return f"{v_text} ± {u_text} {unit}".strip()


def _cells_with_u(r: Readout, u: Mapping) -> dict[str, str]:
    def pm(key, unit, si=False):
        return format_pm(getattr(r, key), u.get(key), unit, si=si)

    if not math.isnan(r.series_l_h):
        series = f"L {pm('series_l_h', 'H', True)}"
    elif not math.isnan(r.series_c_f):
        series = f"C {pm('series_c_f', 'F', True)}"
    else:
        series = "—"
    active = _active(r)
    return {
        "Frequency": format_frequency(r.freq_hz),
        "R": pm("r_ohm", "Ω"),
        "X": pm("x_ohm", "Ω"),
        "Series L/C": series,
        "|Z|": pm("z_mag_ohm", "Ω"),
        "|Γ|": pm("gamma_mag", ""),
        "∠Γ": pm("gamma_deg", "°"),
        "VSWR": NOT_DEFINED_ACTIVE if active else pm("vswr", ""),
        "Return loss": pm("return_loss_db", "dB"),
        "Q": pm("q", ""),
        "Parallel R": pm("parallel_r_ohm", "Ω"),
        "Parallel X": pm("parallel_x_ohm", "Ω"),
    }


def readout_cells(r: Readout, u: Mapping | None = None) -> dict[str, str]:
    """A single-point readout as ordered display cells, label → text with scaled units.

    ``u`` (optional): expanded uncertainties keyed like :meth:`Readout.json_point`
    (e.g. ``ReadoutUncertainty.json_point()``); the cells then read "77.6 ± 0.8 Ω".
    """
    if u is not None:
        return _cells_with_u(r, u)
    kind, value = series_part(r)
    active = _active(r)
    return {
        "Frequency": format_frequency(r.freq_hz),
        "R": number(r.r_ohm, "Ω"),
        "X": number(r.x_ohm, "Ω"),
        "Series L/C": f"{kind} {value}" if value != "—" else "—",
        "|Z|": number(r.z_mag_ohm, "Ω"),
        "|Γ|": number(r.gamma_mag, "", 4),
        "∠Γ": number(r.gamma_deg, "°", 1),
        # VSWR is not defined for |Γ| > 1 (an active or mis-calibrated reading).
        "VSWR": NOT_DEFINED_ACTIVE if active else number(r.vswr, "", 3),
        "Return loss": number(r.return_loss_db, "dB"),
        "Q": number(r.q, "", 3),
        "Parallel R": number(r.parallel_r_ohm, "Ω"),
        "Parallel X": number(r.parallel_x_ohm, "Ω"),
    }


def impedance_text(r: Readout) -> str:
    """R ± jX as one piece of text: "75.20 Ω + j27.01 Ω" (or "open (Z = ∞)")."""
    if math.isinf(r.r_ohm):
        return "open (Z = ∞)"
    sign = "+" if r.x_ohm >= 0 else "−"
    return f"{number(r.r_ohm, 'Ω')} {sign} j{number(abs(r.x_ohm), 'Ω')}"


def summary_line(r: Readout) -> str:
    """A one-line reading for legends: "470 MHz: 75.20 Ω + j27.01 Ω (L 9.146 nH), VSWR 1.81"."""
    kind, value = series_part(r)
    series = f" ({kind} {value})" if value != "—" else ""
    vswr = NOT_DEFINED_ACTIVE if _active(r) else number(r.vswr, "", 2)
    return f"{format_frequency(r.freq_hz)}: {impedance_text(r)}{series}, VSWR {vswr}"


def summary_line_with_u(r: Readout, u: Mapping) -> str:
    """"470 MHz: 77.6 ± 0.8 Ω + j26.4 ± 0.9 Ω (L 8.92 nH ± 0.31 nH), VSWR 1.81 ± 0.02 (k = 2)"."""
    if math.isinf(r.r_ohm):
        return summary_line(r)
    sign = "+" if r.x_ohm >= 0 else "−"
    rx = format_pm(r.r_ohm, u.get("r_ohm"), "Ω")
    xx = format_pm(abs(r.x_ohm), u.get("x_ohm"), "Ω")
    if not math.isnan(r.series_l_h):
        series = f" (L {format_pm(r.series_l_h, u.get('series_l_h'), 'H', si=True)})"
    elif not math.isnan(r.series_c_f):
        series = f" (C {format_pm(r.series_c_f, u.get('series_c_f'), 'F', si=True)})"
    else:
        series = ""
    vswr = NOT_DEFINED_ACTIVE if _active(r) else format_pm(r.vswr, u.get("vswr"), "")
    return f"{format_frequency(r.freq_hz)}: {rx} {sign} j{xx}{series}, VSWR {vswr} (k = 2)"


def trace_label(name: str, port: int) -> str:
    """A trace as lists, legends and the marker table name it: "name · S11"."""
    return f"{name} · S{port}{port}"


#: Rows of the difference column: label → (Readout field, unit, decimals).
DELTA_ROWS = {
    "Frequency": ("freq_hz", "Hz", 0),
    "R": ("r_ohm", "Ω", 2),
    "X": ("x_ohm", "Ω", 2),
    "|Z|": ("z_mag_ohm", "Ω", 2),
    "|Γ|": ("gamma_mag", "", 4),
    "∠Γ": ("gamma_deg", "°", 1),
    "VSWR": ("vswr", "", 3),
    "Return loss": ("return_loss_db", "dB", 2),
}


def delta_cells(a: Readout, b: Readout) -> dict[str, str]:
    """Cells of b − a for the rows in :data:`DELTA_ROWS`; other rows are left out.

    The decimals are the marker cells' own, so a difference never shows more digits than
    the values it comes from.
    """
    out = {}
    for label, (field, unit, decimals) in DELTA_ROWS.items():
        d = getattr(b, field) - getattr(a, field)
        if not math.isfinite(d):
            out[label] = "—"
        elif label == "Frequency":
            out[label] = ("+" if d >= 0 else "−") + format_frequency(abs(d), 6)
        else:
            text = f"{d:+.{decimals}f}"
            if float(text) == 0:
                text = f"{0:.{decimals}f}"
            out[label] = f"{text} {unit}".replace("-", "−").strip()
    return out


def delta_label(number_a: int, number_b: int) -> str:
    """The difference row's name: "marker 2 − marker 1"."""
    return f"marker {number_b} − marker {number_a}"


def hover_text(gamma: complex, z_ohm: complex, z0_ohm: float,
               near: tuple[str, float] | None = None) -> str:
    """The chart's hover line for a position: normalised z, Z in ohms and the nearest trace point.

    ``near`` is (trace name, frequency) when the cursor is close to a trace.
    """
    if abs(gamma) > 1.0:
        return "Outside the chart (|Γ| > 1)"
    if math.isinf(z_ohm.real):
        text = "z = ∞ (open)"
    else:
        zn = z_ohm / z0_ohm
        text = (f"z = {zn.real:.3f} {'+' if zn.imag >= 0 else '−'} j{abs(zn.imag):.3f}   "
                f"Z = {z_ohm.real:.2f} {'+' if z_ohm.imag >= 0 else '−'} j{abs(z_ohm.imag):.2f} Ω "
                f"(ref. {z0_ohm:g} Ω)")
    if near is not None:
        # On a line of its own: on a narrow chart one long line would lose its end.
        text = f"{text}\n{format_frequency(near[1], 6)} on {near[0]}"
    return text


# --------------------------------------------------------------------------- fits
#: Fit parameter keys in words, for people who do not read code keys; per model where the same
#: key means a different part (the inductance of a resistor model is its leads').
PARAMETER_WORDS = {"r_ohm": "Resistance", "l_h": "Inductance", "c_f": "Capacitance"}
MODEL_PARAMETER_WORDS = {
    ("resistor-leads", "l_h"): "Lead inductance",
    ("resistor-leads", "c_f"): "Shunt capacitance",
    ("capacitor", "r_ohm"): "Series resistance (ESR)",
    ("capacitor", "l_h"): "Series inductance (ESL)",
    ("inductor", "r_ohm"): "Winding resistance",
    ("inductor", "c_f"): "Winding capacitance",
}


def parameter_words(key: str, model_id: str | None = None) -> str:
    """A fit parameter's key in words ("l_h" of "resistor-leads" → "Lead inductance")."""
    if (model_id, key) in MODEL_PARAMETER_WORDS:
        return MODEL_PARAMETER_WORDS[(model_id, key)]
    if key in PARAMETER_WORDS:
        return PARAMETER_WORDS[key]
    return key.replace("_", " ").capitalize()


def fit_sentence(result) -> str:
    """The fit in one plain sentence (the same sentence ``refplane fit`` prints)."""
    return result.sentence()


def fit_parameter_rows(result, *, words: bool = True) -> list[tuple[str, str, str]]:
    """(parameter, value, ± error) rows; parameter names in words unless ``words`` is false."""
    rows = result.table_rows()
    return [((parameter_words(k, result.model_id) if words else k), v, e) for k, v, e in rows]


def fit_ranking_rows(result) -> list[tuple[str, str, str, str]]:
    """(model, parameters, ΔAICc, residual) rows of a fit's candidates, best first."""
    from refplane.analysis.circuits.fitting import format_percent

    return [(r.model_id, str(r.n_params), f"{r.delta_aicc:.1f}", format_percent(r.residual_rel))
            for r in result.ranking]


#: Why a marker's series-equivalent L differs from a fitted lead inductance.
SERIES_VS_FITTED_NOTE = (
    "The marker's series L is the whole reactance at one frequency written as one inductor; "
    "the fitted lead inductance is one part of a circuit fitted over the band. They differ when "
    "other parts (a shunt capacitance, a resistance that changes with frequency) add reactance.")


# --------------------------------------------------------------------- plane estimate
def estimate_sentence(est) -> str:
    """The plane estimate in one sentence, as the reference-plane panel shows it."""
    length = f", {format_si(est.length_m, 'm', 5)}" if est.length_m is not None else ""
    verdict = est.verdict()
    dielectric = getattr(est, "dielectric_loss_db", 0.0) or 0.0
    loss = f"{est.loss_db:.3f} dB" + (f" + {dielectric:.3f} dB dielectric" if dielectric else "")
    phase = " (with its skin-effect phase)" if getattr(est, "skin_phase", False) else ""
    return (f"Found {format_si(est.delay_s, 's', 5)}{length}, {loss}{phase} at "
            f"{format_frequency(est.loss_ref_hz)}; residual {est.residual:.4f}. "
            f"{verdict[:1].upper()}{verdict[1:]}.")


# -------------------------------------------------------------------------- sheets
#: Sheet columns of a marker row: header (with unit) → Readout field and scale.
SHEET_COLUMNS = (
    ("Frequency (Hz)", "freq_hz", 1.0),
    ("R (ohm)", "r_ohm", 1.0),
    ("X (ohm)", "x_ohm", 1.0),
    ("Series L (nH)", "series_l_h", 1e9),
    ("Series C (pF)", "series_c_f", 1e12),
    ("|Z| (ohm)", "z_mag_ohm", 1.0),
    ("|Gamma|", "gamma_mag", 1.0),
    ("Angle of Gamma (deg)", "gamma_deg", 1.0),
    ("VSWR", "vswr", 1.0),
    ("Return loss (dB)", "return_loss_db", 1.0),
    ("Q", "q", 1.0),
    ("Parallel R (ohm)", "parallel_r_ohm", 1.0),
    ("Parallel X (ohm)", "parallel_x_ohm", 1.0),
)


def sheet_number(value: float) -> str:
    """A number a spreadsheet reads: ASCII minus, no grouping, empty for NaN or infinity."""
    if value is None or not math.isfinite(value):
        return ""
    return repr(float(value)) if abs(value) >= 1e-3 or value == 0 else f"{value:.9g}"


def sheet_rows(rows: Sequence[tuple[str, str, Readout]]) -> list[list[str]]:
    """A header row and one row per (marker, trace label, readout), plain numbers for a sheet."""
    out = [["Marker", "Trace"] + [h for h, _f, _s in SHEET_COLUMNS]]
    for marker, trace, r in rows:
        cells = []
        for _h, field, scale in SHEET_COLUMNS:
            value = getattr(r, field)
            if field == "vswr" and isinstance(r, Readout) and _active(r):
                value = math.nan
            cells.append(sheet_number(value * scale if math.isfinite(value) else value))
        out.append([marker, trace] + cells)
    return out


def difference_values(a: Readout, b: Readout):
    """b − a of every sheet column's quantity, as an object with the same attribute names."""
    from types import SimpleNamespace

    return SimpleNamespace(**{field: getattr(b, field) - getattr(a, field) for _h, field, _s in SHEET_COLUMNS})


def sheet_text(rows: Sequence[Sequence[str]], *, delimiter: str = "\t") -> str:
    """Rows as delimited text (tab for the clipboard, comma for a CSV file), quoting as needed."""
    import csv
    import io

    buf = io.StringIO()
    csv.writer(buf, delimiter=delimiter, lineterminator="\n").writerows(rows)
    return buf.getvalue()


def legend_lines_of(traces, markers) -> list[str]:
    """The legend of a picture as plain text: a line per trace, then "n  summary" per marker."""
    lines = [t.label for t in traces]
    lines += [f"{m.number}  {m.summary}" for m in markers]
    return lines


def picture_notes(memory_name: str | None, chart_z0_ohm: float | None, found: Sequence[str] = ()) -> list[str]:
    """Lines a picture adds under its legend: the stored trace, the chart's reference, searches."""
    lines = []
    if memory_name is not None:
        lines.append(f"thin dashed: memory of {memory_name}" if not memory_name.startswith("memory")
                     else f"thin dashed: {memory_name}")
    if chart_z0_ohm is not None:
        lines.append(f"chart and readings against {chart_z0_ohm:g} Ω")
    lines += list(found)
    return lines


def mapping_text(cells: Mapping[str, str]) -> str:
    """Cells as "label value" pairs on one line, for status bars and tooltips."""
    return ", ".join(f"{k} {v}" for k, v in cells.items())


def vswr_band_sentence(trace_label_text: str, vswr_limit: float, low_hz: float, high_hz: float) -> str:
    """The band where VSWR ≤ s in one line: edges, width (absolute and as a fraction) and centre.

    The centre is the arithmetic mean of the edges, as band plans state it (common practice).
    """
    from refplane.analysis.units import format_frequency

    width = high_hz - low_hz
    centre = 0.5 * (low_hz + high_hz)
    fraction = f" ({100.0 * width / centre:.2f} %)" if centre > 0 else ""
    return (f"{trace_label_text}: VSWR ≤ {vswr_limit:g} from {format_frequency(low_hz, 6)} to "
            f"{format_frequency(high_hz, 6)}, width {format_frequency(width, 5)}{fraction}, "
            f"centre {format_frequency(centre, 6)}")
