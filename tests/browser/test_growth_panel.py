"""The growth panel in headless Chromium, driven by the link only: `tab=growth` with two models
opens D(z)/D(0), f, fσ₈ and γ(z), each model a trace, axis titles with their units, and the
browser console stays empty. The plotted values are checked against model.evaluate."""

from __future__ import annotations

import urllib.parse

import numpy as np
from selenium.common.exceptions import StaleElementReferenceException
from selenium.webdriver.support.ui import WebDriverWait

import model

QUERY = urllib.parse.urlencode([
    ("m1.label", "Growth baseline"), ("m1.h0", "68"), ("m1.om", "0.31"),
    ("m2.label", "Growth thawing"), ("m2.w0", "-0.9"), ("m2.wa", "-0.3"), ("m2.s8", "0.76"),
    ("tab", "growth"),
], quote_via=urllib.parse.quote)

# every plotted figure of the panel: its id, traces' names, axis titles and the first trace's
# points as Plotly computed them (the page may send a curve's x as a start and a step)
_FIGURES_JS = """
return Array.from(document.querySelectorAll('#fd-panel .js-plotly-plot')).map(function (g) {
  var y = (g.layout.yaxis || {}).title || {};
  var x = (g.layout.xaxis || {}).title || {};
  return {id: (g.closest('figure') || g).id, names: g.data.map(function (t) { return t.name; }),
          x: typeof x === 'string' ? x : (x.text || ''), y: typeof y === 'string' ? y : (y.text || ''),
          first: (g.calcdata && g.calcdata[0] || []).map(function (p) { return p.x; }),
          firstY: (g.calcdata && g.calcdata[0] || []).map(function (p) { return p.y; })};
});
"""


def _figures(driver):
    try:
        return driver.execute_script(_FIGURES_JS)
    except StaleElementReferenceException:
        return []


def test_growth_panel_from_the_link(dash_duo, app_factory):
    dash_duo.start_server(app_factory())
    dash_duo.wait_for_page(url=f"{dash_duo.server_url}/?{QUERY}")
    dash_duo.wait_for_contains_text("#fd-panel", "Growth index")
    WebDriverWait(dash_duo.driver, 20).until(lambda d: len(_figures(d)) >= 4)
    figures = {f["id"]: f for f in _figures(dash_duo.driver)}
    # the axes carry the symbol (pure numbers have no unit bracket); the long name is the title
    want = {f"fd-fig-{key}": model.QUANTITIES[key].symbol for key in ("growth_factor", "growth_rate", "f_sigma8")}
    want["fd-fig-growth-index"] = "growth index γ"
    for fig_id, y_title in want.items():
        found = figures[fig_id]
        assert found["y"] == y_title, found
        assert found["x"] == "redshift z"
        assert any("Growth baseline" in n for n in found["names"])
        assert any("Growth thawing" in n for n in found["names"])
    # the first trace of fσ₈ is the baseline's curve (6 significant digits on the page)
    fs8 = figures["fd-fig-f_sigma8"]
    z = np.asarray(fs8["first"], dtype=float)
    assert z.size >= 100
    baseline = model.Cosmology(h0=68.0, omega_m=0.31)
    np.testing.assert_allclose(np.asarray(fs8["firstY"], dtype=float), model.evaluate(baseline, z)["f_sigma8"],
                               rtol=1e-5)
    assert dash_duo.get_logs() == []
