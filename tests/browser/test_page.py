"""The page in headless Chromium (dash_duo): shared links, the link following the inputs, Back,
labels shown as text everywhere, errors on the card. Table values are checked against
model.evaluate called directly. Every test ends with an empty browser console."""

from __future__ import annotations

import json
import urllib.parse

import numpy as np
import pytest
from selenium.common.exceptions import NoAlertPresentException, StaleElementReferenceException
from selenium.webdriver.common.by import By
from selenium.webdriver.common.keys import Keys
from selenium.webdriver.support.ui import WebDriverWait

import model
from layouts.text import number
from server import codec

HOSTILE = '<img src=x onerror=alert(1)><a href="http://example.invalid/">go</a>'

FOUR = urllib.parse.urlencode([
    ("m1.label", "Team baseline"), ("m1.h0", "68"), ("m1.om", "0.31"),
    ("m2.label", "Thawing candidate"), ("m2.w0", "-0.9"), ("m2.wa", "-0.3"),
    ("m3.label", "Closed candidate"), ("m3.ok", "-0.03"),
    ("m4.label", "Light neutrinos"), ("m4.mnu", "0.02,0.01"),
    ("tab", "table"), ("z", "0.5,2"),
], quote_via=urllib.parse.quote)


def dom_id(value: dict) -> str:
    # Dash writes dict ids as JSON with sorted keys and no spaces
    return json.dumps(value, sort_keys=True, separators=(",", ":"))


def by_id(dash_duo, value: dict):
    # selenium turns By.ID into a CSS selector that cannot hold the quotes: use XPath
    return dash_duo.driver.find_element(By.XPATH, f"//*[@id='{dom_id(value)}']")


def param_input(dash_duo, slot, key):
    return by_id(dash_duo, {"type": "fd-param", "slot": slot, "key": key})


def open_link(dash_duo, app, query):
    dash_duo.start_server(app)
    dash_duo.wait_for_page(url=f"{dash_duo.server_url}/?{query}")
    dash_duo.wait_for_element(".fd-card")


def wait_until(dash_duo, condition, timeout=10):
    # panels are redrawn as callbacks land, so an element found a moment ago may be replaced
    WebDriverWait(dash_duo.driver, timeout, ignored_exceptions=(StaleElementReferenceException,)).until(
        lambda d: condition(d))


def test_shared_four_model_link_shows_labels_and_table_values(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), FOUR)
    for label in ("Team baseline", "Thawing candidate", "Closed candidate", "Light neutrinos"):
        dash_duo.wait_for_contains_text("#fd-panel", label)
    expected = model.evaluate(model.Cosmology(h0=68.0, omega_m=0.31), np.array([0.5, 2.0]))
    for key in ("luminosity_distance", "age", "comoving_volume"):
        for value in expected[key]:
            dash_duo.wait_for_contains_text("#fd-panel", number(value, 6))
    # the quantities are grouped under the registry's theme headings, in its order
    headings = [h for t, h in model.THEMES.items() if any(q.theme == t for q in model.QUANTITIES.values())]
    for heading in headings:
        dash_duo.wait_for_contains_text("#fd-panel", heading)
    text = dash_duo.find_element("#fd-panel").text
    assert [text.index(h) for h in headings] == sorted(text.index(h) for h in headings)
    assert len(dash_duo.find_elements(".fd-card")) == 4
    assert dash_duo.get_logs() == []


