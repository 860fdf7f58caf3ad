"""The measurement-table parser: what it accepts, what it refuses, and where it says the fault is.

The format is our own (docs/measurements-format.md); outside references are named where the
format leans on one: RFC 4180 for quoted cells, Unicode/UTF-8 (RFC 3629) for the encoding,
IEEE 754 binary64 for the largest finite number, and the definition of the correlation
coefficient, cov_ij = r sigma_i sigma_j.
"""

import dataclasses

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from model import (MEASUREMENT_COLUMNS, MEASUREMENT_KINDS, MeasurementFormatError,
                   MeasurementLimits, MeasurementSet, parse_measurements)

GOOD = (
    "# a comment line, then a blank line\n"
    "\n"
    "z,kind,value,error,label,z_helio,group,correlation\n"
    "0.51,dm_over_rd,13.62,0.25,\"bin 1, transverse\",,b1,-0.445\n"
    "0.51,dh_over_rd,20.98,0.61,bin 1 radial,,b1,-0.445\n"
    "0.1,distance_modulus,38.3,0.12,sn,0.1004,,\n"
    "0.0,hubble_parameter,70.1,1.5,,,,\n"
)


def refused(data, covariance=None, limits=MeasurementLimits()):
    with pytest.raises(MeasurementFormatError) as info:
        parse_measurements(data, covariance, limits=limits)
    return info.value


def test_good_table_is_read_in_file_order():
    m = parse_measurements(GOOD)
    assert isinstance(m, MeasurementSet) and len(m) == 4
    assert m.kind.tolist() == ["dm_over_rd", "dh_over_rd", "distance_modulus", "hubble_parameter"]
    np.testing.assert_array_equal(m.z, [0.51, 0.51, 0.1, 0.0])
    np.testing.assert_array_equal(m.value, [13.62, 20.98, 38.3, 70.1])
    # z_helio defaults to z where empty
    np.testing.assert_array_equal(m.z_helio, [0.51, 0.51, 0.1004, 0.0])
    assert m.label[0] == "bin 1, transverse"  # RFC 4180: a quoted cell may hold a comma
    assert m.line.tolist() == [4, 5, 6, 7]  # physical lines, comments and blanks counted
    assert m.covariance_source == "pairs"


def test_pair_covariance_follows_the_correlation_definition():
    m = parse_measurements(GOOD)
    # cov_ij = r sigma_i sigma_j (definition of the correlation coefficient)
    assert m.covariance[0, 1] == m.covariance[1, 0] == pytest.approx(-0.445 * 0.25 * 0.61, rel=1e-15)
    np.testing.assert_allclose(np.diag(m.covariance), np.array([0.25, 0.61, 0.12, 1.5]) ** 2, rtol=1e-15)
    np.testing.assert_allclose(m.cholesky @ m.cholesky.T, m.covariance, rtol=1e-14, atol=1e-16)
    assert np.all(np.triu(m.cholesky, 1) == 0.0)


def test_result_is_immutable():
    m = parse_measurements(GOOD)
    with pytest.raises(dataclasses.FrozenInstanceError):
        m.value = np.zeros(4)
    for array in (m.z, m.value, m.error, m.covariance, m.cholesky, m.kind, m.line):
        with pytest.raises(ValueError):
            array[0] = array[1]


def test_header_order_case_bom_crlf_and_quotes_are_accepted():
    text = '\ufeffKind , Z,Error,"Value"\r\nhubble_parameter,1.5,10,140\r\n'  # BOM: Unicode U+FEFF
    m = parse_measurements(text.encode("utf-8"))
    assert m.kind.tolist() == ["hubble_parameter"] and m.z[0] == 1.5 and m.value[0] == 140.0
    # RFC 4180: "" inside a quoted cell is one quote
    m = parse_measurements('z,kind,value,error,label\n1,hubble_parameter,1,1,"say ""hi"""\n')
    assert m.label == ('say "hi"',)


