"""Every link the README shows opens the view it describes: a page link has no problem and no
unknown key, and its canonical form reads back as the same state; an API example that shows an
error shows the message the server gives."""

from __future__ import annotations

import pathlib
import re

from server import codec

README = (pathlib.Path(__file__).resolve().parents[2] / "README.md").read_text()


def _links() -> list[str]:
    # a link starts with the local address and may go on over indented '&' lines
    found = []
    for match in re.finditer(r"http://127\.0\.0\.1:8050/\?([^\s'`]*)((?:\n\s+&[^\s`]+)*)", README):
        query = match.group(1) + "".join(part.strip() for part in match.group(2).splitlines())
        if "<" not in query:  # placeholders such as data=<hash> are not links
            found.append(query)
    return found


def test_the_readme_shows_links():
    assert len(_links()) >= 1


def test_every_readme_link_decodes_cleanly_and_round_trips():
    for query in _links():
        state = codec.decode(query)
        assert state.problems() == () and state.unknown == (), query
        assert codec.decode(codec.encode(state)) == state


def test_the_worked_example_opens_the_documented_view():
    example = next(q for q in _links() if "Lantern" in q)
    state = codec.decode(example)
    assert [m.label for m in state.models] == ["Lantern baseline", "Candidate Ember", "Candidate Cinder"]
    assert state.view.tab == "volume" and state.view.sky_area == 1200 and state.view.survey == (0.6, 1.8)
    assert state.model(2).w0 == -0.88 and state.model(2).wa == -0.35 and state.model(3).omega_k == -0.015


def test_the_documented_api_error_is_the_one_the_server_gives(app_factory):
    import json

    query, shown = re.search(r"compare\?(m2\.om=abc)'\n(\{.*\})", README).groups()
    client = app_factory(CACHE_TYPE="SimpleCache").server.test_client()
    assert client.get(f"/api/v1/compare?{query}").get_json() == json.loads(shown)
