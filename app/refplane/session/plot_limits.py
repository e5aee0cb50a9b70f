"""Limits the user typed in the window, tested on the current trace and placed on the plots (no Qt).

The session's ``"limits"`` record (:class:`~refplane.session.tool_settings.LimitsSettings`)
holds limit expressions in the grammar of :mod:`refplane.analysis.limits`
(``vswr <= 2 over 140MHz:150MHz``). :func:`checks` parses each and tests it with
:func:`refplane.analysis.limits.evaluate_limit` on the current trace's displayed sweep (its
offsets removed, at its port): the decision, worst frequency and margin are that function's,
so the window and ``refplane check`` agree.

When the session's uncertainty is on, the expanded uncertainty of the quantity at each swept
point (the same numbers the plots' bands show, :mod:`refplane.session.plot_bands`) is passed
along, and the decision follows the guard-band rule of JCGM 106 (pass, fail or indeterminate).

Each check says which frequency plot (``plot_series`` key) shows its quantity, so the plot
draws the limit as a line over its band, shaded with the trace's readings in the band.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: Limit quantity → the frequency plot that shows it (``plot_series.BY_KEY``).
PLOT_OF: dict[str, str] = {
    "vswr": "vswr",
    "return_loss_db": "return_loss",
    "r_ohm": "r_x",
    "x_ohm": "r_x",
    "z_mag_ohm": "z_mag",
    "gamma_deg": "phase",
    "s21_db": "s21_db",
    "s21_deg": "s21_phase",
}

#: Limit quantities whose expanded uncertainty the engine gives (the plots' bands).
WITH_U = ("vswr", "return_loss_db", "r_ohm", "x_ohm", "z_mag_ohm", "gamma_mag", "gamma_deg")


@dataclass(frozen=True, eq=False)
class LimitCheck:
    """One limit expression as the window shows it."""

    text: str
    """The expression as typed."""
    limit: object = None
    """The parsed ``analysis.limits.Limit`` (None when the text is malformed)."""
    result: object = None
    """``analysis.limits.LimitResult`` on the current trace (None: malformed, no trace, or refused)."""
    error: str = ""
    """Why there is no result, in one line ("" when there is one, or simply no trace)."""
    trace_id: int = -1
    """The trace tested (−1: none)."""

    @property
    def plot(self) -> str | None:
        """Key of the frequency plot that shows this limit's quantity (None: none does)."""
        return PLOT_OF.get(self.limit.quantity) if self.limit is not None else None

    @property
    def decision(self) -> str | None:
        """"pass", "fail" or "indeterminate" (None without a result)."""
        return self.result.decision if self.result is not None else None

    def sentence(self) -> str:
        """One line for the panel: the result's sentence, or the expression and why it has none."""
        if self.result is not None:
            return self.result.sentence()
        if self.error:
            return f"{self.text}: {self.error}"
        return f"{self.text}: no trace to test"


def parse(text: str):
    """The ``Limit`` of an expression, or raises ``AnalysisError`` with one line (for the entry box)."""
    from refplane.analysis.limits import parse_limit

    return parse_limit(text)


def checks(expressions, trace, sweep, *, u_settings=None, u_cache: dict | None = None) -> tuple[LimitCheck, ...]:
    """Parse and test each expression on one trace.

    Parameters
    ----------
    expressions : sequence of str
        ``session.tool("limits").expressions``.
    trace : Trace or None
        The session's current trace record (None: parse only).
    sweep : Sweep or None
        That trace's displayed sweep (``session.viewed(trace.id)``).
    u_settings : UncertaintySettings, optional
        When given and on, decisions take guard bands of the expanded uncertainty.
    u_cache : dict, optional
        Shared with the plots' bands so the uncertainty is read once.
    """
    from refplane.analysis.errors import AnalysisError
    from refplane.analysis.limits import evaluate_limit, parse_limit
    from refplane.session import plot_bands

    out = []
    for text in expressions:
        try:
            limit = parse_limit(text)
        except AnalysisError as exc:
            out.append(LimitCheck(text, error=str(exc)))
            continue
        if trace is None or sweep is None:
            out.append(LimitCheck(text, limit))
            continue
        u = None
        if u_settings is not None and limit.quantity in WITH_U:
            tu = plot_bands.trace_u(u_settings, trace, u_cache)
            if tu is not None:
                w = plot_bands.half_width(tu, limit.quantity, sweep.freq_hz)
                u = w if np.all(np.isfinite(w)) else None
        try:
            result = evaluate_limit(limit, sweep, port=trace.port, u=u)
        except AnalysisError as exc:
            out.append(LimitCheck(text, limit, error=str(exc), trace_id=trace.id))
            continue
        out.append(LimitCheck(text, limit, result, trace_id=trace.id))
    return tuple(out)
