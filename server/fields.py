"""What each key of the link means: its limits, how its text is read and written, its default.

Two tables drive everything that reads or writes a link (`server.state` builds states from
them, `server.codec` turns states into query strings and back):

* `MODEL_KEYS`: per model slot, link key -> `Cosmology` field, in canonical order; the
  numbers are checked against the model's own `model.PARAMETERS`.
* `VIEW_KEYS`: one `ViewKey` row per view key (key, `ViewState` attribute, parse, format,
  default). A new view key is one row here and one field on `ViewState`.

Reading never raises: a parse function returns the value, or a `Refusal` whose text names
the key and what would be accepted. This module imports only the model and the tab registry.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from decimal import Decimal
from typing import Any, Callable

import model
from server.tabs import TAB_KEYS

__all__ = [
    "MAX_SLOTS", "MAX_LABEL_LENGTH", "MAX_TABLE_REDSHIFTS", "MAX_MASSES", "Z_MIN", "Z_MAX",
    "FULL_SKY_DEG2", "MAX_BIN_EDGES", "REQUIRED_DEFAULTS", "MODEL_KEYS", "FIELD_OF", "DISTANCE_CHOICES",
    "DATA_HASH_LENGTH", "R_D_CHOICES", "DISTANCE_UNITS", "AXIS_SCALES",
    "FIT_KEYS", "Refusal", "ViewKey", "VIEW_KEYS", "VIEW_KEY",
    "format_number", "readable_number", "parse_number", "parameter_spec", "range_text", "default_of", "normal_masses",
    "check_model_value", "invertible",
]

MAX_SLOTS = 4
MAX_LABEL_LENGTH = 80
MAX_TABLE_REDSHIFTS = 50
MAX_MASSES = model.MAX_NEUTRINO_SPECIES
# Redshift range evaluate() accepts.
Z_MIN, Z_MAX = float(model.Z_MIN), float(model.Z_MAX)
# Whole sky in square degrees: 4 pi (180/pi)^2.
FULL_SKY_DEG2 = 4.0 * math.pi * (180.0 / math.pi) ** 2
# Link defaults for inputs the model requires (it has no default for them): the Planck 2018
# TT,TE,EE+lowE+lensing column, Planck Collaboration 2020, A&A 641, A6, Table 2.
REQUIRED_DEFAULTS = {"h0": 67.36, "omega_m": 0.3153}

# Link key -> Cosmology field, in canonical order.
MODEL_KEYS = (
    ("label", "label"), ("h0", "h0"), ("om", "omega_m"), ("ob", "omega_b"), ("ok", "omega_k"),
    ("ode", "omega_de"), ("w0", "w0"), ("wa", "wa"), ("tcmb", "t_cmb"), ("neff", "n_eff"),
    ("mnu", "m_nu"), ("s8", "sigma8"),
)
FIELD_OF = dict(MODEL_KEYS)

# Link value -> evaluate() key of the distance drawn in the distances panel.
DISTANCE_CHOICES = {
    "dc": "comoving_distance",
    "dm": "transverse_comoving_distance",
    "da": "angular_diameter_distance",
    "dl": "luminosity_distance",
}
# Units the distance figures can be drawn in (view key du): the link's spelling -> (unit on the axis,
# factor on a distance in Mpc; None = times the model's own h = H0 / (100 km/s/Mpc)).
DISTANCE_UNITS = {"mpc": ("Mpc", 1.0), "hmpc": ("h⁻¹ Mpc", None), "gpc": ("Gpc", 1e-3)}
# Axis scales (view keys xs for the redshift axis, ys for the value axis); auto = the page's choice
# (a log redshift axis beyond z = 10, a log volume axis there too).
AXIS_SCALES = ("auto", "lin", "log")
# A stored measurement set is named by this many lowercase hex digits of its SHA-256.
DATA_HASH_LENGTH = 24
_DATA_HASH = re.compile(f"[0-9a-f]{{{DATA_HASH_LENGTH}}}")
R_D_CHOICES = ("model", "free")
# Link spelling -> model.FIT_PARAMETERS name of the parameters a fit can free (``fit`` key).
FIT_KEYS = {"h0": "h0", "om": "omega_m", "ok": "omega_k", "w0": "w0", "wa": "wa", "s8": "sigma8",
            "rd": "r_d", "off": "offset"}

_NUMBER = re.compile(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?", re.ASCII)  # no other scripts' digits


class Refusal(str):
    """Why a link value cannot be used (the text names the key and what is accepted)."""


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


def parse_number(raw: str) -> float | Refusal:
    """The float, or a `Refusal` saying why `raw` is not a usable number (plain decimals, finite)."""
    text = raw.strip()
    if not _NUMBER.fullmatch(text):
        return Refusal(f"{raw!r} is not a number")
    value = float(text)
    if not math.isfinite(value):
        return Refusal(f"{raw!r} is not a finite number")
    return value + 0.0


# ----------------------------------------------------------------------------- model keys


def parameter_spec(name: str) -> model.ParameterSpec:
    """The model's `ParameterSpec` for a Cosmology field name."""
    for spec in model.PARAMETERS:
        if spec.name == name:
            return spec
    raise KeyError(name)


