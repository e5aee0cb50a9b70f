"""Reports a person can hand on: one section per sweep, as a self-contained HTML file or a PDF.

The builder takes plain values, so the command line, scripts and the window can all use it:

1. :func:`sweep_report` turns one (already corrected) sweep into a :class:`SweepReport`:
   markers read at chosen frequencies, an optional fit, limits tested;
2. :func:`build_html` writes any list of them (plus an optional batch summary) as one HTML
   document with every picture inline as SVG and no external link;
3. :func:`write_report` saves HTML or PDF (chosen by the file name), atomically;
4. :func:`report_for_paths` does all three for files on disk.

Every number shown comes through the same code as ``refplane read`` (``session.present.readout_cells``)
and ``refplane check`` (``limits.LimitResult``), so a report cannot disagree with them.
"""

from __future__ import annotations

import datetime as _dt
import os
from dataclasses import dataclass, field
from html import escape
from pathlib import Path
from typing import Sequence

from refplane.analysis.errors import AnalysisError
from refplane.analysis.limits import Limit, LimitResult, evaluate_limit, format_number
from refplane.analysis.sweep import Sweep

#: The cautions printed in every report (the same advice as the window's Help ▸ Working safely).
CAUTIONS = (
    "Never connect an analyzer port to a transmitter or to an antenna system a transmitter may "
    "still feed; switch the transmitter off and disconnect it first.",
    "Discharge antennas and long cables before connecting them (briefly join centre conductor "
    "and shield): a static charge can damage the analyzer's port.",
    "Respect the analyzer's maximum input level and use a DC block where a DC voltage may be present.",
    "RF exposure limits apply whenever an antenna is driven. Follow local codes and licensed practice.",
    "Readings between swept points are interpolated; a decision is only as good as the calibration, "
    "the connectors and the cables it was measured with.",
)


@dataclass(frozen=True, eq=False)
class LimitLine:
    """A limit as reported for one sweep: its result, or why it could not be tested."""

    limit: Limit
    result: LimitResult | None = None
    error: str = ""

    @property
    def decision(self) -> str:
        """"pass", "fail", "indeterminate", or "not tested"."""
        return self.result.decision if self.result is not None else "not tested"


@dataclass(frozen=True, eq=False)
class SweepReport:
    """Everything one report section shows about one sweep.

    Attributes
    ----------
    sweep : Sweep
        The sweep as analysed (after calibration and offsets).
    file : str or None
        The file it was read from.
    sha256 : str or None
        SHA-256 of that file's bytes.
    port : int
        The port whose reflection is shown and read.
    notes : tuple of str
        What was applied: calibration, removed lines.
    warnings : tuple of str
        Warnings from reading and correcting.
    readings : PointReadings or None
        Markers read at the chosen frequencies.
    fit_sentence : str or None
        The equivalent-circuit fit in one sentence, when a fit was asked for.
    limits : tuple of LimitLine
    marker_u : tuple of (dict or None), optional
        Expanded uncertainties (k = 2) of each marker's readings, keyed like the JSON point.
    u_sources : str
        What the uncertainties are made of, in words.
    """

    sweep: Sweep
    file: str | None
    sha256: str | None
    port: int = 1
    notes: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()
    readings: object | None = None
    fit_sentence: str | None = None
    limits: tuple[LimitLine, ...] = field(default_factory=tuple)
    marker_u: tuple | None = None
    u_sources: str = ""

    @property
    def decision(self) -> str | None:
        """The sweep's decision over its limits, or None without limits."""
        if not self.limits:
            return None
        kinds = {line.decision for line in self.limits}
        for d in ("fail", "not tested", "indeterminate"):
            if d in kinds:
                return d
        return "pass"


