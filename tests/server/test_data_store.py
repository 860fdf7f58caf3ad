"""Stored measurement sets (server.data_store): content hash, round trip, expiry, all-or-nothing.

The parsed set is checked against model.parse_measurements called directly; the hash against
hashlib's SHA-256 of the documented byte layout."""

from __future__ import annotations

import hashlib
import time

import numpy as np
import pytest

import model
from server import codec, data_store
from server.cache import cache

TABLE = b"z,kind,value,error,label\n0.51,dm_over_rd,13.6,0.25,made-up survey A\n0.8,hubble_parameter,95,9,\n"
COVARIANCE = b"0.0625,0.1\n0.1,81\n"


@pytest.fixture
def app(app_factory):
    app = app_factory(CACHE_TYPE="SimpleCache", DATA_TIMEOUT=3600)
    with app.server.app_context():
        yield app


def test_hash_is_the_documented_sha256_prefix(app):
    stored = data_store.store(TABLE)
    expected = hashlib.sha256(len(TABLE).to_bytes(8, "big") + TABLE).hexdigest()[:codec.DATA_HASH_LENGTH]
    assert stored.hash == expected
    assert data_store.store(TABLE).hash == expected  # same file, same link
    with_cov = data_store.store(TABLE, COVARIANCE)
    assert with_cov.hash != expected and with_cov.measurements.covariance_source == "file"


def test_round_trip_equals_the_parser(app):
    stored = data_store.store(TABLE, COVARIANCE, "survey.csv")
    data_store._parsed.clear()  # as in another worker: read back from the shared backend
    loaded = data_store.load(stored.hash)
    direct = model.parse_measurements(TABLE, COVARIANCE)
    assert loaded.name == "survey.csv"
    for name in ("z", "value", "error", "covariance"):
        np.testing.assert_array_equal(getattr(loaded.measurements, name), getattr(direct, name))
    assert loaded.measurements.kind.tolist() == direct.kind.tolist()


def test_expiry_is_the_configured_timeout(app):
    stored = data_store.store(TABLE)
    expires, _ = cache.cache._cache["measurements:" + stored.hash]  # SimpleCache keeps (expiry, value)
    assert abs(expires - (time.time() + 3600)) < 60


def test_expired_reference_says_so_plainly(app):
    stored = data_store.store(TABLE)
    cache.delete("measurements:" + stored.hash)  # what expiry or eviction leaves behind
    with pytest.raises(data_store.DataNotFound, match="no longer stored") as err:
        data_store.load(stored.hash)
    assert err.value.field == "data" and "upload the file again" in str(err.value)


@pytest.mark.parametrize("text, line, column", [
    (b"z,kind,value,error\n0.5,dm_over_rd,13,0.2\n0.6,dm_over_rd,13,-0.2\n", 3, 4),
    (b"z,kind,value,error\n0.5,dm_over_rd,13,0.2\n0.6,nonsense,13,0.2\n", 3, 2),
])
def test_a_bad_file_stores_nothing(app, text, line, column):
    with pytest.raises(data_store.DataRejected) as err:
        data_store.store(text)
    assert (err.value.line, err.value.column) == (line, column)
    assert cache.get("measurements:" + data_store.content_hash(text, None)) is None


def test_size_limits(app):
    big = b"z,kind,value,error\n" + b"0.5,dm_over_rd,13,0.2\n" * 60000  # > 1 MiB
    with pytest.raises(data_store.DataRejected, match="limit"):
        data_store.store(big)
    with pytest.raises(data_store.DataRejected, match="covariance file"):
        data_store.store(TABLE, b"1" * (data_store.MAX_COVARIANCE_BYTES + 1))
    with pytest.raises(data_store.DataRejected, match="no file"):
        data_store.store(None)


def test_malformed_reference(app):
    with pytest.raises(data_store.DataError, match="hexadecimal"):
        data_store.load("ABC")