def readable_number(x: float) -> str:
    """For people, not for links: positional while that is short (5000 rather than 5e3, as
    `format_number` writes it), else the shortest form; reads back as the same float.

    >>> readable_number(5000.0), readable_number(0.0001), readable_number(1.5e-7)
    ('5000', '0.0001', '1.5e-7')
    """
    plain = format(Decimal(repr(float(x) + 0.0)).normalize(), "f")
    return plain if len(plain) <= 7 else format_number(x)


def range_text(spec: model.ParameterSpec) -> str:
    """``0 ≤ Ω_m ≤ 5`` (with the unit when there is one)."""
    unit = f" {spec.unit}" if spec.unit and spec.unit != "1" else ""
    low = "<" if spec.exclusive_minimum else "≤"
    return f"{readable_number(spec.minimum)} {low} {spec.symbol} ≤ {readable_number(spec.maximum)}{unit}"


def normal_masses(masses: tuple[float, ...]) -> tuple[float, ...]:
    """One canonical spelling of a mass list: order does not matter and massless species drop out."""
    return tuple(sorted((float(m) + 0.0 for m in masses if m != 0), reverse=True))


def default_of(name: str):
    """The link's default for a Cosmology field (the model's, or `REQUIRED_DEFAULTS`)."""
    value = parameter_spec(name).default
    if value is None and name in REQUIRED_DEFAULTS:
        return REQUIRED_DEFAULTS[name]
    if name == "m_nu":
        return normal_masses(tuple(value or ()))
    if name == "omega_k" and value is None:
        return 0.0
    return value


def _in_range(value: float, spec: model.ParameterSpec) -> bool:
    above = value > spec.minimum if spec.exclusive_minimum else value >= spec.minimum
    return above and value <= spec.maximum


def check_model_value(key: str, raw: str):
    """``(field, value)`` to apply for the model key `key` (``om``), or a `Refusal`."""
    name = FIELD_OF[key]
    if name == "label":
        if len(raw) > MAX_LABEL_LENGTH:
            return Refusal(f"{len(raw)} characters; expected at most {MAX_LABEL_LENGTH}")
        return name, raw
    spec = parameter_spec(name)
    if name == "m_nu":
        parts = raw.split(",") if raw.strip() else []
        if len(parts) > MAX_MASSES:
            return Refusal(f"{len(parts)} masses given; expected at most {MAX_MASSES} (comma-separated eV)")
        masses = []
        for part in parts:
            value = parse_number(part)
            if isinstance(value, Refusal):
                return Refusal(f"{value}; expected {MAX_MASSES} or fewer comma-separated masses, each "
                               f"{range_text(spec)}")
            if not _in_range(value, spec):
                return Refusal(f"{format_number(value)} eV is out of range; expected each {range_text(spec)}")
            masses.append(value)
        return name, normal_masses(tuple(masses))
    if not raw.strip():
        return name, default_of(name)  # an emptied field falls back to its default
    value = parse_number(raw)
    if isinstance(value, Refusal):
        return Refusal(f"{value}; expected {range_text(spec)}")
    if not _in_range(value, spec):
        return Refusal(f"{format_number(value)} is out of range; expected {range_text(spec)}")
    return name, value


