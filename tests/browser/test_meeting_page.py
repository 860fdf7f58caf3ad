"""The page in front of a group, in headless Chromium: the first figure on the first screen,
the view bar's units in the link, figure exports drawn in the browser at the sizes asked for
(checked by reading the PNG header, ISO/IEC 15948 section 11.2.2), no button that sends a
figure to a cloud service, and no serious or critical WCAG 2 A/AA violation on any tab
(axe-core, as bundled by the axe-selenium-python package)."""

from __future__ import annotations

import base64
import json
import functools
import os
import struct
import time
import urllib.parse

import pytest
from selenium.webdriver.common.by import By

from server import codec
from server.tabs import TAB_KEYS
from test_page import FOUR, by_id, open_card, open_link, param_input, wait_until

@functools.cache
def _axe_source() -> str:
    import axe_selenium_python

    path = os.path.join(os.path.dirname(axe_selenium_python.__file__), "node_modules", "axe-core", "axe.min.js")
    with open(path, encoding="utf-8") as f:
        return f.read()


def axe_violations(driver) -> list[dict]:
    """axe-core's WCAG 2 A and AA violations of the page as it is, serious and critical ones."""
    driver.execute_script(_axe_source())
    found = driver.execute_async_script(
        "const done = arguments[arguments.length - 1];"
        "axe.run(document, {runOnly: {type: 'tag', values: ['wcag2a', 'wcag2aa']}})"
        ".then(r => done(r.violations), e => done([{id: 'axe-error', impact: 'critical', help: String(e), nodes: []}]));")
    return [{"id": v["id"], "impact": v["impact"], "help": v["help"], "where": [n["target"] for n in v["nodes"]][:5]}
            for v in found if v["impact"] in ("serious", "critical")]


def wait_for_figures(dash_duo):
    wait_until(dash_duo, lambda d: d.find_elements(By.CSS_SELECTOR, "#fd-panel .js-plotly-plot .main-svg"), timeout=20)


@pytest.mark.parametrize("width, height, screens", [(1280, 800, 1.0), (1024, 768, 1.5)])
def test_first_figure_starts_on_the_first_screens(dash_duo, app_factory, width, height, screens):
    open_link(dash_duo, app_factory(), FOUR.replace("tab=table", "tab=distances"))
    dash_duo.driver.set_window_size(width, height)
    wait_for_figures(dash_duo)
    measure = ("var gd = document.querySelector('#fd-panel .js-plotly-plot'), root = document.documentElement;"
               " return [gd.getBoundingClientRect().top + window.scrollY, window.innerHeight,"
               " root.scrollWidth, root.clientWidth];")
    # the page settles as the chips, the view bar and the figures arrive: wait for it, then check
    wait_until(dash_duo, lambda d: d.execute_script(measure)[0] < screens * d.execute_script(measure)[1]
               and d.execute_script(measure)[2] <= d.execute_script(measure)[3])
    top, inner, scroll_width, width = dash_duo.driver.execute_script(measure)
    assert top < screens * inner, (top, inner)
    assert scroll_width <= width  # nothing is wider than the window (no sideways scrolling)
    assert dash_duo.get_logs() == []


