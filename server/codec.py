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

import math
import re
import urllib.parse
from dataclasses import dataclass, field, replace
from decimal import Decimal

import model

__all__ = [
    "SCHEME_VERSION", "MAX_SLOTS", "TABS", "DISTANCE_CHOICES", "MODEL_KEYS", "Problem",
    "ModelState", "ViewState", "LinkState", "decode", "encode", "format_number",
    "default_model", "demo_models", "model_cache_key", "parameter_spec", "range_text",
    "reference_slot", "invertible", "VIEW_KEYS", "Z_MIN", "Z_MAX", "FULL_SKY_DEG2",
    "MAX_QUERY_LENGTH", "MAX_LABEL_LENGTH", "MAX_TABLE_REDSHIFTS", "too_long_problem",
    "DATA_HASH_LENGTH", "R_D_CHOICES", "FIT_KEYS",
]

SCHEME_VERSION = 1
MAX_SLOTS = 4
MAX_LABEL_LENGTH = 80
MAX_TABLE_REDSHIFTS = 50
# Longest query string read, in characters as sent (percent-encoded): four models with
# 80-character labels fit, and so does the request line under gunicorn's default 4094 bytes.
MAX_QUERY_LENGTH = 4000
MAX_MASSES = int(getattr(model, "MAX_NEUTRINO_SPECIES", 3))
# Redshift range evaluate() accepts.
Z_MIN, Z_MAX = float(getattr(model, "Z_MIN", -0.99)), float(getattr(model, "Z_MAX", 1e5))
# Link defaults for inputs the model requires (it has no default for them): the Planck 2018
# TT,TE,EE+lowE+lensing column, Planck Collaboration 2020, A&A 641, A6, Table 2.
REQUIRED_DEFAULTS = {"h0": 67.36, "omega_m": 0.3153}
# Whole sky in square degrees: 4 pi (180/pi)^2.
FULL_SKY_DEG2 = 4.0 * math.pi * (180.0 / math.pi) ** 2

# Link key -> Cosmology field, in canonical order.
MODEL_KEYS = (
    ("label", "label"), ("h0", "h0"), ("om", "omega_m"), ("ob", "omega_b"), ("ok", "omega_k"),
    ("ode", "omega_de"), ("w0", "w0"), ("wa", "wa"), ("tcmb", "t_cmb"), ("neff", "n_eff"),
    ("mnu", "m_nu"),
)
_FIELD_OF = dict(MODEL_KEYS)

TABS = ("budget", "distances", "time", "volume", "acoustic", "table", "data")
# Link value -> evaluate() key of the distance drawn in the distances panel.
DISTANCE_CHOICES = {
    "dc": "comoving_distance",
    "dm": "transverse_comoving_distance",
    "da": "angular_diameter_distance",
    "dl": "luminosity_distance",
}
VIEW_KEYS = ("v", "ref", "tab", "zmax", "z", "dist", "sky", "zs", "iq", "iv", "data", "rd", "fit")
# A stored measurement set is named by this many lowercase hex digits of its SHA-256.
DATA_HASH_LENGTH = 24
_DATA_HASH = re.compile(f"[0-9a-f]{{{DATA_HASH_LENGTH}}}")
R_D_CHOICES = ("model", "free")
# Link spelling -> model.FIT_PARAMETERS name of the parameters a fit can free (``fit`` key).
FIT_KEYS = {"h0": "h0", "om": "omega_m", "ok": "omega_k", "w0": "w0", "wa": "wa", "rd": "r_d",
            "off": "offset"}

_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_SLOT_KEY = re.compile(r"m(\d+)\.([a-z0-9]+)")


@dataclass(frozen=True)
class Problem:
    """A value in the link that cannot be used: `key` is the link key (``m2.om``), `message` says
    what is wrong and what is accepted."""

    key: str
    message: str


def invertible() -> tuple[str, ...]:
    """Quantities the inverse look-up accepts (the model's INVERTIBLE)."""
    return tuple(getattr(model, "INVERTIBLE", ("age",)))


def parameter_spec(name: str) -> model.ParameterSpec:
    """The model's `ParameterSpec` for a Cosmology field name."""
    for spec in model.PARAMETERS:
        if spec.name == name:
            return spec
    raise KeyError(name)


def _nice(x: float) -> str:
    # for reading, not for links: 1000 rather than 1e3
    plain = format(Decimal(repr(float(x) + 0.0)).normalize(), "f")
    return plain if len(plain) <= 7 else format_number(x)


