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
    dash_duo.wait_for_element(".fd-chip .fd-chip-label")


def models_shown(driver) -> int:
    """How many slots hold a model (their chips are shown)."""
    return len(driver.find_elements(By.CSS_SELECTOR, ".fd-slot:not(.fd-empty) .fd-chip"))


def open_card(dash_duo, slot):
    """Click slot `slot`'s chip unless its card is open already; wait for the card."""
    shell = by_id(dash_duo, {"type": "fd-slot", "slot": slot})
    if "fd-open" not in shell.get_attribute("class"):
        by_id(dash_duo, {"type": "fd-chip", "slot": slot}).click()
    wait_until(dash_duo, lambda d: "fd-open" in by_id(dash_duo, {"type": "fd-slot", "slot": slot}).get_attribute("class")
               and by_id(dash_duo, {"type": "fd-card-body", "slot": slot}).is_displayed())
    return by_id(dash_duo, {"type": "fd-card-body", "slot": slot})


def click_tab(dash_duo, title):
    dash_duo.driver.find_element(By.XPATH, f"//*[@role='tab'][normalize-space(text())='{title}']").click()


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
    assert models_shown(dash_duo.driver) == 4
    assert dash_duo.get_logs() == []


def test_input_updates_link_reload_restores_and_back_returns(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Alpha&m1.h0=67&m2.label=Beta&tab=distances")
    dash_duo.wait_for_element(".fd-graph")
    open_card(dash_duo, 1)
    box = param_input(dash_duo, 1, "h0")
    assert box.get_attribute("value") == "67"
    box.send_keys(Keys.CONTROL, "a")
    box.send_keys("71.5", Keys.ENTER)
    wait_until(dash_duo, lambda d: "m1.h0=71.5" in d.current_url)
    changed = dash_duo.driver.current_url
    assert urllib.parse.urlsplit(changed).query == codec.encode(codec.decode(urllib.parse.urlsplit(changed).query))

    dash_duo.driver.get(changed)  # reload the link as someone else would open it
    dash_duo.wait_for_element(".fd-chip .fd-chip-label")
    # a card is built when its chip first opens it, from the link
    assert dash_duo.driver.find_elements(By.CSS_SELECTOR, ".fd-card-body input") == []
    open_card(dash_duo, 1)
    wait_until(dash_duo, lambda d: param_input(dash_duo, 1, "h0").get_attribute("value") == "71.5")
    open_card(dash_duo, 2)
    wait_until(dash_duo, lambda d: param_input(dash_duo, 2, "label").get_attribute("value") == "Beta")

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
    open_card(dash_duo, 2)
    wait_until(dash_duo, lambda d: param_input(dash_duo, 2, "label").get_attribute("value") == HOSTILE)
    dash_duo.wait_for_contains_text("#fd-reference", HOSTILE)
    # hover labels and annotations use the same escaped names; no markup made it into the page
    assert dash_duo.driver.find_elements(By.CSS_SELECTOR, "img[src='x']") == []
    assert dash_duo.driver.find_elements(By.CSS_SELECTOR, "a[href='http://example.invalid/']") == []
    # the same holds on the table panel (header cells)
    click_tab(dash_duo, "Table")
    wait_until(dash_duo, lambda d: "tab=table" in d.current_url)
    dash_duo.wait_for_contains_text("#fd-panel", HOSTILE)
    dash_duo.wait_for_contains_text(".fd-models", HOSTILE)  # the chip shows the label as text
    assert dash_duo.driver.find_elements(By.CSS_SELECTOR, "img[src='x']") == []
    with pytest.raises(NoAlertPresentException):
        dash_duo.driver.switch_to.alert.text
    assert dash_duo.get_logs() == []


def test_bad_value_is_reported_on_its_card_and_other_models_render(dash_duo, app_factory):
    spec = next(p for p in model.PARAMETERS if p.name == "omega_m")
    open_link(dash_duo, app_factory(), "m1.label=Good&m2.label=Broken&m2.om=abc&colour=red&tab=time")
    message = f"m2.om: 'abc' is not a number; expected {codec.range_text(spec)}"
    # the chip says it needs fixing (the message as its tooltip); its card shows the message
    problem = dash_duo.wait_for_element(".fd-slot:nth-child(2) .fd-chip-problem")
    assert problem.get_attribute("title") == message
    open_card(dash_duo, 2)
    dash_duo.wait_for_contains_text(".fd-slot:nth-child(2) .fd-error", message)
    dash_duo.wait_for_contains_text(".fd-notice", "colour")
    wait_until(dash_duo, lambda d: any("Good" in e.text for e in d.find_elements(By.CSS_SELECTOR, ".legendtext")))
    assert param_input(dash_duo, 2, "om").get_attribute("value") == "abc"
    assert dash_duo.get_logs() == []


def test_add_duplicate_remove_and_preset(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Only&tab=acoustic")
    dash_duo.find_element(f"#{'fd-add'}").click()
    wait_until(dash_duo, lambda d: models_shown(d) == 2)
    wait_until(dash_duo, lambda d: "m2.label=" in d.current_url)
    # the new model's card opens by itself
    wait_until(dash_duo, lambda d: "fd-open" in by_id(dash_duo, {"type": "fd-slot", "slot": 2}).get_attribute("class"))
    open_card(dash_duo, 1)
    by_id(dash_duo, {"type": "fd-duplicate", "slot": 1}).click()
    wait_until(dash_duo, lambda d: "Only%20%28copy%29" in d.current_url)
    open_card(dash_duo, 2)
    by_id(dash_duo, {"type": "fd-remove", "slot": 2}).click()
    wait_until(dash_duo, lambda d: "m2." not in d.current_url)
    open_card(dash_duo, 1)
    dash_duo.select_dcc_dropdown(by_id(dash_duo, {"type": "fd-preset", "slot": 1}), "Einstein–de Sitter (Ω_m = 1)")
    wait_until(dash_duo, lambda d: "m1.om=1&" in d.current_url and "m1.tcmb=0" in d.current_url)
    assert dash_duo.get_logs() == []


def test_four_models_fill_the_row_and_add_says_why_it_cannot(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), FOUR)
    wait_until(dash_duo, lambda d: models_shown(d) == 4)
    add = dash_duo.find_element("#fd-add")
    wait_until(dash_duo, lambda d: not add.is_enabled())
    dash_duo.wait_for_contains_text("#fd-add-reason", "all 4 slots in use")
    # every chip carries its label and what differs from a new card (values as the link has them)
    chips = [e.text for e in dash_duo.find_elements(".fd-slot:not(.fd-empty) .fd-chip")]
    assert "Thawing candidate" in chips[1] and "w₀ = -0.9" in chips[1] and "w_a = -0.3" in chips[1]
    assert "Ω_k = -0.03" in chips[2]
    # the chips sit in one row: the same top edge
    tops = {round(e.location["y"]) for e in dash_duo.find_elements(".fd-slot:not(.fd-empty) .fd-chip")}
    assert len(tops) == 1, tops
    # duplicate is disabled too, with the reason as its title
    open_card(dash_duo, 1)
    duplicate = by_id(dash_duo, {"type": "fd-duplicate", "slot": 1})
    assert not duplicate.is_enabled() and "all 4 slots" in duplicate.get_attribute("title")
    assert dash_duo.get_logs() == []


def test_chip_opens_its_card_escape_closes_and_edits_redraw_that_card_only(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Alpha&m2.label=Beta&tab=time")
    chip = by_id(dash_duo, {"type": "fd-chip", "slot": 2})
    assert chip.get_attribute("aria-expanded") == "false"
    open_card(dash_duo, 1)  # built, then kept while closed
    open_card(dash_duo, 2)
    wait_until(dash_duo, lambda d: by_id(dash_duo, {"type": "fd-chip", "slot": 2}).get_attribute("aria-expanded") == "true")
    # a preset applied to card 2 leaves card 1's inputs alone (the same elements, not redrawn)
    label = param_input(dash_duo, 1, "label")
    dash_duo.driver.execute_script("arguments[0].setAttribute('data-probe', 'kept')", label)
    dash_duo.select_dcc_dropdown(by_id(dash_duo, {"type": "fd-preset", "slot": 2}), "Einstein–de Sitter (Ω_m = 1)")
    wait_until(dash_duo, lambda d: "m2.om=1&" in d.current_url)
    assert param_input(dash_duo, 1, "label").get_attribute("data-probe") == "kept"
    wait_until(dash_duo, lambda d: param_input(dash_duo, 2, "om").get_attribute("value") == "1")
    param_input(dash_duo, 2, "om").send_keys(Keys.ESCAPE)
    wait_until(dash_duo, lambda d: "fd-open" not in by_id(dash_duo, {"type": "fd-slot", "slot": 2}).get_attribute("class"))
    assert not by_id(dash_duo, {"type": "fd-card-body", "slot": 2}).is_displayed()
    assert dash_duo.get_logs() == []


def test_tabs_are_real_tabs_reached_by_keyboard(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Alpha&tab=distances")
    tabs = dash_duo.driver.find_elements(By.CSS_SELECTOR, "[role=tablist] [role=tab]")
    assert [t.text for t in tabs][:2] == ["Energy budget", "Distances"]
    selected = [t for t in tabs if t.get_attribute("aria-selected") == "true"]
    assert [t.text for t in selected] == ["Distances"]
    # one tab in the tab order at a time (roving tabindex)
    assert [t.get_attribute("tabindex") for t in tabs].count("0") == 1
    selected[0].send_keys(Keys.ARROW_RIGHT)
    wait_until(dash_duo, lambda d: "tab=time" in d.current_url)
    wait_until(dash_duo, lambda d: d.switch_to.active_element.get_attribute("textContent") == "Time")
    wait_until(dash_duo, lambda d: d.switch_to.active_element.get_attribute("aria-selected") == "true")
    dash_duo.driver.switch_to.active_element.send_keys(Keys.END)
    wait_until(dash_duo, lambda d: "tab=data" in d.current_url)
    wait_until(dash_duo, lambda d: d.switch_to.active_element.get_attribute("textContent") == "Data")
    dash_duo.driver.switch_to.active_element.send_keys(Keys.HOME)
    # the first tab is the default one, which the canonical link leaves out
    wait_until(dash_duo, lambda d: "tab=" not in d.current_url)
    wait_until(dash_duo, lambda d: d.switch_to.active_element.get_attribute("textContent") == "Energy budget")
    assert dash_duo.find_element("html").get_attribute("lang") == "en"
    assert dash_duo.get_logs() == []


def test_copy_link_is_a_focusable_button_and_the_field_holds_the_link(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Alpha&m1.h0=70&tab=volume")
    field = dash_duo.find_element("#fd-link-text")
    wait_until(dash_duo, lambda d: "m1.h0=70" in field.get_attribute("value"))
    link = field.get_attribute("value")
    assert urllib.parse.urlsplit(link).query == codec.encode(codec.decode("m1.label=Alpha&m1.h0=70&tab=volume"))
    button = dash_duo.find_element("#fd-copy")
    assert button.tag_name == "button"
    button.send_keys(Keys.ENTER)  # reached and pressed from the keyboard
    wait_until(dash_duo, lambda d: dash_duo.find_element("#fd-copy-status").text != "")
    assert dash_duo.find_element("#fd-copy-status").text in ("link copied", "press Ctrl+C to copy the selected link")
    assert dash_duo.get_logs() == []
