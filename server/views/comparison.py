"""What every panel compares: the link's models with their (memoized) curves, the reference,
the models that failed, and the link's measurements with each model's score, looked up once
per comparison."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

import model

from layouts.specs import Number, Series
from server import codec, compute, data_store
from server.cache import fetch_many

__all__ = ["Entry", "Comparison", "compare", "num", "key_of", "measurements", "scores", "is_synthetic", "kind_rows",
           "data_points", "strip_points", "residual_points", "KIND_TITLES", "DISTANCE_KIND", "SYNTHETIC_NOTE"]

# How each measurement kind is named on screen, and its unit as shown (the model's kind registry).
KIND_TITLES = {key: (kind.title, kind.unit) for key, kind in model.MEASUREMENT_KINDS.items()}
# The distances panel's distance choice -> the measurement kind drawn on it (D_M has none).
DISTANCE_KIND = {"dl": "luminosity_distance", "da": "angular_diameter_distance", "dc": "comoving_distance"}
# what the page says of the demo set (no repository path: a reader of the page has none)
SYNTHETIC_NOTE = "synthetic demo data (an invented model observed by two invented surveys, with random noise; not real measurements)"


def num(value, digits: int = 6, unit: str = "") -> Number:
    """A number for layouts to write (`layouts.text.render`)."""
    return {"value": value, "digits": digits, "unit": unit}


@dataclass
class Entry:
    slot: int
    name: str
    curves: dict


@dataclass
class Comparison:
    state: codec.LinkState
    resolved: list
    entries: list  # valid models, in slot order
    reference: Entry | None
    failures: dict  # slot -> Problem
    extras: dict = field(default_factory=dict)  # the stored measurements and scores, looked up once


def compare(state: codec.LinkState) -> Comparison:
    """Resolve every slot and fetch its (memoized) curves; a model that fails is reported, the
    others still render."""
    resolved = compute.resolve_all(state)
    entries, failures = [], {}
    valid = [r for r in resolved if r.problem is None]
    # one shared-cache round trip for every model; one model failing must not take the page down
    fetched = dict(zip((id(r) for r in valid), fetch_many(
        compute.model_curves, [(r.key, state.view.zmax) for r in valid], return_exceptions=True)))
    for r in resolved:
        if r.problem is not None:
            failures[r.state.slot] = r.problem
            continue
        curves = fetched[id(r)]
        if isinstance(curves, Exception):
            failures[r.state.slot] = codec.Problem(f"m{r.state.slot}",
                                                   f"m{r.state.slot}: could not be computed: {curves}")
            continue
        entries.append(Entry(r.state.slot, r.state.name, curves))
    wanted = codec.reference_slot(state)
    reference = next((e for e in entries if e.slot == wanted), entries[0] if entries else None)
    return Comparison(state, resolved, entries, reference, failures)


def key_of(c: Comparison, slot: int) -> str:
    """The memo key of slot `slot`'s model."""
    return next(r.key for r in c.resolved if r.state.slot == slot)


def is_synthetic(stored) -> bool:
    return stored.name == "demo_synthetic.csv" or bool(stored.measurements.label) and all(
        t.lower().startswith("synthetic") for t in stored.measurements.label)


def measurements(c: Comparison):
    """``(StoredData, None)``, ``(None, message)`` when the link's set cannot be loaded, or
    ``(None, None)`` when the link names none. Looked up once per comparison."""
    if "stored" not in c.extras:
        digest = c.state.view.data
        if digest is None or "data" in dict(c.state.view.invalid):
            problem = next((p.message for p in c.state.view.problems() if p.key == "data"), None)
            c.extras["stored"] = (None, problem)
        else:
            try:
                c.extras["stored"] = (data_store.load(digest), None)
            except data_store.DataError as err:
                c.extras["stored"] = (None, str(err))
    return c.extras["stored"]