def test_view_bar_units_go_into_the_link_and_onto_the_axis(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Alpha&m2.label=Beta&m2.w0=-0.9&tab=distances&dist=dl")
    wait_for_figures(dash_duo)
    dash_duo.select_dcc_dropdown(by_id(dash_duo, {"type": "fd-view", "key": "du"}), "Gpc")
    wait_until(dash_duo, lambda d: "du=gpc" in d.current_url)
    wait_until(dash_duo, lambda d: any("D_L [Gpc]" in e.text for e in d.find_elements(By.CSS_SELECTOR, ".ytitle")))
    dash_duo.select_dcc_dropdown(by_id(dash_duo, {"type": "fd-view", "key": "xs"}), "log")
    wait_until(dash_duo, lambda d: "xs=log" in d.current_url)
    # Back restores the unit in the link and in the dropdown
    dash_duo.driver.back()
    wait_until(dash_duo, lambda d: "xs=" not in d.current_url and "du=gpc" in d.current_url)
    dash_duo.driver.back()
    wait_until(dash_duo, lambda d: "du=" not in d.current_url)
    wait_until(dash_duo, lambda d: "Mpc" in by_id(dash_duo, {"type": "fd-view", "key": "du"}).text)
    wait_until(dash_duo, lambda d: any("D_L [Mpc]" in e.text for e in d.find_elements(By.CSS_SELECTOR, ".ytitle")))
    assert dash_duo.get_logs() == []


def _png_size(data_url: str) -> tuple[int, int]:
    head, _, body = data_url.partition(",")
    assert head == "data:image/png;base64", head
    raw = base64.b64decode(body)
    assert raw[:8] == b"\x89PNG\r\n\x1a\n" and raw[12:16] == b"IHDR"  # PNG signature, then the IHDR chunk
    return struct.unpack(">II", raw[16:24])


def _export(dash_duo, kind: str) -> dict:
    """Click `kind`'s export button under the first figure; the file the page would save."""
    dash_duo.driver.execute_script(
        "window.fdSaved = null; window.fdExport.save = function (url, name) { window.fdSaved = {url: url, name: name}; };")
    dash_duo.driver.find_element(By.CSS_SELECTOR, f"#fd-panel .fd-figure [data-fd-export='{kind}']").click()
    wait_until(dash_duo, lambda d: d.execute_script("return window.fdSaved"), timeout=20)
    return dash_duo.driver.execute_script("return window.fdSaved")


def test_exports_are_svg_and_png_at_the_asked_size_and_nothing_goes_to_a_cloud(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.label=Alpha&m2.label=Beta&m2.w0=-0.9&tab=time")
    wait_for_figures(dash_duo)
    svg = _export(dash_duo, "svg")
    assert svg["name"].endswith(".svg") and svg["url"].startswith("data:image/svg+xml")
    assert "<svg" in urllib.parse.unquote(svg["url"])
    for kind, scale in (("png2", 2), ("png3", 3)):
        saved = _export(dash_duo, kind)
        width, height = dash_duo.driver.execute_script(  # the figure's size on screen as it was drawn
            "var gd = document.querySelector('#fd-panel .js-plotly-plot');"
            " return [gd._fullLayout.width, gd._fullLayout.height];")
        assert saved["name"].endswith(f"-{kind}.png")
        assert _png_size(saved["url"]) == (width * scale, height * scale)
    slides = _export(dash_duo, "slides")
    assert slides["name"].endswith("-slides.png") and _png_size(slides["url"]) == (3200, 1800)
    # the toolbar: the camera saves SVG, and no figure offers a cloud, editor or link button
    configs = dash_duo.driver.execute_script(
        "return Array.from(document.querySelectorAll('.js-plotly-plot')).map(gd => [gd._context.showSendToCloud,"
        " gd._context.showEditInChartStudio, gd._context.showLink, gd._context.plotlyServerURL,"
        " gd._context.toImageButtonOptions.format]);")
    # (plotly.js 3 has dropped the editor and link options altogether: they read as unset)
    assert configs and all(c[0] is False and not c[1] and not c[2] and c[3:] == ["", "svg"] for c in configs), configs
    titles = [e.get_attribute("data-title") for e in dash_duo.find_elements(".modebar-btn")]
    assert not any(t and ("Cloud" in t or "Chart Studio" in t) for t in titles), titles
    assert dash_duo.get_logs() == []


def test_the_small_plots_of_a_set_are_saved_as_one_figure(dash_duo, app_factory):
    # the Energy budget's small plots are one figure per model on screen; saved, they are one
    # figure again: every model's plot side by side, their names and the set's title in it
    open_link(dash_duo, app_factory(), "m1.label=Alpha&m2.label=Beta&m2.w0=-0.9&m3.label=Gamma&tab=budget")
    wait_until(dash_duo, lambda d: len(d.find_elements(By.CSS_SELECTOR, "#fd-fig-fractions .js-plotly-plot .main-svg"))
               >= 3, timeout=20)
    svg = urllib.parse.unquote(_export(dash_duo, "svg")["url"])
    assert svg.startswith("data:image/svg+xml")
    for text in ("Alpha", "Beta", "Gamma", "Density parameters", "photons", "today"):
        assert text in svg, text
    # three plots' axes in the one file: Plotly names each subplot's x axis group (xtick, x2tick…)
    assert all(f'class="{axis}"' in svg for axis in ("xy", "x2y2", "x3y3")), "subplots"
    width, height = dash_duo.driver.execute_script(
        "const row = document.querySelector('#fd-fig-fractions .fd-multiples-row');"
        " const gd = row.querySelector('.js-plotly-plot');"
        " return [Math.round(row.getBoundingClientRect().width), gd._fullLayout.height + 110];")
    assert _png_size(_export(dash_duo, "png2")["url"]) == (2 * width, 2 * height)
    assert _png_size(_export(dash_duo, "slides")["url"]) == (3200, 1800)
    assert dash_duo.get_logs() == []


# Every axis text of every figure as drawn: each tick label, axis title and the figure's own box.
_AXIS_TEXTS = """
return Array.from(document.querySelectorAll('#fd-panel .js-plotly-plot')).map(gd => {
  const box = gd.querySelector('.main-svg').getBoundingClientRect();
  const texts = Array.from(gd.querySelectorAll('.xtick text, .ytick text, .g-xtitle text, .g-ytitle text'))
    .filter(t => t.textContent.trim() && getComputedStyle(t).display !== 'none');
  return {box: [box.left, box.top, box.right, box.bottom], hidden: gd.querySelectorAll(
            '.xtick text[style*="display: none"], .ytick text[style*="display: none"]').length,
          texts: texts.map(t => { const r = t.getBoundingClientRect();
                                  return [t.textContent, r.left, r.top, r.right, r.bottom]; })};
});
"""


def test_every_axis_label_is_shown_inside_its_figure_on_a_projector(dash_duo, app_factory):
    # Plotly is told never to hide tick labels for passing the figure's edge (they are not
    # measured for it): the margins must hold them, on every tab at 1024 × 768
    open_link(dash_duo, app_factory(), FOUR.replace("tab=table", "tab=budget"))
    dash_duo.driver.set_window_size(1024, 768)
    for key in TAB_KEYS:
        dash_duo.driver.get(f"{dash_duo.server_url}/?{codec.encode(codec.decode(FOUR.replace('tab=table', 'tab=' + key)))}")
        wait_until(dash_duo, lambda d: d.find_elements(By.CSS_SELECTOR, "#fd-panel > *"), timeout=20)
        wait_until(dash_duo, lambda d: not d.find_elements(By.CSS_SELECTOR, "[data-dash-is-loading]"), timeout=20)
        for figure in dash_duo.driver.execute_script(_AXIS_TEXTS):
            left, top, right, bottom = figure["box"]
            assert figure["hidden"] == 0, key
            assert figure["texts"], key  # the figure has its axes' labels
            for text, l, t, r, b in figure["texts"]:
                assert left - 1 <= l and r <= right + 1 and top - 1 <= t and b <= bottom + 1, (key, text)
    assert dash_duo.get_logs() == []


def test_no_serious_accessibility_violation_on_any_tab(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), FOUR.replace("tab=table", "tab=budget"))
    for key in TAB_KEYS:
        dash_duo.driver.get(f"{dash_duo.server_url}/?{codec.encode(codec.decode(FOUR.replace('tab=table', 'tab=' + key)))}")
        wait_until(dash_duo, lambda d: d.find_elements(By.CSS_SELECTOR, "#fd-panel > *"), timeout=20)
        dash_duo.wait_for_element(".fd-chip .fd-chip-label")
        wait_until(dash_duo, lambda d: not d.find_elements(By.CSS_SELECTOR, "[data-dash-is-loading]"), timeout=20)
        assert axe_violations(dash_duo.driver) == [], key
    # a card open shows its inputs: each has its name too
    open_card(dash_duo, 2)
    assert axe_violations(dash_duo.driver) == []
    assert dash_duo.get_logs() == []


# Two async functions as Babel's regenerator transform compiles them (the state machine and the
# asyncToGenerator helper, the shapes in Dash's bundles), driven by layouts/assets/regenerator.js:
#   async () => { const x = await Promise.resolve(20); if (x > 10) return x + 1; return 0; }
#   async () => { await Promise.reject(new Error("refused")); }
# By ECMAScript's semantics of await (ECMA-262 §27.7), the first resolves to 21 and the second
# rejects with its error; stepped by hand, its generator is done at the `return` (§27.5).
_COMPILED_ASYNC = r"""
const done = arguments[arguments.length - 1];
function step(gen, resolve, reject, next, thrown, key, arg) {
  let info, value;
  try { info = gen[key](arg); value = info.value; } catch (e) { reject(e); return; }
  if (info.done) { resolve(value); } else { Promise.resolve(value).then(next, thrown); }
}
function asyncToGenerator(fn) {
  return function () {
    const self = this, args = arguments;
    return new Promise(function (resolve, reject) {
      const gen = fn.apply(self, args);
      function next(v) { step(gen, resolve, reject, next, thrown, "next", v); }
      function thrown(e) { step(gen, resolve, reject, next, thrown, "throw", e); }
      next(undefined);
    });
  };
}
const R = window.regeneratorRuntime;
const machine = R.mark(function outer() { var x; return R.wrap(function (c) { for (;;) switch (c.prev = c.next) {
  case 0: c.next = 2; return Promise.resolve(20);
  case 2: x = c.sent; if (!(x > 10)) { c.next = 5; break; } return c.abrupt("return", x + 1);
  case 5: return c.abrupt("return", 0);
  case 6: case "end": return c.stop(); } }, outer); });
// the generator protocol itself: one step to the await, then the return completes it (done)
const gen = machine(), first = gen.next(), second = gen.next(20), after = gen.next();
const protocol = [first.done, second.value, second.done, after.done, after.value === undefined];
const plusOne = asyncToGenerator(machine);
const refused = asyncToGenerator(R.mark(function outer() { return R.wrap(function (c) { for (;;) switch (c.prev = c.next) {
  case 0: c.next = 2; return Promise.reject(new Error("refused"));
  case 2: case "end": return c.stop(); } }, outer); }));
plusOne().then(v => refused().then(() => done([protocol, v, "resolved"]), e => done([protocol, v, e.message])),
                e => done(["failed", String(e)]));
"""


def test_the_page_runs_without_babels_polyfill(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), FOUR.replace("tab=table", "tab=distances"))
    wait_for_figures(dash_duo)  # dcc.Graph, a lazy component, loaded through the stand-in
    driver = dash_duo.driver
    # the view bar's lists are dcc.Dropdown, the other lazy component
    assert driver.find_elements(By.CSS_SELECTOR, ".fd-view-setting .dash-dropdown, .fd-view-setting .Select")
    assert driver.execute_script("return window._babelPolyfill === undefined && "
                                 "String.prototype.trim.toString().includes('[native code]')")
    assert driver.execute_async_script(_COMPILED_ASYNC) == [[False, 21, True, True, True], 21, "refused"]
    assert dash_duo.get_logs() == []


