"""Measurement tables: the file format, its limits and its parser.

A measurement table is a small CSV file of our own design (documented in
``docs/measurements-format.md``): one row per measurement, with the columns

========== ======== ==========================================================
column     required meaning
========== ======== ==========================================================
z          yes      redshift (CMB frame for supernovae)
kind       yes      one of :data:`MEASUREMENT_KINDS`
value      yes      the measured number, in the unit of its kind
error      yes      its 1-sigma uncertainty, same unit, > 0
label      no       free text (at most ``max_cell_chars`` characters)
z_helio    no       heliocentric redshift, rows of a heliocentric kind only
group      no       a name shared by exactly two rows whose errors correlate
correlation no      their correlation coefficient, -1 < r < 1 (both rows)
========== ======== ==========================================================

and optionally a covariance file: N lines of N comma-separated numbers, the
complete covariance of the N rows in file order (``error`` must then be the
square root of its diagonal).

Parsing is all or nothing. Every refusal is a :class:`MeasurementFormatError`
that names the file, the line (1-based, counting every physical line) and the
column (1-based cell number) at fault. Lines and cells are read by
:func:`model.fitting.read_rows` (UTF-8, quoted cells as in RFC 4180). Errors, drawn as a tree::

    ValueError
    └── ModelError                        (model._errors)
        └── TableFormatError              (model.fitting._rows) .source, .line, .column
            └── MeasurementFormatError    a measurement or covariance file breaks the format
"""

import dataclasses
import math
import re

import numpy as np
from scipy.linalg import lapack

from ._kinds import MEASUREMENT_KINDS
from ._rows import TableFormatError, read_rows, sniff_delimiter

__all__ = [
    "MEASUREMENT_COLUMNS",
    "MeasurementFormatError",
    "MeasurementLimits",
    "MeasurementSet",
    "parse_measurements",
    "read_measurements",
]

#: column name -> required?
MEASUREMENT_COLUMNS = {
    "z": True,
    "kind": True,
    "value": True,
    "error": True,
    "label": False,
    "z_helio": False,
    "group": False,
    "correlation": False,
}

