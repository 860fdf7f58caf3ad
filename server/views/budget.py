"""The energy-budget panel: Ω_i(a) and ρ_i(a) per model, w(z), q(z) and the epochs table."""

from __future__ import annotations

from layouts.specs import PanelSpec
from server import compute
from server.views.comparison import Comparison, num
from server.views.parts import curve_series, failures_note, strip, z_axis

__all__ = ["build", "COMPONENT_NAMES"]

COMPONENT_NAMES = {
    "photons": "photons", "neutrinos": "neutrinos", "baryons": "baryons",
    "cold_dark_matter": "cold dark matter", "dark_energy": "dark energy", "curvature": "curvature",
    "critical": "critical density",
}
COMPONENTS = ("photons", "neutrinos", "baryons", "cold_dark_matter", "dark_energy", "curvature")
GUIDE_TEXTS = {-4: "∝ a⁻⁴", -3: "∝ a⁻³", 0: "constant"}
EPOCH_MARKERS = (("a_equality", "matter–radiation equality"),
                 ("a_dark_energy_equality", "matter–dark energy equality"),
                 ("a_acceleration", "acceleration begins"))


def _markers(curves: dict) -> list[dict]:
    marks = [(curves["epoch_a"].get(key), text) for key, text in EPOCH_MARKERS] + [(1.0, "today")]
    return [{"x": a, "text": text} for a, text in marks if a is not None and compute.A_MIN <= a <= compute.A_MAX]


def _component(e, key: str, y, symbol: str) -> dict:
    return {"name": COMPONENT_NAMES[key], "role": "component", "component": key, "slot": e.slot,
            "x": e.curves["a"], "y": y, "y_hover": f"{symbol} ({COMPONENT_NAMES[key]})"}


def _guides(e) -> list[dict]:
    out = []
    for key, power in compute.GUIDE_POWERS.items():
        y = e.curves["rho_guides"].get(key)
        if y is None or not (y == y).all():  # NaN: no positive density today to draw it through
            continue
        text = GUIDE_TEXTS[power]
        out.append({"name": f"slope {text}", "role": "guide", "component": key, "slot": e.slot,
                    "x": e.curves["guide_a"], "y": y, "y_hover": f"guide {text}"})
    return out


def _epochs_table(c: Comparison) -> dict:
    rows = []
    for e in c.entries:
        ep = e.curves["epochs"]
        rows.append([e.name, num(ep.get("z_equality"), 5), num(ep.get("age_equality"), 4, "Gyr"),
                     num(ep.get("z_dark_energy_equality"), 4), num(ep.get("age_dark_energy_equality"), 4, "Gyr"),
                     num(ep.get("z_acceleration"), 4), num(ep.get("age_acceleration"), 4, "Gyr"),
                     num(ep.get("age_today"), 5, "Gyr"), str(ep.get("fate", "–")),
                     num(ep.get("t_recollapse") or ep.get("t_big_rip"), 4, "Gyr")])
    return {"kind": "table", "title": "Epochs: redshift and age at z [Gyr] of each transition", "header": [
        "model", "z equality", "age at equality", "z matter = dark energy", "age then",
        "z acceleration begins", "age then", "age today", "fate", "recollapse / big rip at"], "rows": rows}


def build(c: Comparison) -> PanelSpec:
    fraction_panels, density_panels = [], []
    for e in c.entries:
        cv = e.curves
        fraction_panels.append({"title": e.name, "slot": e.slot, "markers": _markers(cv), "series": [
            _component(e, k, cv["omega"][k], "Ω") for k in COMPONENTS if k in cv["omega"]]})
        density_panels.append({"title": e.name, "slot": e.slot, "series": [
            _component(e, k, cv["rho_positive"][k], "ρ") for k in COMPONENTS + ("critical",) if k in cv["rho"]]
            + _guides(e)})
    a_axis = {"x_title": "scale factor a", "x_hover": "a", "x_log": True}
    blocks = [
        {"kind": "multiples", "id": "fd-fig-fractions", "spec": {
            "title": "Density parameters Ω_i(a), from a = 1e-7 to a = 10", **a_axis,
            "y_title": "Ω_i", "unit": "", "panels": fraction_panels}},
        {"kind": "multiples", "id": "fd-fig-densities", "spec": {
            "title": "Densities ρ_i(a) (negative values not drawn)", **a_axis, "y_log": True,
            "y_title": "ρ_i [kg m⁻³]", "unit": "kg m⁻³", "panels": density_panels}},
        {"kind": "figure", "id": "fd-fig-w", "spec": {
            "title": "Dark-energy equation of state w(z)", **z_axis(c), "y_title": "w",
            "y_hover": "w", "unit": "", "series": curve_series(c, lambda cv: cv["w"]),
            "strip": strip(c, lambda cv: cv["w"], kind="difference")}},
        {"kind": "figure", "id": "fd-fig-q", "spec": {
            "title": "Deceleration parameter q(z)", **z_axis(c), "y_title": "q", "y_hover": "q",
            "unit": "", "series": curve_series(c, lambda cv: cv["at"]["deceleration_parameter"]),
            "strip": strip(c, lambda cv: cv["at"]["deceleration_parameter"], kind="difference")}},
        _epochs_table(c),
    ]
    return {"intro": ("Each small plot is one model; colour marks the component (model colours are not used "
                      "here). Radiation falls as a⁻⁴, matter as a⁻³ and a cosmological constant stays constant: "
                      "the grey guides, each labelled at its start. Symbols at the top mark the epochs (see the "
                      "key under the plots; hover for the values)."),
            "blocks": blocks + failures_note(c)}
