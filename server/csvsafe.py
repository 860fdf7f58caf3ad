"""CSV for spreadsheets: numbers stay numbers, text can never run as a formula.

Text cells that a spreadsheet would read as a formula (starting with ``=``, ``+``, ``-``, ``@``,
a tab or a carriage return) get a leading ``'``, as the OWASP advice on CSV injection says
(OWASP, "CSV Injection"); numbers are written in full precision as plain ASCII (Python's
shortest round-trip ``repr``), NaN, infinities and None as empty cells.
"""

from __future__ import annotations

import csv
import math
from numbers import Real
from typing import Iterable

__all__ = ["FORMULA_STARTS", "safe_text", "cell", "SafeWriter"]

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def safe_text(text: str) -> str:
    """`text`, with a leading ``'`` when a spreadsheet would take it for a formula."""
    return "'" + text if text.startswith(FORMULA_STARTS) else text


def cell(value) -> str:
    """One cell: numbers as plain ASCII at full precision, text made safe, gaps empty."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, Real):
        x = float(value)
        if not math.isfinite(x):
            return ""
        return str(int(value)) if isinstance(value, int) else repr(x + 0.0)
    return safe_text(str(value))


class SafeWriter:
    """`csv.writer` whose rows pass through `cell` (numbers may be Python or numpy numbers)."""

    def __init__(self, handle, **options):
        self._writer = csv.writer(handle, lineterminator="\n", **options)

    def writerow(self, row: Iterable) -> None:
        self._writer.writerow([cell(v) for v in row])

    def writerows(self, rows: Iterable[Iterable]) -> None:
        for row in rows:
            self.writerow(row)
