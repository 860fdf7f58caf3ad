"""The model cards: each slot's inputs as typed (with hints and accepted ranges), and its status
(reference badge, derived parameters, or the errors that stop it)."""

from __future__ import annotations

from layouts.specs import Card, CardStatus, Chip
from server import codec, compute, fields
from server.presets import PRESETS
from server.views.comparison import num

__all__ = ["cards", "chips", "card_status", "FIELD_HINTS", "HINT_LENGTH", "CHIP_CHANGES"]

# What an empty input means, short enough to fit the input (about 20 characters at the cards'
# width); the range line under each input says the rest.
FIELD_HINTS = {
    "omega_b": "empty = 0.157 Ω_cb",
    "omega_k": "empty = flat",
    "omega_de": "empty = derived",
}
HINT_LENGTH = 20
# a chip names at most this many changed parameters, then "+N more" (one line at 1024 px wide)
CHIP_CHANGES = 3


def _value_text(m: codec.ModelState, key: str, name: str) -> str:
    invalid = dict(m.invalid)
    if key in invalid:
        return invalid[key]
    value = getattr(m, name)
    if name == "m_nu":
        return ",".join(fields.readable_number(v) for v in value)
    if value is None:
        return ""
    if name == "omega_k" and m.omega_de is None and value == 0.0:
        return ""  # flat by default; typing Ω_de instead must not clash with a visible 0
    return fields.readable_number(value)


def cards(state: codec.LinkState) -> list[Card]:
    presets = [{"label": p.name, "value": p.key} for p in PRESETS.values()]
    full = len(state.models) >= codec.MAX_SLOTS
    out = []
    for m in state.models:
        fields = []
        for key, name in codec.MODEL_KEYS:
            if name == "label":
                continue
            spec = codec.parameter_spec(name)
            fields.append({
                "key": key, "title": spec.symbol, "unit": spec.unit, "text": _value_text(m, key, name),
                "placeholder": FIELD_HINTS.get(name, "comma-separated eV" if name == "m_nu" else ""),
                "range": codec.range_text(spec) if name != "m_nu" else
                f"≤ {codec.MAX_MASSES} values, each {codec.range_text(spec)}",
                "description": spec.description,
            })
        card: Card = {"slot": m.slot, "label": m.label, "fields": fields, "presets": presets,
                      "can_remove": len(state.models) > 1, "can_duplicate": not full}
        if full:
            card["duplicate_reason"] = f"all {codec.MAX_SLOTS} slots in use: remove a model to copy this one"
        if len(state.models) <= 1:
            card["remove_reason"] = "the comparison needs at least one model"
        out.append(card)
    return out


def _changes(m: codec.ModelState) -> str:
    """The parameters of `m` that differ from a new card's, as ``symbol = value unit``."""
    default = codec.ModelState(slot=m.slot)
    parts = []
    for key, name in codec.MODEL_KEYS:
        if name == "label" or getattr(m, name) == getattr(default, name):
            continue
        if name == "omega_k" and m.omega_de is not None:
            continue  # derived from Ω_de, which is listed itself
        spec = codec.parameter_spec(name)
        text = _value_text(m, key, name) or "–"
        unit = f" {spec.unit}" if spec.unit and spec.unit != "1" else ""
        parts.append(f"{spec.symbol} = {text}{unit}")
    if len(parts) > CHIP_CHANGES:
        parts = parts[:CHIP_CHANGES] + [f"+{len(parts) - CHIP_CHANGES} more"]
    return ", ".join(parts) if parts else "defaults"


def chips(state: codec.LinkState) -> dict[int, Chip]:
    """Each model's one-line summary, by slot."""
    ref = codec.reference_slot(state)
    out: dict[int, Chip] = {}
    for m in state.models:
        chip: Chip = {"slot": m.slot, "label": m.name, "changes": _changes(m), "reference": m.slot == ref}
        problem = compute.resolve(m).problem
        if problem is not None:
            chip["problem"] = problem.message
        out[m.slot] = chip
    return out


def card_status(state: codec.LinkState, slot: int) -> CardStatus:
    m = state.model(slot)
    if m is None:
        return {}
    r = compute.resolve(m)
    status: CardStatus = {"reference": codec.reference_slot(state) == slot, "errors": [], "derived": []}
    if r.problem is not None:
        status["errors"].append(r.problem.message)
        for extra in m.problems()[1:]:
            status["errors"].append(extra.message)
        return status
    try:
        curves = compute.model_curves(r.key, state.view.zmax)
    except Exception as err:  # noqa: BLE001
        status["errors"].append(f"m{slot}: could not be computed: {err}")
        return status
    p, e = curves["params"], curves["epochs"]
    status["derived"] = [
        ("Ω_de", num(p["omega_de"], 5)), ("Ω_k", num(p["omega_k"], 5)), ("Ω_r", num(p["omega_r"], 4)),
        ("Ω_b", num(p["omega_b"], 5)), ("age today", num(e.get("age_today"), 5, "Gyr")),
        ("fate", str(e.get("fate", "–"))),
    ]
    caution = curves["acoustic"].get("r_drag_caution")
    if caution:
        status["cautions"] = [caution]
    return status
