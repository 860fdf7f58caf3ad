"""The link: a canonical, versioned query string <-> a `LinkState` value.

`decode(query)` never raises. Every value that cannot be used is kept verbatim (so the link
still shows what was typed) and reported as a `Problem` naming its key and the accepted
range; keys we do not know are collected in `LinkState.unknown`. `encode(state)` writes the
canonical form: defaults omitted, a fixed key order, and the shortest decimal that reads back
as the same float, so equal states give equal links and equal cache keys.

Scheme version 1 (documented in README.md, "The link"):

* per model slot n = 1..4: ``mN.label``, ``mN.h0``, ``mN.om``, ``mN.ob``, ``mN.ok`` or
  ``mN.ode`` (at most one), ``mN.w0``, ``mN.wa``, ``mN.tcmb``, ``mN.neff``, ``mN.mnu``
  (comma-separated eV). A slot exists when any of its keys appears.
* view: ``v`` (scheme version), ``ref``, ``tab``, ``zmax``, ``z`` (table redshifts), ``dist``
  (distance shown), ``sky`` and ``zs`` (survey box), ``iq`` and ``iv`` (inverse look-up),
  ``data`` (content hash of a stored measurement set), ``rd`` (sound horizon for the D/r_d
  measurements: ``model`` or ``free``) and ``fit`` (``N:names``: slot N holds a best fit of
  those parameters, counted in its AIC/BIC).
"""

from __future__ import annotations

import re
import urllib.parse
from dataclasses import replace

from server import fields
from server.fields import (DATA_HASH_LENGTH, DISTANCE_CHOICES, FIELD_OF, FIT_KEYS, FULL_SKY_DEG2,
                           MAX_LABEL_LENGTH, MAX_MASSES, MAX_SLOTS, MAX_TABLE_REDSHIFTS, MODEL_KEYS,
                           R_D_CHOICES, Z_MAX, Z_MIN, format_number, invertible,
                           parameter_spec, range_text)
from server.state import (LinkState, ModelState, Problem, ViewState, default_model, demo_models,
                          model_from_pairs, reference_slot, view_from_pairs)
from server.tabs import TAB_KEYS as TABS

# The state classes and the key tables are defined in server.state and server.fields; they are
# named here too because every reader of a link meets them through the codec.
__all__ = [
    "SCHEME_VERSION", "MAX_SLOTS", "TABS", "DISTANCE_CHOICES", "MODEL_KEYS", "Problem",
    "ModelState", "ViewState", "LinkState", "decode", "encode", "format_number",
    "default_model", "demo_models", "model_cache_key", "parameter_spec", "range_text",
    "reference_slot", "invertible", "VIEW_KEYS", "Z_MIN", "Z_MAX", "FULL_SKY_DEG2",
    "MAX_QUERY_LENGTH", "MAX_LABEL_LENGTH", "MAX_TABLE_REDSHIFTS", "too_long_problem",
    "DATA_HASH_LENGTH", "R_D_CHOICES", "FIT_KEYS", "MAX_MASSES",
]

SCHEME_VERSION = 1
# Longest query string read, in characters as sent (percent-encoded): four models with
# 80-character labels fit, and so does the request line under gunicorn's default 4094 bytes.
MAX_QUERY_LENGTH = 4000

_SLOT_KEY = re.compile(r"m(\d+)\.([a-z0-9]+)")
# Every view key a link may carry, in canonical order: the scheme version, then fields.VIEW_KEYS.
VIEW_KEYS = ("v",) + tuple(row.key for row in fields.VIEW_KEYS)


def _slot_key(key: str) -> tuple[str, str] | None:
    """``("12", "om")`` for ``m12.om`` when ``om`` is a model key, else None."""
    match = _SLOT_KEY.fullmatch(key)
    return (match.group(1), match.group(2)) if match and match.group(2) in FIELD_OF else None


def _split(query: str) -> list[tuple[str, str]]:
    query = (query or "").lstrip("?")
    try:
        return urllib.parse.parse_qsl(query, keep_blank_values=True, errors="replace")
    except (ValueError, TypeError):  # parse_qsl is lenient; this is belt and braces
        return []


