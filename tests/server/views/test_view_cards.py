"""The cards and the view controls show numbers for people (positional while short), and those
texts read back as the same link."""

from __future__ import annotations

from server import codec
from server.views.cards import cards


def test_numbers_are_shown_for_people_and_read_back_as_the_same_link(ctx):
    # 5000 deg² rather than "5e3" (the link's shortest spelling), and the texts on screen put
    # back through the inputs give the same state
    from server import state as states

    link = codec.decode("m1.h0=1000&m1.om=0.0001&sky=5000&zs=0.5,1500&tab=volume")
    assert link.view.value_text("sky") == "5000" and link.view.value_text("zs") == "0.5,1500"
    card = cards(link)[0]
    texts = {f["key"]: f["text"] for f in card["fields"]}
    assert texts["h0"] == "1000" and texts["om"] == "0.0001"
    params = [({"slot": 1, "key": k}, v) for k, v in texts.items()]
    again = states.apply_inputs(link, params, [("sky", link.view.value_text("sky")),
                                               ("zs", link.view.value_text("zs"))])
    assert codec.encode(again) == codec.encode(link)


def test_placeholders_fit_their_inputs(ctx):
    # the cards' inputs show about 20 characters (measured on a 1280 x 800 screenshot)
    from server.views.cards import HINT_LENGTH

    for card in cards(codec.decode("m1.h0=70&m2.om=0.3")):
        for field in card["fields"]:
            assert len(field["placeholder"]) <= HINT_LENGTH, field