def invertible() -> tuple[str, ...]:
    """Quantities the inverse look-up accepts (the model's registry)."""
    return model.INVERTIBLE


# ----------------------------------------------------------------------------- view keys


@dataclass(frozen=True)
class ViewKey:
    """One view key of the link: `parse(raw)` gives the `ViewState` value or a `Refusal`;
    `format(value)` writes it back; the key is omitted from the link at its `default`."""

    key: str
    attribute: str
    parse: Callable[[str], Any]
    format: Callable[[Any], str]
    default: Any


def _choice(key: str, what: str, choices) -> Callable[[str], Any]:
    def parse(raw: str):
        if raw not in tuple(choices()):
            return Refusal(f"{key}: {raw!r} is not {what}; expected one of {', '.join(choices())}")
        return raw
    return parse


def _ref(raw: str):
    if not re.fullmatch(r"[0-9]{1,3}", raw.strip()) or not 1 <= int(raw) <= MAX_SLOTS:
        return Refusal(f"ref: {raw!r} is not a model slot; expected a whole number 1 to {MAX_SLOTS}")
    return int(raw)


def _data(raw: str):
    if not _DATA_HASH.fullmatch(raw):
        return Refusal(f"data: {raw!r} is not a stored-data reference; expected {DATA_HASH_LENGTH} "
                       "lowercase hexadecimal digits (as POST /api/v1/data answers)")
    return raw


def _fit(raw: str):
    what = (f"N:names with N a slot 1 to {MAX_SLOTS} and names comma-separated from "
            f"{', '.join(FIT_KEYS)}, e.g. 4:om,w0")
    slot_text, _, names_text = raw.partition(":")
    names = names_text.split(",") if names_text else []
    if not re.fullmatch(r"[1-9]", slot_text) or not 1 <= int(slot_text) <= MAX_SLOTS or not names \
            or any(n not in FIT_KEYS for n in names) or len(set(names)) != len(names):
        return Refusal(f"fit: {raw!r} is not a fit description; expected {what}")
    return int(slot_text), tuple(n for n in FIT_KEYS if n in names)  # one spelling per set of names


def _bounded(key: str, low: float, high: float, what: str) -> Callable[[str], Any]:
    def parse(raw: str):
        value = parse_number(raw)
        if isinstance(value, Refusal):
            return Refusal(f"{key}: {value}; expected {what}")
        if not low <= value <= high:
            return Refusal(f"{key}: {format_number(value)} is out of range; expected {what}")
        return value
    return parse


def _redshift_values(key: str, parts: list[str], low: float, what: str):
    """The numbers of `parts`, each low ≤ z ≤ Z_MAX, or a `Refusal` for the first that is not."""
    values = []
    for part in parts:
        value = parse_number(part)
        if isinstance(value, Refusal):
            return Refusal(f"{key}: {value}; expected {what}")
        if not low <= value <= Z_MAX:
            return Refusal(f"{key}: z = {format_number(value)} is outside the model's range; expected {what}")
        values.append(value)
    return tuple(values)


def _redshift_list(raw: str):
    what = (f"up to {MAX_TABLE_REDSHIFTS} comma-separated redshifts, each "
            f"{format_number(Z_MIN)} ≤ z ≤ {format_number(Z_MAX)}")
    parts = raw.split(",") if raw.strip() else []
    if not parts or len(parts) > MAX_TABLE_REDSHIFTS:
        return Refusal(f"z: {len(parts)} values given; expected {what}")
    return _redshift_values("z", parts, Z_MIN, what)


