"""The data tab in headless Chromium (dash_duo): results before the tools, the tools block open
without data and closed once a set is in the link, buttons that cannot act disabled with the
reason beside them, the same file chosen twice loaded twice, the residual controls writing the
link, and the link to the format page.

Check values: the residual shapes and colours are the palette's (layouts.palette), the bin means
are tested against a hand computation in tests/server/views/test_view_data_residuals.py; here
the page is checked to draw and link what the views build."""

from __future__ import annotations

import urllib.parse

from selenium.webdriver.common.by import By
from selenium.webdriver.common.keys import Keys

from server import codec

from test_data_panel import open_tools
from test_page import by_id, open_link, wait_until

GOOD = ("z,kind,value,error,label\n"
        "0.1,distance_modulus,38.3,0.10,made-up a\n"
        "0.4,distance_modulus,41.9,0.20,made-up b\n"
        "0.5,dm_over_rd,13.4,0.2,made-up survey\n")


def _tools_open(dash_duo) -> bool:
    return dash_duo.driver.execute_script("return document.getElementById('fd-data-tools-details').open")


def _query(dash_duo) -> str:
    return urllib.parse.urlsplit(dash_duo.driver.current_url).query


def _choose_file(dash_duo, path) -> None:
    dash_duo.find_element("#fd-data-upload input[type=file]").send_keys(str(path))


def _open_and_upload(dash_duo, app_factory, tmp_path):
    """Two models on the data tab, then a made-up file chosen in the upload box; its path."""
    path = tmp_path / "made-up.csv"
    path.write_text(GOOD)
    open_link(dash_duo, app_factory(), "m1.label=One&m1.h0=70&m2.label=Two&m2.w0=-0.9&tab=data")
    _choose_file(dash_duo, path)
    return path


