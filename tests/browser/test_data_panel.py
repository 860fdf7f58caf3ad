"""The data panel in headless Chromium (dash_duo): load the synthetic demo data, see χ² for each
model, fit, load the fit into a slot and find it in the link; a malformed table and an expired
reference are reported in the page while the other panels keep working.

Expected numbers come from model.goodness_of_fit and model.quick_fit called directly (the
numerical library is the reference the issue names for the page's statistics)."""

from __future__ import annotations

import urllib.parse

from selenium.webdriver.common.by import By

import model
from layouts.text import number
from server import codec, data_store

from test_page import click_tab, models_shown, open_link, wait_until

DEMO = model.read_measurements(data_store.DEMO_PATH)


def _cosmology(m: codec.ModelState) -> model.Cosmology:
    kwargs = m.physical()
    if "omega_de" in kwargs:
        kwargs.pop("omega_k", None)
        return model.Cosmology.from_dark_energy(**kwargs)
    return model.Cosmology(**kwargs)


def open_tools(dash_duo):
    """Open the data tools block (closed once a set is in the link)."""
    if not dash_duo.driver.execute_script("return document.getElementById('fd-data-tools-details').open"):
        dash_duo.find_element("#fd-data-tools-details > summary").click()
    wait_until(dash_duo, lambda d: d.find_element(By.CSS_SELECTOR, "#fd-fit-run").is_displayed())


def test_demo_data_chi2_fit_load_into_slot_and_map(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "tab=data")
    dash_duo.find_element("#fd-data-demo").click()
    wait_until(dash_duo, lambda d: "data=" in d.current_url)
    dash_duo.wait_for_contains_text("#fd-data-message", "synthetic demo data", timeout=10)
    dash_duo.wait_for_contains_text("#fd-panel .fd-table", "Δχ² vs", timeout=20)
    dash_duo.wait_for_contains_text("#fd-panel .fd-error", "synthetic", timeout=10)
    for m in codec.demo_models():
        expected = model.goodness_of_fit(_cosmology(m), DEMO)
        dash_duo.wait_for_contains_text("#fd-panel .fd-table", number(expected.chi2, 6), timeout=10)
    assert len(dash_duo.find_elements("#fd-fig-residual-distance_modulus")) == 1

    # quick fit of the reference model (slot 1) with the default free parameters Ω_m and w₀
    open_tools(dash_duo)
    dash_duo.find_element("#fd-fit-run").click()
    dash_duo.wait_for_contains_text("#fd-fit-out", "χ²_min", timeout=20)
    start = _cosmology(codec.demo_models()[0])
    direct = model.quick_fit(start, DEMO, {"omega_m": (0.05, 0.7), "w0": (-2.0, -0.3)})
    dash_duo.wait_for_contains_text("#fd-fit-out", number(direct.best["omega_m"], 6))
    dash_duo.wait_for_contains_text("#fd-fit-out", number(direct.chi2_min, 6))

    dash_duo.find_element("#fd-fit-load").click()
    wait_until(dash_duo, lambda d: "fit=4:om,w0" in d.current_url)
    query = urllib.parse.urlsplit(dash_duo.driver.current_url).query
    state = codec.decode(query)
    fitted = next(m for m in state.models if m.slot == 4)
    assert abs(fitted.omega_m - direct.best["omega_m"]) < 1e-6 and abs(fitted.w0 - direct.best["w0"]) < 1e-6
    wait_until(dash_duo, lambda d: models_shown(d) == 4)
    dash_duo.wait_for_contains_text("#fd-panel .fd-table", "AIC", timeout=20)

    dash_duo.find_element("#fd-map-run").click()
    dash_duo.wait_for_element("#fd-fig-chi2-map", timeout=20)
    dash_duo.wait_for_contains_text("#fd-map-out", "Smallest χ² on the grid")
    assert dash_duo.get_logs() == []


def test_malformed_table_and_expired_reference_are_reported_and_panels_keep_working(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Alone&tab=data&data=" + "0" * codec.DATA_HASH_LENGTH)
    dash_duo.wait_for_contains_text("#fd-panel .fd-error", "no longer stored", timeout=10)
    box = dash_duo.find_element("#fd-data-text")
    box.send_keys("z,kind,value,error\n0.5,dm_over_rd,13.1,0.2\n0.7,dm_over_rd,abc,0.3\n")
    dash_duo.find_element("#fd-data-paste").click()
    dash_duo.wait_for_contains_text("#fd-data-message", "line 3, column 3 (value)", timeout=10)
    dash_duo.wait_for_contains_text("#fd-data-message", "Nothing was loaded")
    assert "data=" + "0" * codec.DATA_HASH_LENGTH in dash_duo.driver.current_url  # the link is unchanged
    # another panel still draws the model, and says why no measurements are shown
    click_tab(dash_duo, "Distances")
    wait_until(dash_duo, lambda d: "tab=distances" in d.current_url)
    wait_until(dash_duo, lambda d: any("Alone" in e.text for e in d.find_elements(By.CSS_SELECTOR, ".legendtext")))
    dash_duo.wait_for_contains_text("#fd-panel .fd-error", "no longer stored")
    assert dash_duo.get_logs() == []


def test_catalogue_columns_round_trip_through_the_page_script(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Only&m1.h0=70&tab=data")
    dash_duo.wait_for_element("#fd-catalogue-run")
    # the file dialog cannot be driven: hand the page script a file made in the page
    dash_duo.driver.execute_script(
        "window.fdeskSendCatalogue(new File(['id,z\\n1,0.5\\n2,1.5\\n3,2.5\\n'], 'made-up.csv', {type: 'text/csv'}));")
    dash_duo.wait_for_contains_text("#fd-catalogue-message", "done: 3 rows", timeout=15)
    # (a refused file is a 400, which the browser logs as a console error: refusals are tested
    # through the API in tests/server/test_data_catalogue.py)
    assert dash_duo.get_logs() == []
