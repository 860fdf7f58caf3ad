"""Page load in headless Chromium: a four-model link, each of the six panels, cold and warm.

Target (dashboard issue): a four-model link to any panel rendered within 3 s. "Rendered"
means every Plotly figure (or the table) of the open panel is in the DOM with its traces
drawn and the models' chips (their one-line summaries; a card is built when its chip opens it)
are filled, measured from the navigation request.
"""

import statistics
import time
import urllib.parse

from benchmarks._serving import FOUR_MODELS, DevServer, chromium
from server.tabs import TAB_KEYS

TABS = tuple(key for key in TAB_KEYS if key != "data")  # every panel that draws without measurements


_RENDERED = """
const panel = document.getElementById('fd-panel');
if (!panel || document.querySelector('._dash-loading')) return false;
const chips = document.querySelectorAll('.fd-chip .fd-chip-label');
if (chips.length < 4) return false;
const plots = panel.querySelectorAll('.js-plotly-plot');
const tables = panel.querySelectorAll('table, .fd-grid');
if (plots.length === 0 && tables.length === 0) return false;
for (const g of panel.querySelectorAll('.fd-grid')) { if (!g.querySelector('.ag-row')) return false; }
for (const p of plots) { if (!p.querySelector('.main-svg') || !(p._fullData && p._fullData.length)) return false; }
return true;
"""


def _load_time(driver, url, timeout=30.0):
    start = time.perf_counter()
    driver.get(url)
    while time.perf_counter() - start < timeout:
        if driver.execute_script(_RENDERED):
            return time.perf_counter() - start
        time.sleep(0.02)
    raise TimeoutError(f"{url} not rendered in {timeout} s")


def run():
    with DevServer() as server:
        driver = chromium()
        try:
            base = server.base + "?"
            warmup = FOUR_MODELS + [("m1.h0", "66"), ("tab", "distances")]
            _load_time(driver, base + urllib.parse.urlencode(warmup))  # assets into the browser cache
            cold, warm = {}, {}
            for k, tab in enumerate(TABS):
                # a fresh set of four models for every tab: nothing computed before
                fresh = FOUR_MODELS + [("m1.h0", f"{67.0 + 0.01 * k:g}"), ("tab", tab)]
                url = base + urllib.parse.urlencode(fresh, quote_via=urllib.parse.quote)
                cold[tab] = _load_time(driver, url)
                warm[tab] = _load_time(driver, url)
        finally:
            driver.quit()
    for tab in TABS:
        print(f"four-model link, panel {tab:9s}: {cold[tab]:.2f} s new models, "
              f"{warm[tab]:.2f} s cached")
    worst = max(cold.values())
    print(f"slowest panel {worst:.2f} s = {worst / 3.0:.2f} of the 3 s budget; "
          f"median {statistics.median(cold.values()):.2f} s")


if __name__ == "__main__":
    run()
