"""Catalogue columns: a CSV with a redshift column comes back with every `model.evaluate`
quantity added, for one model of the link or for all of them.

The upload is read twice from its (spooled) file, in chunks of `CHUNK_ROWS` lines, so memory
stays bounded whatever the size: the first pass checks every redshift (a bad one is refused with
its line and column before anything is sent), the second evaluates and streams the answer.
Lines other than the header and the rows (blank lines, ``#`` comments) are passed through.
"""

from __future__ import annotations

import io
import math
import time
from typing import IO, Iterator

import numpy as np

import model
from server import codec

__all__ = ["CatalogueError", "MAX_ROWS", "MAX_BYTES", "CHUNK_ROWS", "checked", "stream", "column_names"]

MAX_ROWS = 1_000_000
MAX_BYTES = 64 << 20  # 64 MiB: a million rows of a few columns (judgement, no source)
CHUNK_ROWS = 65536


class CatalogueError(ValueError):
    """The redshift file cannot be used; names the line and column (1-based)."""

    def __init__(self, line: int, column: int, reason: str):
        self.line, self.column = line, column
        super().__init__(f"redshift file, line {line}, column {column}: {reason}")


def _refused(err: model.TableFormatError) -> CatalogueError:
    return CatalogueError(err.line, err.column, err.reason)


def _lines(handle: IO[bytes]) -> Iterator[tuple[int, str]]:
    """Every line as (number, text), read by `model.read_lines` (UTF-8, BOM, line ends,
    control characters)."""
    try:
        yield from model.read_lines(handle, "redshift")
    except model.TableFormatError as err:
        raise _refused(err) from None


def _cells(text: str, number: int) -> list[str] | None:
    """The line's trimmed cells (`model.content_cells`), None for a blank or comment line."""
    try:
        return model.content_cells(text, "redshift", number)
    except model.TableFormatError as err:
        raise _refused(err) from None


def _header(handle) -> tuple[int, int, int]:
    """(line of the header, index of the z column, number of header cells)."""
    for number, text in _lines(handle):
        cells = _cells(text, number)
        if cells is None:
            continue
        names = [c.lower() for c in cells]
        hits = [i for i, n in enumerate(names) if n == "z"]
        if len(hits) != 1:
            raise CatalogueError(number, (hits[1] + 1) if hits else 1,
                                 "the header needs exactly one column named z (the redshift); "
                                 f"found {len(hits)}")
        return number, hits[0], len(names)
    raise CatalogueError(1, 1, "no header line; the first line that is not blank or a # comment must name "
                               "the columns, one of them z")


def _redshift(cell: str, number: int, column: int) -> float:
    text = cell.strip()
    if text.lower() in ("nan", "+nan", "-nan", "inf", "+inf", "-inf", "infinity", "+infinity", "-infinity"):
        raise CatalogueError(number, column, f"{text!r}: NaN and infinity are not accepted")
    try:
        value = float(text)
    except ValueError:
        raise CatalogueError(number, column, f"{text!r} is not a number (write e.g. 0.51 or 1.2e-3)") from None
    if not math.isfinite(value) or not codec.Z_MIN <= value <= codec.Z_MAX:
        raise CatalogueError(number, column, f"z = {text} is outside the model's range "
                                             f"{codec.format_number(codec.Z_MIN)} ≤ z ≤ {codec.format_number(codec.Z_MAX)}")
    return value


def _slow_chunk(lines, z_index: int, width: int) -> list:
    """Line by line, naming the first bad line and column (raises `CatalogueError`)."""
    out = []
    for number, text in lines:
        cells = _cells(text, number)
        if cells is None:
            out.append(None)
            continue
        if len(cells) != width:
            raise CatalogueError(number, min(len(cells), width) + 1,
                                 f"{len(cells)} cells where the header has {width}")
        out.append(_redshift(cells[z_index], number, z_index + 1))
    return out