def range_text(spec: model.ParameterSpec) -> str:
    """``0 ≤ Ω_m ≤ 5`` (with the unit when there is one)."""
    unit = f" {spec.unit}" if spec.unit and spec.unit != "1" else ""
    low = "<" if getattr(spec, "exclusive_minimum", False) else "≤"
    return f"{_nice(spec.minimum)} {low} {spec.symbol} ≤ {_nice(spec.maximum)}{unit}"


def _default(name: str):
    value = parameter_spec(name).default
    if value is None and name in REQUIRED_DEFAULTS:
        return REQUIRED_DEFAULTS[name]
    if name == "m_nu":
        return _normal_masses(tuple(value or ()))
    if name == "omega_k" and value is None:
        return 0.0
    return value


def _normal_masses(masses: tuple[float, ...]) -> tuple[float, ...]:
    # Order does not matter and missing species are massless: one canonical spelling.
    return tuple(sorted((float(m) + 0.0 for m in masses if m != 0), reverse=True))


@dataclass(frozen=True)
class ModelState:
    """One model card as the link describes it (defaults filled in).

    Exactly one of `omega_k` and `omega_de` is set; the other is derived by the model.
    `invalid` holds ``(key, raw text)`` pairs for values that were not applied.
    """

    slot: int
    label: str = ""
    h0: float = field(default_factory=lambda: _default("h0"))
    omega_m: float = field(default_factory=lambda: _default("omega_m"))
    omega_b: float | None = field(default_factory=lambda: _default("omega_b"))
    omega_k: float | None = field(default_factory=lambda: _default("omega_k"))
    omega_de: float | None = None
    w0: float = field(default_factory=lambda: _default("w0"))
    wa: float = field(default_factory=lambda: _default("wa"))
    t_cmb: float = field(default_factory=lambda: _default("t_cmb"))
    n_eff: float = field(default_factory=lambda: _default("n_eff"))
    m_nu: tuple[float, ...] = field(default_factory=lambda: _default("m_nu"))
    invalid: tuple[tuple[str, str], ...] = ()

    @property
    def name(self) -> str:
        """The label, or ``Model N`` when it is empty."""
        return self.label if self.label.strip() else f"Model {self.slot}"

    def physical(self) -> dict:
        """Cosmology keyword arguments (label excluded), with `omega_de` only when it is the input."""
        out = {f: getattr(self, f) for _, f in MODEL_KEYS if f not in ("label", "omega_k", "omega_de")}
        if self.omega_de is not None:
            out["omega_de"] = self.omega_de
        else:
            out["omega_k"] = self.omega_k
        return out

    def problems(self) -> tuple[Problem, ...]:
        return tuple(_model_problem(self.slot, key, raw, self) for key, raw in self.invalid)


def default_model(slot: int, **changes) -> ModelState:
    return replace(ModelState(slot=slot), **changes)


def demo_models() -> tuple[ModelState, ...]:
    """The models shown when a link names none: a made-up survey team's three candidates."""
    from server.presets import PRESETS  # presets import this module

    base = PRESETS["planck18"].values
    return (
        default_model(1, label="Baseline (Planck 2018 lensing)", **base),
        default_model(2, label="Candidate T: thawing dark energy", **{**base, "w0": -0.85, "wa": -0.4}),
        default_model(3, label="Candidate C: mildly closed", **{**base, "omega_k": -0.02}),
    )


@dataclass(frozen=True)
class ViewState:
    """What is shown: reference slot (None = the first model), open panel and panel controls."""

    reference: int | None = None
    tab: str = "budget"
    zmax: float = 3.0
    redshifts: tuple[float, ...] = (0.1, 0.5, 1.0, 2.0, 3.0)
    distance: str = "dl"
    sky_area: float = 1000.0
    survey: tuple[float, float] = (0.5, 1.5)
    inverse_quantity: str = "age"
    inverse_value: float = 5.0
    data: str | None = None
    r_d: str = "model"
    fit: tuple[int, tuple[str, ...]] | None = None
    invalid: tuple[tuple[str, str], ...] = ()

    def problems(self) -> tuple[Problem, ...]:
        return tuple(_view_problem(key, raw) for key, raw in self.invalid)


@dataclass(frozen=True)
class LinkState:
    """The whole page state. `notices` (dropped keys) and `unknown` do not take part in equality:
    they are not kept in the canonical link."""

    models: tuple[ModelState, ...]
    view: ViewState = ViewState()
    notices: tuple[Problem, ...] = field(default=(), compare=False)
    unknown: tuple[str, ...] = field(default=(), compare=False)

    def problems(self) -> tuple[Problem, ...]:
        """Every problem, in canonical key order: dropped keys, view, then each model."""
        out = list(self.notices) + list(self.view.problems())
        for m in self.models:
            out.extend(m.problems())
        return tuple(out)

    def slots(self) -> tuple[int, ...]:
        return tuple(m.slot for m in self.models)


