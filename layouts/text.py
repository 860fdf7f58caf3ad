"""Text formatting shared by cards, tables and figures."""

from __future__ import annotations

import math


def escape_for_figure(text: str) -> str:
    """Plotly reads legend, hover and annotation text as a subset of HTML (links included):
    escape it so a label is shown as the characters typed."""
    return str(text).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def number(value, digits: int = 6) -> str:
    """`digits` significant digits; an en dash for missing values."""
    if value is None:
        return "–"
    try:
        x = float(value)
    except (TypeError, ValueError):
        return str(value)
    if math.isnan(x):
        return "–"
    if math.isinf(x):
        return "∞" if x > 0 else "−∞"
    return f"{x:.{digits}g}".replace("-", "−")


def with_unit(value, unit: str, digits: int = 6) -> str:
    """``13.797 Gyr``; dimensionless units (``""`` or ``"1"``) add nothing."""
    text = number(value, digits)
    if text in ("–",) or not unit or unit == "1":
        return text
    return f"{text} {unit}"


def render(text) -> str:
    """A `layouts.specs.Text` as a string: plain text as is, a `Number` with its digits and unit,
    a list of pieces joined."""
    if isinstance(text, str):
        return text
    if isinstance(text, dict):
        return with_unit(text["value"], text.get("unit", ""), text.get("digits", 6))
    if isinstance(text, (list, tuple)):
        return "".join(render(part) for part in text)
    return str(text)


def counted(n: int, thing: str, things: str | None = None) -> str:
    """``1 measurement``, ``2 measurements`` (`things` for an irregular plural)."""
    return f"{n} {thing if n == 1 else (things or thing + 's')}"


def byte_size(n: int) -> str:
    """A size for people: ``512 bytes``, ``64 KiB``, ``1 MiB``, ``2.5 GiB`` (binary units)."""
    for unit, size in (("GiB", 1 << 30), ("MiB", 1 << 20), ("KiB", 1 << 10)):
        if n >= size:
            value = n / size
            return f"{value:.3g} {unit}"
    return counted(n, "byte")
