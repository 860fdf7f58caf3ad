"""A card's cautions are shown as notes, apart from its errors (layouts.cards.card_status)."""

from layouts.cards import card_status


def test_cautions_render_as_notes_and_errors_as_alerts():
    out = card_status({"reference": False, "derived": [], "cautions": ["r_drag: outside the fit's range"],
                       "errors": ["m1.om: 9 is out of range"]})
    classes = [(c.className, getattr(c, "role", None), c.children) for c in out]
    assert ("fd-caution", "note", "r_drag: outside the fit's range") in classes
    assert ("fd-error", "alert", "m1.om: 9 is out of range") in classes