def reference_slot(state: LinkState) -> int:
    """The reference model's slot: the link's `ref` when that slot exists, else the first."""
    slots = state.slots()
    ref = state.view.reference
    return ref if ref in slots else (slots[0] if slots else 1)


# ----------------------------------------------------------------------------- numbers


def format_number(x: float) -> str:
    """Shortest decimal text that reads back as the same float (positional on a tie).

    >>> format_number(67.0), format_number(1e-05), format_number(100000.0), format_number(-0.0)
    ('67', '1e-5', '1e5', '0')
    """
    x = float(x) + 0.0  # folds -0.0 into 0.0
    d = Decimal(repr(x)).normalize()
    sign, digits, exponent = d.as_tuple()
    positional = format(d, "f")
    mantissa = "".join(map(str, digits))
    mantissa = mantissa[0] + ("." + mantissa[1:] if len(mantissa) > 1 else "")
    power = exponent + len(digits) - 1
    scientific = ("-" if sign else "") + mantissa + (f"e{power}" if power else "")
    return min((positional, scientific), key=len)


def _parse_number(raw: str) -> float | str:
    """The float, or a reason (str) why `raw` is not a usable number."""
    text = raw.strip()
    if not _NUMBER.fullmatch(text):
        return f"{raw!r} is not a number"
    value = float(text)
    if not math.isfinite(value):
        return f"{raw!r} is not a finite number"
    return value + 0.0


def _in_range(value: float, spec: model.ParameterSpec) -> bool:
    above = value > spec.minimum if getattr(spec, "exclusive_minimum", False) else value >= spec.minimum
    return above and value <= spec.maximum


# ----------------------------------------------------------------------------- model keys


def _check_model_value(key: str, raw: str, state_so_far: ModelState):
    """``(field, value)`` to apply, or a reason string."""
    name = _FIELD_OF[key]
    if name == "label":
        if len(raw) > MAX_LABEL_LENGTH:
            return f"{len(raw)} characters; expected at most {MAX_LABEL_LENGTH}"
        return name, raw
    spec = parameter_spec(name)
    if name == "m_nu":
        parts = [p for p in raw.split(",")] if raw.strip() else []
        if len(parts) > MAX_MASSES:  # the model's own limit when it publishes one
            return f"{len(parts)} masses given; expected at most {MAX_MASSES} (comma-separated eV)"
        masses = []
        for part in parts:
            value = _parse_number(part)
            if isinstance(value, str):
                return f"{value}; expected {MAX_MASSES} or fewer comma-separated masses, each {range_text(spec)}"
            if not _in_range(value, spec):
                return f"{format_number(value)} eV is out of range; expected each {range_text(spec)}"
            masses.append(value)
        return name, _normal_masses(tuple(masses))
    if not raw.strip():
        return name, _default(name)  # an emptied field falls back to its default
    value = _parse_number(raw)
    if isinstance(value, str):
        return f"{value}; expected {range_text(spec)}"
    if not _in_range(value, spec):
        return f"{format_number(value)} is out of range; expected {range_text(spec)}"
    return name, value


def _conflict_message(slot: int) -> str:
    return (f"m{slot}.ok and m{slot}.ode are both given; give at most one "
            f"(the other is derived from the closed energy budget)")


def _model_problem(slot: int, key: str, raw: str, state: ModelState) -> Problem:
    full = f"m{slot}.{key}"
    outcome = _check_model_value(key, raw, state)
    if isinstance(outcome, str):
        return Problem(full, f"{full}: {outcome}")
    return Problem(full, f"{full}: " + _conflict_message(slot))


def _apply_model(slot: int, pairs: list[tuple[str, str]]) -> ModelState:
    state = ModelState(slot=slot)
    changes: dict = {}
    invalid: dict[str, str] = {}
    for key, raw in pairs:
        outcome = _check_model_value(key, raw, state)
        if isinstance(outcome, str):
            invalid[key] = raw
            continue
        name, value = outcome
        if name == "omega_de" and value is None:
            continue  # an emptied Ω_de input means: back to the flat default
        if name == "omega_k" and not raw.strip():
            continue  # so does an emptied Ω_k input: it must not count as given beside Ω_de
        changes[name] = value
    ok_given = "omega_k" in changes and "ok" not in invalid
    ode_given = "omega_de" in changes and "ode" not in invalid
    if ode_given and ok_given:
        # Keep the curvature; the second closure value is not applied and is reported.
        invalid["ode"] = dict(pairs)["ode"]
        del changes["omega_de"]
    elif ode_given:
        changes["omega_k"] = None
    ordered = tuple((k, invalid[k]) for k, _ in MODEL_KEYS if k in invalid)
    return replace(state, **changes, invalid=ordered)


