"""The page's state, and every way it changes.

A `LinkState` is everything a link describes: up to four `ModelState` cards and one
`ViewState`. States are frozen values; every transition returns a new state:

* `model_from_pairs` / `view_from_pairs`: link keys and their raw texts -> a card / the view
  (used by `server.codec.decode`);
* `apply_action`: a card button (add, duplicate, remove) or a preset;
* `apply_inputs`: what the inputs on screen say (cards and view controls);
* `with_fit`: a best fit loaded into the lowest free slot, with the ``fit`` note;
* `with_data`: a stored measurement set attached to the link;
* `ModelState.to_cosmology`: the card as a `model.Cosmology` (raises the model's errors).

Values that cannot be used are kept verbatim in ``invalid`` (so the page still shows what was
typed) and reported by ``problems()``, each naming its key and what is accepted. The meaning
of each key (limits, parsing, defaults) lives in `server.fields`.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import model
from server import fields
from server.fields import MAX_LABEL_LENGTH, MAX_SLOTS, MODEL_KEYS, VIEW_KEY, Refusal
from server.presets import ALIASES, PRESETS, preset

__all__ = [
    "Problem", "ModelState", "ViewState", "LinkState", "default_model", "demo_models",
    "reference_slot", "model_from_pairs", "view_from_pairs", "apply_action", "apply_inputs",
    "apply_preset", "with_fit", "with_data", "TransitionError",
]


@dataclass(frozen=True)
class Problem:
    """A value in the link that cannot be used: `key` is the link key (``m2.om``), `message` says
    what is wrong and what is accepted."""

    key: str
    message: str


class TransitionError(ValueError):
    """A requested change cannot be made (every slot taken, the model gone...); the message
    names the field and what to do instead."""


def _default(name: str):
    return field(default_factory=lambda: fields.default_of(name))


@dataclass(frozen=True)
class ModelState:
    """One model card as the link describes it (defaults filled in).

    Exactly one of `omega_k` and `omega_de` is set; the other is derived by the model.
    `invalid` holds ``(key, raw text)`` pairs for values that were not applied.
    """

    slot: int
    label: str = ""
    h0: float = _default("h0")
    omega_m: float = _default("omega_m")
    omega_b: float | None = _default("omega_b")
    omega_k: float | None = _default("omega_k")
    omega_de: float | None = None
    w0: float = _default("w0")
    wa: float = _default("wa")
    t_cmb: float = _default("t_cmb")
    n_eff: float = _default("n_eff")
    m_nu: tuple[float, ...] = _default("m_nu")
    sigma8: float = _default("sigma8")
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

    def to_cosmology(self) -> model.Cosmology:
        """The card as a model; raises `model.ParameterError` / `model.NoBigBangError`."""
        kwargs = self.physical()
        if "omega_de" in kwargs:
            de = kwargs.pop("omega_de")
            return model.Cosmology.from_dark_energy(omega_de=de, label=self.label, **kwargs)
        return model.Cosmology(label=self.label, **kwargs)

    def problems(self) -> tuple[Problem, ...]:
        return tuple(_model_problem(self.slot, key, raw) for key, raw in self.invalid)


def _conflict_message(slot: int) -> str:
    return (f"m{slot}.ok and m{slot}.ode are both given; give at most one "
            f"(the other is derived from the closed energy budget)")


def _model_problem(slot: int, key: str, raw: str) -> Problem:
    full = f"m{slot}.{key}"
    outcome = fields.check_model_value(key, raw)
    if isinstance(outcome, Refusal):
        return Problem(full, f"{full}: {outcome}")
    return Problem(full, f"{full}: " + _conflict_message(slot))


def model_from_pairs(slot: int, pairs: list[tuple[str, str]]) -> ModelState:
    """A card from its link keys (``om``, ``ok``...) and raw texts, in the order given."""
    state = ModelState(slot=slot)
    changes: dict = {}
    invalid: dict[str, str] = {}
    for key, raw in pairs:
        outcome = fields.check_model_value(key, raw)
        if isinstance(outcome, Refusal):
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


def default_model(slot: int, **changes) -> ModelState:
    return replace(ModelState(slot=slot), **changes)


def apply_preset(state: ModelState, key: str) -> ModelState:
    """`state` with every physical input replaced by the preset's; the label becomes its name."""
    chosen = preset(key)
    return replace(ModelState(slot=state.slot), label=chosen.name, **chosen.values)


