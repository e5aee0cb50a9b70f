"""Antennas and matching: resonances and usable bands, the feedline between radio and antenna,
and matching networks built from parts one can buy.

Modules
-------
resonance   every resonance of a reflection sweep, the best match, the bands under a VSWR limit
feedline    what the radio sees through a line, and the loss budget of that line
eseries     IEC 60063 preferred-number series (E12, E24, E96) and rounding to them
matching    L, Pi and T networks, quarter-wave transformer, single shunt stubs; part stress;
            the Bode–Fano limit; the network's path on the chart

Every result is a frozen dataclass whose fields a panel can show directly (a matching
network's path on the chart is an array of Γ points from the load to the centre). Each reading
sits in a named field with its unit, so an uncertainty can join later as a mapping of the same
keys without changing the fields already there.
"""
