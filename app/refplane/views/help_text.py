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
<ul>
<li><b>Open sweeps</b> with File ▸ Open (Ctrl+O) or drop Touchstone or CSV files on the window.</li>
<li><b>Markers:</b> click near a trace, or type a frequency (e.g. <i>470 MHz</i>) above the
marker table. Drag a marker along its trace; Left/Right arrows step one swept point
(Shift: ten). Delete removes the current marker.</li>
<li><b>Chart:</b> wheel zooms, dragging pans, Home shows the whole chart. Hover to read the
impedance under the cursor.</li>
<li><b>Plots:</b> click to place a marker on the current trace; drag with Shift (or with
"Pick band" on) to choose a band.</li>
<li>The trace list shows, hides, renames (double-click), recolours and closes traces.
A trace starts at the open circle and ends at the filled square.</li>
</ul>
"""
