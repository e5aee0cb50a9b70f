"""IEC 60063 preferred-number series and rounding to them.

Sources named beside each check:
- IEC 60063 (preferred number series for resistors and capacitors), as printed in component catalogues
  (from memory): E12 ⊂ E24; E24's historical values 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2 differ from the
  geometric 10^(k/24) rounded to two figures (2.6, 2.9, 3.2, 3.5, 3.8, 4.2, 4.6, 8.3) while the others, e.g.
  5.1, 5.6, 6.2, 6.8, 9.1, agree; E48 is every other E96 value; E96 agrees with 10^(k/96) rounded to three
  figures (the one exception of the three-figure series, 9.20, belongs to E192); spot values 4.99, 1.02, 3.01,
  6.04, 9.76 of E96 are common resistor values (common practice).
"""

from __future__ import annotations

import math

import pytest

from refplane.analysis.antenna.eseries import E12, E24, E96, nearest, nearest_array, series_values
from refplane.analysis.errors import AnalysisError


def test_lengths_and_order():
    for table, n in ((E12, 12), (E24, 24), (E96, 96)):
        assert len(table) == n
        assert table[0] == 1.0
        assert all(a < b for a, b in zip(table, table[1:]))
        assert table[-1] < 10.0


def test_e12_inside_e24_and_e48_inside_e96():
    assert set(E12) <= set(E24)
    assert set(E12) == set(E24[::2])
    e48 = E96[::2]
    assert len(e48) == 48 and e48[:4] == (1.00, 1.05, 1.10, 1.15)   # IEC 60063 E48 opening values (from memory)


def test_e24_historical_values_differ_from_the_formula():
    formula = [round(10 ** (k / 24), 1) for k in range(24)]
    differ = {v for v, g in zip(E24, formula) if abs(v - g) > 1e-9}
    assert differ == {2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2}
    for v in (5.1, 5.6, 6.2, 6.8, 9.1):
        assert v in E24


def test_e96_is_the_three_figure_geometric_series():
    assert all(abs(v - round(10 ** (k / 96), 2)) < 1e-9 for k, v in enumerate(E96))
    for v in (4.99, 1.02, 3.01, 6.04, 9.76):
        assert v in E96
    assert 9.20 not in E96 and 9.19 not in E96


@pytest.mark.parametrize("value, series, want", [
    (0.92e-12, "E12", 1.0e-12),     # 0.92 is nearer 1.0 than 0.82 in ratio
    (38.8e-9, "E24", 39e-9),
    (46.1e-9, "E96", 46.4e-9),
    (2.61e-12, "E24", 2.7e-12),
    (9.6, "E12", 10.0),             # the next decade's first value counts
    (1.09, "E12", 1.0),             # ratio: 1.09/1.0 = 1.09 < 1.2/1.09 = 1.10
    (1.1, "e24", 1.1),
    (-4.6e3, "E24", -4.7e3),
    (0.0, "E12", 0.0),
])
def test_nearest(value, series, want):
    assert nearest(value, series) == pytest.approx(want, rel=1e-12)


def test_nearest_is_within_half_a_step():
    # common practice: rounding to an E-series moves a value by at most half a step in ratio.
    for name, table in (("E12", E12), ("E24", E24), ("E96", E96)):
        steps = [b / a for a, b in zip(table, table[1:] + (10.0,))]
        worst = max(steps)
        for k in range(1, 2000):
            v = 10 ** (k / 1000 - 1) * 3.7
            got = nearest(v, name)
            assert abs(math.log(got / v)) <= 0.5 * math.log(worst) + 1e-12
    assert nearest_array([1.09, 9.6], "E12").tolist() == [1.0, 10.0]


def test_bad_series_or_value():
    with pytest.raises(AnalysisError):
        series_values("E7")
    with pytest.raises(AnalysisError):
        nearest(float("nan"))


def test_docstring_examples_of_the_antenna_modules():
    # The examples in the docstrings are worked examples (series R-L-C resonance, the handbook feedline case,
    # E-series rounding); run them so they stay true.
    import doctest

    from refplane.analysis.antenna import eseries, feedline, matching, resonance

    for module in (eseries, feedline, matching, resonance):
        assert doctest.testmod(module, optionflags=doctest.ELLIPSIS).failed == 0
