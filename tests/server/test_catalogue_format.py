"""The catalogue's vectorised number formatting reads back as Python's own '%.9g' does.

Check value: Python's float formatting ('%.9g', C library printf semantics), an independent
implementation of decimal rounding to 9 significant digits."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from server.catalogue import _format_block

EDGES = [0.0, -0.0, 1.0, -1.0, 9.999999999, 9.9999999949, 0.1, 123456789.5, 1e-290, 1e-295,
         -3e-310, 5e-324, 1e300, 1.7976931348623157e308, np.inf, -np.inf, np.nan]


def _check(values):
    values = np.asarray(values, dtype=float)
    rows = _format_block([values, values[::-1]])
    assert len(rows) == values.size
    for row, pair in zip(rows, zip(values, values[::-1])):
        cells = row.split(",")
        assert len(cells) == 2
        for cell, v in zip(cells, pair):
            if np.isnan(v):
                assert cell == ""
                continue
            assert " " not in cell
            ref = float("%.9g" % v)
            got = float(cell)
            assert got == ref or abs(got - ref) <= 2e-9 * abs(ref), (cell, "%.9g" % v)


def test_edge_values():
    _check(EDGES)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.floats(allow_nan=True, allow_infinity=True), min_size=1, max_size=50))
def test_any_floats(values):
    _check(values)