def demo_models() -> tuple[ModelState, ...]:
    """The models shown when a link names none: a made-up survey team's three candidates."""
    base = PRESETS["cmb2018-lens"].values
    return (
        default_model(1, label="Baseline (Planck 2018 lensing)", **base),
        default_model(2, label="Candidate T: thawing dark energy", **{**base, "w0": -0.85, "wa": -0.4}),
        default_model(3, label="Candidate C: mildly closed", **{**base, "omega_k": -0.02}),
    )


def _view_default(key: str):
    return VIEW_KEY[key].default


@dataclass(frozen=True)
class ViewState:
    """What is shown: reference slot (None = the first model), open panel and panel controls.
    Defaults come from `server.fields.VIEW_KEYS`."""

    reference: int | None = _view_default("ref")
    tab: str = _view_default("tab")
    zmax: float = _view_default("zmax")
    redshifts: tuple[float, ...] = _view_default("z")
    distance: str = _view_default("dist")
    sky_area: float = _view_default("sky")
    survey: tuple[float, float] = _view_default("zs")
    inverse_quantity: str = _view_default("iq")
    inverse_value: float = _view_default("iv")
    data: str | None = _view_default("data")
    r_d: str = _view_default("rd")
    fit: tuple[int, tuple[str, ...]] | None = _view_default("fit")
    residual_slot: str | int = _view_default("res")
    residual_bins: tuple[float, ...] | None = _view_default("rbin")
    distance_unit: str = _view_default("du")
    x_scale: str = _view_default("xs")
    y_scale: str = _view_default("ys")
    invalid: tuple[tuple[str, str], ...] = ()

    def problems(self) -> tuple[Problem, ...]:
        return tuple(Problem(key, str(VIEW_KEY[key].parse(raw))) for key, raw in self.invalid)

    def value_text(self, key: str) -> str:
        """The text a view control shows for `key`: what was typed when refused, else the value."""
        invalid = dict(self.invalid)
        if key in invalid:
            return invalid[key]
        row = VIEW_KEY[key]
        value = getattr(self, row.attribute)
        if isinstance(value, float):
            return fields.readable_number(value)
        if isinstance(value, tuple) and value and all(isinstance(v, float) for v in value):
            return ",".join(map(fields.readable_number, value))
        return "" if value is None else row.format(value)


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

    def model(self, slot: int) -> ModelState | None:
        return next((m for m in self.models if m.slot == slot), None)


def reference_slot(state: LinkState) -> int:
    """The reference model's slot: the link's `ref` when that slot exists, else the first."""
    slots = state.slots()
    ref = state.view.reference
    return ref if ref in slots else (slots[0] if slots else 1)


def view_from_pairs(view_pairs: dict[str, str], slots: tuple[int, ...]) -> tuple[ViewState, list[Problem]]:
    """The view from its link keys and raw texts, given the slots that exist; also the notices
    for values dropped because they name a model that is not there."""
    changes: dict = {}
    invalid: list[tuple[str, str]] = []
    notices: list[Problem] = []
    for row in fields.VIEW_KEYS:
        if row.key not in view_pairs:
            continue
        value = row.parse(view_pairs[row.key])
        if isinstance(value, Refusal):
            invalid.append((row.key, view_pairs[row.key]))
        else:
            changes[row.attribute] = value
    if "reference" in changes:
        if changes["reference"] not in slots:
            notices.append(Problem("ref", f"ref: model {changes['reference']} is not in the link; expected one of "
                                          f"{', '.join(map(str, slots))} (using {slots[0]})"))
            changes["reference"] = None
        elif changes["reference"] == slots[0]:
            changes["reference"] = None  # the first model is the default reference
    if isinstance(changes.get("residual_slot"), int) and changes["residual_slot"] not in slots:
        notices.append(Problem("res", f"res: model {changes['residual_slot']} is not in the link; expected all or "
                                      f"one of {', '.join(map(str, slots))} (showing every model's residuals)"))
        changes["residual_slot"] = "all"
    if changes.get("fit") is not None and changes["fit"][0] not in slots:
        notices.append(Problem("fit", f"fit: model {changes['fit'][0]} is not in the link; "
                                      "the fit note is dropped"))
        changes["fit"] = None
    return replace(ViewState(), **changes, invalid=tuple(invalid)), notices


# ----------------------------------------------------------------------------- transitions


def _lowest_free_slot(state: LinkState) -> int | None:
    free = [n for n in range(1, MAX_SLOTS + 1) if n not in state.slots()]
    return free[0] if free else None


def _settled(models: list[ModelState], view: ViewState) -> LinkState:
    """Models in slot order; a reference or fit note naming a removed model is dropped."""
    models = sorted(models, key=lambda m: m.slot)
    slots = [m.slot for m in models]
    if view.reference not in slots or view.reference == slots[0]:
        view = replace(view, reference=None)
    if view.fit is not None and view.fit[0] not in slots:
        view = replace(view, fit=None)  # the fitted model was removed
    return LinkState(models=tuple(models), view=view)


