"""Parameter sets a model card can start from (plain data; `server.state.apply_preset` applies one).

Planck 2018 columns: Planck Collaboration 2020, "Planck 2018 results. VI. Cosmological
parameters", A&A 641, A6, Table 2 (columns TT,TE,EE+lowE+lensing and +BAO). Their base model
has one massive neutrino of 0.06 eV and two massless ones, N_eff = 3.046, T_CMB = 2.7255 K;
Ω_b follows from the quoted Ω_b h² and H₀; σ₈ is the column's own (0.8111 ± 0.0060 and
0.8102 ± 0.0060; the second from memory of the same table).

Textbook limits switch radiation off (T_CMB = 0) so that the closed forms hold exactly:
Einstein–de Sitter (Ω_m = 1), empty (Ω_k = 1), de Sitter (Ω_Λ = 1), open matter-only
(Ω_m = 0.3, Ω_k = 0.7). H₀ = 70 km s⁻¹ Mpc⁻¹ is a round value, common practice, no source;
they keep the model's default σ₈ (only the growth amplitude depends on it).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Preset", "PRESETS", "ALIASES", "preset"]


@dataclass(frozen=True)
class Preset:
    """One parameter set: `key` (the value the card's list sends), `name` (the card's new label),
    `citation` (shown beside the name in the list) and the Cosmology inputs."""

    key: str
    name: str
    citation: str
    values: dict

    @property
    def option_label(self) -> str:
        """The entry in the card's "start from…" list: name and full citation."""
        return f"{self.name} — {self.citation}"


def _planck(h0: float, omega_m: float, omega_b_h2: float, sigma8: float) -> dict:
    # Ω_b = ω_b / h², kept to 7 significant digits (the table quotes ω_b to 4) so links stay short
    omega_b = float(f"{omega_b_h2 / (h0 / 100.0) ** 2:.7g}")
    return dict(h0=h0, omega_m=omega_m, omega_b=omega_b, omega_k=0.0, omega_de=None,
                w0=-1.0, wa=0.0, t_cmb=2.7255, n_eff=3.046, m_nu=(0.06,), sigma8=sigma8)


def _textbook(omega_m: float, omega_k: float) -> dict:
    return dict(h0=70.0, omega_m=omega_m, omega_b=None, omega_k=omega_k, omega_de=None,
                w0=-1.0, wa=0.0, t_cmb=0.0, m_nu=())


_PLANCK_LENS = "TT,TE,EE+lowE+lensing column of Planck Collaboration 2020, A&A 641, A6, Table 2"
_PLANCK_BAO = "TT,TE,EE+lowE+lensing+BAO column of Planck Collaboration 2020, A&A 641, A6, Table 2"
_TEXT = "closed-form limit, radiation off (T_CMB = 0)"

PRESETS = {p.key: p for p in (
    Preset("cmb2018-lens", "Planck 2018 (CMB + lensing)", _PLANCK_LENS, _planck(67.36, 0.3153, 0.02237, 0.8111)),
    Preset("cmb2018-lens-bao", "Planck 2018 (CMB + lensing + BAO)", _PLANCK_BAO, _planck(67.66, 0.3111, 0.02242, 0.8102)),
    Preset("eds", "Einstein–de Sitter (Ω_m = 1)", _TEXT, _textbook(1.0, 0.0)),
    Preset("empty", "Empty universe (Ω_k = 1)", _TEXT, _textbook(0.0, 1.0)),
    Preset("desitter", "de Sitter (Ω_Λ = 1)", _TEXT, _textbook(0.0, 0.0)),
    Preset("open", "Open, matter only (Ω_m = 0.3, Ω_k = 0.7)", _TEXT, _textbook(0.3, 0.7)),
)}

# Keys an earlier release sent for the same sets: a page still open from before an upgrade keeps
# working, and the card then shows the set under its current key.
ALIASES = {"planck18": "cmb2018-lens", "planck18bao": "cmb2018-lens-bao"}


def preset(key: str) -> Preset:
    """The preset `key`, read through `ALIASES` (KeyError for an unknown key)."""
    return PRESETS[ALIASES.get(key, key)]