def test_without_data_the_tools_are_open_and_buttons_say_why_they_wait(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=One&m1.h0=70&tab=data")
    dash_duo.wait_for_contains_text("#fd-panel", "No measurements in this link yet", timeout=10)
    assert _tools_open(dash_duo)
    # the tools come after the panel in the page
    assert dash_duo.driver.execute_script(
        "return !!(document.getElementById('fd-panel').compareDocumentPosition("
        "document.getElementById('fd-data-tools')) & Node.DOCUMENT_POSITION_FOLLOWING)")
    assert dash_duo.find_element("#fd-data-tools-details > summary").text == "data tools: load, fit, map, catalogue"
    wait_until(dash_duo, lambda d: d.find_element(By.ID, "fd-fit-run").get_attribute("disabled") is not None)
    assert dash_duo.find_element("#fd-map-run").get_attribute("disabled") is not None
    assert dash_duo.find_element("#fd-fit-load").get_attribute("disabled") is not None
    dash_duo.wait_for_text_to_equal("#fd-fit-reason", "load measurements first")
    dash_duo.wait_for_text_to_equal("#fd-map-reason", "load measurements first")
    dash_duo.wait_for_text_to_equal("#fd-fit-load-reason", "run a fit first")
    # the paste button stays enabled and names the box it read
    dash_duo.find_element("#fd-data-paste").click()
    dash_duo.wait_for_contains_text("#fd-data-message", "pasted table: the box is empty", timeout=10)
    # the format's description is a page of this app, linked from the tab
    link = dash_duo.find_element("#fd-format-link")
    assert link.get_attribute("href") == f"{dash_duo.server_url}/format"
    assert dash_duo.get_logs() == []


def test_the_same_file_chosen_twice_is_loaded_twice_and_the_tools_close(dash_duo, app_factory, tmp_path):
    path = _open_and_upload(dash_duo, app_factory, tmp_path)
    wait_until(dash_duo, lambda d: "data=" in d.current_url)
    first = codec.decode(_query(dash_duo)).view.data
    dash_duo.wait_for_contains_text("#fd-data-message", "made-up.csv", timeout=10)
    dash_duo.wait_for_contains_text("#fd-panel .fd-table", "Δχ² vs", timeout=20)
    wait_until(dash_duo, lambda d: not _tools_open(dash_duo))
    # the input forgot the file (layouts/assets/uploads.js), so the same choice is a change again
    assert dash_duo.driver.execute_script(
        "return document.querySelector('#fd-data-upload input[type=file]').value") == ""
    # another set replaces it in the link; then the same file again brings it back
    open_tools(dash_duo)
    dash_duo.find_element("#fd-data-demo").click()
    wait_until(dash_duo, lambda d: codec.decode(_query(dash_duo)).view.data not in (None, first))
    _choose_file(dash_duo, path)
    wait_until(dash_duo, lambda d: codec.decode(_query(dash_duo)).view.data == first)
    dash_duo.wait_for_contains_text("#fd-data-message", "made-up.csv", timeout=10)
    # with data in the link the fit and map can act; "load" names its slot once a fit is made
    wait_until(dash_duo, lambda d: d.find_element(By.ID, "fd-fit-run").get_attribute("disabled") is None)
    assert dash_duo.find_element("#fd-fit-reason").text == ""
    dash_duo.find_element("#fd-fit-run").click()
    dash_duo.wait_for_contains_text("#fd-fit-out", "χ²_min", timeout=20)
    dash_duo.wait_for_text_to_equal("#fd-fit-load", "load the fit into m3", timeout=10)
    assert dash_duo.find_element("#fd-fit-load").get_attribute("disabled") is None
    assert dash_duo.get_logs() == []


def test_residual_controls_write_the_link_and_draw(dash_duo, app_factory, tmp_path):
    _open_and_upload(dash_duo, app_factory, tmp_path)
    dash_duo.wait_for_element("#fd-fig-residual-distance_modulus .scatterlayer", timeout=20)
    dash_duo.select_dcc_dropdown(by_id(dash_duo, {"type": "fd-panel-view", "key": "res"}), "m2 Two")
    wait_until(dash_duo, lambda d: "res=2" in d.current_url)
    box = by_id(dash_duo, {"type": "fd-panel-view", "key": "rbin"})
    box.send_keys("0,0.3,1" + Keys.ENTER)
    wait_until(dash_duo, lambda d: "rbin=0,0.3,1" in d.current_url)
    # one model's residuals and its binned means: both drawn with that model's marker shape
    wait_until(dash_duo, lambda d: any("Two: binned" in e.text
                                       for e in d.find_elements(By.CSS_SELECTOR, ".legendtext")))
    legend = [e.text for e in dash_duo.driver.find_elements(
        By.CSS_SELECTOR, "#fd-fig-residual-distance_modulus .legendtext")]
    assert "One" not in legend and "Two" in legend and "Two: binned" in legend
    # a slot with no model is reported in the notice and every model is drawn
    dash_duo.wait_for_page(url=f"{dash_duo.server_url}/?m1.label=One&m1.h0=70&tab=data&res=4")
    dash_duo.wait_for_contains_text("#fd-notice", "res: model 4 is not in the link", timeout=15)
    assert dash_duo.get_logs() == []


def _open_with_data(dash_duo, app_factory, query: str) -> None:
    """`query` on the Data tab with the GOOD table stored through the API; wait for the scores."""
    app = app_factory()
    digest = app.server.test_client().post("/api/v1/data", data=GOOD, content_type="text/csv").get_json()["data"]
    open_link(dash_duo, app, f"{query}&tab=data&data={digest}")
    dash_duo.wait_for_contains_text("#fd-panel .fd-table", "Δχ² vs", timeout=20)
    dash_duo.wait_for_element("#fd-data-tools-details > summary")


def test_a_link_with_data_opens_on_its_results_and_builds_the_tools_when_they_are_opened(dash_duo, app_factory):
    _open_with_data(dash_duo, app_factory, "m1.label=One&m2.label=Two&m2.w0=-0.9")
    # closed, and none of the tools' controls is in the page yet
    wait_until(dash_duo, lambda d: not d.find_elements(By.CSS_SELECTOR, "[data-dash-is-loading]"), timeout=20)
    assert not _tools_open(dash_duo)
    assert not dash_duo.driver.find_elements(By.ID, "fd-fit-run")
    assert not dash_duo.driver.find_elements(By.CSS_SELECTOR, "#fd-data-upload")
    # the reader opens the block: the sections are built, and follow the link like before
    open_tools(dash_duo)
    assert _tools_open(dash_duo)
    wait_until(dash_duo, lambda d: d.find_element(By.ID, "fd-fit-run").get_attribute("disabled") is None)
    dash_duo.wait_for_contains_text("#fd-fit-slot", "m1: One", timeout=10)
    # closing and opening again keeps the same tools (nothing is built twice)
    marker = dash_duo.driver.execute_script(
        "const b = document.getElementById('fd-fit-run'); b.dataset.fdSeen = '1'; return b.dataset.fdSeen;")
    summary = dash_duo.find_element("#fd-data-tools-details > summary")
    summary.click()
    wait_until(dash_duo, lambda d: not _tools_open(dash_duo))
    summary.click()
    wait_until(dash_duo, lambda d: _tools_open(dash_duo))
    assert dash_duo.driver.execute_script("return document.getElementById('fd-fit-run').dataset.fdSeen") == marker
    assert dash_duo.get_logs() == []


def test_a_link_without_data_after_one_with_data_opens_the_tools_and_builds_them(dash_duo, app_factory):
    _open_with_data(dash_duo, app_factory, "m1.label=One")
    assert not dash_duo.driver.find_elements(By.ID, "fd-fit-run")
    # the same page goes to a link without data (as a pasted link or Back would): the tools open, built
    dash_duo.driver.execute_script(
        "window.history.pushState({}, '', '?m1.label=One&tab=data');"
        "window.dispatchEvent(new PopStateEvent('popstate'));")
    dash_duo.wait_for_contains_text("#fd-panel", "No measurements in this link yet", timeout=10)
    wait_until(dash_duo, lambda d: _tools_open(dash_duo))
    wait_until(dash_duo, lambda d: d.find_element(By.ID, "fd-fit-run").is_displayed())
    dash_duo.wait_for_text_to_equal("#fd-fit-reason", "load measurements first")
    assert dash_duo.get_logs() == []


# every page-update request the page makes, by the outputs it asks for (Dash's request body)
_COUNT_UPDATES = """
window.__fdUpdates = [];
const send = window.fetch;
window.fetch = function (url, options) {
  try { if (String(url).includes('_dash-update-component')) window.__fdUpdates.push(JSON.parse(options.body).output); }
  catch (e) {}
  return send.apply(this, arguments);
};
"""


def test_a_drawn_data_tab_makes_no_round_trip_for_its_inserted_controls_and_tools(dash_duo, app_factory):
    dash_duo.driver.execute_cdp_cmd("Page.addScriptToEvaluateOnNewDocument", {"source": _COUNT_UPDATES})
    _open_with_data(dash_duo, app_factory, "m1.label=One&m2.label=Two&m2.w0=-0.9")
    dash_duo.wait_for_element("#fd-fig-residual-distance_modulus .scatterlayer", timeout=20)
    wait_until(dash_duo, lambda d: not d.find_elements(By.CSS_SELECTOR, "[data-dash-is-loading]"), timeout=20)
    sent = dash_duo.driver.execute_script("return window.__fdUpdates")
    # the link is read into the view bar once (the panel's own controls are not `sync`'s inputs),
    # and the tools' frame comes from `render` in the state `tools_view` would give it
    assert sum(o.startswith("..fd-url.search...") for o in sent) == 1, [o[:60] for o in sent]
    assert not [o for o in sent if "fd-data-tools-details.open" in o], sent
    assert sum(o.startswith("..fd-panel.children...") for o in sent) == 1, sent
    # the residual controls still write the link
    dash_duo.select_dcc_dropdown(by_id(dash_duo, {"type": "fd-panel-view", "key": "res"}), "m2 Two")
    wait_until(dash_duo, lambda d: "res=2" in d.current_url)
    assert dash_duo.get_logs() == []


def test_a_link_without_data_opens_with_the_tools_built(dash_duo, app_factory):
    dash_duo.driver.execute_cdp_cmd("Page.addScriptToEvaluateOnNewDocument", {"source": _COUNT_UPDATES})
    open_link(dash_duo, app_factory(), "m1.label=One&m2.label=Two&tab=data")
    wait_until(dash_duo, lambda d: d.find_elements(By.ID, "fd-fit-run"), timeout=20)
    assert _tools_open(dash_duo)
    # the fit's starting models follow the link (fit_choices, called as the sections come in)
    dash_duo.wait_for_contains_text("#fd-fit-slot", "m1: One", timeout=10)
    sent = dash_duo.driver.execute_script("return window.__fdUpdates")
    assert not [o for o in sent if "fd-data-tools-details.open" in o], sent
    assert dash_duo.get_logs() == []
