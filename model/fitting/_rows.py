"""Reading comma-separated text tables: lines, then cells, each fault placed by line and column.

One reader for every table the project takes in (measurement and covariance files, redshift
catalogues). Lines end in ``\\n`` or ``\\r\\n``; the text is UTF-8 (RFC 3629), a leading
byte-order mark is dropped; control characters other than tab are refused (a NUL byte is the
usual sign of a binary file). Cells are split by the standard library's ``csv`` module in
strict mode: a cell may be wrapped in double quotes to hold a comma, ``""`` inside quotes is
one quote (RFC 4180), and a quoted cell cannot span lines. Cells are trimmed of spaces and
tabs. Lines that are blank or start with ``#`` are not rows.

Errors, drawn as a tree::

    ValueError
    └── ModelError                    (model._errors)
        └── TableFormatError          a table breaks these rules; .source, .line, .column
            └── MeasurementFormatError    (model.fitting._measurements)
"""

import csv
import io
import itertools
import re

from .._errors import ModelError

__all__ = ["TableFormatError", "read_lines", "content_cells", "read_rows", "sniff_delimiter", "DELIMITERS"]

# Characters refused anywhere: C0 controls except tab, DEL, C1 controls.
_CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f-\x9f]")
_BOM = b"\xef\xbb\xbf"
# Lines decoded and checked at once: whole-block decoding and searching run in C.
_BLOCK_LINES = 8192


class TableFormatError(ModelError):
    """A text table breaks the reading rules; nothing of it was used.

    Attributes
    ----------
    source : str
        Which file is at fault (``"measurements"``, ``"covariance"``, ``"redshift"``...).
    line : int
        1-based physical line number in that file.
    column : int
        1-based cell number on that line (for a problem between cells, the cell it falls
        in; for a missing cell, the position it should have).
    column_name : str or None
        Header name of that column, where there is one.
    reason : str
        What is wrong and how to put it right.
    """

    def __init__(self, source, line, column, reason, column_name=None):
        self.source = source
        self.line = int(line)
        self.column = int(column)
        self.column_name = column_name
        self.reason = reason
        where = f"{source} file, line {self.line}, column {self.column}"
        if column_name:
            where += f" ({column_name})"
        super().__init__(f"{where}: {reason}")


def _cell_index(prefix):
    """1-based cell number at the end of ``prefix`` (quote-aware count of separating commas)."""
    inside, count = False, 1
    for char in prefix:
        if char == '"':
            inside = not inside
        elif char == "," and not inside:
            count += 1
    return count


def _as_handle(data, source, max_bytes):
    if hasattr(data, "read"):
        data.seek(0)
        return data
    if isinstance(data, str):
        data = data.encode("utf-8", "surrogatepass")
    elif not isinstance(data, (bytes, bytearray, memoryview)):
        raise TypeError(f"{source}: expected bytes, str or a binary file, got {type(data).__name__}")
    data = bytes(data)
    if max_bytes is not None and len(data) > max_bytes:
        line = data.count(b"\n", 0, max_bytes) + 1
        raise TableFormatError(
            source, line, 1, f"the file is larger than the limit of {max_bytes} bytes; "
            "the limit is reached on this line")
    return io.BytesIO(data)


def _decode_block(raw_lines, first_number, source):
    """The lines of one block as text, without their line ends; refuses non-UTF-8 and controls."""
    raw = b"".join(raw_lines)
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        offset = raw.count(b"\n", 0, exc.start)
        line = raw_lines[offset]
        start = exc.start - (raw.rfind(b"\n", 0, exc.start) + 1)
        prefix = line[:start].decode("utf-8", "replace")
        raise TableFormatError(
            source, first_number + offset, _cell_index(prefix),
            f"byte 0x{line[start]:02x} at character {len(prefix) + 1} is not UTF-8; "
            "save the file as UTF-8 text (a binary file or another encoding was given)") from None
    lines = text.split("\n")
    if text.endswith("\n"):
        lines.pop()
    if "\r" in text:
        lines = [t[:-1] if t.endswith("\r") else t for t in lines]
    bad = _CONTROL.search(text.replace("\r\n", "\n"))
    if bad:
        for offset, line in enumerate(lines):
            found = _CONTROL.search(line)
            if found:
                char = found.group()
                what = ("a NUL byte: this looks like a binary file" if char == "\x00"
                        else f"control character U+{ord(char):04X}")
                raise TableFormatError(
                    source, first_number + offset, _cell_index(line[: found.start()]),
                    f"character {found.start() + 1}: {what}; only plain text is accepted")
    return lines