# ----------------------------------------------------------------------------- view keys


def _check_view_value(key: str, raw: str):
    """The value to store on ViewState (as ``(attribute, value)``), or a reason string."""
    if key == "ref":
        if not re.fullmatch(r"[0-9]{1,3}", raw.strip()) or not 1 <= int(raw) <= MAX_SLOTS:
            return f"ref: {raw!r} is not a model slot; expected a whole number 1 to {MAX_SLOTS}"
        return "reference", int(raw)
    if key == "tab":
        if raw not in TABS:
            return f"tab: {raw!r} is not a panel; expected one of {', '.join(TABS)}"
        return "tab", raw
    if key == "dist":
        if raw not in DISTANCE_CHOICES:
            return f"dist: {raw!r} is not a distance; expected one of {', '.join(DISTANCE_CHOICES)}"
        return "distance", raw
    if key == "iq":
        if raw not in invertible():
            return f"iq: {raw!r} cannot be inverted; expected one of {', '.join(invertible())}"
        return "inverse_quantity", raw
    if key == "data":
        if not _DATA_HASH.fullmatch(raw):
            return (f"data: {raw!r} is not a stored-data reference; expected {DATA_HASH_LENGTH} "
                    "lowercase hexadecimal digits (as POST /api/v1/data answers)")
        return "data", raw
    if key == "rd":
        if raw not in R_D_CHOICES:
            return f"rd: {raw!r} is not a sound-horizon choice; expected one of {', '.join(R_D_CHOICES)}"
        return "r_d", raw
    if key == "fit":
        what = (f"N:names with N a slot 1 to {MAX_SLOTS} and names comma-separated from "
                f"{', '.join(FIT_KEYS)}, e.g. 4:om,w0")
        slot_text, _, names_text = raw.partition(":")
        names = names_text.split(",") if names_text else []
        if not re.fullmatch(r"[1-9]", slot_text) or not 1 <= int(slot_text) <= MAX_SLOTS or not names \
                or any(n not in FIT_KEYS for n in names) or len(set(names)) != len(names):
            return f"fit: {raw!r} is not a fit description; expected {what}"
        ordered = tuple(n for n in FIT_KEYS if n in names)  # one spelling per set of names
        return "fit", (int(slot_text), ordered)
    if key in ("zmax", "sky", "iv"):
        value = _parse_number(raw)
        low, high, what = {
            "zmax": (0.01, Z_MAX, "0.01 ≤ zmax ≤ " + format_number(Z_MAX)),
            "sky": (1e-6, FULL_SKY_DEG2, f"0 < sky ≤ {FULL_SKY_DEG2:.2f} deg² (the whole sky)"),
            "iv": (0.0, 1e9, "0 ≤ iv ≤ 1e9 (in the unit of the looked-up quantity)"),
        }[key]
        if isinstance(value, str):
            return f"{key}: {value}; expected {what}"
        if not low <= value <= high:
            return f"{key}: {format_number(value)} is out of range; expected {what}"
        return {"zmax": "zmax", "sky": "sky_area", "iv": "inverse_value"}[key], value
    if key in ("z", "zs"):
        parts = raw.split(",") if raw.strip() else []
        limit = MAX_TABLE_REDSHIFTS if key == "z" else 2
        what = (f"up to {MAX_TABLE_REDSHIFTS} comma-separated redshifts, each "
                f"{format_number(Z_MIN)} ≤ z ≤ {format_number(Z_MAX)}") if key == "z" else (
                f"two comma-separated redshifts 0 ≤ z_low < z_high ≤ {format_number(Z_MAX)}")
        if len(parts) > limit or (key == "zs" and len(parts) != 2) or (key == "z" and not parts):
            return f"{key}: {len(parts)} values given; expected {what}"
        values = []
        for part in parts:
            value = _parse_number(part)
            if isinstance(value, str):
                return f"{key}: {value}; expected {what}"
            low = Z_MIN if key == "z" else 0.0
            if not low <= value <= Z_MAX:
                return f"{key}: z = {format_number(value)} is outside the model's range; expected {what}"
            values.append(value)
        if key == "zs" and not values[0] < values[1]:
            return f"{key}: {raw!r} is not an increasing pair; expected {what}"
        return ("redshifts" if key == "z" else "survey"), tuple(values)
    raise KeyError(key)


