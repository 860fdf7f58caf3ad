"""Properties every cosmology must have (model issue, "Tests"), on random and hand-picked models.

Etherington's reciprocity D_L = (1+z)^2 D_A (Etherington 1933, Phil. Mag. 15, 761); D_C and
lookback time increase with z; age(z) + lookback(z) = age(0); dD_C/dz = D_H/E(z) (Hogg 1999
eq. 15); Omega_i sum to 1; d ln rho_i / d ln a = -3 (1 + w_i) (energy conservation,
CONVENTIONS.md); redshift_at inverts evaluate.
"""

import mpmath as mp
import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

import model
import reference as ref
from helpers import massive_models, massless_models

PROPERTY_SETTINGS = settings(max_examples=25, deadline=None, print_blob=True)
Z_SORTED = np.concatenate([[1e-3, 3e-3], np.geomspace(0.01, 1e5, 60)])


def _build(kw):
    try:
        return model.Cosmology(**kw)
    except model.NoBigBangError:
        return None


any_model = st.one_of(massless_models(), massive_models())


def _finite_mask(cosmo, out):
    """NaN is allowed only beyond a closed universe's antipode: check that, return finite mask."""
    ok = np.isfinite(out["transverse_comoving_distance"])
    if cosmo.omega_k >= 0:
        assert ok.all(), "NaN transverse comoving distance in a flat or open model"
    return ok


@PROPERTY_SETTINGS
@given(any_model)
def test_etherington_and_distance_identities(kw):
    assume(kw is not None)
    cosmo = _build(kw)
    assume(cosmo is not None)
    z = Z_SORTED
    out = model.evaluate(cosmo, z)
    ok = _finite_mask(cosmo, out)
    dl, da, dm = out["luminosity_distance"], out["angular_diameter_distance"], out["transverse_comoving_distance"]
    np.testing.assert_allclose(dl[ok], (1 + z[ok]) ** 2 * da[ok], rtol=1e-12)   # Etherington
    np.testing.assert_allclose(dm[ok], (1 + z[ok]) * da[ok], rtol=1e-12)        # Hogg eq. 18
    np.testing.assert_allclose(out["distance_modulus"][ok], 5 * np.log10(dl[ok]) + 25, rtol=0,
                               atol=1e-10)                                       # D_L in Mpc
    np.testing.assert_allclose(out["scale_factor"], 1 / (1 + z), rtol=1e-15)
    np.testing.assert_allclose(out["hubble_distance_at_z"] * out["hubble_parameter"], 299792.458,
                               rtol=1e-13)                                       # c exact
    # D_V = [z D_M^2 c/H]^(1/3) (CONVENTIONS.md)
    np.testing.assert_allclose(out["volume_averaged_distance"][ok],
                               np.cbrt(z[ok] * dm[ok] ** 2 * out["hubble_distance_at_z"][ok]),
                               rtol=1e-12)


@PROPERTY_SETTINGS
@given(any_model)
def test_monotonic_and_age_plus_lookback(kw):
    assume(kw is not None)
    cosmo = _build(kw)
    assume(cosmo is not None)
    out = model.evaluate(cosmo, Z_SORTED)
    assert np.all(np.diff(out["comoving_distance"]) > 0)
    assert np.all(np.diff(out["lookback_time"]) > 0)
    assert np.all(np.diff(out["age"]) < 0)
    age0 = model.epochs(cosmo)["age_today"]
    np.testing.assert_allclose(out["age"] + out["lookback_time"], age0, rtol=1e-9)


@PROPERTY_SETTINGS
@given(any_model, st.floats(0.01, 1000.0))
def test_derivatives_of_integrals_are_their_integrands(kw, z0):
    # five-point central differences, step 1e-3 (1+z): truncation ~ 1e-12, far below 1e-6
    assume(kw is not None)
    cosmo = _build(kw)
    assume(cosmo is not None)
    h = 1e-3 * (1 + z0)
    zs = z0 + h * np.array([-2.0, -1.0, 1.0, 2.0, 0.0])
    out = model.evaluate(cosmo, zs)
    assume(np.all(np.isfinite(out["transverse_comoving_distance"])))

    def deriv(key):
        f = out[key]
        return (f[0] - 8 * f[1] + 8 * f[2] - f[3]) / (12 * h)

    d_h_z = out["hubble_distance_at_z"][4]                     # c / H(z)
    assert abs(deriv("comoving_distance") / d_h_z - 1) < 1e-6
    t_h_z = cosmo.hubble_time / (out["hubble_parameter"][4] / cosmo.h0)  # t_H / E
    assert abs(deriv("lookback_time") / (t_h_z / (1 + z0)) - 1) < 1e-6
    assert abs(-deriv("age") / (t_h_z / (1 + z0)) - 1) < 1e-6
    # all-sky dV_C/dz = 4 pi x (volume element per sr); Gpc^3 vs Mpc^3
    assert abs(deriv("comoving_volume") * 1e9 / (4 * np.pi * out["comoving_volume_element"][4]) - 1) < 1e-6
    # particle horizon: d/dz int_z^inf dz'/E = -D_H/E
    assert abs(-deriv("particle_horizon") / d_h_z - 1) < 1e-6


