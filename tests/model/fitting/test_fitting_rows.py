"""The one table reader (model.read_lines, content_cells, read_rows): line ends, byte-order mark,
UTF-8, control characters and quoted cells, each fault placed by line and cell.

References: RFC 4180 (quoted cells, "" for a quote, CRLF line ends), RFC 3629 (UTF-8: the
byte 0xff never occurs; U+FEFF as byte-order mark), the standard library's csv module as the
oracle for splitting quoted lines.
"""

import csv
import io

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from model import TableFormatError, content_cells, read_lines, read_rows


def refused(data):
    with pytest.raises(TableFormatError) as info:
        list(read_rows(data, "example"))
    return info.value


def test_line_ends_bom_comments_and_numbering():
    text = "\ufeff# note\r\n\r\nz , kind\r\n 1\t,  \"a, b\"\n\n2,c"
    assert list(read_rows(text.encode(), "example")) == [(3, ["z", "kind"]), (4, ["1", "a, b"]),
                                                         (6, ["2", "c"])]
    # a file gives the same lines as its bytes
    assert list(read_lines(io.BytesIO(text.encode()), "example")) == list(read_lines(text, "example"))


def test_rfc4180_quotes():
    assert content_cells('1,"say ""hi""",x', "example", 1) == ["1", 'say "hi"', "x"]
    assert content_cells('"",a', "example", 1) == ["", "a"]
    assert content_cells("   ", "example", 1) is None and content_cells(" # c", "example", 1) is None


@pytest.mark.parametrize("data, line, column, words", [
    (b"a,b\n1,\xff\n", 2, 2, "not UTF-8"),                    # RFC 3629: 0xff is never UTF-8
    ("a,b\n1,\u00e9\n".encode("latin-1"), 2, 2, "not UTF-8"),  # Latin-1 accent
    (b"a,b\n1,2\x00\n", 2, 2, "NUL byte"),
    ("a,b\n1,2\x0c\n", 2, 2, "control character U+000C"),
    ("a,b\n1\r2,3\n", 2, 1, "control character U+000D"),       # only \n and \r\n end lines
    ('a,b\n1,"2\n', 2, 2, "not closed"),
    ('a,b\n"1"x,2\n', 2, 1, "closing quote"),
    ('a,"b,c",d\n"1",2,"3" ,4\n', 2, 3, "closing quote"),
])
def test_faults_name_line_and_cell(data, line, column, words):
    error = refused(data)
    assert (error.source, error.line, error.column) == ("example", line, column)
    assert f"example file, line {line}, column {column}" in str(error) and words in str(error)


def test_faults_beyond_the_first_block_keep_their_line_number():
    body = b"z\n" + b"0.5\n" * 20000 + b"0.5\xff\n"
    with pytest.raises(TableFormatError) as info:
        list(read_lines(io.BytesIO(body), "example"))
    assert info.value.line == 20002


def test_size_limit_names_the_line_where_it_bites():
    with pytest.raises(TableFormatError, match="larger than the limit of 10 bytes") as info:
        list(read_lines("ab\ncd\nefgh\nij\n", "example", max_bytes=10))
    assert info.value.line == 3


CELL = st.text(alphabet=st.sampled_from(list('ab ,"1')), max_size=6)


@settings(max_examples=300, deadline=None)
@given(st.lists(CELL, min_size=1, max_size=5))
def test_quoted_lines_split_as_the_csv_module_writes_them(cells):
    # csv.writer quotes what needs quoting (RFC 4180); reading must give the cells back, trimmed
    out = io.StringIO()
    csv.writer(out, quoting=csv.QUOTE_MINIMAL, lineterminator="\n").writerow(cells)
    line = out.getvalue().rstrip("\n")
    got = content_cells(line, "example", 1)
    if not line.strip(" \t") or line.strip(" \t").startswith("#"):
        assert got is None
    else:
        assert got == [c.strip(" \t") for c in cells]


def test_tab_and_semicolon_tables_read_as_the_same_measurements():
    # a spreadsheet copies cells tab-separated; some locales save CSV with semicolons
    import model

    text = "z,kind,value,error,label\n0.51,dm_over_rd,13.6,0.25,a b\n0.8,hubble_parameter,95,9,\"c, d\"\n"
    comma = model.parse_measurements(text.encode())
    for separator in ("\t", ";"):
        other = text.replace(",", separator).replace('"c' + separator + ' d"', '"c, d"')
        got = model.parse_measurements(other.encode())
        assert got.delimiter == separator
        assert got.value.tolist() == comma.value.tolist() and got.label == comma.label
    assert comma.delimiter == "," and model.DELIMITERS[comma.delimiter] == "comma"