def sweep_report(sweep: Sweep, *, file: str | None = None, sha256: str | None = None, port: int = 1,
                 at_hz: Sequence[float] = (), limits: Sequence[Limit] = (), fit_model: str | None = None,
                 notes: Sequence[str] = (), warnings: Sequence[str] = (), uncertainty: dict | None = None
                 ) -> SweepReport:
    """Prepare one report section from a sweep that is already corrected.

    Parameters
    ----------
    sweep : Sweep
    file, sha256 : str, optional
        Where the sweep came from (the SHA-256 is computed from ``file`` when not given).
    port : int
        Port whose reflection is drawn and read.
    at_hz : sequence of float
        Marker frequencies (inside the sweep).
    limits : sequence of Limit
        Tested over the sweep; a limit that cannot be tested (its band outside the sweep,
        transmission on a one-port) is reported with the reason.
    fit_model : str, optional
        Fit this equivalent-circuit model ("auto" to choose) and report its sentence.
    notes, warnings : sequence of str
        What was applied to the sweep, and warnings to show.
    uncertainty : dict, optional
        Expanded uncertainty (k = 2) per limit quantity, for guard-banded decisions.

    Raises
    ------
    AnalysisError
        For a port the sweep lacks or a marker outside the sweep.
    """
    from refplane.analysis.readings import read_points

    sweep.check_port(port)
    if file is not None and sha256 is None and os.path.isfile(file):
        from refplane.batch import sha256_of

        sha256 = sha256_of(file)
    readings = read_points(sweep, list(at_hz), port=port) if len(at_hz) else None
    fit_sentence = None
    if fit_model:
        from refplane.analysis.circuits.fitting import fit_sweep

        try:
            fit_sentence = fit_sweep(sweep, model=fit_model, port=port if sweep.n_ports > 1 else None).sentence()
        except AnalysisError as exc:
            fit_sentence = f"No fit: {exc}"
    lines = []
    u = uncertainty or {}
    for lim in limits:
        try:
            lines.append(LimitLine(lim, evaluate_limit(lim, sweep, port=port, u=u.get(lim.quantity))))
        except AnalysisError as exc:
            lines.append(LimitLine(lim, None, exc.reason))
    return SweepReport(sweep, file, sha256, port, tuple(notes), tuple(warnings), readings, fit_sentence,
                       tuple(lines))


def report_sections(paths: Sequence[str], *, at_hz: Sequence[float] = (), limits: Sequence[Limit] = (),
                    prep=None, fit_model: str | None = None) -> list[SweepReport]:
    """Read, correct and prepare a report section for each file.

    Parameters
    ----------
    prep : refplane.batch.Preparation, optional
        Port, calibration, offsets and uncertainties (default: port 1, nothing applied).

    Raises
    ------
    AnalysisError
        For a file that cannot be read or corrected, or a marker outside its sweep.
    """
    from refplane.analysis.files.loading import read_sweep
    from refplane.batch import Preparation

    prep = prep or Preparation()
    out = []
    for path in paths:
        raw = read_sweep(path)
        sweep, notes, warnings = prep.apply(raw)
        out.append(sweep_report(sweep, file=os.fspath(path), port=prep.port, at_hz=at_hz, limits=limits,
                                fit_model=fit_model, notes=notes, warnings=warnings,
                                uncertainty=prep.uncertainty))
    return out


