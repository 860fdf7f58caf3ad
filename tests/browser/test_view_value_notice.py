"""View values in a link that cannot be used are listed in the notice beside the unknown keys,
instead of being replaced silently."""

from __future__ import annotations

from test_page import open_link


def test_bad_view_values_are_listed_in_the_notice(dash_duo, app_factory):
    open_link(dash_duo, app_factory(), "m1.h0=70&zmax=0&tab=nosuch&ref=7&colour=red")
    dash_duo.wait_for_contains_text("#fd-notice", "zmax: 0 is out of range", timeout=15)
    text = dash_duo.find_element("#fd-notice").text
    assert "tab: 'nosuch' is not a panel" in text and "ref: '7' is not a model slot" in text
    assert "colour" in text and "the default is shown instead" in text
    assert dash_duo.get_logs() == []
