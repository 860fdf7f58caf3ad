"""Labels are shown as typed in Plotly's hover boxes, never read as hover-template placeholders
(headless Chromium: Plotly's own Fx.hover draws the box that a mouse would)."""

from __future__ import annotations

import urllib.parse

from test_page import open_link, wait_until

LABEL = "LBL %{y} %{x:.3f} %{fullData.type} <b>x</b>"


def test_a_label_with_template_syntax_is_shown_verbatim_in_the_hover_box(dash_duo, app_factory):
    query = urllib.parse.urlencode({"m1.label": LABEL, "m1.h0": "70", "m2.label": "Other", "tab": "distances"})
    open_link(dash_duo, app_factory(), query)
    plot = "#fd-fig-luminosity_distance .js-plotly-plot"
    dash_duo.wait_for_element(plot, timeout=20)
    wait_until(dash_duo, lambda d: d.execute_script(
        f"const gd = document.querySelector('{plot}'); return gd && gd.data && gd.data.length > 0;"), timeout=20)
    text = dash_duo.driver.execute_script(f"""
        const gd = document.querySelector('{plot}');
        Plotly.Fx.hover(gd, [{{curveNumber: 0, pointNumber: 200}}]);
        const box = gd.querySelector('.hoverlayer');
        return box ? box.textContent : null;
    """)
    assert text is not None and LABEL in text, text
    assert "scatter" not in text  # %{fullData.type} was not substituted
    assert dash_duo.get_logs() == []
