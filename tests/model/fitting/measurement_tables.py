"""Helpers for the tests of model's measurement statistics: CSV text from arrays."""

import numpy as np

from model import parse_measurements

HEADER = "z,kind,value,error,label,z_helio,group,correlation"
#: The distance each BAO ratio divides by r_d, as model.evaluate keys (the BAO observables of
#: Eisenstein et al. 2005, ApJ 633, 560: D_M/r_d, D_H/r_d with D_H = c/H(z), D_V/r_d).
BAO_DISTANCE = {"dm_over_rd": "transverse_comoving_distance", "dh_over_rd": "hubble_distance_at_z",
                "dv_over_rd": "volume_averaged_distance"}


def table_text(rows):
    """CSV text of the measurement format from dicts with z, kind, value, error and optional
    label, z_helio, group, correlation (numbers written with repr, i.e. round-trip exact)."""
    lines = [HEADER]
    for row in rows:
        cells = [repr(float(row["z"])), row["kind"], repr(float(row["value"])),
                 repr(float(row["error"])), row.get("label", ""),
                 "" if row.get("z_helio") is None else repr(float(row["z_helio"])),
                 row.get("group", ""),
                 "" if row.get("correlation") is None else repr(float(row["correlation"]))]
        lines.append(",".join(cells))
    return "\n".join(lines) + "\n"


def covariance_text(matrix):
    return "\n".join(",".join(repr(float(v)) for v in row) for row in np.asarray(matrix)) + "\n"


def measurement_set(z, kind, value, error, covariance=None, **columns):
    """A MeasurementSet from aligned arrays (kind may be one string for every row)."""
    z = np.atleast_1d(z)
    kinds = [kind] * z.size if isinstance(kind, str) else list(kind)
    rows = []
    for i in range(z.size):
        row = {"z": z[i], "kind": kinds[i], "value": np.atleast_1d(value)[i],
               "error": np.broadcast_to(error, z.shape)[i]}
        for name, values in columns.items():
            row[name] = values[i]
        rows.append(row)
    cov = None if covariance is None else covariance_text(covariance)
    return parse_measurements(table_text(rows), cov)