@settings(max_examples=40, deadline=None, print_blob=True)
@given(any_model, st.lists(st.floats(-0.95, 1e5), min_size=1, max_size=8))
def test_density_parameters_sum_to_one(kw, zs):
    assume(kw is not None)
    cosmo = _build(kw)
    assume(cosmo is not None)
    om = model.density_parameters(cosmo, np.array(zs))
    keys = {"photons", "neutrinos", "baryons", "cold_dark_matter", "dark_energy", "curvature"}
    assert keys <= set(om)
    total = sum(np.asarray(om[k]) for k in keys)
    finite = np.isfinite(total)
    np.testing.assert_allclose(total[finite], 1.0, rtol=0, atol=1e-12)


def _dlnrho_dlna(cosmo, key, z, eps=1e-4):
    # five-point derivative in x = ln a
    x0 = -np.log1p(z)
    xs = x0 + eps * np.array([-2.0, -1.0, 1.0, 2.0])
    rho = np.asarray(model.densities(cosmo, np.expm1(-xs))[key], dtype=float)
    lr = np.log(np.abs(rho))
    return (lr[0] - 8 * lr[1] + 8 * lr[2] - lr[3]) / (12 * eps)


@pytest.mark.parametrize("z", [0.0, 0.5, 3.0, 1100.0, 1e5])
def test_component_scaling_with_scale_factor(z):
    # -4 radiation (w = 1/3), -3 matter (w = 0), 0 for Lambda, -3(1 + w(a)) for CPL
    lam = model.Cosmology(h0=70.0, omega_m=0.3, omega_b=0.05, m_nu=())
    assert abs(_dlnrho_dlna(lam, "photons", z) + 4) < 1e-6
    assert abs(_dlnrho_dlna(lam, "neutrinos", z) + 4) < 1e-6        # all massless here
    assert abs(_dlnrho_dlna(lam, "baryons", z) + 3) < 1e-6
    assert abs(_dlnrho_dlna(lam, "cold_dark_matter", z) + 3) < 1e-6
    assert abs(_dlnrho_dlna(lam, "dark_energy", z)) < 1e-6
    cpl = model.Cosmology(h0=70.0, omega_m=0.3, omega_b=0.05, w0=-0.8, wa=-0.5, m_nu=())
    w = -0.8 - 0.5 * z / (1 + z)                                     # w0 + wa (1 - a)
    assert abs(_dlnrho_dlna(cpl, "dark_energy", z) + 3 * (1 + w)) < 1e-6


def test_massive_neutrinos_go_from_radiation_to_matter_scaling():
    # one 0.3 eV species plus two massless: the neutrino total goes from -4 (relativistic) at
    # high z towards -3 - (massless share); compare with -3(1 + w_nu) from the reference
    # pressure integral, and check the single heavy species' limits through three equal masses
    heavy = dict(h0=70.0, omega_m=0.3, omega_b=0.05, m_nu=(0.3, 0.3, 0.3))
    cosmo, rc = model.Cosmology(**heavy), ref.RefCosmology(**heavy)
    slopes = []
    for z in [1e5, 1e4, 1e3, 100.0, 10.0, 1.0, 0.0]:
        got = _dlnrho_dlna(cosmo, "neutrinos", z)
        want = -3 * (1 + rc.w_neutrinos(1 / (1 + mp.mpf(z))))
        assert abs(got - float(want)) < 1e-5, (z, got, float(want))
        slopes.append(got)
    assert abs(slopes[0] + 4) < 1e-3          # z = 1e5: y = m a / kT_nu ~ 0.02, relativistic
    assert abs(slopes[-1] + 3) < 1e-4         # z = 0: y ~ 1800, non-relativistic
    assert np.all(np.diff(slopes) > 0)        # monotonic from -4 to -3


