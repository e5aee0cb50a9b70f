"""Words shown by the Help menu."""

SAFETY_TITLE = "Working safely"

#: Shown on the chart while no sweep is open.
EMPTY_WINDOW_TEXT = ("No sweep open.\n\nFile ▸ Open sweeps… (Ctrl+O), or drop Touchstone "
                     "(.s1p, .s2p…) or CSV files on the window.\nFile ▸ Open session… "
                     "continues saved work.")

SAFETY_HTML = """
<h3>Before you connect anything</h3>
<ul>
<li><b>Never connect an analyzer port to a transmitter</b> or to an antenna system that a
transmitter can drive. Even a few watts destroy the input.</li>
<li><b>Discharge antennas and long cables before connecting them.</b> Wind and rain build up
static on an antenna; a long cable holds charge. Short the centre conductor to the shield
(or use a bleed resistor) first.</li>
<li><b>Respect the instrument's maximum input level</b> (RF and DC) and fit a DC block
wherever DC may be present, for example on a bias tee or a powered preamplifier.</li>
<li><b>RF exposure limits apply whenever an antenna is driven</b>, including when you check a
matching network at power. Keep people away from radiating parts.</li>
<li>Matching parts carry high voltages and currents at power; rate them accordingly.</li>
<li><b>Follow local codes and licensed practice</b>; where they differ from these notes, they win.</li>
</ul>
<p>Refplane only reads saved sweeps; it never controls an instrument.</p>
"""

USAGE_HTML = """
<h3>Using the window</h3>
<p><b>Open sweeps</b> with <b>File ▸ Open sweeps…</b> (Ctrl+O), <b>File ▸ Open recent</b>, or drop
Touchstone (.s1p, .s2p…) or CSV files on the window. The trace list (left) shows, hides,
renames (double-click), recolours and closes traces; a trace starts at the open circle and
ends at the filled square. Right-click a trace for more (make current, store as memory, find,
close).</p>

<h4>Markers and searches</h4>
<ul>
<li>Click near a trace on the chart, or on a plot, to place a marker on it; or type a
frequency (<i>470 MHz</i>) above the marker table and press Enter. Drag a marker along its
trace; Left/Right step one swept point (Shift: ten); Delete removes the current marker.</li>
<li><b>Markers ▸ Find</b> (or the <b>Find</b> button above the table) places markers on the
current trace at the <b>best match (minimum VSWR)</b>, at each <b>resonance (X = 0)</b>,
series or parallel, at the <b>largest |Z|</b>, or at the two edges of the <b>band where
VSWR ≤</b> a value you give (2 for the 2:1 band); the band's width and centre are written
above the table. Such markers <i>follow</i> their search: when you edit the offsets or the
file is reloaded they move to where the search now finds it. Moving one by hand, or
right-click ▸ Stop following, leaves it where it is.</li>
<li>The table's <b>Difference</b> row is marker b − marker a (choose them above the table).
<b>Copy table</b> puts plain numbers on the clipboard for a spreadsheet, units in the first
row; <b>File ▸ Export marker table…</b> writes the same as a CSV file.</li>
</ul>

<h4>Chart and plots</h4>
<ul>
<li>Chart: wheel zooms, dragging pans, Home or <b>View ▸ Reset chart view</b> shows the whole chart.
The line under the chart reads the impedance under the cursor and the reference it is read
against. <b>View ▸ Admittance grid</b>, <b>View ▸ Constant-VSWR circle…</b></li>
<li><b>View ▸ Chart reference impedance…</b> shows the chart, the plots and every reading
against another reference (75 Ω for cable-TV work, say); leave it empty for each file's own.
The same impedance then sits at another place on the chart, and VSWR and return loss are
those a 75 Ω system would see.</li>
<li>Each plot: choose its quantity above it; <b>Log</b> gives VSWR, |Z| and ratios a
logarithmic scale; <b>Autoscale</b> (or a double-click) resets its zoom to the visible traces.
Shift-drag, or "Pick band" then drag, chooses a band (used by the fit).
<b>View ▸ Log frequency axis</b> or the "Log frequency" box for a logarithmic frequency axis.</li>
<li>Right-click the chart, a plot, a marker or a table row for the common actions.</li>
</ul>

<h4>Comparing before and after</h4>
<p><b>Traces ▸ Store current trace as memory</b> keeps a snapshot of the current trace (it is
drawn thin and dashed on the chart). After a correction or a tuning step,
<b>Traces ▸ Show relative to memory (dB and degrees)</b> plots every trace relative to it:
the change of |Γ| in dB and of its phase in degrees; <b>Show divided by memory</b> plots
|Γ ÷ memory|. <b>Traces ▸ Show return loss and R, X again</b> returns to the usual plots.</p>

<h4>Reference plane, fit, calibration</h4>
<ul>
<li><b>Reference plane</b> panel (<b>View ▸ Panels</b>): remove a cable or fixture from the current
trace by its delay or its length and velocity factor, with its loss and impedance; the
measured trace stays faded behind. "Find from open/short" estimates the line from a bare
cable ended in an open or a short; "Save corrected sweep…" writes the result.</li>
<li><b>Fit</b> panel: fits an equivalent circuit to the current trace in the selected band (or
the whole sweep) and draws it over the trace in two-tone dashes; its parts are named in words
with their uncertainty. A series-equivalent L read at a marker differs from a fitted lead
inductance: the marker reads everything at one frequency, the fit separates the parts.</li>
<li><b>Tools ▸ Calibrate from standards…</b> (Ctrl+K): 1. choose the measured short, open,
load (and through) sweeps; 2. say what the standards are; 3. work out the error terms and
check them (save them, or use saved ones); 4. correct device sweeps, which open as new
traces.</li>
</ul>

<h4>Sessions and undo</h4>
<p><b>File ▸ Save session</b> (Ctrl+S) / <b>Save session as…</b> keep the whole piece of work
— traces, offsets, markers and what they follow, the memory, plots, zooms, the chart's
reference, fit and calibration inputs — in one file beside your sweeps;
<b>File ▸ Open session…</b> brings it back (a sweep file that changed or moved is reported, never silently
used). <b>Edit ▸ Undo</b> (Ctrl+Z) brings back a closed trace or removed markers.
<code>refplane render --session FILE -o chart.png</code> draws the same chart from the
command line.</p>
<p>File dialogs open in the folder last used for the same purpose (sweeps, sessions,
pictures, corrected sweeps, calibration files).</p>
"""