def _fast_chunk(lines, z_index: int, width: int):
    """The redshifts of a chunk of plain rows (no quotes, comments or blank lines, every row
    `width` cells) by numpy's C parser, or None when anything is unusual or wrong: the slow
    path then names the line and column."""
    texts = [text for _, text in lines]
    joined = "\n".join(texts)
    # whole-chunk checks (a line with a wrong cell count that others make up for, or a blank
    # line of spaces, makes numpy's parser fail below, which also sends the chunk to the slow path)
    if ('"' in joined or "#" in joined or "\n\n" in joined or not joined.strip()
            or joined.count(",") != (width - 1) * len(texts)):
        return None
    try:
        z = np.loadtxt(texts, delimiter=",", usecols=[z_index], comments=None, dtype=float, ndmin=1)
    except ValueError:
        return None
    if not (np.isfinite(z).all() and z.min() >= codec.Z_MIN and z.max() <= codec.Z_MAX):
        return None
    return z


def _rows(handle, start: int, z_index: int, width: int) -> Iterator[tuple[list, np.ndarray]]:
    """Chunks of ``(lines, z)`` after the header: `lines` as (number, text), `z` (float array,
    NaN for lines passed through: blank lines and comments)."""
    chunk = []
    rows = 0

    def parsed(lines):
        nonlocal rows
        z = _fast_chunk(lines, z_index, width)
        if z is None:
            z = np.array([np.nan if v is None else v for v in _slow_chunk(lines, z_index, width)], dtype=float)
        rows += int(np.count_nonzero(~np.isnan(z)))
        if rows > MAX_ROWS:
            raise CatalogueError(lines[-1][0], 1, f"more than {MAX_ROWS} rows (the limit)")
        return lines, z

    for number, text in _lines(handle):
        if number <= start:
            continue
        chunk.append((number, text))
        if len(chunk) >= CHUNK_ROWS:
            yield parsed(chunk)
            chunk = []
    if chunk:
        yield parsed(chunk)


def checked(handle) -> tuple[int, list[np.ndarray]]:
    """First pass: refuse a bad file (raises `CatalogueError`); returns the number of rows and
    the redshifts of every chunk (NaN for lines passed through), which the second pass then
    reuses instead of reading them again."""
    start, z_index, width = _header(handle)
    redshifts = [z for _, z in _rows(handle, start, z_index, width)]
    return sum(int(np.count_nonzero(~np.isnan(z))) for z in redshifts), redshifts


def column_names(models: list[tuple[int, object]]) -> list[str]:
    """``m<slot>:<quantity>[<unit>]`` for every model and every `model.QUANTITIES` key."""
    return [f"m{slot}:{key}[{q.unit or 'dimensionless'}]" for slot, _ in models
            for key, q in model.QUANTITIES.items()]


_CELL = 16  # sign, d, ".", 8 digits, "e", sign, up to 3 exponent digits: 9 significant digits
_PAD = 0  # filler removed before sending; a NUL never appears in an accepted file (see _lines)


def _words(texts: list[bytes]) -> np.ndarray:
    """Texts of at most 4 bytes as uint32 words (padded with `_PAD`), in machine byte order."""
    return np.frombuffer(b"".join(t.ljust(4, bytes([_PAD])) for t in texts), dtype=np.uint32).copy()


# A cell is four 4-byte words: [sign, d0, ".", d1] [d2 d3 d4 d5] [d6 d7 d8 "e"] [±, exponent].
_LEAD = np.concatenate([_words([(sign + f"{d // 10}.{d % 10}").encode() for d in range(100)]) for sign in ("", "-")])
_MIDDLE = _words([f"{d:04d}".encode() for d in range(10000)])
_TAIL = _words([f"{d:03d}e".encode() for d in range(1000)])
_SCALE_ZERO = 330
_EXPONENT = _words([f"{'-' if e < 0 else '+'}{abs(e):02d}".encode() for e in range(-_SCALE_ZERO, _SCALE_ZERO + 1)])
with np.errstate(over="ignore"):
    _SCALE = 10.0 ** np.arange(-_SCALE_ZERO, _SCALE_ZERO + 1, dtype=float)  # 10^k, looked up