def test_covariance_file_is_taken_whole():
    table = "z,kind,value,error\n0.1,distance_modulus,38,0.2\n0.2,distance_modulus,40,0.3\n"
    m = parse_measurements(table, "# full covariance\n0.04, 0.03\n0.03,0.09\n")
    assert m.covariance_source == "file"
    np.testing.assert_array_equal(m.covariance, [[0.04, 0.03], [0.03, 0.09]])


def test_every_kind_of_the_documentation_is_accepted():
    rows = "".join(f"1.0,{kind},{'40' if kind == 'distance_modulus' else '10'},1\n"
                   for kind in MEASUREMENT_KINDS)
    m = parse_measurements("z,kind,value,error\n" + rows)
    assert m.kinds_present == tuple(MEASUREMENT_KINDS)


# --- refusals: (file text, line, column, words in the message) ------------------------------
H = "z,kind,value,error\n"
REFUSALS = [
    # errors whose square leaves double precision (IEEE 754 binary64: normal numbers 2.2e-308 to
    # 1.8e308) are refused in the error column, not blamed on a correlation the file does not have
    (H + "0.5,hubble_parameter,90,1e-320\n", 2, 4, "cannot be squared"),
    (H + "0.5,hubble_parameter,1e300,1e-300\n", 2, 4, "cannot be squared"),
    (H + "0.5,hubble_parameter,90,1e200\n", 2, 4, "cannot be squared"),
    ("", 1, 1, "no header"),
    ("# only a comment\n", 1, 1, "no header"),
    (H, 2, 1, "no measurement rows"),
    ("z,kind,value\n", 1, 4, "required column 'error'"),
    ("z,kind,value,error,z\n", 1, 5, "duplicate column 'z'"),
    ("z,kind,value,error,colour\n", 1, 5, "unknown column"),
    ("z,kind,value,error,correlation\n", 1, 5, "needs a group"),
    (H + "0.5,dark_flow,1,1\n", 2, 2, "unknown kind"),
    (H + "0.5,hubble_parameter,80,0\n", 2, 4, "error must be positive"),
    (H + "0.5,hubble_parameter,80,-1\n", 2, 4, "error must be positive"),
    (H + "0.5,hubble_parameter,eighty,1\n", 2, 3, "not a number"),
    (H + "0.5,hubble_parameter,1_000,1\n", 2, 3, "not a number"),
    (H + "0.5,hubble_parameter,NaN,1\n", 2, 3, "NaN and infinity"),
    (H + "0.5,hubble_parameter,80,inf\n", 2, 4, "NaN and infinity"),
    (H + "0.5,hubble_parameter,80,-Infinity\n", 2, 4, "NaN and infinity"),
    # IEEE 754 binary64: the largest finite value is about 1.8e308
    (H + "0.5,hubble_parameter,2e308,1\n", 2, 3, "overflows"),
    (H + "0.5,hubble_parameter,,1\n", 2, 3, "empty cell"),
    (H + "0.5,hubble_parameter,80\n", 2, 4, "a cell is missing"),
    (H + "0.5,hubble_parameter,80,1,7\n", 2, 5, "remove the extra"),
    (H + "0,distance_modulus,30,1\n", 2, 1, "redshift"),
    (H + "-0.5,hubble_parameter,80,1\n", 2, 1, "redshift"),
    (H + "2e5,hubble_parameter,80,1\n", 2, 1, "redshift"),
    (H + "0.5,comoving_distance,-100,1\n", 2, 3, "must be positive"),
    ("z,kind,value,error,z_helio\n0.5,hubble_parameter,80,1,0.5\n", 2, 5, "distance_modulus rows only"),
    ("z,kind,value,error,group,correlation\n0.5,dm_over_rd,13,1,a,\n", 2, 6, "no correlation"),
    ("z,kind,value,error,group,correlation\n0.5,dm_over_rd,13,1,,0.3\n", 2, 6, "needs a group"),
    ("z,kind,value,error,group,correlation\n0.5,dm_over_rd,13,1,a,1.0\n", 2, 6, "-1 < r < 1"),
    ("z,kind,value,error,group,correlation\n0.5,dm_over_rd,13,1,a,0.3\n", 2, 5, "exactly two"),
    ("z,kind,value,error,group,correlation\n0.5,dm_over_rd,13,1,a,0.3\n0.5,dh_over_rd,20,1,a,0.3\n"
     "0.5,dv_over_rd,20,1,a,0.3\n", 4, 5, "exactly two"),
    ("z,kind,value,error,group,correlation\n0.5,dm_over_rd,13,1,a,0.3\n0.5,dh_over_rd,20,1,a,0.2\n",
     3, 6, "differs"),
    (H + '0.5,"hubble_parameter,80,1\n', 2, 2, "not closed"),
    (H + '0.5,"hubble_parameter"x,80,1\n', 2, 2, "closing quote"),
    # RFC 3629: 0xff never occurs in UTF-8; Latin-1 text with an accent is not UTF-8 either
    (H.encode() + b"0.5,hubble_parameter,80,1\n0.7,\xff\n", 3, 2, "not UTF-8"),
    ("z,kind,value,error,label\n0.5,hubble_parameter,80,1,Malmö\n".encode("latin-1"), 2, 5, "not UTF-8"),
    (H.encode() + b"0.5,hubble_parameter,8\x000,1\n", 2, 3, "NUL byte"),
    (H + "0.5,hubble_parameter,80,1\x07\n", 2, 4, "control character U+0007"),
    (b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR", 1, 1, "not UTF-8"),
]


@pytest.mark.parametrize("text, line, column, words", REFUSALS)
def test_refusals_name_line_and_column(text, line, column, words):
    error = refused(text)
    assert (error.source, error.line, error.column) == ("measurements", line, column), str(error)
    assert words in str(error)
    assert f"line {line}, column {column}" in str(error)


def test_limits_are_enforced_with_the_line_where_they_bite():
    limits = MeasurementLimits(max_bytes=200, max_rows=3, max_cell_chars=20)
    row = "0.5,hubble_parameter,80,1\n"
    error = refused(H + row * 20, limits=limits)  # 19 + 26*20 bytes > 200
    assert "larger than the limit of 200 bytes" in str(error)
    assert error.line == (H + row * 20).encode()[:200].count(b"\n") + 1
    error = refused(H + row * 4, limits=limits)
    assert (error.line, "more than 3") == (5, "more than 3") and "more than 3" in str(error)
    error = refused("z,kind,value,error,label\n0.5,hubble_parameter,80,1," + "x" * 21 + "\n", limits=limits)
    assert (error.line, error.column) == (2, 5) and "limit is 20" in str(error)
    # a huge cell under the default limits
    error = refused("z,kind,value,error\n0.5,hubble_parameter," + "9" * 5000 + ",1\n")
    assert (error.line, error.column) == (2, 3) and "characters" in str(error)


def test_default_limits_are_the_documented_ones():
    limits = MeasurementLimits()
    assert (limits.max_bytes, limits.max_rows, limits.max_cell_chars,
            limits.max_covariance_bytes) == (1 << 20, 5000, 200, 16 << 20)


TWO = "z,kind,value,error\n0.1,distance_modulus,38,0.2\n0.2,distance_modulus,40,0.3\n"
COVARIANCE_REFUSALS = [
    ("0.04,0.03\n", 2, 1, "1 rows where 2"),
    ("0.04,0.03\n0.03,0.09\n0.1,0.1\n", 3, 1, "more than 2 rows"),
    ("0.04,0.03\n0.03\n", 2, 2, "1 numbers where 2"),
    ("0.04,0.03\n0.02,0.09\n", 2, 1, "not symmetric"),
    ("0.04,0.07\n0.07,0.09\n", 2, 2, "not positive-definite"),  # |r| = 1.17 > 1
    ("0.04,0.06\n0.06,0.09\n", 2, 2, "not positive-definite"),  # r = 1 exactly: singular
    ("0.05,0.0\n0.0,0.09\n", 1, 1, "differs from the error"),
    ("0.04,x\nx,0.09\n", 1, 2, "not a number"),
    ("0.04,nan\nnan,0.09\n", 1, 2, "NaN"),
    ("-0.04,0\n0,0.09\n", 1, 1, "must be positive"),
    (b"0.04,0\n0,0.09\xfe\n", 2, 2, "not UTF-8"),
]


@pytest.mark.parametrize("text, line, column, words", COVARIANCE_REFUSALS)
def test_covariance_refusals_name_line_and_column(text, line, column, words):
    error = refused(TWO, text)
    assert (error.source, error.line, error.column) == ("covariance", line, column), str(error)
    assert words in str(error)


def test_groups_and_covariance_file_do_not_mix():
    table = ("z,kind,value,error,group,correlation\n0.5,dm_over_rd,13,1,a,0.3\n"
             "0.5,dh_over_rd,20,1,a,0.3\n")
    error = refused(table, "1,0.3\n0.3,1\n")
    assert (error.line, error.column) == (2, 5) and "covariance file gives every correlation" in str(error)


# --- fuzzing -------------------------------------------------------------------------------

def _check_error_only(data, covariance=None):
    n_lines = (data.count(b"\n") if isinstance(data, bytes) else data.count("\n")) + 2
    try:
        result = parse_measurements(data, covariance)
    except MeasurementFormatError as error:
        assert 1 <= error.line <= max(n_lines, 2) + 1
        assert error.column >= 1
        assert error.source in ("measurements", "covariance")
        assert f"line {error.line}, column {error.column}" in str(error)
    else:
        assert isinstance(result, MeasurementSet) and len(result) >= 1
        assert np.all(result.error > 0) and np.all(np.isfinite(result.value))


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.binary(max_size=2000))
def test_arbitrary_bytes_raise_only_the_format_error(data):
    _check_error_only(data)


