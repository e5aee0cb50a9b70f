"""The report's SVG pictures: valid XML, the chart's geometry, plots with limit lines."""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET

import numpy as np

from refplane.report.svg import frequency_plot_svg, smith_chart_svg

NS = {"s": "http://www.w3.org/2000/svg"}


def test_chart_places_load_open_and_short_where_the_trade_expects():
    # Common practice (references, facts of the trade): a matched load at the centre, an open
    # at the right-hand edge, a short at the left-hand edge.
    size = 440
    svg = smith_chart_svg([("t", np.array([0, 1, -1], complex))],
                          [(0, "load", 0j), (0, "open", 1 + 0j), (0, "short", -1 + 0j)], size=size)
    root = ET.fromstring(svg)
    outer = root.find("s:g/s:circle", NS)
    cx, cy, radius = (float(outer.get(k)) for k in ("cx", "cy", "r"))
    assert (cx, cy) == (size / 2, size / 2)
    marks = [c for c in root.findall("s:circle", NS)]
    xs = sorted(float(c.get("cx")) for c in marks)
    assert xs == [cx - radius, cx, cx + radius]
    assert all(float(c.get("cy")) == cy for c in marks)


def test_constant_resistance_circle_r1_passes_through_the_centre():
    # r = 1 circle: centre Γ = 1/2, radius 1/2 (Pozar, ch. 2: centre r/(1 + r), radius 1/(1 + r)).
    root = ET.fromstring(smith_chart_svg([], size=440))
    circles = root.findall("s:g/s:circle", NS)
    outer_r = float(circles[0].get("r"))
    found = [c for c in circles[1:] if abs(float(c.get("r")) - outer_r / 2) < 0.01]
    assert found and abs(float(found[0].get("cx")) - (220 + outer_r / 2)) < 0.01


def test_plot_draws_the_limit_line_over_its_band_and_gaps_for_missing_values():
    f = np.linspace(1e9, 2e9, 11)
    v = np.linspace(1.1, 1.6, 11)
    v[3] = np.nan
    svg = frequency_plot_svg(f, v, quantity="vswr", limits=[("<=", 1.5, (1.2e9, 1.8e9), "fail")],
                             worst=[(1.8e9, 1.5)])
    root = ET.fromstring(svg)
    assert len(root.findall("s:polyline", NS)) == 2          # broken at the missing value
    dashed = [ln for ln in root.findall("s:line", NS) if ln.get("stroke-dasharray")]
    assert len(dashed) == 1
    x1, x2 = float(dashed[0].get("x1")), float(dashed[0].get("x2"))
    left = 62
    width = 440 - 62 - 14
    assert abs(x1 - (left + 0.2 * width)) < 0.01 and abs(x2 - (left + 0.8 * width)) < 0.01
    assert re.search(r"frequency \(GHz\)", svg)