def scores(c: Comparison) -> dict:
    """slot -> `compute.goodness` result plus ``delta_chi2`` against the reference; models that
    cannot be scored get ``{"error": message}``."""
    if "scores" in c.extras:
        return c.extras["scores"]
    stored, _ = measurements(c)
    out = {}
    if stored is not None and c.entries:
        view = c.state.view
        results = fetch_many(compute.goodness, [(key_of(c, e.slot), stored.hash, view.r_d,
                                                 compute.fitted_count(view, e.slot)) for e in c.entries],
                             return_exceptions=True)
        for e, result in zip(c.entries, results):
            out[e.slot] = {"error": f"m{e.slot}: could not be scored: {result}"} if isinstance(
                result, Exception) else dict(result)
        ref = out.get(c.reference.slot, {}) if c.reference else {}
        for result in out.values():
            if "chi2" in result:
                result["delta_chi2"] = result["chi2"] - ref.get("chi2", math.nan)
    c.extras["scores"] = out
    return out


def kind_rows(stored, kind: str) -> np.ndarray:
    return np.flatnonzero(stored.measurements.kind == kind)


def _drawn_rows(c: Comparison, stored, kind: str) -> np.ndarray:
    rows = kind_rows(stored, kind)
    return rows[stored.measurements.z[rows] <= c.state.view.zmax]


def _data_name(stored) -> str:
    return "synthetic data" if is_synthetic(stored) else "data"


def data_points(c: Comparison, kind: str, transform=None) -> list[Series]:
    """The measurements of one kind as points (value and error, optionally transformed as
    ``transform(z, value, error) -> (value, error)``), limited to the drawn redshift range."""
    stored, _ = measurements(c)
    if stored is None:
        return []
    rows = _drawn_rows(c, stored, kind)
    if rows.size == 0:
        return []
    d = stored.measurements
    z, value, error = d.z[rows], d.value[rows], d.error[rows]
    if transform is not None:
        value, error = transform(z, value, error)
    return [{"name": f"{_data_name(stored)}: {KIND_TITLES[kind][0]} ({rows.size})", "role": "data",
             "x": z, "y": value, "error": error, "text": [d.label[i] for i in rows]}]


def _reference_rows(c: Comparison, kind: str, need: str):
    """``(stored set, the reference model's score, drawn rows of `kind`)``, or None when the link
    has no data, no reference, no score entry `need` for the reference, or no such rows drawn."""
    stored, _ = measurements(c)
    if stored is None or c.reference is None:
        return None
    ref = scores(c).get(c.reference.slot, {})
    if need not in ref:
        return None
    rows = _drawn_rows(c, stored, kind)
    return (stored, ref, rows) if rows.size else None


def strip_points(c: Comparison, kind: str) -> list[Series]:
    """The measurements of one kind divided by the reference model's prediction at each point
    (error bars divided likewise), for the strip of ratios to the reference; limited to the drawn
    redshift range. Empty when the link has no such data or the reference cannot be scored."""
    found = _reference_rows(c, kind, "prediction")
    if found is None:
        return []
    stored, ref, rows = found
    d = stored.measurements
    predicted = np.asarray(ref["prediction"], dtype=float)[rows]
    with np.errstate(all="ignore"):
        value, error = d.value[rows] / predicted, d.error[rows] / predicted
    return [{"name": f"{_data_name(stored)} / {c.reference.name}: {KIND_TITLES[kind][0]} ({rows.size})",
             "role": "data", "x": d.z[rows], "y": value, "error": np.abs(error), "y_hover": "data / reference",
             "text": [d.label[i] for i in rows]}]


def residual_points(c: Comparison, kind: str) -> list[Series]:
    """Δμ plot: the supernova moduli minus the reference model's prediction (its best offset)."""
    found = _reference_rows(c, kind, "residual")
    if found is None:
        return []
    stored, ref, rows = found
    d = stored.measurements
    return [{"name": [f"{_data_name(stored)} − {c.reference.name} (offset M = ", num(ref["offset"], 4, "mag"), ")"],
             "role": "data", "x": d.z[rows], "y": np.asarray(ref["residual"])[rows], "error": d.error[rows],
             "text": [d.label[i] for i in rows]}]