def _survey_range(raw: str):
    what = f"two comma-separated redshifts 0 ≤ z_low < z_high ≤ {format_number(Z_MAX)}"
    parts = raw.split(",") if raw.strip() else []
    if len(parts) != 2:
        return Refusal(f"zs: {len(parts)} values given; expected {what}")
    values = _redshift_values("zs", parts, 0.0, what)
    if not isinstance(values, Refusal) and not values[0] < values[1]:
        return Refusal(f"zs: {raw!r} is not an increasing pair; expected {what}")
    return values


def _numbers(values) -> str:
    return ",".join(map(format_number, values))


def _residual_choice(raw: str):
    if raw == "all":
        return raw
    if not re.fullmatch(r"[1-9]", raw) or not 1 <= int(raw) <= MAX_SLOTS:
        return Refusal(f"res: {raw!r} is not a residual choice; expected all or a model slot 1 to {MAX_SLOTS}")
    return int(raw)


MAX_BIN_EDGES = 21  # 20 bins: more would be the per-point residuals again (judgement, no source)


def _bin_edges(raw: str):
    what = (f"2 to {MAX_BIN_EDGES} increasing comma-separated redshifts, each 0 ≤ z ≤ {format_number(Z_MAX)}, "
            "e.g. 0,0.5,1,2")
    parts = raw.split(",") if raw.strip() else []
    if not 2 <= len(parts) <= MAX_BIN_EDGES:
        return Refusal(f"rbin: {len(parts)} values given; expected {what}")
    values = _redshift_values("rbin", parts, 0.0, what)
    if not isinstance(values, Refusal) and any(b <= a for a, b in zip(values, values[1:])):
        return Refusal(f"rbin: {raw!r} is not increasing; expected {what}")
    return values


# Canonical order of the view keys in a link (after ``v``, the scheme version).
VIEW_KEYS: tuple[ViewKey, ...] = (
    ViewKey("ref", "reference", _ref, str, None),
    ViewKey("tab", "tab", _choice("tab", "a panel", lambda: TAB_KEYS), str, "budget"),
    ViewKey("zmax", "zmax", _bounded("zmax", 0.01, Z_MAX, "0.01 ≤ zmax ≤ " + format_number(Z_MAX)),
            format_number, 3.0),
    ViewKey("z", "redshifts", _redshift_list, _numbers, (0.1, 0.5, 1.0, 2.0, 3.0)),
    ViewKey("dist", "distance", _choice("dist", "a distance", lambda: DISTANCE_CHOICES), str, "dl"),
    ViewKey("sky", "sky_area", _bounded("sky", 1e-6, FULL_SKY_DEG2,
                                        f"0 < sky ≤ {FULL_SKY_DEG2:.2f} deg² (the whole sky)"),
            format_number, 1000.0),
    ViewKey("zs", "survey", _survey_range, _numbers, (0.5, 1.5)),
    ViewKey("iq", "inverse_quantity", _choice("iq", "an invertible quantity", invertible), str, "age"),
    ViewKey("iv", "inverse_value", _bounded("iv", 0.0, 1e9,
                                            "0 ≤ iv ≤ 1e9 (in the unit of the looked-up quantity)"),
            format_number, 5.0),
    ViewKey("data", "data", _data, str, None),
    ViewKey("rd", "r_d", _choice("rd", "a sound-horizon choice", lambda: R_D_CHOICES), str, "model"),
    ViewKey("fit", "fit", _fit, lambda v: f"{v[0]}:{','.join(v[1])}", None),
    ViewKey("res", "residual_slot", _residual_choice, str, "all"),
    ViewKey("du", "distance_unit", _choice("du", "a distance unit", lambda: DISTANCE_UNITS), str, "mpc"),
    ViewKey("xs", "x_scale", _choice("xs", "an axis scale", lambda: AXIS_SCALES), str, "auto"),
    ViewKey("ys", "y_scale", _choice("ys", "an axis scale", lambda: AXIS_SCALES), str, "auto"),
    ViewKey("rbin", "residual_bins", _bin_edges, _numbers, None),
)
VIEW_KEY = {row.key: row for row in VIEW_KEYS}
