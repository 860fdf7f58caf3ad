"""The catalogue button's page script in headless Chromium: it finds the API from a deeper page
path under a URL prefix, and a download cut short on the way is reported, never saved as if whole
(the server ends every catalogue with '# complete: N rows')."""

from __future__ import annotations

SEND = ("window.fdeskSendCatalogue(new File(['id,z\\n1,0.5\\n2,1.5\\n3,2.5\\n'], 'made-up.csv', "
        "{type: 'text/csv'}));")


def test_catalogue_from_a_deeper_page_path_under_a_prefix(dash_duo, app_factory):
    dash_duo.start_server(app_factory(URL_PREFIX="/cosmo/"), navigate=False)  # "/" is not served
    # Dash serves the page at any path under its prefix; a relative API address would then miss
    dash_duo.wait_for_page(url=f"{dash_duo.server.url}/cosmo/foo/?m1.label=Deep&m1.h0=70&tab=data")
    dash_duo.wait_for_element("#fd-catalogue-run")
    dash_duo.driver.execute_script(SEND)
    dash_duo.wait_for_contains_text("#fd-catalogue-message", "done: 3 rows", timeout=15)
    assert dash_duo.get_logs() == []


def test_a_download_cut_short_is_reported_not_saved(dash_duo, app_factory):
    dash_duo.start_server(app_factory())
    dash_duo.wait_for_page(url=f"{dash_duo.server_url}/?m1.label=Cut&m1.h0=70&tab=data")
    dash_duo.wait_for_element("#fd-catalogue-run")
    # stand in for a proxy or a worker that stops mid-stream: the answer loses its last lines
    dash_duo.driver.execute_script("""
        const real = window.fetch;
        window.fetch = (url, options) => real(url, options).then(r => r.text().then(text =>
            new Response(text.split('\\n').slice(0, 3).join('\\n') + '\\n',
                         {status: r.status, headers: r.headers})));
    """)
    dash_duo.driver.execute_script(SEND)
    dash_duo.wait_for_contains_text("#fd-catalogue-message", "cut short", timeout=15)
    assert "fd-error" in dash_duo.find_element("#fd-catalogue-message").get_attribute("class")
    assert dash_duo.get_logs() == []