def test_plotly_comes_once_with_the_page_and_epoch_markers_are_drawn_as_traces(dash_duo, app_factory):
    from plotly.offline import get_plotlyjs_version

    open_link(dash_duo, app_factory(), FOUR.replace("tab=table", "tab=budget"))
    wait_for_figures(dash_duo)
    # plotly.js was fetched once, at its fingerprinted URL (with the page), and never again by dcc.Graph
    names = dash_duo.driver.execute_script("return performance.getEntriesByType('resource').map(e => e.name)")
    plotly_js = [n for n in names if "/plotly/" in n]
    assert len(plotly_js) == 1 and ".v" in plotly_js[0].rsplit("/", 1)[-1], plotly_js
    assert not [n for n in names if n.endswith(("/async-graph.js", "/async-dropdown.js"))]
    assert dash_duo.driver.execute_script("return window.Plotly.version") == get_plotlyjs_version()
    read = ("const gds = Array.from(document.querySelectorAll('#fd-fig-fractions .js-plotly-plot'));"
            "return gds.length === 4 && gds.every(gd => gd._fullLayout) ? {shapes: gds.map(gd => (gd.layout.shapes || [])"
            ".length), epochs: gds.flatMap(gd => gd.data.filter(t => (t.legendgroup || '').startsWith('epoch-'))"
            ".map(t => ({x: Array.from(t.x), y: Array.from(t.y), name: t.name, symbol: t.marker.symbol[0]}))),"
            " key: Array.from(document.querySelectorAll('#fd-fig-fractions .fd-key-symbol')).map(e => [e.textContent,"
            " e.dataset.glyph])} : null;")
    wait_until(dash_duo, lambda d: d.execute_script(read), timeout=20)
    drawn = dash_duo.driver.execute_script(read)
    assert drawn["shapes"] == [0, 0, 0, 0]  # each epoch's line is part of its trace, not a layout shape
    epochs = drawn["epochs"]
    # "today" is a = 1 by the scale factor's normalisation a(t0) = 1: one per model (four small plots)
    today = [e for e in epochs if e["name"] == "today"]
    assert len(today) == 4 and all(e["x"] == [1, 1] for e in today)
    for e in epochs:  # a dotted line from the symbol down to the foot of the plot, at one a
        assert e["x"][0] == e["x"][1] and e["y"][1] == 0 and 0 < e["y"][0] <= 1
    kinds = {e["name"] for e in epochs}
    # the key under the small plots names each kind once, with its own glyph; each kind has one
    # symbol on every plot
    assert sorted(name for name, _ in drawn["key"]) == sorted(kinds)
    assert len({glyph for _, glyph in drawn["key"]}) == len(kinds)
    assert all(len({e["symbol"] for e in epochs if e["name"] == k}) == 1 for k in kinds)
    assert len({e["symbol"] for e in epochs}) == len(kinds)
    assert dash_duo.get_logs() == []


