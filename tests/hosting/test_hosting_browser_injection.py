"""The usual injection strings as model labels, in headless Chromium (dash_duo) under the
app's own security headers: every one is shown as the characters typed, none runs, none
becomes markup or a link, and the console (where CSP violations would be reported) stays empty.

The strings are the common cross-site-scripting probes (script element, event-handler
attributes, javascript: and markdown links, attribute break-out, template syntax); the check
value for each is the string itself."""

from __future__ import annotations

import json
import urllib.parse
import urllib.request

from selenium.common.exceptions import StaleElementReferenceException
from selenium.webdriver.common.by import By
from selenium.webdriver.support.ui import WebDriverWait

INJECTIONS = (
    '<script>window.__fdpwn=1</script>',
    '"><img src=x onerror="window.__fdpwn=2">',
    '[see](javascript:window.__fdpwn=3) <svg onload=window.__fdpwn=4>',
    "{{7*7}} ${7*7} <b>bold</b> &amp; &lt;i&gt;",
)


def _wait(dash_duo, condition, timeout=15):
    WebDriverWait(dash_duo.driver, timeout, ignored_exceptions=(StaleElementReferenceException,)).until(
        lambda d: condition(d))


def _dom_id(value: dict) -> str:
    return json.dumps(value, sort_keys=True, separators=(",", ":"))


def _assert_inert(driver):
    assert driver.execute_script("return window.__fdpwn === undefined")
    assert driver.execute_script(
        "return document.querySelectorAll('[onerror],[onload],script:not([src]):not([type])').length") == 0
    assert driver.execute_script(
        "return [...document.querySelectorAll('a[href]')].filter(a => a.href.startsWith('javascript:')).length") == 0
    assert driver.find_elements(By.CSS_SELECTOR, "img[src='x'], b") == []


def test_injection_labels_are_shown_as_typed_and_never_run(dash_duo, app_factory):
    pairs = [(f"m{n}.label", text) for n, text in enumerate(INJECTIONS, start=1)] + [("m2.w0", "-0.9"),
                                                                                     ("tab", "distances")]
    query = urllib.parse.urlencode(pairs, quote_via=urllib.parse.quote)
    dash_duo.start_server(app_factory())
    with urllib.request.urlopen(f"{dash_duo.server_url}/") as response:  # the page runs under the CSP
        assert "script-src 'self' 'sha256-" in response.headers["Content-Security-Policy"]
    dash_duo.wait_for_page(url=f"{dash_duo.server_url}/?{query}")
    dash_duo.wait_for_element(".legendtext")
    driver = dash_duo.driver
    for n, text in enumerate(INJECTIONS, start=1):
        # the chip shows the label as text; its card (built when the chip opens it) as the input's value
        chip = driver.find_element(By.XPATH, f"//*[@id='{_dom_id({'slot': n, 'type': 'fd-chip'})}']")
        _wait(dash_duo, lambda d: text in chip.text)
        chip.click()
        path = f"//*[@id='{_dom_id({'key': 'label', 'slot': n, 'type': 'fd-param'})}']"
        _wait(dash_duo, lambda d: d.find_elements(By.XPATH, path)
              and d.find_element(By.XPATH, path).get_attribute("value") == text)
    _wait(dash_duo, lambda d: all(any(t in e.text for e in d.find_elements(By.CSS_SELECTOR, ".legendtext"))
                                  for t in INJECTIONS))
    _assert_inert(driver)

    dash_duo.driver.find_element(By.XPATH, "//*[@role='tab'][normalize-space(text())='Table']").click()
    _wait(dash_duo, lambda d: "tab=table" in d.current_url)
    for text in INJECTIONS:
        dash_duo.wait_for_contains_text("#fd-panel", text)
    _assert_inert(driver)
    assert dash_duo.get_logs() == []