def _view_problem(key: str, raw: str) -> Problem:
    outcome = _check_view_value(key, raw)
    return Problem(key, outcome if isinstance(outcome, str) else f"{key}: {raw!r} is not usable")


# ----------------------------------------------------------------------------- decode / encode


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
        slot_match = _SLOT_KEY.fullmatch(key)
        if slot_match and slot_match.group(2) in _FIELD_OF:
            slot = int(slot_match.group(1)) if len(slot_match.group(1)) <= 3 else 0  # int() refuses 4300+ digits
            if not 1 <= slot <= MAX_SLOTS or slot_match.group(1) != str(slot):
                notices.append(Problem(f"m{slot_match.group(1)}",
                                       f"{key}: slot {slot_match.group(1)} does not exist; "
                                       f"expected slots m1 to m{MAX_SLOTS}"))
                continue
            per_slot.setdefault(slot, []).append((slot_match.group(2), raw))
        elif key in VIEW_KEYS:
            view_pairs[key] = raw
        else:
            unknown.append(key)

    version = view_pairs.pop("v", str(SCHEME_VERSION))
    if version.strip() != str(SCHEME_VERSION):
        notices.append(Problem("v", f"v: link scheme version {version!r} is not supported; "
                                    f"expected v={SCHEME_VERSION} (read as version {SCHEME_VERSION})"))

    models = tuple(_apply_model(slot, per_slot[slot]) for slot in sorted(per_slot))
    if not models:
        models = demo_models()

    changes: dict = {}
    invalid: list[tuple[str, str]] = []
    for key in VIEW_KEYS[1:]:
        if key not in view_pairs:
            continue
        outcome = _check_view_value(key, view_pairs[key])
        if isinstance(outcome, str):
            invalid.append((key, view_pairs[key]))
        else:
            changes[outcome[0]] = outcome[1]
    slots = tuple(m.slot for m in models)
    if "reference" in changes:
        if changes["reference"] not in slots:
            notices.append(Problem("ref", f"ref: model {changes['reference']} is not in the link; expected one of "
                                          f"{', '.join(map(str, slots))} (using {slots[0]})"))
            changes["reference"] = None
        elif changes["reference"] == slots[0]:
            changes["reference"] = None  # the first model is the default reference
    if changes.get("fit") is not None and changes["fit"][0] not in slots:
        notices.append(Problem("fit", f"fit: model {changes['fit'][0]} is not in the link; "
                                      "the fit note is dropped"))
        changes["fit"] = None
    view = replace(ViewState(), **changes, invalid=tuple(invalid))
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
    view, default = state.view, ViewState()
    invalid = dict(view.invalid)
    formatted = {
        "ref": lambda v: str(v),
        "tab": str,
        "zmax": format_number,
        "z": lambda v: ",".join(map(format_number, v)),
        "dist": str,
        "sky": format_number,
        "zs": lambda v: ",".join(map(format_number, v)),
        "iq": str,
        "iv": format_number,
        "data": str,
        "rd": str,
        "fit": lambda v: f"{v[0]}:{','.join(v[1])}",
    }
    attribute = {"ref": "reference", "tab": "tab", "zmax": "zmax", "z": "redshifts", "dist": "distance",
                 "sky": "sky_area", "zs": "survey", "iq": "inverse_quantity", "iv": "inverse_value",
                 "data": "data", "rd": "r_d", "fit": "fit"}
    for key in VIEW_KEYS[1:]:
        if key in invalid:
            items.append((key, invalid[key]))
            continue
        value = getattr(view, attribute[key])
        if value != getattr(default, attribute[key]) and value is not None:
            items.append((key, formatted[key](value)))
    for m in state.models:
        items.extend((f"m{m.slot}.{k}", v) for k, v in _model_pairs(m))
    return "&".join(f"{k}={_quote(v)}" for k, v in items)


def model_cache_key(m: ModelState) -> str:
    """Canonical text of a model's physical parameters (no label, no slot): the memo key."""
    unlabelled = replace(m, label="", slot=1, invalid=())
    pairs = [p for p in _model_pairs(unlabelled) if p[0] != "label"]
    return "&".join(f"{k}={v}" for k, v in pairs)