def report_time(when: _dt.datetime | None = None) -> str:
    """The date printed in a report: ``when``, else $SOURCE_DATE_EPOCH (reproducible builds), else now; UTC."""
    if when is None:
        epoch = os.environ.get("SOURCE_DATE_EPOCH")
        if epoch and epoch.strip().isdigit():
            when = _dt.datetime.fromtimestamp(int(epoch), tz=_dt.timezone.utc)
        else:
            when = _dt.datetime.now(tz=_dt.timezone.utc)
    if when.tzinfo is None:
        when = when.replace(tzinfo=_dt.timezone.utc)
    return when.astimezone(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")


def program_line(when: _dt.datetime | None = None) -> str:
    """"Made by Refplane 0.1.0 on 2026-12-02 17:50 UTC"."""
    from refplane import __version__

    return f"Made by Refplane {__version__} on {report_time(when)}"


# --- what a section shows, shared by the HTML and the PDF -----------------------------------

def facts(section: SweepReport) -> list[tuple[str, str]]:
    """(label, text) rows describing the sweep."""
    from refplane.analysis.units import format_frequency

    sw = section.sweep
    z0 = sw.z0_ohm[section.port - 1]
    z0_text = f"{z0.real:g} Ω" if z0.imag == 0 else f"{z0.real:g} {'+' if z0.imag >= 0 else '−'} j{abs(z0.imag):g} Ω"
    rows = [("File", section.file or sw.name)]
    if section.sha256:
        rows.append(("SHA-256", section.sha256))
    rows += [
        ("Points and band", f"{sw.n_points} points, {format_frequency(sw.freq_hz[0])} to "
                            f"{format_frequency(sw.freq_hz[-1])}"),
        ("Ports", f"{sw.n_ports} (shown: reflection of port {section.port})"),
        ("Reference impedance", z0_text),
        ("Calibration and offsets", "; ".join(section.notes) if section.notes else "none applied (as measured)"),
    ]
    return rows


def marker_rows(section: SweepReport) -> tuple[list[str], list[list[str]]]:
    """The marker table: the same cells as ``refplane read`` prints, numbered."""
    from refplane.session.present import readout_cells

    if section.readings is None:
        return [], []
    headers: list[str] = []
    rows = []
    for i in range(section.readings.freq_hz.size):
        u = section.marker_u[i] if section.marker_u and i < len(section.marker_u) else None
        cells = readout_cells(section.readings.readout.at(i), u)
        headers = ["Marker"] + list(cells)
        rows.append([str(i + 1)] + list(cells.values()))
    return headers, rows


def limit_rows(section: SweepReport) -> list[tuple[str, str, str]]:
    """(mark, decision word, sentence) per limit."""
    mark = {"pass": "✔", "fail": "✘", "indeterminate": "?", "not tested": "–"}
    word = {"pass": "PASS", "fail": "FAIL", "indeterminate": "INDETERMINATE", "not tested": "NOT TESTED"}
    rows = []
    for line in section.limits:
        if line.result is None:
            text = f"{line.limit.text}: not tested: {line.error}"
        else:
            text = line.result.sentence()
            cp = line.result.conformance_probability
            if cp is not None:
                text += f"; conformance probability at the worst point {cp * 100:.1f} %"
        rows.append((mark[line.decision], word[line.decision], text))
    return rows


def rules_used(sections: Sequence[SweepReport]) -> list[str]:
    """Every decision rule the limits were judged by, once each."""
    return sorted({line.result.rule for s in sections for line in s.limits if line.result is not None})


def chart_svg(section: SweepReport, size: int = 440) -> str:
    """The chart of the section's reflection with its markers."""
    from refplane.report.svg import smith_chart_svg

    gamma = section.sweep.reflection(section.port)
    markers = []
    if section.readings is not None:
        markers = [(0, str(i + 1), complex(g)) for i, g in enumerate(section.readings.gamma)]
    return smith_chart_svg([(section.sweep.name, gamma)], markers, size=size,
                           title=f"Smith chart of {section.sweep.name}, port {section.port}")


def plot_svgs(section: SweepReport, width: int = 440, height: int = 240) -> list[str]:
    """Plots against frequency: return loss always (reflection), then each other limited quantity."""
    from refplane.analysis.limits import QUANTITIES, quantity_values
    from refplane.report.svg import frequency_plot_svg

    order = ["return_loss_db"]
    for line in section.limits:
        if line.limit.quantity not in order:
            order.append(line.limit.quantity)
    out = []
    f = section.sweep.freq_hz
    for q in order:
        try:
            values = quantity_values(section.sweep, q, f, port=section.port)
        except AnalysisError:
            continue  # s21 of a one-port: the limit line says why it was not tested
        lines = [ln for ln in section.limits if ln.limit.quantity == q and ln.result is not None]
        out.append(frequency_plot_svg(
            f, values, quantity=q, unit=QUANTITIES[q][0],
            limits=[(ln.limit.op, ln.limit.value, ln.limit.band_hz, ln.decision) for ln in lines],
            worst=[(ln.result.worst_freq_hz, ln.result.worst_value) for ln in lines],
            width=width, height=height, title=f"{q} of {section.sweep.name}"))
    return out


# --- HTML ---------------------------------------------------------------------------------

_CSS = """
body { font-family: sans-serif; color: #1d2126; margin: 2em auto; max-width: 60em; line-height: 1.4; }
h1 { font-size: 1.6em; margin-bottom: 0.2em; }
h2 { font-size: 1.25em; border-bottom: 1px solid #b8bec6; padding-bottom: 0.2em; margin-top: 2em; }
table { border-collapse: collapse; margin: 0.6em 0; font-size: 0.92em; }
th, td { border: 1px solid #c8cdd3; padding: 0.25em 0.5em; text-align: right; }
th { background: #eef1f4; }
td:first-child, th:first-child { text-align: left; }
table.facts td { text-align: left; }
table.facts td:first-child { font-weight: bold; white-space: nowrap; }
.figures { display: flex; flex-wrap: wrap; gap: 1em; align-items: flex-start; }
.pass { color: #1e7b3c; font-weight: bold; }
.fail { color: #b8281c; font-weight: bold; }
.indeterminate, .not-tested { color: #9a6408; font-weight: bold; }
.small { font-size: 0.85em; color: #555c66; }
.sha { font-family: monospace; font-size: 0.85em; word-break: break-all; }
section.sweep { page-break-after: always; }
"""


def _table(headers: Sequence[str], rows: Sequence[Sequence[str]], css: str = "") -> str:
    head = "".join(f"<th>{escape(h)}</th>" for h in headers)
    body = "".join("<tr>" + "".join(f"<td>{escape(c)}</td>" for c in r) + "</tr>" for r in rows)
    cls = f' class="{css}"' if css else ""
    return f"<table{cls}><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def _decision_class(decision: str) -> str:
    return decision.replace(" ", "-")


def _section_html(section: SweepReport, index: int) -> str:
    parts = [f'<section class="sweep" id="sweep-{index}">']
    verdict = section.decision
    title = escape(os.path.basename(section.file) if section.file else section.sweep.name)
    if verdict:
        parts.append(f'<h2>{index}. {title} — <span class="{_decision_class(verdict)}">{escape(verdict.upper())}'
                     f"</span></h2>")
    else:
        parts.append(f"<h2>{index}. {title}</h2>")
    sha = ' class="sha"'
    rows = "".join(f"<tr><td>{escape(k)}</td><td{sha if k == 'SHA-256' else ''}>{escape(v)}</td></tr>"
                   for k, v in facts(section))
    parts.append(f'<table class="facts"><tbody>{rows}</tbody></table>')
    for w in section.warnings:
        parts.append(f'<p class="small">Warning: {escape(w)}</p>')
    parts.append('<div class="figures">')
    parts.append(chart_svg(section))
    parts.append("<div>" + "".join(plot_svgs(section)) + "</div>")
    parts.append("</div>")
    headers, rows_m = marker_rows(section)
    if rows_m:
        parts.append("<h3>Markers</h3>")
        parts.append(_table(headers, rows_m))
        if section.marker_u and any(u is not None for u in section.marker_u):
            parts.append(f'<p class="small">{escape(section.u_sources or "± is the expanded uncertainty (k = 2, about 95 %).")}</p>')
        else:
            parts.append('<p class="small">Uncertainties: not evaluated for these readings.</p>')
    if section.fit_sentence:
        parts.append("<h3>Equivalent circuit</h3>")
        parts.append(f"<p>{escape(section.fit_sentence)}</p>")
    if section.limits:
        parts.append("<h3>Limits</h3><table><thead><tr><th></th><th>Result</th><th>Limit and worst reading</th>"
                     "</tr></thead><tbody>")
        for (mark, word, text), line in zip(limit_rows(section), section.limits):
            cls = _decision_class(line.decision)
            parts.append(f'<tr><td class="{cls}">{mark}</td><td class="{cls}">{escape(word)}</td>'
                         f'<td style="text-align:left">{escape(text)}</td></tr>')
        parts.append("</tbody></table>")
    parts.append("</section>")
    return "\n".join(parts)


def _batch_html(batch) -> str:
    s = batch.summary
    parts = ["<h2>Batch</h2>",
             f"<p>{s['files']} files: {s['passed']} passed, {s['failed']} failed, "
             f"{s['indeterminate']} indeterminate, {s['unreadable']} unreadable.</p>"]
    rows = []
    for f in batch.files:
        detail = f.reason or "; ".join(r.sentence() for r in f.results if r.decision != "pass")
        rows.append([f.file, f.decision.upper(), detail])
    parts.append(_table(["File", "Result", "Details"], rows))
    st_rows = []
    for st in batch.statistics:
        unit = f" {st.limit.unit}" if st.limit.unit else ""
        st_rows.append([st.limit.text, str(st.count), format_number(st.mean) + unit,
                        format_number(st.spread) + unit, format_number(st.worst) + unit,
                        format_number(st.cpk) if st.cpk is not None else "—", st.cpk_note])
    if st_rows:
        parts.append("<h3>Across the batch (each file's worst reading in the band)</h3>")
        parts.append(_table(["Limit", "Files", "Mean", "Spread", "Worst", "Cpk", "Note"], st_rows))
        parts.append('<p class="small">Cpk: one-sided, (limit − mean)/(3·spread) for an upper limit and '
                     "(mean − limit)/(3·spread) for a lower one (NIST/SEMATECH e-Handbook of Statistical "
                     "Methods, 6.1.6); spread is the sample standard deviation.</p>")
    return "\n".join(parts)


def build_html(sections: Sequence[SweepReport], *, title: str = "Refplane measurement report",
               batch=None, when: _dt.datetime | None = None) -> str:
    """The whole report as one self-contained HTML document (UTF-8 text).

    Parameters
    ----------
    sections : sequence of SweepReport
        One per sweep, in order.
    title : str
    batch : refplane.batch.BatchResult, optional
        A batch check to summarise before the sweeps.
    when : datetime, optional
        The date to print (default: now, or $SOURCE_DATE_EPOCH).
    """
    made = program_line(when)
    parts = ["<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
             f"<title>{escape(title)}</title>", f"<style>{_CSS}</style>", "</head>", "<body>",
             f"<h1>{escape(title)}</h1>", f'<p class="small">{escape(made)}. {len(sections)} sweep(s).</p>']
    if batch is not None:
        parts.append(_batch_html(batch))
    for i, section in enumerate(sections, start=1):
        parts.append(_section_html(section, i))
    rules = rules_used(sections)
    if rules:
        parts.append("<h2>Decision rules</h2><ul>" + "".join(f"<li>{escape(r)}</li>" for r in rules) + "</ul>")
    parts.append("<h2>Cautions</h2><ul>" + "".join(f"<li>{escape(c)}</li>" for c in CAUTIONS) + "</ul>")
    parts.append(f'<p class="small">{escape(made)}.</p>')
    parts.append("</body></html>")
    return "\n".join(parts) + "\n"


def write_report(sections: Sequence[SweepReport], path: str | os.PathLike, *, overwrite: bool = False,
                 title: str = "Refplane measurement report", batch=None,
                 when: _dt.datetime | None = None) -> Path:
    """Save a report as HTML (``.html``/``.htm``) or PDF (``.pdf``), atomically.

    Raises
    ------
    AnalysisError
        For another file ending, or an existing file without ``overwrite``.
    """
    name = os.fspath(path).lower()
    if name.endswith((".html", ".htm")):
        from refplane.analysis.files.fileio import write_text_atomic

        return write_text_atomic(path, build_html(sections, title=title, batch=batch, when=when),
                                 overwrite=overwrite)
    if name.endswith(".pdf"):
        from refplane.report.pdf import write_pdf

        return write_pdf(sections, path, overwrite=overwrite, title=title, batch=batch, when=when)
    raise AnalysisError("name the report .html or .pdf", file=os.fspath(path))


def report_for_paths(paths: Sequence[str], out: str | os.PathLike, *, at_hz: Sequence[float] = (),
                     limits: Sequence[Limit] = (), prep=None, fit_model: str | None = None,
                     overwrite: bool = False, batch=None, title: str = "Refplane measurement report",
                     when: _dt.datetime | None = None) -> Path:
    """Read the files, prepare one section each and save the report (see :func:`write_report`)."""
    sections = report_sections(paths, at_hz=at_hz, limits=limits, prep=prep, fit_model=fit_model)
    return write_report(sections, out, overwrite=overwrite, title=title, batch=batch, when=when)
