"""The spreadsheet-safe CSV writer: numbers read back exactly with float(), text that a spreadsheet
would run as a formula is prefixed with ' (OWASP, "CSV Injection"), and csv reads every row back."""

from __future__ import annotations

import csv
import io
import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from server.csvsafe import SafeWriter, cell, safe_text

FORMULAS = ["=HYPERLINK(\"http://x\",\"y\")", "=1+1", "+1", "-2+3", "@SUM(A1)", "\tx", "\rx"]


@pytest.mark.parametrize("text", FORMULAS)
def test_formula_text_is_neutralised(text):
    assert safe_text(text) == "'" + text


@pytest.mark.parametrize("text", ["Baseline", "Planck 2018 (CMB + lensing)", "a=b", "", "1e5 model"])
def test_ordinary_text_is_kept(text):
    assert safe_text(text) == text


@given(st.floats(allow_nan=False, allow_infinity=False))
def test_numbers_read_back_exactly(x):
    assert float(cell(x)) == x and cell(x).isascii() and "−" not in cell(x)


@pytest.mark.parametrize("value", [math.nan, math.inf, -math.inf, None, np.nan])
def test_gaps_are_empty(value):
    assert cell(value) == ""


def test_numpy_numbers_and_rows_round_trip():
    out = io.StringIO()
    writer = SafeWriter(out)
    writer.writerow(["label", "z", "D_L [Mpc]"])
    writer.writerow(["=1+1", np.float64(0.5), np.float32(2062.36)])
    writer.writerow(["a,b \"quoted\"", 3, None])
    rows = list(csv.reader(io.StringIO(out.getvalue())))
    assert rows[1] == ["'=1+1", "0.5", repr(float(np.float32(2062.36)))]
    assert rows[2] == ["a,b \"quoted\"", "3", ""]