# Largest redshift accepted: the range model.evaluate covers.
_Z_MAX = 1.0e5
# Relative asymmetry tolerated in a covariance file, |C_ij - C_ji| / sqrt(C_ii C_jj):
# files printed with 9+ significant digits pass, a transposed or mistyped entry does not.
_SYMMETRY_TOLERANCE = 1.0e-8
# The error column must equal sqrt(diag C) to this relative tolerance (rounded printing).
_DIAGONAL_TOLERANCE = 1.0e-2
# ASCII decimal numbers only: float() alone would also take "1_0", "nan" and non-ASCII digits.
_NUMBER = re.compile(r"[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
_NOT_FINITE = {"nan", "+nan", "-nan", "inf", "+inf", "-inf", "infinity", "+infinity", "-infinity"}


class MeasurementFormatError(TableFormatError):
    """A measurement or covariance file breaks the format; nothing was loaded.

    ``source`` is ``"measurements"`` or ``"covariance"``; ``line``, ``column``,
    ``column_name`` and ``reason`` as in :class:`~model.fitting.TableFormatError`.
    """


@dataclasses.dataclass(frozen=True)
class MeasurementLimits:
    """Size limits the parser enforces before and while reading.

    Attributes
    ----------
    max_bytes : int
        Largest measurement file, bytes (default 1 MiB).
    max_rows : int
        Most measurement rows (default 5000).
    max_cell_chars : int
        Longest cell, characters after trimming spaces (default 200).
    max_covariance_bytes : int
        Largest covariance file, bytes (default 16 MiB: about 1000 x 1000
        entries printed with 16 characters each).
    max_covariance_rows : int
        Most measurement rows a covariance file may cover (default 2000): a
        file's covariance and its factor are kept dense, 2 x 8 N^2 bytes (64 MB
        at 2000 rows). Correlated pairs (``group``, ``correlation``) have no
        such limit: they are kept as 2 x 2 blocks.
    """

    max_bytes: int = 1 << 20
    max_rows: int = 5000
    max_cell_chars: int = 200
    max_covariance_bytes: int = 16 << 20
    max_covariance_rows: int = 2000


def _frozen(array):
    array = np.array(array)
    array.flags.writeable = False
    return array


@dataclasses.dataclass(frozen=True, eq=False, repr=False)
class MeasurementSet:
    """An immutable, validated table of measurements with their covariance.

    Arrays are read-only and aligned: entry ``i`` of each belongs to row ``i``
    of the file (file order).

    Attributes
    ----------
    z : ndarray
        Redshift of each measurement.
    kind : ndarray of str
        Kind of each measurement (a key of :data:`MEASUREMENT_KINDS`).
    value, error : ndarray
        Measured value and its 1-sigma error, in the kind's unit.
    z_helio : ndarray
        Heliocentric redshift (equal to ``z`` where the file leaves it empty).
    label, group : tuple of str
        Free text and pair name ('' where empty).
    line : ndarray of int
        Line of the measurement file each row came from (for messages).
    factor_diagonal : ndarray, shape (N,)
        Diagonal of the lower Cholesky factor L of the covariance,
        ``C = L @ L.T``.
    pair_rows : ndarray of int, shape (M, 2)
        The rows ``(i, j)``, ``i < j``, of each correlated pair (M = 0 without
        pairs or with a covariance file).
    pair_covariance, pair_factor : ndarray, shape (M,)
        ``C[i, j]`` and ``L[j, i]`` of each pair: with the diagonal, the whole
        covariance and factor of a table without a covariance file (2 x 2
        blocks, never an N x N matrix).
    file_covariance, file_cholesky : ndarray, shape (N, N), or None
        The covariance file's matrix and its factor L (dense; at most
        ``MeasurementLimits.max_covariance_rows`` rows); None otherwise.
    covariance_source : str
        ``"diagonal"``, ``"pairs"`` or ``"file"``.
    """

    z: np.ndarray
    kind: np.ndarray
    value: np.ndarray
    error: np.ndarray
    z_helio: np.ndarray
    label: tuple
    group: tuple
    line: np.ndarray
    factor_diagonal: np.ndarray
    pair_rows: np.ndarray
    pair_covariance: np.ndarray
    pair_factor: np.ndarray
    file_covariance: object
    file_cholesky: object
    covariance_source: str
    delimiter: str = ","  # the measurement file's cell separator, as found in its header line

    def __len__(self):
        return int(self.z.size)

    @property
    def covariance(self):
        """The complete covariance as a dense N x N array, built on each call (for small
        tables and notebooks; the likelihood uses the blocks). Read-only."""
        if self.file_covariance is not None:
            return self.file_covariance
        matrix = np.diag(self.error**2)
        i, j = self.pair_rows.T
        matrix[i, j] = matrix[j, i] = self.pair_covariance
        return _frozen(matrix)

    @property
    def cholesky(self):
        """Its lower Cholesky factor L (``covariance = L @ L.T``) as a dense N x N array,
        built on each call like `covariance`. Read-only."""
        if self.file_cholesky is not None:
            return self.file_cholesky
        factor = np.diag(self.factor_diagonal)
        i, j = self.pair_rows.T
        factor[j, i] = self.pair_factor
        return _frozen(factor)

    @property
    def kinds_present(self):
        """Kinds that occur, in the order of :data:`MEASUREMENT_KINDS`."""
        present = set(self.kind.tolist())
        return tuple(k for k in MEASUREMENT_KINDS if k in present)

    def __repr__(self):
        counts = ", ".join(f"{k}: {int(np.sum(self.kind == k))}" for k in self.kinds_present)
        return f"MeasurementSet(n={len(self)}, {{{counts}}}, covariance={self.covariance_source!r})"


# --------------------------------------------------------------------------------------------
# Rows and numbers


def _content_lines(data, source, max_bytes, delimiter=None):
    """Non-blank, non-comment lines as (line_number, cells), the cells split at `delimiter`
    (sniffed from the header line when None); reading faults re-raised as
    :class:`MeasurementFormatError`."""
    try:
        if delimiter is None:
            delimiter = sniff_delimiter(data, source, max_bytes=max_bytes)
        yield from read_rows(data, source, max_bytes=max_bytes, delimiter=delimiter)
    except MeasurementFormatError:
        raise
    except TableFormatError as err:
        raise MeasurementFormatError(err.source, err.line, err.column, err.reason,
                                     err.column_name) from None


def _number(cell, source, number, column, name=None):
    if not cell:
        raise MeasurementFormatError(source, number, column, "empty cell; a number is required", name)
    if cell.lower() in _NOT_FINITE:
        raise MeasurementFormatError(
            source, number, column, f"{cell!r}: NaN and infinity are not accepted", name)
    if not _NUMBER.fullmatch(cell):
        raise MeasurementFormatError(
            source, number, column, f"{cell!r} is not a number (write e.g. 0.51, -3 or 1.2e-3)", name)
    value = float(cell)
    if not math.isfinite(value):
        raise MeasurementFormatError(
            source, number, column, f"{cell!r} overflows a double-precision number", name)
    return value


# --------------------------------------------------------------------------------------------
# The measurement table


def _read_header(number, cells, source, limits):
    columns = {}
    for position, raw in enumerate(cells, start=1):
        name = raw.strip().lower()
        if len(name) > limits.max_cell_chars:
            raise MeasurementFormatError(
                source, number, position, f"header cell longer than {limits.max_cell_chars} characters")
        if name not in MEASUREMENT_COLUMNS:
            raise MeasurementFormatError(
                source, number, position,
                f"unknown column {raw!r}; the columns are {', '.join(MEASUREMENT_COLUMNS)} "
                "(the first line that is not blank or a # comment is the header)")
        if name in columns:
            raise MeasurementFormatError(
                source, number, position,
                f"duplicate column {name!r} (first at column {columns[name] + 1}); keep one", name)
        columns[name] = position - 1
    for name, required in MEASUREMENT_COLUMNS.items():
        if required and name not in columns:
            raise MeasurementFormatError(
                source, number, len(cells) + 1,
                f"the header lacks the required column {name!r} "
                f"(required: {', '.join(n for n, r in MEASUREMENT_COLUMNS.items() if r)})", name)
    if "correlation" in columns and "group" not in columns:
        raise MeasurementFormatError(
            source, number, columns["correlation"] + 1,
            "a correlation column needs a group column naming the pairs", "correlation")
    return columns


# Errors whose square is a normal double (sys.float_info: min 2.2e-308, max 1.8e308), so that
# the covariance and its inverse stay finite and positive.
_ERROR_MIN, _ERROR_MAX = 1.5e-154, 1.3e154


def _read_row(number, cells, columns, source, limits):
    if len(cells) != len(columns):
        missing = len(cells) < len(columns)
        raise MeasurementFormatError(
            source, number, min(len(cells), len(columns)) + 1,
            f"{len(cells)} cells where the header has {len(columns)}; "
            + ("a cell is missing" if missing else "remove the extra cells"))
    for position, cell in enumerate(cells, start=1):
        if len(cell) > limits.max_cell_chars:
            raise MeasurementFormatError(
                source, number, position,
                f"cell of {len(cell)} characters; the limit is {limits.max_cell_chars}")

    def cell_of(name):
        return cells[columns[name]] if name in columns else ""

    def fail(name, reason):
        raise MeasurementFormatError(source, number, columns[name] + 1, reason, name)

    kind = cell_of("kind").lower()
    if kind not in MEASUREMENT_KINDS:
        fail("kind", f"unknown kind {cell_of('kind')!r}; the kinds are {', '.join(MEASUREMENT_KINDS)}")
    z = _number(cell_of("z"), source, number, columns["z"] + 1, "z")
    spec = MEASUREMENT_KINDS[kind]
    lowest_ok = 0.0 <= z if spec.zero_redshift else 0.0 < z
    if not (lowest_ok and z <= _Z_MAX):
        low = "0 <= z" if spec.zero_redshift else "0 < z"
        fail("z", f"redshift {z:g} outside {low} <= {_Z_MAX:g} for kind {kind}")
    value = _number(cell_of("value"), source, number, columns["value"] + 1, "value")
    if spec.positive and value <= 0.0:
        fail("value", f"a {kind} must be positive, got {value:g}")
    error = _number(cell_of("error"), source, number, columns["error"] + 1, "error")
    if not error > 0.0:
        fail("error", f"the error must be positive, got {error:g}")
    if not _ERROR_MIN <= error <= _ERROR_MAX:
        # its square (the covariance's diagonal) would underflow to 0 or overflow to inf
        fail("error", f"the error {error:g} cannot be squared in double precision; expected "
                      f"{_ERROR_MIN:.1e} <= error <= {_ERROR_MAX:.1e} (in the value's unit)")
    z_helio = z
    if cell_of("z_helio"):
        if not spec.heliocentric:
            allowed = ", ".join(k for k, v in MEASUREMENT_KINDS.items() if v.heliocentric)
            fail("z_helio", f"z_helio applies to {allowed} rows only, this row is {kind}")
        z_helio = _number(cell_of("z_helio"), source, number, columns["z_helio"] + 1, "z_helio")
        if not 0.0 < z_helio <= _Z_MAX:
            fail("z_helio", f"heliocentric redshift {z_helio:g} outside 0 < z_helio <= {_Z_MAX:g}")
    group = cell_of("group")
    correlation = None
    if cell_of("correlation"):
        if not group:
            fail("correlation", "a correlation needs a group naming the row it pairs with")
        correlation = _number(cell_of("correlation"), source, number,
                              columns["correlation"] + 1, "correlation")
        if not -1.0 < correlation < 1.0:
            fail("correlation", f"correlation {correlation:g} outside -1 < r < 1")
    elif group:
        fail("group" if "correlation" not in columns else "correlation",
             f"row of group {group!r} gives no correlation coefficient")
    return z, kind, value, error, z_helio, cell_of("label"), group, correlation


def _pair_blocks(rows, columns, source):
    """The covariance of the errors and the correlated pairs, and its Cholesky factor, as
    2 x 2 blocks: ``(factor_diagonal, pair_rows, pair_covariance, pair_factor, source)``.

    Each pair (i, j), i < j, is the block [[e_i^2, r e_i e_j], [r e_i e_j, e_j^2]]; as no row
    is in two pairs, the factor's column i holds only L[i, i] = e_i and L[j, i] = C[i, j] / L[i, i],
    and L[j, j] = sqrt(e_j^2 - L[j, i]^2): the Cholesky recurrence (Golub & Van Loan,
    Matrix Computations, 4th ed. 2013, algorithm 4.2.1) with the same operations a dense
    factorisation does on these entries.
    """
    error = np.array([r["error"] for r in rows])
    members = {}
    for index, row in enumerate(rows):
        if row["group"]:
            members.setdefault(row["group"], []).append(index)
    for name, indices in members.items():
        column = columns["group"] + 1
        if len(indices) != 2:
            last = rows[indices[-1]]
            raise MeasurementFormatError(
                source, last["line"], column,
                f"group {name!r} has {len(indices)} row(s); a group is exactly two correlated rows "
                f"(lines {', '.join(str(rows[i]['line']) for i in indices)})", "group")
        i, j = indices
        if rows[i]["correlation"] != rows[j]["correlation"]:
            raise MeasurementFormatError(
                source, rows[j]["line"], columns["correlation"] + 1,
                f"group {name!r}: correlation {rows[j]['correlation']:g} differs from "
                f"{rows[i]['correlation']:g} on line {rows[i]['line']}; give the same value", "correlation")
    pairs = np.array(list(members.values()), dtype=np.intp).reshape(-1, 2)
    first, second = pairs.T
    correlation = np.array([rows[i]["correlation"] for i in first], dtype=float)
    pair_covariance = correlation * error[first] * error[second]
    diagonal = np.sqrt(error**2)
    pair_factor = pair_covariance / diagonal[first]
    rest = error[second] ** 2 - pair_factor**2
    if not (rest > 0.0).all():  # only reachable through rounding: |r| < 1 keeps pairs definite
        k = int(second[np.argmin(rest > 0.0)])
        raise MeasurementFormatError(source, rows[k]["line"], columns.get("correlation", 0) + 1,
                                     "the correlations make the covariance non-positive-definite", "correlation")
    diagonal[second] = np.sqrt(rest)
    return diagonal, pairs, pair_covariance, pair_factor, ("pairs" if members else "diagonal")


def _cholesky(covariance, fail_at):
    """Lower Cholesky factor; ``fail_at(k)`` builds the error for a failing leading minor k."""
    factor, info = lapack.dpotrf(covariance, lower=1, clean=1)
    if info != 0:
        raise fail_at(info - 1 if info > 0 else 0)
    return factor


def _read_covariance(data, size, error, lines, limits):
    source = "covariance"
    rows, row_lines = [], []
    for number, cells in _content_lines(data, source, limits.max_covariance_bytes):
        if len(rows) == size:
            raise MeasurementFormatError(
                source, number, 1, f"more than {size} rows; the measurement file has {size} rows")
        if len(cells) != size:
            raise MeasurementFormatError(
                source, number, min(len(cells), size) + 1,
                f"{len(cells)} numbers where {size} (one per measurement row) are needed")
        rows.append([_number(c, source, number, k) for k, c in enumerate(cells, start=1)])
        row_lines.append(number)
    if len(rows) < size:
        last = row_lines[-1] + 1 if row_lines else 1
        raise MeasurementFormatError(
            source, last, 1, f"{len(rows)} rows where {size} (one per measurement row) are needed")
    covariance = np.array(rows, dtype=float)
    diagonal = np.diag(covariance).copy()
    for i in range(size):
        if not diagonal[i] > 0.0:
            raise MeasurementFormatError(
                source, row_lines[i], i + 1, f"diagonal entry {diagonal[i]:g} must be positive")
    scale = np.sqrt(np.outer(diagonal, diagonal))
    asymmetric = np.abs(covariance - covariance.T) > _SYMMETRY_TOLERANCE * scale
    if asymmetric.any():
        i, j = np.argwhere(np.triu(asymmetric))[0]
        raise MeasurementFormatError(
            source, row_lines[j], i + 1,
            f"not symmetric: entry ({j + 1}, {i + 1}) = {covariance[j, i]:g} but "
            f"({i + 1}, {j + 1}) = {covariance[i, j]:g} on line {row_lines[i]}")
    mismatch = np.abs(np.sqrt(diagonal) / error - 1.0) > _DIAGONAL_TOLERANCE
    if mismatch.any():
        i = int(np.argmax(mismatch))
        raise MeasurementFormatError(
            source, row_lines[i], i + 1,
            f"sqrt of the diagonal, {math.sqrt(diagonal[i]):.6g}, differs from the error "
            f"{error[i]:.6g} on line {lines[i]} of the measurement file by more than "
            f"{_DIAGONAL_TOLERANCE:.0%}; the covariance file must be the complete covariance, "
            "rows in the order of the measurement file")
    covariance = 0.5 * (covariance + covariance.T)

    def fail_at(k):
        return MeasurementFormatError(
            source, row_lines[k], k + 1,
            f"the covariance is not positive-definite (leading {k + 1} x {k + 1} block fails "
            "Cholesky factorisation); check for duplicated or fully correlated rows")
    return covariance, _cholesky(covariance, fail_at)


def parse_measurements(data, covariance=None, *, limits=MeasurementLimits()):
    """Parse a measurement table (and optionally its covariance) into a :class:`MeasurementSet`.

    Parameters
    ----------
    data : bytes or str
        Contents of the measurement file (UTF-8; a byte-order mark is allowed).
    covariance : bytes or str, optional
        Contents of a covariance file: N lines of N comma-separated numbers,
        the complete covariance of the N measurement rows in file order, in
        the product of the rows' units. Without it the covariance is diagonal
        (``error**2``) plus the correlated pairs named by ``group``.
    limits : MeasurementLimits, optional
        Size limits to enforce.

    Returns
    -------
    MeasurementSet

    Raises
    ------
    MeasurementFormatError
        For any departure from the format, naming the file, line and column.
        Nothing is returned partially.
    """
    source = "measurements"
    columns, rows, last_line = None, [], 0
    for number, cells in _content_lines(data, source, limits.max_bytes):
        last_line = number
        if columns is None:
            columns = _read_header(number, cells, source, limits)
            continue
        if len(rows) == limits.max_rows:
            raise MeasurementFormatError(
                source, number, 1, f"more than {limits.max_rows} measurement rows (the limit)")
        fields = _read_row(number, cells, columns, source, limits)
        if covariance is not None and fields[6]:
            raise MeasurementFormatError(
                source, number, columns["group"] + 1,
                "a covariance file gives every correlation; leave group and correlation empty",
                "group")
        rows.append(dict(zip(("z", "kind", "value", "error", "z_helio", "label", "group",
                              "correlation"), fields), line=number))
    if columns is None:
        raise MeasurementFormatError(
            source, max(last_line, 1), 1,
            f"no header line; start with e.g. 'z,kind,value,error' (columns: {', '.join(MEASUREMENT_COLUMNS)})")
    if not rows:
        raise MeasurementFormatError(source, last_line + 1, 1, "the file has a header but no measurement rows")

    error = np.array([r["error"] for r in rows])
    lines = [r["line"] for r in rows]
    matrix = factor = None
    if covariance is None:
        diagonal, pairs, pair_covariance, pair_factor, covariance_source = _pair_blocks(rows, columns, source)
    else:
        if len(rows) > limits.max_covariance_rows:
            raise MeasurementFormatError(
                "covariance", 1, 1,
                f"a covariance file covers at most {limits.max_covariance_rows} measurement rows (it is "
                f"kept as a dense matrix); the measurement file has {len(rows)}. Give correlated pairs "
                "with the group and correlation columns instead, or split the table")
        matrix, factor = _read_covariance(covariance, len(rows), error, lines, limits)
        diagonal, covariance_source = np.diag(factor).copy(), "file"
        pairs, pair_covariance, pair_factor = np.empty((0, 2), dtype=np.intp), np.empty(0), np.empty(0)

    return MeasurementSet(
        z=_frozen([r["z"] for r in rows]),
        kind=_frozen([r["kind"] for r in rows]),
        value=_frozen([r["value"] for r in rows]),
        error=_frozen(error),
        z_helio=_frozen([r["z_helio"] for r in rows]),
        label=tuple(r["label"] for r in rows),
        group=tuple(r["group"] for r in rows),
        line=_frozen(np.array(lines, dtype=int)),
        factor_diagonal=_frozen(diagonal),
        pair_rows=_frozen(pairs),
        pair_covariance=_frozen(pair_covariance),
        pair_factor=_frozen(pair_factor),
        file_covariance=None if matrix is None else _frozen(matrix),
        file_cholesky=None if factor is None else _frozen(factor),
        covariance_source=covariance_source,
        delimiter=sniff_delimiter(data, source, max_bytes=limits.max_bytes),
    )


def read_measurements(path, covariance_path=None, *, limits=MeasurementLimits()):
    """Read a measurement file (and optional covariance file) from disk.

    Files larger than the limits are refused after reading at most one byte
    beyond the limit.

    Parameters
    ----------
    path, covariance_path : str or os.PathLike
        Measurement file and optional covariance file.
    limits : MeasurementLimits, optional

    Returns
    -------
    MeasurementSet
    """
    def read(p, limit):
        with open(p, "rb") as handle:
            return handle.read(limit + 1)
    covariance = None if covariance_path is None else read(covariance_path, limits.max_covariance_bytes)
    return parse_measurements(read(path, limits.max_bytes), covariance, limits=limits)
