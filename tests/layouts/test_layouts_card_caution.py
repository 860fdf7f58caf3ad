"""A card's cautions are shown as notes, apart from its errors (layouts.cards.card_status)."""

from layouts.cards import card_status


def test_cautions_render_as_notes_and_errors_as_alerts():
    out = card_status({"reference": False, "derived": [], "cautions": ["r_drag: outside the fit's range"],
                       "errors": ["m1.om: 9 is out of range"]})
    classes = [(c.className, getattr(c, "role", None), c.children) for c in out]
    assert ("fd-caution", "note", "r_drag: outside the fit's range") in classes
    assert ("fd-error", "alert", "m1.om: 9 is out of range") in classes


def test_counts_and_sizes_read_as_words():
    from layouts.text import byte_size, counted

    assert counted(1, "measurement") == "1 measurement" and counted(2, "measurement") == "2 measurements"
    # binary prefixes (IEC 80000-13): 1 KiB = 1024 bytes
    assert byte_size(1 << 20) == "1 MiB" and byte_size(4 << 20) == "4 MiB" and byte_size(1536) == "1.5 KiB"
    assert byte_size(512) == "512 bytes" and byte_size(2 << 30) == "2 GiB"
