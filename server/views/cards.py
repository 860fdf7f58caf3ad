"""The model cards: each slot's inputs as typed (with hints and accepted ranges), and its status
(reference badge, derived parameters, or the errors that stop it)."""

from __future__ import annotations

from layouts.specs import Card, CardStatus
from server import codec, compute, fields
from server.presets import PRESETS
from server.views.comparison import num

__all__ = ["cards", "card_status", "FIELD_HINTS", "HINT_LENGTH"]

# What an empty input means, short enough to fit the input (about 20 characters at the cards'
# width); the range line under each input says the rest.
FIELD_HINTS = {
    "omega_b": "empty = 0.157 Ω_cb",
    "omega_k": "empty = flat",
    "omega_de": "empty = derived",
}
HINT_LENGTH = 20


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
        out.append({"slot": m.slot, "label": m.label, "fields": fields, "presets": presets,
                    "can_remove": len(state.models) > 1, "can_duplicate": not full})
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