def test_an_edit_redraws_the_budget_panel_in_place_with_the_new_epochs(dash_duo, app_factory):
    from selenium.webdriver.common.keys import Keys

    open_link(dash_duo, app_factory(), "m1.label=Base&m2.label=Thawing&m2.w0=-0.9&tab=budget")
    wait_for_figures(dash_duo)
    rows = "#fd-panel .fd-table tbody tr"
    wait_until(dash_duo, lambda d: len(d.find_elements(By.CSS_SELECTOR, rows)) == 2, timeout=20)

    def acceleration_z():  # "z acceleration begins", the table's sixth column, per model row
        return dash_duo.driver.execute_script(
            f"return Array.from(document.querySelectorAll('{rows}')).map(r => r.children[5].textContent)")

    before = acceleration_z()
    assert before[0] != before[1]
    # mark the panel's elements: an edit must keep them and send new figures and rows only
    dash_duo.driver.execute_script(
        "document.querySelectorAll('#fd-panel .fd-figure, #fd-panel .fd-table').forEach(e => e.dataset.fdProbe = 'kept');"
        "window.__fdData = Array.from(document.querySelectorAll('#fd-panel .js-plotly-plot')).map(p => p.data);")
    open_card(dash_duo, 2)
    box = param_input(dash_duo, 2, "w0")
    box.clear()
    box.send_keys("-1" + Keys.ENTER)
    wait_until(dash_duo, lambda d: "m2.w0=" not in d.current_url or "m2.w0=-1&" in d.current_url + "&")
    # m2 is now a cosmological constant like m1: their acceleration epochs agree
    wait_until(dash_duo, lambda d: len(set(acceleration_z())) == 1, timeout=20)
    kept = dash_duo.driver.execute_script(
        "return Array.from(document.querySelectorAll('#fd-panel .fd-figure, #fd-panel .fd-table'))"
        ".map(e => e.dataset.fdProbe || '')")
    assert kept and set(kept) == {"kept"}, kept
    # m2's small plots and the plots of all models are drawn anew; m1's small plots are left alone
    redrawn = ("return Array.from(document.querySelectorAll('#fd-panel .js-plotly-plot'))"
               ".map((p, i) => [p.closest('.fd-graph').id, p.data !== window.__fdData[i]]);")
    wait_until(dash_duo, lambda d: all(new for ident, new in d.execute_script(redrawn) if '-1"' not in ident),
               timeout=20)
    time.sleep(0.5)
    assert [json.loads(ident)["name"] for ident, new in dash_duo.driver.execute_script(redrawn) if not new] == [
        "fractions-1", "densities-1"]
    # flat ΛCDM, radiation neglected: q = 0 at 1 + z = (2 Ω_Λ / Ω_m)^(1/3) (textbook closed form);
    # radiation moves it by about 0.1 %, well inside the 1 % allowed here
    cosmo = codec.decode("m1.label=Base").models[0].to_cosmology()
    expected = (2 * cosmo.omega_de / cosmo.omega_m) ** (1 / 3) - 1
    assert abs(float(acceleration_z()[0]) / expected - 1) < 0.01, (acceleration_z(), expected)
    assert dash_duo.get_logs() == []