CELLS = st.sampled_from(["0.5", "1", "-1", "0", "1e400", "nan", "inf", "", "x", '"q"', '"', "1,2",
                         "\u0661", "\x00", "\x7f", " 2 ", "1e-3", "1_0", "0x10", "+.5", "5."]
                        + list(MEASUREMENT_KINDS) + list(MEASUREMENT_COLUMNS))


@st.composite
def near_valid_tables(draw):
    """Tables that look right, so the fuzzing reaches the checks behind the header."""
    names = list(MEASUREMENT_COLUMNS)
    header = draw(st.lists(st.sampled_from(names), min_size=1, max_size=9))
    lines = [",".join(header)]
    for _ in range(draw(st.integers(0, 6))):
        row = []
        for name in header:
            if name == "kind":
                row.append(draw(st.sampled_from(list(MEASUREMENT_KINDS) + ["dark_flow"])))
            elif name in ("label", "group"):
                row.append(draw(st.sampled_from(["", "a", "b", '"x, y"'])))
            else:
                row.append(draw(st.one_of(CELLS, st.floats(allow_nan=True).map(repr))))
        lines.append(",".join(row))
    end = draw(st.sampled_from(["\n", "\r\n"]))
    return end.join(lines) + draw(st.sampled_from(["", end]))


@settings(max_examples=600, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(near_valid_tables())
def test_near_valid_tables_raise_only_the_format_error(text):
    _check_error_only(text)


@settings(max_examples=300, deadline=None)
@given(st.one_of(st.binary(max_size=300),
                 st.lists(st.lists(st.one_of(CELLS, st.floats().map(repr)), min_size=0, max_size=3),
                          max_size=4).map(lambda rows: "\n".join(",".join(r) for r in rows))))
def test_arbitrary_covariance_files_raise_only_the_format_error(covariance):
    _check_error_only(TWO, covariance)


def test_text_with_lone_surrogates_is_refused_cleanly():
    error = refused("z,kind,value,error\n0.5,hubble_parameter,80,1,\ud800\n")
    assert error.line == 2 and "not UTF-8" in str(error)