def decode(query: str) -> LinkState:
    """Parse a query string (with or without ``?``). Never raises; see the module docstring.
    A query longer than `MAX_QUERY_LENGTH` is not read: the demo models, with a ``query`` notice."""
    if isinstance(query, str) and len(query) > MAX_QUERY_LENGTH:
        return LinkState(models=demo_models(), notices=(too_long_problem(query),))
    try:
        pairs = _split(query if isinstance(query, str) else "")
    except Exception:  # noqa: BLE001 - decoding must never take the page down
        pairs = []
    seen: dict[str, int] = {}
    per_slot: dict[int, list[tuple[str, str]]] = {}
    view_pairs: dict[str, str] = {}
    notices: list[Problem] = []
    unknown: list[str] = []
    for key, raw in pairs:
        if not key:
            continue  # "=x" or "&&": there is no key to apply or to name
        seen[key] = seen.get(key, 0) + 1
        if seen[key] == 2:
            notices.append(Problem(key, f"{key}: given more than once; the first value is used"))
        if seen[key] > 1:
            continue
        slot_key = _slot_key(key)
        if slot_key is not None:
            digits, name = slot_key
            slot = int(digits) if len(digits) <= 3 else 0  # int() refuses 4300+ digits
            if not 1 <= slot <= MAX_SLOTS or digits != str(slot):
                notices.append(Problem(f"m{digits}", f"{key}: slot {digits} does not exist; "
                                                     f"expected slots m1 to m{MAX_SLOTS}"))
                continue
            per_slot.setdefault(slot, []).append((name, raw))
        elif key in VIEW_KEYS:
            view_pairs[key] = raw
        else:
            unknown.append(key)

    version = view_pairs.pop("v", str(SCHEME_VERSION))
    if version.strip() != str(SCHEME_VERSION):
        notices.append(Problem("v", f"v: link scheme version {version!r} is not supported; "
                                    f"expected v={SCHEME_VERSION} (read as version {SCHEME_VERSION})"))

    models = tuple(model_from_pairs(slot, per_slot[slot]) for slot in sorted(per_slot))
    if not models:
        models = demo_models()
    view, dropped = view_from_pairs(view_pairs, tuple(m.slot for m in models))
    notices.extend(dropped)
    return LinkState(models=models, view=view, notices=tuple(notices), unknown=tuple(unknown))


def too_long_problem(query: str) -> Problem:
    """The ``query`` problem of an over-long link; it names the longest key, not its value."""
    pairs = _split(query)
    where = ""
    if pairs:
        key, raw = max(pairs, key=lambda kv: len(kv[0]) + len(kv[1]))
        shown = key if len(key) <= 40 else key[:40] + "…"
        where = f" (the longest is {shown}, {len(key) + len(raw)} characters)"
    return Problem("query", f"query: the link is {len(query)} characters long{where}; expected at most "
                            f"{MAX_QUERY_LENGTH} (labels up to {MAX_LABEL_LENGTH} characters, up to "
                            f"{MAX_TABLE_REDSHIFTS} table redshifts)")


def _quote(text: str) -> str:
    return urllib.parse.quote(text, safe=",:")


def _model_pairs(m: ModelState) -> list[tuple[str, str]]:
    defaults = ModelState(slot=m.slot)
    invalid = dict(m.invalid)
    out = []
    for key, name in MODEL_KEYS:
        if key in invalid:
            out.append((key, invalid[key]))
            continue
        value = getattr(m, name)
        # Ω_k is written even at its default when Ω_de is the input or was refused beside it
        keep_ok = name == "omega_k" and (m.omega_de is not None or "ode" in invalid)
        if value == getattr(defaults, name) and not keep_ok:
            continue
        if value is None:
            continue
        if name == "label":
            out.append((key, value))
        elif name == "m_nu":
            out.append((key, ",".join(format_number(x) for x in value)))
        else:
            out.append((key, format_number(value)))
    if not out:
        out.append(("label", ""))  # an all-default model still needs one key to exist
    return out


def encode(state: LinkState) -> str:
    """The canonical query string (without ``?``) for `state`."""
    items: list[tuple[str, str]] = [("v", str(SCHEME_VERSION))]
    invalid = dict(state.view.invalid)
    for row in fields.VIEW_KEYS:
        if row.key in invalid:
            items.append((row.key, invalid[row.key]))
            continue
        value = getattr(state.view, row.attribute)
        if value != row.default and value is not None:
            items.append((row.key, row.format(value)))
    for m in state.models:
        items.extend((f"m{m.slot}.{k}", v) for k, v in _model_pairs(m))
    return "&".join(f"{k}={_quote(v)}" for k, v in items)


def model_cache_key(m: ModelState) -> str:
    """Canonical text of a model's physical parameters (no label, no slot): the memo key."""
    unlabelled = replace(m, label="", slot=1, invalid=())
    pairs = [p for p in _model_pairs(unlabelled) if p[0] != "label"]
    return "&".join(f"{k}={v}" for k, v in pairs)
