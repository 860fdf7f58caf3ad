"""Helpers for the tests of model's measurement statistics: CSV text from arrays."""

import numpy as np

from model import parse_measurements

HEADER = "z,kind,value,error,label,z_helio,group,correlation"


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