def test_input_updates_link_reload_restores_and_back_returns(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Alpha&m1.h0=67&m2.label=Beta&tab=distances")
    dash_duo.wait_for_element(".fd-graph")
    box = param_input(dash_duo, 1, "h0")
    assert box.get_attribute("value") == "67"
    box.send_keys(Keys.CONTROL, "a")
    box.send_keys("71.5", Keys.ENTER)
    wait_until(dash_duo, lambda d: "m1.h0=71.5" in d.current_url)
    changed = dash_duo.driver.current_url
    assert urllib.parse.urlsplit(changed).query == codec.encode(codec.decode(urllib.parse.urlsplit(changed).query))

    dash_duo.driver.get(changed)  # reload the link as someone else would open it
    dash_duo.wait_for_element(".fd-card")
    wait_until(dash_duo, lambda d: param_input(dash_duo, 1, "h0").get_attribute("value") == "71.5")
    assert param_input(dash_duo, 2, "label").get_attribute("value") == "Beta"

    dash_duo.driver.back()
    wait_until(dash_duo, lambda d: "m1.h0=67" in d.current_url)
    wait_until(dash_duo, lambda d: param_input(dash_duo, 1, "h0").get_attribute("value") == "67")
    assert dash_duo.get_logs() == []


def test_hostile_label_is_text_everywhere(dash_duo, app_factory):
    query = urllib.parse.urlencode([("m1.label", "Plain"), ("m2.label", HOSTILE), ("m2.w0", "-0.8"),
                                    ("tab", "distances")], quote_via=urllib.parse.quote)
    open_link(dash_duo, app_factory(), query)
    dash_duo.wait_for_element(".legendtext")
    wait_until(dash_duo, lambda d: any(HOSTILE in e.text for e in d.find_elements(By.CSS_SELECTOR, ".legendtext")))
    assert param_input(dash_duo, 2, "label").get_attribute("value") == HOSTILE
    dash_duo.wait_for_contains_text("#fd-reference", HOSTILE)
    # hover labels and annotations use the same escaped names; no markup made it into the page
    assert dash_duo.driver.find_elements(By.CSS_SELECTOR, "img[src='x']") == []
    assert dash_duo.driver.find_elements(By.CSS_SELECTOR, "a[href='http://example.invalid/']") == []
    # the same holds on the table panel (header cells)
    dash_duo.find_element("#fd-tab").find_element(By.XPATH, ".//*[text()='Table']").click()
    wait_until(dash_duo, lambda d: "tab=table" in d.current_url)
    dash_duo.wait_for_contains_text("#fd-panel", HOSTILE)
    assert dash_duo.driver.find_elements(By.CSS_SELECTOR, "img[src='x']") == []
    with pytest.raises(NoAlertPresentException):
        dash_duo.driver.switch_to.alert.text
    assert dash_duo.get_logs() == []


def test_bad_value_is_reported_on_its_card_and_other_models_render(dash_duo, app_factory):
    spec = next(p for p in model.PARAMETERS if p.name == "omega_m")
    open_link(dash_duo, app_factory(), "m1.label=Good&m2.label=Broken&m2.om=abc&colour=red&tab=time")
    dash_duo.wait_for_contains_text(".fd-card:nth-child(2) .fd-error",
                                    f"m2.om: 'abc' is not a number; expected {codec.range_text(spec)}")
    dash_duo.wait_for_contains_text(".fd-notice", "colour")
    wait_until(dash_duo, lambda d: any("Good" in e.text for e in d.find_elements(By.CSS_SELECTOR, ".legendtext")))
    assert param_input(dash_duo, 2, "om").get_attribute("value") == "abc"
    assert dash_duo.get_logs() == []


def test_add_duplicate_remove_and_preset(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Only&tab=acoustic")
    dash_duo.find_element(f"#{'fd-add'}").click()
    wait_until(dash_duo, lambda d: len(d.find_elements(By.CSS_SELECTOR, ".fd-card")) == 2)
    wait_until(dash_duo, lambda d: "m2.label=" in d.current_url)
    by_id(dash_duo, {"type": "fd-duplicate", "slot": 1}).click()
    wait_until(dash_duo, lambda d: "Only%20%28copy%29" in d.current_url)
    by_id(dash_duo, {"type": "fd-remove", "slot": 2}).click()
    wait_until(dash_duo, lambda d: "m2." not in d.current_url)
    dash_duo.select_dcc_dropdown(by_id(dash_duo, {"type": "fd-preset", "slot": 1}), "Einstein–de Sitter (Ω_m = 1)")
    wait_until(dash_duo, lambda d: "m1.om=1&" in d.current_url and "m1.tcmb=0" in d.current_url)
    assert dash_duo.get_logs() == []
