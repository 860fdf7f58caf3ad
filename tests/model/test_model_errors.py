"""Validation (model issue, "Public API"): every invalid field raises ParameterError naming it;
a model without a big bang raises NoBigBangError with the redshift of the turnaround."""

import math

import mpmath as mp
import numpy as np
import pytest

import model
import reference as ref

BASE = dict(h0=70.0, omega_m=0.3, omega_b=0.05)

INVALID = [
    ("h0", float("nan")), ("h0", float("inf")), ("h0", 0.0), ("h0", -67.0),
    ("omega_m", float("nan")), ("omega_m", -0.01), ("omega_m", float("-inf")),
    ("omega_b", float("nan")), ("omega_b", 0.31),           # above omega_m = 0.3
    ("omega_b", -0.01),
    ("omega_k", float("nan")), ("omega_k", float("inf")),
    ("w0", float("nan")), ("w0", float("-inf")),
    ("wa", float("nan")), ("wa", float("inf")),
    ("t_cmb", float("nan")), ("t_cmb", -1.0), ("t_cmb", float("inf")),
    ("n_eff", float("nan")), ("n_eff", float("inf")),
    ("m_nu", (0.06, 0.01, 0.01, 0.01)),                     # more than three
    ("m_nu", (-0.06,)), ("m_nu", (0.06, -0.01)),
    ("m_nu", (float("nan"),)), ("m_nu", (float("inf"),)),
]


@pytest.mark.parametrize("field,value", INVALID, ids=[f"{f}={v!r}" for f, v in INVALID])
def test_invalid_field_raises_parameter_error_naming_it(field, value):
    kw = dict(BASE, **{field: value})
    with pytest.raises(model.ParameterError) as info:
        model.Cosmology(**kw)
    err = info.value
    assert isinstance(err, ValueError) and isinstance(err, model.ModelError)
    assert err.field == field
    assert field in str(err)
    assert isinstance(err.expected, str) and err.expected


@pytest.mark.parametrize("value", [float("nan"), float("inf")])
def test_invalid_dark_energy_input_is_named(value):
    with pytest.raises(model.ParameterError) as info:
        model.Cosmology.from_dark_energy(omega_de=value, **BASE)
    assert info.value.field == "omega_de"


def test_replace_validates_too():
    c = model.Cosmology(**BASE)
    with pytest.raises(model.ParameterError) as info:
        c.replace(h0=-1.0)
    assert info.value.field == "h0"


def test_accepted_ranges_in_parameters_are_enforced():
    # contract: PARAMETERS holds "the accepted ranges used by validation"
    for spec in model.PARAMETERS:
        if spec.name in ("omega_de", "m_nu", "omega_b") or spec.maximum is None:
            continue
        too_big = spec.maximum + max(1.0, abs(spec.maximum))
        with pytest.raises(model.ParameterError) as info:
            model.Cosmology(**dict(BASE, **{spec.name: too_big}))
        assert info.value.field == spec.name


def test_valid_edge_values_are_accepted():
    # the issue: negative Omega_de and w < -1 are legitimate; zero masses mean massless
    model.Cosmology(h0=70.0, omega_m=1.2, omega_b=0.05)                 # Omega_de ~ -0.2
    model.Cosmology(h0=70.0, omega_m=0.3, omega_b=0.05, w0=-1.5)
    model.Cosmology(h0=70.0, omega_m=0.3, omega_b=0.05, m_nu=(0.0, 0.0, 0.0))
    model.Cosmology(h0=70.0, omega_m=0.3, omega_b=0.05, m_nu=())
    model.Cosmology(h0=70.0, omega_m=0.3, omega_b=0.3, m_nu=())         # omega_b == omega_m
    model.Cosmology(h0=70.0, omega_m=0.0, t_cmb=0.0)                    # empty + Lambda


def _turnaround_redshift(refc):
    a = refc.a_bounce_past()
    assert a is not None
    return 1 / a - 1


@pytest.mark.parametrize("t_cmb", [0.0, 2.7255])
def test_closed_model_with_large_lambda_has_no_big_bang(t_cmb):
    # Omega_m = 0.3, Omega_de = 2 (Omega_k = -1.3): E^2 = 0.3 x^3 - 1.3 x^2 + 2 (x = 1+z, no
    # radiation) vanishes at z ~ 0.55: the expansion would have turned around (a bounce).
    # With radiation the bounce remains (radiation only wins at z ~ 1e4).
    kw = dict(h0=70.0, omega_m=0.3, omega_b=0.05, t_cmb=t_cmb, m_nu=())
    refc = ref.RefCosmology.from_dark_energy(2.0, **kw)
    z_turn = _turnaround_redshift(refc)
    with pytest.raises(model.NoBigBangError) as info:
        cosmo = model.Cosmology.from_dark_energy(omega_de=2.0, **kw)
        model.evaluate(cosmo, np.array([0.1, 1.0]))   # in case it is detected on first use
    err = info.value
    assert isinstance(err, model.ModelError) and isinstance(err, ValueError)
    assert abs(err.redshift / float(z_turn) - 1) < 1e-5, (err.redshift, float(z_turn))


def test_no_big_bang_redshift_for_the_textbook_cubic():
    # without radiation the turnaround is the root of Om x^3 + Ok x^2 + OL = 0 (x = 1+z)
    om, ol = 0.3, 2.0
    ok = 1 - om - ol
    x = mp.findroot(lambda x: om * x**3 + ok * x**2 + ol, 1.5)
    with pytest.raises(model.NoBigBangError) as info:
        c = model.Cosmology.from_dark_energy(omega_de=ol, h0=70.0, omega_m=om, t_cmb=0.0)
        model.evaluate(c, np.array([1.0]))
    assert math.isclose(info.value.redshift, float(x - 1), rel_tol=1e-5)
