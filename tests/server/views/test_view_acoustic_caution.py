"""Outside the calibration of the r_drag fit (Aubourg et al. 2015, eq. 16, calibrated near the
Planck model), the card and the acoustic panel say so, and the panel's r_drag is the model's
own integrated sound horizon at z_drag (model.acoustic_scales reports which)."""

from __future__ import annotations

import model
from server import codec
from server.views import acoustic, cards
from server.views.comparison import compare


def test_card_and_acoustic_panel_caution_outside_the_fit_range(ctx):
    state = codec.decode("m1.label=Standard&m2.label=Many%20neutrinos&m2.neff=10&tab=acoustic")
    status = cards.card_status(state, 2)
    assert len(status["cautions"]) == 1 and "N_eff = 10" in status["cautions"][0]
    assert "cautions" not in cards.card_status(state, 1)
    spec = acoustic.build(compare(state))
    notes = [b["text"] for b in spec["blocks"] if b["kind"] == "text" and b.get("tone") == "caution"]
    assert len(notes) == 1 and notes[0].startswith("Many neutrinos: r_drag is")
    direct = model.acoustic_scales(state.model(2).to_cosmology())
    assert direct["r_drag_method"] == "integrated" and direct["r_drag"] == direct["r_drag_integrated"]
