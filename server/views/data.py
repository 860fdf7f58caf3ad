"""The data panel: each model's goodness of fit, then the residuals and pulls per measurement
kind (every model's or one model's, optionally averaged in redshift bins: `model.binned_residuals`,
diagonal errors only), then the link's measurement set. The upload, fit and map tools are in
`server.views.data_tools`."""

from __future__ import annotations

import numpy as np

import model

from layouts.specs import PanelSpec, TableBlock
from server import codec
from layouts.text import counted
from server.views.comparison import (KIND_TITLES, SYNTHETIC_NOTE, Comparison, is_synthetic, kind_rows,
                                     measurements, num, scores)
from server.views.parts import failures_note, view_control, with_unit

__all__ = ["build", "F_SIGMA8_CAVEAT"]

METHOD = ("χ² = rᵀC⁻¹r with the full covariance; the supernova offset M is marginalised analytically "
          "(Goliath et al. 2001; Conley et al. 2011), r_d is each model's own or minimised. The p-value is "
          "P(χ²_dof ≥ χ²); Δχ² is against the reference model. AIC = χ² + 2k and BIC = χ² + k ln N are "
          "shown once a fit with free parameters is in the link.")
F_SIGMA8_CAVEAT = ("About fσ₈: a survey turns its redshifts into distances with a fiducial cosmology before it "
                   "measures fσ₈, and the value depends on that choice (the Alcock–Paczynski effect). Comparing "
                   "the published values with a model far from that fiducial one, without correcting for it, is "
                   "only an approximation.")
COVARIANCE_SOURCES = {"file": "covariance file", "pairs": "errors and correlated pairs", "diagonal": "errors only"}


def _score_table(c: Comparison) -> TableBlock:
    results = scores(c)
    with_ic = c.state.view.fit is not None
    ref_name = c.reference.name if c.reference else "reference"
    header = (["model", "χ²", "degrees of freedom", "p-value",
               f"Δχ² vs {ref_name}", "free parameters k"]
              + (["AIC", "BIC"] if with_ic else [])
              + ["r_d used [Mpc]", "supernova offset M [mag]"])
    rows = []
    for e in c.entries:
        r = results.get(e.slot, {})
        if "chi2" not in r:
            rows.append([e.name, r.get("error", "–")] + ["–"] * (len(header) - 2))
            continue
        row = [e.name, num(r["chi2"]), str(r["dof"]), num(r["p_value"], 3), num(r["delta_chi2"], 5),
               str(r["n_parameters"])]
        if with_ic:
            row += [num(r["aic"]), num(r["bic"])]
        row += [num(r["r_d"], 6, "Mpc"), num(r["offset"], 4, "mag")]
        rows.append(row)
    return {"kind": "table", "title": "Goodness of fit", "header": header, "rows": rows}


def _shown_entries(c: Comparison) -> list:
    """The models whose residuals are drawn: all, or the one the link's ``res`` names."""
    chosen = c.state.view.residual_slot
    picked = [e for e in c.entries if e.slot == chosen]
    return picked or list(c.entries)


def _bin_range(low: float, high: float, last: bool) -> str:
    return f"{codec.format_number(low)} ≤ z {'≤' if last else '<'} {codec.format_number(high)}"


def _binned(e, z, residual, error, edges, unit: str) -> tuple[list, tuple]:
    """One model's weighted mean residual per bin (`model.binned_residuals`, diagonal errors)."""
    b = model.binned_residuals(z, residual, error, edges)
    if not len(b):
        return [], b.empty
    text = [f"{counted(int(n), 'measurement')} in {_bin_range(lo, hi, hi == edges[-1])}"
            for lo, hi, n in zip(b.low, b.high, b.count)]
    return [{"name": f"{e.name}: binned", "role": "binned", "slot": e.slot, "x": 0.5 * (b.low + b.high),
             "x_low": b.low, "x_high": b.high, "y": b.mean, "error": b.error, "text": text,
             "y_hover": "weighted mean of data − model"}], b.empty


