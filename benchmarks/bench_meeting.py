"""The page as a group meeting sees it, in headless Chromium: where the first figure starts at
three window sizes, how long a four-model link takes to draw its open tab and to redraw after
one edit, and how many bytes each tab's updates carry.

Targets (meeting-room issue): the first figure within the first screen at 1280×800 and within
1.5 screens at 1024×768; a four-model link draws its open tab in ≤ 1.0 s and one edit redraws
in ≤ 0.4 s, both medians of five with the server's cache warm.

"Drawn" means every figure (or table) of the open panel is in the DOM with its traces drawn by
Plotly and no loading spinner is up, measured from the navigation request (draw) or from the Enter
key in the edited input (edit). After an edit of one model every figure must have been drawn
anew, but for the small plots of the other models (the Energy budget's, one figure per model),
which the edit leaves as they were and the page does not redraw.
"""

import json
import statistics
import time
import urllib.parse

from benchmarks._serving import FOUR_MODELS, DevServer, _request, chromium
from server.tabs import TAB_KEYS as TABS  # every registered panel

SIZES = ((1280, 800), (1024, 768), (1600, 1000))

_DRAWN = """
const panel = document.getElementById('fd-panel');
if (!panel || document.querySelector('._dash-loading')) return false;
if (document.querySelector('[data-dash-is-loading="true"]')) return false;
const graphs = panel.querySelectorAll('.fd-graph');
const tables = panel.querySelectorAll('table, .fd-grid');
if (graphs.length === 0 && tables.length === 0) return false;
for (const g of panel.querySelectorAll('.fd-grid')) { if (!g.querySelector('.ag-row')) return false; }
const before = window.__fdBefore || [];
const edited = window.__fdEdited;  // the slot an edit changed: other models' small plots stay
for (const g of graphs) {  // every figure of the panel, not only those Plotly has started on
  const p = g.querySelector('.js-plotly-plot');
  if (!p || !p.querySelector('.main-svg') || !(p._fullData && p._fullData.length)) return false;
  const small = /-([0-9])$/.exec(JSON.parse(g.id || '{}').name || '');
  if (small && edited && Number(small[1]) !== edited) continue;
  if (before.includes(p.data)) return false;
}
return true;
"""

_FIRST_FIGURE = """
const p = document.querySelector('#fd-panel .js-plotly-plot');
return p ? p.getBoundingClientRect().top + window.scrollY : null;
"""

_PAYLOAD = """
return performance.getEntriesByType('resource')
  .filter(e => e.name.includes('_dash-update-component'))
  .reduce((s, e) => s + (e.decodedBodySize || 0), 0);
"""


def _driver(width: int, height: int):
    driver = chromium(width, height)
    # the window size includes no browser chrome in headless mode: the viewport is what is asked
    driver.set_window_size(width, height)
    return driver


def _wait_drawn(driver, start, timeout=30.0):
    while time.perf_counter() - start < timeout:
        if driver.execute_script(_DRAWN):
            return time.perf_counter() - start
        time.sleep(0.01)
    raise TimeoutError("panel not drawn in time")


def _draw(driver, url):
    driver.execute_script("window.__fdBefore = [];")
    start = time.perf_counter()
    driver.get(url)
    return _wait_drawn(driver, start)


def _edit(driver, value):
    """Type `value` into m2's w₀ box (opening its card if the page shows chips) and time the redraw."""
    from selenium.webdriver.common.by import By
    from selenium.webdriver.common.keys import Keys

    dom = json.dumps({"key": "w0", "slot": 2, "type": "fd-param"}, separators=(",", ":"))
    boxes = driver.find_elements(By.XPATH, f"//*[@id='{dom}']")
    if not (boxes and boxes[0].is_displayed()):  # the card is built when its chip first opens it
        driver.find_elements(By.CSS_SELECTOR, ".fd-chip")[1].click()
        end = time.perf_counter() + 10
        while not (boxes and boxes[0].is_displayed()) and time.perf_counter() < end:
            time.sleep(0.05)
            boxes = driver.find_elements(By.XPATH, f"//*[@id='{dom}']")
        time.sleep(0.3)
    box = boxes[0]
    # as a reader does it: select the text and type over it. WebDriver's clear() also blurs the
    # box, which commits the emptied value: one more redraw, sometimes still running when the
    # timed one began
    box.click()
    box.send_keys(Keys.CONTROL, "a")
    box.send_keys(value)
    driver.execute_script(
        "window.__fdEdited = 2; performance.clearResourceTimings();"
        "window.__fdBefore = Array.from(document.querySelectorAll('#fd-panel .js-plotly-plot')).map(p => p.data);")
    start = time.perf_counter()
    box.send_keys(Keys.ENTER)
    time.sleep(0.02)
    return _wait_drawn(driver, start)


def run():
    drivers = []
    with DevServer() as server:
        try:
            base = server.base + "?"
            link = base + urllib.parse.urlencode(FOUR_MODELS + [("tab", "distances")], quote_via=urllib.parse.quote)
            for width, height in SIZES:
                driver = _driver(width, height)
                drivers.append(driver)
                _draw(driver, link)
                top = driver.execute_script(_FIRST_FIGURE)
                print(f"{width}×{height}: first figure starts at y = {top:.0f} px = {top / height:.2f} screens")
            driver = drivers[0]  # 1280×800
            # the Data tab has figures only with measurements: the demo set, stored through the API
            from server.data_store import demo_bytes

            status, _, body = _request("POST", server.port, "/api/v1/data", demo_bytes(), {"Content-Type": "text/csv"})
            if status not in (200, 201):
                raise RuntimeError(f"storing the demo data answered {status}: {body[:200]!r}")
            extra = {"data": [("data", json.loads(body)["data"])]}
            for tab in TABS:
                pairs = FOUR_MODELS + [("tab", tab)] + extra.get(tab, [])
                url = base + urllib.parse.urlencode(pairs, quote_via=urllib.parse.quote)
                try:
                    _draw(driver, url)  # server cache and browser assets warm
                    times = [_draw(driver, url) for _ in range(5)]
                except TimeoutError:
                    print(f"tab {tab:9s}: not drawn (no figure or table in time)")
                    continue
                payload = driver.execute_script(_PAYLOAD)
                median = statistics.median(times)
                note = " (with the demo measurements)" if tab in extra else ""
                print(f"tab {tab:9s}: drawn in {median:.2f} s (median of 5, warm) = {median / 1.0:.2f} of the "
                      f"1.0 s budget; updates {payload / 1024:.0f} KiB{note}")
            # Distances: the figures change and are redrawn in place; Energy budget: its epochs
            # table changes too, so the panel is sent again (the heaviest panel to redraw)
            for tab, title in (("distances", "Distances"), ("budget", "Energy budget")):
                _draw(driver, base + urllib.parse.urlencode(FOUR_MODELS + [("tab", tab)], quote_via=urllib.parse.quote))
                edits = [_edit(driver, f"-0.{80 + k}") for k in range(6)][1:]
                edit = statistics.median(edits)
                payload = driver.execute_script(_PAYLOAD)  # of the last edit (_edit clears the timings)
                print(f"one edit (m2 w0) redraws {title} in {edit:.2f} s (median of 5) = {edit / 0.4:.2f} of the "
                      f"0.4 s budget; updates {payload / 1024:.0f} KiB")
        finally:
            for driver in drivers:
                driver.quit()


if __name__ == "__main__":
    run()
