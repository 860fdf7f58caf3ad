"""The distances panel: the chosen distance, Δμ against the reference, the angular scale and
H(z)/(1+z), with the link's measurements on the matching plots."""

from __future__ import annotations

import model
from layouts.specs import PanelSpec
from server import codec
from server.views.comparison import (DISTANCE_KIND, Comparison, data_points, residual_points,
                                     strip_points)
from server.views.parts import (curve_series, distance_factor, failures_note, measurement_note, quantity_figure,
                                strip, z_axis)

__all__ = ["build"]

OFFSET_NOTE = ("The supernova offset M is free: the points are the moduli minus the reference model with its best "
               "M; another model's curve is shown without its own M, so a constant shift between them does not "
               "change its χ² (see the data panel).")


def build(c: Comparison) -> PanelSpec:
    choice = c.state.view.distance
    key = codec.DISTANCE_CHOICES[choice]
    controls = [{"key": "dist", "kind": "dropdown", "label": "distance", "value": choice,
                 "options": [{"label": model.QUANTITIES[v].description, "value": k}
                             for k, v in codec.DISTANCE_CHOICES.items()]}]
    distance = quantity_figure(c, key)
    # the link's measurements on the matching plots (nothing when the link names none)
    unit_note = []
    if choice in DISTANCE_KIND:
        factor = distance_factor(c, c.reference.curves) if c.reference else 1.0
        distance["spec"]["points"] = data_points(c, DISTANCE_KIND[choice], lambda z, v, err: (v * factor, err * factor))
        if distance["spec"]["points"] and c.state.view.distance_unit == "hmpc":
            unit_note = [{"kind": "text", "text": "The measurements (in Mpc) are drawn in h⁻¹ Mpc with the "
                                                  f"reference model's h = {factor:.4g}."}]
        if distance["spec"]["strip"]:
            distance["spec"]["strip"]["points"] = strip_points(c, DISTANCE_KIND[choice])
    modulus = {"kind": "figure", "id": "fd-fig-dmu", "spec": {
        "title": f"Distance-modulus difference Δμ against {c.reference.name if c.reference else 'reference'}",
        **z_axis(c), "y_title": "Δμ [mag]", "y_hover": "Δμ", "unit": "mag",
        "series": (strip(c, lambda cv: cv["at"]["distance_modulus"], kind="difference") or {"series": []})["series"],
        "strip": None, "points": residual_points(c, "distance_modulus")}}
    expansion = {"kind": "figure", "id": "fd-fig-hz", "spec": {
        "title": "Expansion rate H(z)/(1+z)", **z_axis(c), "y_title": "H/(1+z) [km s⁻¹ Mpc⁻¹]",
        "y_hover": "H/(1+z)", "unit": "km s⁻¹ Mpc⁻¹",
        "series": curve_series(c, lambda cv: cv["hubble_over_1pz"]),
        "strip": strip(c, lambda cv: cv["hubble_over_1pz"]),
        "points": data_points(c, "hubble_parameter", lambda z, v, err: (v / (1 + z), err / (1 + z)))}}
    if expansion["spec"]["strip"]:  # H_data/(1+z) over H_ref/(1+z) is H_data / H_ref
        expansion["spec"]["strip"]["points"] = strip_points(c, "hubble_parameter")
    blocks = [distance, modulus]
    if modulus["spec"]["points"]:
        blocks.append({"kind": "text", "text": OFFSET_NOTE})
    blocks += [quantity_figure(c, "angular_scale", title="Angular scale (proper kpc per arcsec)"), expansion]
    return {"controls": controls, "blocks": blocks + unit_note + measurement_note(c) + failures_note(c)}