_SLICE = 16384  # numbers formatted at a time: every pass over them then stays in the CPU cache


def _number_cells(values: np.ndarray) -> np.ndarray:
    """Fixed-width ASCII cells (uint8, shape ``values.shape + (16,)``) with 9 significant digits,
    padded with `_PAD` bytes that are removed before sending (``-1.23456789e+03``); NaN is an
    empty cell. All in numpy, by table look-up of groups of digits: a Python loop per number
    would cost ~0.25 µs each, 17 numbers a row and model."""
    v = np.asarray(values, dtype=float)
    flat = v.reshape(-1)
    words = np.empty((flat.size, 4), dtype=np.uint32)
    irregular = []
    for start in range(0, flat.size, _SLICE):
        part = flat[start:start + _SLICE]
        bad = _words_of(part, words[start:start + _SLICE])
        if bad.size:
            irregular.append(bad + start)
    out = words.view(np.uint8).reshape(v.shape + (_CELL,))
    if irregular:
        cells = out.reshape(-1, _CELL)
        irregular = np.concatenate(irregular)
        cells[irregular] = _PAD  # NaN stays an empty cell
        values = flat[irregular]
        cells[irregular[values == np.inf], :3] = np.frombuffer(b"inf", dtype=np.uint8)
        cells[irregular[values == -np.inf], :4] = np.frombuffer(b"-inf", dtype=np.uint8)
        for k in irregular[np.isfinite(values)]:  # the tiniest numbers (|x| < 1e-290): rare
            text = ("%.9g" % flat[k]).encode("ascii")
            cells[k, :len(text)] = np.frombuffer(text, dtype=np.uint8)
    return out


def _words_of(flat: np.ndarray, words: np.ndarray) -> np.ndarray:
    """Fill `words` (n × 4 uint32) with the cells of `flat`; returns the indices of the values
    this fast path does not write (NaN, infinities, |x| < 1e-290)."""
    a = np.abs(flat)
    regular = np.isfinite(flat) & ((a >= 1e-290) | (a == 0.0))
    a[~regular] = 0.0
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        e = np.floor(np.log10(np.where(a > 0.0, a, 1.0))).astype(np.int64)
        m = np.rint(a * _SCALE[_SCALE_ZERO + 8 - e])
        # log10 rounded the wrong way, or the rounding carried into a tenth digit: redo those
        for _ in range(3):
            fix = np.flatnonzero((m >= 1e9) | ((m < 1e8) & (a > 0.0)))
            if not fix.size:
                break
            e[fix] += np.where(m[fix] >= 1e9, 1, -1)
            m[fix] = np.rint(a[fix] * _SCALE[_SCALE_ZERO + 8 - e[fix]])
    m = m.astype(np.uint32)  # nine digits fit below 2^32
    high = m // 1000
    lead = high // 10000
    words[:, 0] = _LEAD[lead + 100 * (np.signbit(flat) & (flat != 0.0))]
    words[:, 1] = _MIDDLE[high - lead * 10000]
    words[:, 2] = _TAIL[m - high * 1000]
    words[:, 3] = _EXPONENT[e + _SCALE_ZERO]
    return np.flatnonzero(~regular)


_ROW_SLICE = 2048  # rows assembled at a time (a few MB: the byte block stays in the CPU cache)


def _format_pieces(texts: list[bytes], columns: np.ndarray) -> Iterator[bytes]:
    """``text,cell,cell,...\n`` for every row, a few thousand rows a piece: `texts` are the rows
    as read (bytes, without their line end), `columns` the numbers (rows × columns), 9
    significant digits, NaN left empty."""
    for i in range(0, len(texts), _ROW_SLICE):
        yield _format_slice(texts[i:i + _ROW_SLICE], columns[i:i + _ROW_SLICE])