def apply_action(state: LinkState, action: str, slot: int | None = None, value=None) -> LinkState:
    """A card button (``add``, ``duplicate``, ``remove``) or a ``preset`` applied to a state."""
    models = list(state.models)
    if action == "add":
        new = _lowest_free_slot(state)
        if new is None:
            return state
        models.append(ModelState(slot=new))
    elif action == "duplicate":
        new = _lowest_free_slot(state)
        source = state.model(slot)
        if new is None or source is None:
            return state
        label = (source.label or source.name) + " (copy)"
        models.append(replace(source, slot=new, label=label[:MAX_LABEL_LENGTH]))
    elif action == "remove":
        if len(models) <= 1:
            return state
        models = [m for m in models if m.slot != slot]
    elif action == "preset":
        if value not in PRESETS and value not in ALIASES:
            return state  # not a parameter set (a stale or forged page): nothing changes
        models = [apply_preset(m, value) if m.slot == slot else m for m in models]
    return _settled(models, state.view)


def apply_inputs(current: LinkState, params: list[tuple[dict, str]], views: list[tuple[str, str]]) -> LinkState:
    """The state the inputs on screen describe. `params` are ``(id, value)`` pairs of the card
    inputs (ids ``{"slot": n, "key": "om"}``); `views` are ``(view key, text)`` pairs that replace
    the current link's (empty text: back to the default). Everything else is kept."""
    by_slot: dict[int, list[tuple[str, str]]] = {}
    for pid, value in params:
        by_slot.setdefault(pid["slot"], []).append((pid["key"], "" if value is None else str(value)))
    models = []
    for m in current.models:
        if m.slot not in by_slot:
            models.append(m)
            continue
        # an emptied field is not applied (the default holds), except the mass list, whose
        # empty text means: no massive species
        pairs = [(k, v) for k, v in by_slot.pop(m.slot) if v or k == "mnu"]
        models.append(model_from_pairs(m.slot, pairs))
    models.extend(model_from_pairs(slot, [(k, v) for k, v in pairs if v or k == "mnu"])
                  for slot, pairs in by_slot.items() if 1 <= slot <= MAX_SLOTS)
    pairs = {row.key: current.view.value_text(row.key) for row in fields.VIEW_KEYS
             if row.key in dict(current.view.invalid) or
             getattr(current.view, row.attribute) != row.default}
    for key, value in views:
        if value is None or str(value) == "":
            pairs.pop(key, None)
        else:
            pairs[key] = str(value)
    models.sort(key=lambda m: m.slot)
    view, notices = view_from_pairs(pairs, tuple(m.slot for m in models))
    return LinkState(models=tuple(models), view=view, notices=tuple(notices))


def with_data(state: LinkState, digest: str) -> LinkState:
    """The link naming the stored measurement set `digest`, on the data tab."""
    view = replace(state.view, data=digest, tab="data",
                   invalid=tuple((k, v) for k, v in state.view.invalid if k != "data"))
    return replace(state, view=view)


def with_fit(state: LinkState, fit: dict) -> LinkState:
    """The link with the fit loaded into the lowest free slot (and the ``fit`` note naming it);
    raises `TransitionError` when every slot is taken or the start model is gone.

    `fit` is a stored fit (`server.compute.fit`): ``slot``, ``names`` (freed parameters) and
    ``cosmology`` (the best-fit inputs)."""
    new_slot = _lowest_free_slot(state)
    if new_slot is None:
        raise TransitionError(f"load: all {MAX_SLOTS} slots are taken; remove a model first")
    source = state.model(fit["slot"])
    if source is None:
        raise TransitionError(f"load: the start model m{fit['slot']} is no longer in the link; fit again")
    link_name = {v: k for k, v in fields.FIT_KEYS.items()}
    # seven significant digits keep the link short and reproduce the fit far inside its errors
    changes = {k: float(f"{float(v):.7g}") + 0.0 for k, v in fit["cosmology"].items() if k in fit["names"]}
    if "omega_k" in changes:
        changes["omega_de"] = None  # the fitted curvature is the input now
    label = f"{source.name} best fit ({', '.join(link_name[n] for n in fit['names'])})"[:MAX_LABEL_LENGTH]
    new = replace(source, slot=new_slot, label=label, invalid=(), **changes)
    note = (new.slot, tuple(n for n in fields.FIT_KEYS if fields.FIT_KEYS[n] in fit["names"]))
    view = replace(state.view, fit=note)
    return _settled(list(state.models) + [new], view)