def read_lines(data, source, *, max_bytes=None):
    """Every physical line of a text table as ``(line_number, text)``, line ends removed.

    Parameters
    ----------
    data : bytes, str or binary file
        The table (a file is read from its start, block by block, so memory stays bounded).
    source : str
        Name of the file in messages (``"<source> file, line …, column …: …"``).
    max_bytes : int, optional
        Refuse bytes or str larger than this, naming the line where the limit is reached.

    Yields
    ------
    (int, str)
        1-based line number and the line's text (nothing after the last line end).

    Raises
    ------
    TableFormatError
        Bytes that are not UTF-8 or a control character other than tab, with line and cell.
    """
    handle = _as_handle(data, source, max_bytes)
    number = 1
    first = True
    while True:
        raw_lines = list(itertools.islice(handle, _BLOCK_LINES))
        if not raw_lines:
            break
        if first and raw_lines[0].startswith(_BOM):
            raw_lines[0] = raw_lines[0][len(_BOM):]
        first = False
        for text in _decode_block(raw_lines, number, source):
            yield number, text
            number += 1


def _quote_fault(text):
    """(cell, reason) of the quoting fault that the csv module refused on this line."""
    column, i, n = 1, 0, len(text)
    while i <= n:
        while i < n and text[i] == " ":
            i += 1
        if i < n and text[i] == '"':
            j = i + 1
            while True:
                k = text.find('"', j)
                if k < 0:
                    return column, 'a quoted cell is not closed; add the closing "'
                if text.startswith('"', k + 1):
                    j = k + 2
                    continue
                break
            if k + 1 < n and text[k + 1] != ",":
                return column, "text follows a closing quote; put the comma right after the quoted cell"
            i = k + 2
        else:
            k = text.find(",", i)
            if k < 0:
                break
            i = k + 1
        column += 1
    return 1, "the line cannot be read as comma-separated cells"


# Cell separators a table may use, in the order they are looked for in its header line: a
# spreadsheet's copy is tab-separated, and some locales save CSV with semicolons.
DELIMITERS = {",": "comma", "\t": "tab", ";": "semicolon"}


def sniff_delimiter(data, source="table", *, max_bytes=None):
    """The cell separator of a table, from its first line that is not blank or a ``#`` comment:
    a comma if it has one, else a tab, else a semicolon (a comma when there is none)."""
    for _, text in read_lines(data, source, max_bytes=max_bytes):
        stripped = text.strip(" \t")
        if stripped and not stripped.startswith("#"):
            return next((d for d in DELIMITERS if d in text), ",")
    return ","


def content_cells(text, source, number, delimiter=","):
    """The trimmed cells of one line, or None for a blank or ``#`` comment line.

    Raises
    ------
    TableFormatError
        For an unclosed quoted cell or text after a closing quote, naming the cell.
    """
    stripped = text.strip(" \t")
    if not stripped or stripped.startswith("#"):
        return None
    if '"' not in text:  # what csv would give, without its per-line set-up
        return [cell.strip(" \t") for cell in text.split(delimiter)]
    try:
        cells = next(csv.reader([text], strict=True, skipinitialspace=True, delimiter=delimiter))
    except csv.Error:
        column, reason = _quote_fault(text)
        raise TableFormatError(source, number, column, reason) from None
    return [cell.strip(" \t") for cell in cells]


def read_rows(data, source, *, max_bytes=None, delimiter=","):
    """The rows of a text table as ``(line_number, cells)``, blank and comment lines skipped.

    :func:`read_lines` followed by :func:`content_cells`; raises :class:`TableFormatError`.
    """
    for number, text in read_lines(data, source, max_bytes=max_bytes):
        cells = content_cells(text, source, number, delimiter)
        if cells is not None:
            yield number, cells