def _format_rows(texts: list[bytes], columns: np.ndarray) -> bytes:
    """`_format_pieces` joined."""
    return b"".join(_format_pieces(texts, columns))


def _format_slice(texts: list[bytes], columns: np.ndarray) -> bytes:
    n = len(texts)
    if not n:
        return b""
    lengths = np.fromiter(map(len, texts), dtype=np.int64, count=n)
    widest = int(lengths.max())
    k = columns.shape[1]
    block = np.empty((n, widest + k * (_CELL + 1) + 1), dtype=np.uint8)
    # the original text, left-aligned in its row
    text_part = block[:, :widest]
    text_part.fill(_PAD)
    text_part[np.arange(widest) < lengths[:, None]] = np.frombuffer(b"".join(texts), dtype=np.uint8)
    cells = block[:, widest:widest + k * (_CELL + 1)].reshape(n, k, _CELL + 1)
    cells[:, :, 0] = ord(",")
    cells[:, :, 1:] = _number_cells(columns)
    block[:, -1] = ord("\n")
    return block.tobytes().translate(None, bytes([_PAD]))


def _format_block(columns: list[np.ndarray]) -> list[str]:
    """Rows of 9-significant-digit cells, comma-separated (NaN left empty)."""
    if not columns or not len(columns[0]):
        return []
    text = _format_rows([b""] * len(columns[0]), np.stack([np.asarray(c, dtype=float) for c in columns], axis=1))
    return [row[1:] for row in text.decode("ascii").split("\n")[:-1]]


def _checked_lines(handle) -> list[bytes]:
    """The lines of a file that `checked` accepted, as bytes without their ends (split in one C
    call: the first pass has already refused whatever the line reader would)."""
    handle.seek(0)
    data = handle.read()
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    lines = data.split(b"\n")
    if lines and lines[-1] == b"":
        lines.pop()
    if b"\r" in data:
        lines = [line[:-1] if line.endswith(b"\r") else line for line in lines]
    return lines


def stream(handle, models: list[tuple[int, model.Cosmology]], deadline: float = math.inf,
           redshifts: list[np.ndarray] | None = None) -> Iterator[bytes]:
    """Second pass: the file with the columns added (chunks of UTF-8 bytes). Call `checked` first
    and pass its `redshifts`. Each chunk costs one `model.evaluate` per model;
    the last line says how many rows were written (``# complete: N rows``), so a copy cut short
    on the way is plain to see. Past the monotonic `deadline` the stream stops before its next
    chunk with a last line ``# incomplete: ...`` saying so."""
    start, z_index, width = _header(handle)
    if redshifts is None:
        redshifts = checked(handle)[1]
    lines = _checked_lines(handle)
    names = ",".join(column_names(models)).encode("utf-8")
    yield b"".join(line + b"\n" for line in lines[:start - 1]) + lines[start - 1] + b"," + names + b"\n"
    keys = list(model.QUANTITIES)
    written = 0
    for k, z in enumerate(redshifts):
        if time.monotonic() > deadline:
            yield (f"# incomplete: stopped after {written} rows, at the time this server gives one "
                   "catalogue; send a smaller file, or fewer models\n").encode("ascii")
            return
        texts = lines[start + k * CHUNK_ROWS:start + (k + 1) * CHUNK_ROWS]
        content = ~np.isnan(z)
        if not content.any():
            yield b"".join(t + b"\n" for t in texts)
            continue
        columns = np.empty((int(content.sum()), len(models) * len(keys)))
        with np.errstate(all="ignore"):
            for i, (_, cosmo) in enumerate(models):
                values = model.evaluate(cosmo, z[content])
                for j, key in enumerate(keys):
                    columns[:, i * len(keys) + j] = values[key]
        written += columns.shape[0]
        if content.all():
            yield from _format_pieces(texts, columns)  # pieces of a few MB: no copy of the chunk
            continue
        rows = iter(_format_rows([t for t, keep in zip(texts, content) if keep], columns).split(b"\n"))
        yield b"".join((next(rows) if keep else text) + b"\n" for text, keep in zip(texts, content.tolist()))
    yield f"# complete: {written} rows\n".encode("ascii")