def test_a_panel_control_writes_the_link_and_its_insertion_costs_no_round_trip(dash_duo, app_factory):
    from test_data_tab import _COUNT_UPDATES

    dash_duo.driver.execute_cdp_cmd("Page.addScriptToEvaluateOnNewDocument", {"source": _COUNT_UPDATES})
    open_link(dash_duo, app_factory(), FOUR.replace("tab=table", "tab=distances"))
    wait_for_figures(dash_duo)
    wait_until(dash_duo, lambda d: not d.find_elements(By.CSS_SELECTOR, "[data-dash-is-loading]"), timeout=20)
    syncs = lambda: [o for o in dash_duo.driver.execute_script("return window.__fdUpdates")  # noqa: E731
                     if o.startswith("..fd-url.search...")]
    assert len(syncs()) == 1  # the link read into the view bar on load; none for the panel's list
    dash_duo.select_dcc_dropdown(by_id(dash_duo, {"type": "fd-panel-view", "key": "dist"}),
                                 "transverse comoving distance D_M")
    wait_until(dash_duo, lambda d: "dist=dm" in d.current_url)
    wait_until(dash_duo, lambda d: "D_M" in d.find_element(By.CSS_SELECTOR, "#fd-fig-luminosity_distance, "
                                                                             "#fd-panel .js-plotly-plot").text)
    wait_until(dash_duo, lambda d: not d.find_elements(By.CSS_SELECTOR, "[data-dash-is-loading]"), timeout=20)
    assert len(syncs()) == 2  # the reader's choice; the new panel's list, built with it, adds none
    assert dash_duo.get_logs() == []