INVERT_MODELS = {
    "flat-radiation": dict(h0=67.4, omega_m=0.315, omega_b=0.049),
    "open-cpl": dict(h0=72.0, omega_m=0.25, omega_b=0.04, omega_k=0.1, w0=-0.9, wa=0.2, m_nu=()),
    "closed-no-radiation": dict(h0=60.0, omega_m=0.5, omega_b=0.06, omega_k=-0.2, t_cmb=0.0),
}


@pytest.mark.parametrize("name", list(INVERT_MODELS))
def test_redshift_at_inverts_evaluate(name):
    cosmo = model.Cosmology(**INVERT_MODELS[name])
    z = np.array([5.0, 1e-3, 0.3, 1.0, 2.5, 40.0, 1100.0])
    out = model.evaluate(cosmo, z)
    for q in model.INVERTIBLE:
        vals = out[q]
        ok = np.isfinite(vals)
        if q == "transverse_comoving_distance" and cosmo.omega_k < 0:
            ok &= z < 3.0   # D_M of a closed model is monotonic only out to the equator
        back = np.asarray(model.redshift_at(cosmo, q, vals[ok]), dtype=float)
        np.testing.assert_allclose(back, z[ok], rtol=1e-6, atol=1e-9, err_msg=f"{name}: {q}")


def test_redshift_at_refuses_values_outside_the_range():
    cosmo = model.Cosmology(h0=70.0, omega_m=0.3)
    age0 = model.epochs(cosmo)["age_today"]
    with pytest.raises(ValueError):
        model.redshift_at(cosmo, "age", np.array([2 * age0]))    # older than the universe
    with pytest.raises(ValueError):
        model.redshift_at(cosmo, "lookback_time", np.array([-1.0, 1.0, 2 * age0]))
    with pytest.raises(ValueError):
        model.redshift_at(cosmo, "no_such_quantity", np.array([1.0]))


def test_evaluate_keeps_shape_and_order():
    cosmo = model.Cosmology(h0=70.0, omega_m=0.3)
    z = np.array([[3.0, 0.1, 1100.0], [0.5, 1e-3, 20.0]])
    out = model.evaluate(cosmo, z)
    flat = model.evaluate(cosmo, np.sort(z.ravel()))
    order = np.argsort(z.ravel())
    for key, val in out.items():
        val = np.asarray(val)
        assert val.shape == z.shape, key
        np.testing.assert_array_equal(val.ravel()[order], np.asarray(flat[key]), err_msg=key)


def test_nan_beyond_the_antipode_of_a_closed_universe():
    # Omega_m = 0.1, Omega_de = 1.3 (Omega_k = -0.4, no radiation): light reaches the antipode,
    # sqrt|Omega_k| D_C / D_H = pi, at a redshift found from the reference
    kw = dict(h0=70.0, omega_m=0.1, omega_b=0.02, t_cmb=0.0)
    cosmo = model.Cosmology.from_dark_energy(omega_de=1.3, **kw)
    rc = ref.RefCosmology.from_dark_energy(1.3, **kw)
    target = rc.antipode_comoving_distance()
    z_anti = mp.findroot(lambda z: rc.comoving_distance(z) - target, 5.0)
    assert 1 < z_anti < 100
    z = np.array([0.5 * float(z_anti), 0.99 * float(z_anti), 1.01 * float(z_anti), 2 * float(z_anti)])
    out = model.evaluate(cosmo, z)
    for key in ("transverse_comoving_distance", "angular_diameter_distance", "luminosity_distance"):
        assert np.all(np.isfinite(out[key][:2])) and np.all(out[key][:2] > 0), key
        assert np.all(np.isnan(out[key][2:])), (key, out[key])
    assert np.all(np.isfinite(out["comoving_distance"])) and np.all(np.isfinite(out["age"]))


@pytest.mark.parametrize("omega_k", [1e-12, -1e-12, 1e-250, -1e-250, 5e-324])
def test_nearly_flat_curvature_matches_flat(omega_k):
    # a curvature far below any measurable value must give the flat answers (to 1e-7), not NaN;
    # hypothesis found Omega_k = 2.4e-235 giving NaN comoving volumes
    kw = dict(h0=72.75, omega_m=0.61, omega_b=0.16, w0=-1.4, m_nu=())
    z = np.array([1e-3, 0.3, 1.0, 20.0, 1100.0])
    flat = model.evaluate(model.Cosmology(**kw), z)
    curved = model.evaluate(model.Cosmology(omega_k=omega_k, **kw), z)
    for key, want in flat.items():
        got = np.asarray(curved[key])
        finite = np.isfinite(np.asarray(want))
        np.testing.assert_allclose(got[finite], np.asarray(want)[finite], rtol=1e-7,
                                   err_msg=f"{key} at Omega_k = {omega_k:g}")
