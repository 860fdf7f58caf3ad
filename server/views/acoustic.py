"""The acoustic panel: z*, r*, θ*, z_drag and r_drag per model, and D/r_drag against redshift
with the link's BAO measurements."""

from __future__ import annotations

from layouts.specs import PanelSpec
from server.views.comparison import Comparison, data_points, num
from server.views.parts import curve_series, failures_note, measurement_note, strip, z_axis

__all__ = ["build"]

SOURCES = ("z* from the fit of Hu & Sugiyama (1996); z_drag from Eisenstein & Hu (1998), about 4 % below "
           "Boltzmann-code values; r_drag from the calibrated formula of Aubourg et al. (2015), eq. 16.")
# curve key in model_curves["bao"], title, symbol, measurement kind drawn on it
RATIOS = (("dm_rd", "D_M / r_drag", "D_M/r_d", "dm_over_rd"),
          ("dh_rd", "D_H / r_drag with D_H = c/H(z)", "D_H/r_d", "dh_over_rd"),
          ("dv_rd", "D_V / r_drag", "D_V/r_d", "dv_over_rd"))


def build(c: Comparison) -> PanelSpec:
    rows = []
    for e in c.entries:
        ac, theta = e.curves["acoustic"], e.curves["theta_star_shown"]
        rows.append([e.name, num(ac.get("z_star")), num(ac.get("r_star"), 6, "Mpc"), num(theta["degrees"], 6, "deg"),
                     num(theta["hundred_rad"]), num(ac.get("z_drag")), num(ac.get("r_drag"), 6, "Mpc")])
    blocks = [{"kind": "table", "title": "Acoustic scales", "header": [
        "model", "z*", "r* = r_s(z*) [Mpc]", "θ* [deg]", "100 θ* [rad × 100]",
        "z_drag", "r_drag [Mpc]"], "rows": rows},
        {"kind": "text", "text": SOURCES}]
    blocks += [{"kind": "text", "tone": "caution", "text": f"{e.name}: {e.curves['acoustic']['r_drag_caution']}"}
               for e in c.entries if e.curves["acoustic"].get("r_drag_caution")]
    for key, title, symbol, kind in RATIOS:
        blocks.append({"kind": "figure", "id": f"fd-fig-{key}", "spec": {
            "title": title, **z_axis(c), "y_title": f"{symbol}", "y_hover": symbol, "unit": "",
            "series": curve_series(c, lambda cv, k=key: cv["bao"][k]),
            "strip": strip(c, lambda cv, k=key: cv["bao"][k]), "points": data_points(c, kind)}})
    return {"blocks": blocks + measurement_note(c) + failures_note(c)}