# ----------------------------------------------------------------------------- the route


def _spooled(source):
    """A private copy of the upload (in memory up to 4 MiB, then on disk): Flask closes the
    request's own file when the view returns, before the answer has been streamed."""
    import tempfile

    spool = tempfile.SpooledTemporaryFile(max_size=4 << 20)
    total = 0
    while True:
        block = source.read(1 << 20)
        if not block:
            break
        total += len(block)
        if total > MAX_BYTES:
            return None
        spool.write(block)
    return spool


def handle():
    """``POST /api/v1/catalogue?<link query>&models=<slot>|all``: the redshift file (multipart
    field ``redshifts``, or the raw body) with the columns added, streamed as CSV. Refusals are
    JSON: 400 naming the link key or the file's line and column, 413 above the size limit."""
    import urllib.parse

    from flask import Response, current_app, jsonify, request, stream_with_context

    from server import compute

    def refuse(field, message, status=400, **where):
        return jsonify({"error": {"field": field, "message": message, **where}}), status

    # this route alone takes catalogues above the app-wide MAX_CONTENT_LENGTH (Flask >= 3.1)
    request.max_content_length = MAX_BYTES + 65536
    if request.content_length is not None and request.content_length > MAX_BYTES + 65536:
        return refuse("redshifts", f"redshifts: {request.content_length} bytes; the limit is {MAX_BYTES} bytes",
                      413)
    pairs = urllib.parse.parse_qsl(request.query_string.decode("utf-8", "replace"), keep_blank_values=True)
    wanted = next((v for k, v in pairs if k == "models"), None) or request.form.get("models") or ""
    state = codec.decode(urllib.parse.urlencode([(k, v) for k, v in pairs if k != "models"]))
    problems = state.problems()
    if problems:
        return refuse(problems[0].key, problems[0].message)
    resolved = compute.resolve_all(state)
    if wanted.strip() in ("", "ref"):
        chosen = [r for r in resolved if r.state.slot == codec.reference_slot(state)]
    elif wanted.strip() == "all":
        chosen = resolved
    else:
        chosen = [r for r in resolved if str(r.state.slot) == wanted.strip()]
        if not chosen:
            return refuse("models", f"models: {wanted!r} is not a model of the link; expected a slot of "
                                    f"{', '.join(map(str, state.slots()))}, 'ref' or 'all'")
    for r in chosen:
        if r.problem is not None:
            return refuse(r.problem.key, r.problem.message)
    budget = float(current_app.config["CATALOGUE_BUDGET_SECONDS"])
    deadline = time.monotonic() + budget
    handle_ = _spooled(request.files["redshifts"].stream if "redshifts" in request.files else request.stream)
    if handle_ is None:
        return refuse("redshifts", f"redshifts: the file is larger than the limit of {MAX_BYTES} bytes", 413)
    try:
        rows, redshifts = checked(handle_)
    except CatalogueError as err:
        handle_.close()
        return refuse("redshifts", str(err), line=err.line, column=err.column)
    models = [(r.state.slot, compute.cosmology_for(r.key)) for r in chosen]
    if time.monotonic() > deadline:
        handle_.close()
        return refuse("redshifts", f"redshifts: checking the file took longer than the {budget:g} s this "
                                   "server gives one catalogue; send a smaller file", 422)

    def answer():
        try:
            yield from stream(handle_, models, deadline, redshifts)
        finally:
            handle_.close()
    return Response(stream_with_context(answer()), mimetype="text/csv",
                    headers={"Content-Disposition": 'attachment; filename="catalogue-with-columns.csv"',
                             "X-Rows": str(rows)})