def _residual_figures(c: Comparison) -> list:
    stored, _ = measurements(c)
    results = scores(c)
    d = stored.measurements
    edges = c.state.view.residual_bins
    blocks = []
    for kind in d.kinds_present:
        rows = kind_rows(stored, kind)
        title, unit = KIND_TITLES[kind]
        labels = [d.label[i] for i in rows]
        points, pulls, binned, empty = [], [], [], ()
        for e in _shown_entries(c):
            r = results.get(e.slot, {})
            if "residual" not in r:
                continue
            residual = np.asarray(r["residual"])[rows]
            points.append({"name": e.name, "role": "residual", "slot": e.slot, "x": d.z[rows],
                           "y": residual, "error": d.error[rows], "text": labels})
            pulls.append({"name": e.name, "role": "pull", "slot": e.slot, "x": d.z[rows],
                          "y": np.asarray(r["pull"])[rows], "text": labels, "y_hover": "pull"})
            if edges is not None:
                series, empty = _binned(e, d.z[rows], residual, d.error[rows], edges, unit)
                binned += series
        z = d.z[rows]
        if kind == "f_sigma8":
            blocks.append({"kind": "text", "text": F_SIGMA8_CAVEAT, "tone": "note"})
        blocks.append({"kind": "figure", "id": f"fd-fig-residual-{kind}", "spec": {
            "title": f"Residuals of {title} ({counted(rows.size, 'measurement')}): data − model, and pulls",
            "x_title": "redshift z", "x_hover": "z",
            "x_log": bool(z.size and z.min() > 0 and z.max() / z.min() > 20),
            "y_title": with_unit("data − model", unit), "y_hover": "data − model", "unit": unit,
            "series": [], "points": points + binned,
            "strip": {"y_title": "pull [σ]", "series": pulls, "unit": "σ"}}})
        if edges is not None and empty:
            ranges = ", ".join(_bin_range(lo, hi, hi == edges[-1]) for lo, hi in empty)
            blocks.append({"kind": "text", "text": f"{title}: no measurements in {ranges}; "
                                                   f"{'that bin is' if len(empty) == 1 else 'those bins are'} "
                                                   "skipped."})
    return blocks


def _residual_controls(c: Comparison) -> list:
    options = [{"label": "all models", "value": "all"}] + [
        {"label": f"m{e.slot} {e.name}", "value": e.slot} for e in c.entries]
    chosen = c.state.view.residual_slot
    return [{"key": "res", "kind": "dropdown", "label": "residuals of", "options": options,
             "value": chosen if any(o["value"] == chosen for o in options) else "all"},
            view_control(c, "rbin", "bin edges in z for binned residuals (empty: no bins)",
                         "2 to 21 increasing redshifts, e.g. 0,0.5,1,2; inverse-variance weighted mean per "
                         "bin, diagonal errors only")]


def build(c: Comparison) -> PanelSpec:
    stored, problem = measurements(c)
    controls = [{"key": "rd", "kind": "dropdown", "label": "sound horizon r_d for the D/r_d measurements",
                 "value": c.state.view.r_d, "options": [
                     {"label": "each model's own r_drag", "value": "model"},
                     {"label": "free (minimised for each model)", "value": "free"}]}]
    if stored is None:
        text = problem or ("No measurements in this link yet: upload or paste a table in the data tools below, "
                           "or load the synthetic demo data.")
        return {"controls": controls,
                "blocks": [{"kind": "text", "text": text, "tone": "error" if problem else "note"}]}
    d = stored.measurements
    counts = ", ".join(f"{int(np.sum(d.kind == k))} {KIND_TITLES[k][0]}" for k in d.kinds_present)
    about = (f"Measurement set data={stored.hash}" + (f" ({stored.name})" if stored.name else "") +
             f": {len(d)} rows ({counts}); covariance from {COVARIANCE_SOURCES[d.covariance_source]}.")
    blocks = []
    if is_synthetic(stored):
        blocks.append({"kind": "text", "text": "These are " + SYNTHETIC_NOTE + ".", "tone": "error"})
    # results first: the scores, then the residuals, then what they were computed from
    blocks += [_score_table(c), *_residual_figures(c), {"kind": "text", "text": about},
               {"kind": "text", "text": METHOD}]
    return {"controls": controls + _residual_controls(c), "blocks": blocks + failures_note(c)}
