"""The cosmological model as an immutable, validated value object."""

from __future__ import annotations

import contextlib
import contextvars
import dataclasses
import math
import warnings
from dataclasses import dataclass, field
from typing import NamedTuple

import numpy as np

from . import _constants as const
from ._errors import ParameterError
from ._neutrinos import fermi_dirac

__all__ = ["Cosmology", "ParameterSpec", "PARAMETERS", "MAX_NEUTRINO_SPECIES"]

MAX_NEUTRINO_SPECIES = 3


class ParameterSpec(NamedTuple):
    """An input of :class:`Cosmology` and the range that validation accepts."""

    name: str
    symbol: str
    unit: str
    minimum: float
    maximum: float
    default: object
    description: str
    exclusive_minimum: bool = False

    def expected(self):
        """Text of the accepted range, e.g. ``'0 ≤ Ω_m ≤ 5'``."""
        low = "<" if self.exclusive_minimum else "≤"
        unit = f" {self.unit}" if self.unit else ""
        return f"{_num(self.minimum)} {low} {self.symbol} ≤ {_num(self.maximum)}{unit}"


def _num(x):
    return f"{x:g}"


PARAMETERS = (
    ParameterSpec("h0", "H₀", "km/s/Mpc", 0.01, 1000.0, None, "Hubble constant today"),
    ParameterSpec("omega_m", "Ω_m", "", 0.0, 5.0, None,
                  "all non-relativistic matter today, massive neutrinos included"),
    ParameterSpec("omega_b", "Ω_b", "", 0.0, 5.0, None,
                  "baryons today (default: 0.157 of the cold matter, the Planck 2018 fraction)"),
    ParameterSpec("omega_k", "Ω_k", "", -5.0, 5.0, 0.0, "curvature today (0 is flat)"),
    ParameterSpec("omega_de", "Ω_de", "", -5.0, 5.0, None,
                  "dark energy today (alternative to Ω_k; closes the budget otherwise)"),
    ParameterSpec("w0", "w₀", "", -5.0, 1.0, -1.0, "dark-energy equation of state today"),
    ParameterSpec("wa", "w_a", "", -5.0, 5.0, 0.0, "its rate of change, w = w₀ + w_a (1 − a)"),
    ParameterSpec("t_cmb", "T_CMB", "K", 0.0, 30.0, const.T_CMB_DEFAULT,
                  "CMB temperature today (0 switches radiation off)"),
    ParameterSpec("n_eff", "N_eff", "", 0.0, 10.0, const.N_EFF_DEFAULT,
                  "effective number of neutrino species"),
    ParameterSpec("m_nu", "m_ν", "eV", 0.0, 10.0, (0.06,),
                  "neutrino masses, up to three (missing ones are massless)"),
    ParameterSpec("sigma8", "σ₈", "", 0.0, 3.0, const.SIGMA8_DEFAULT,
                  "rms linear fluctuation in spheres of 8 h⁻¹ Mpc today", exclusive_minimum=True),
)
_SPEC = {p.name: p for p in PARAMETERS}


def _real(name, value):
    spec = _SPEC[name]
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)):
        raise ParameterError(name, value, spec.expected(), f"{value!r} is not a number")
    x = float(value)
    if not math.isfinite(x):
        raise ParameterError(name, value, spec.expected(), f"{x!r} is not a finite number")
    too_low = x <= spec.minimum if spec.exclusive_minimum else x < spec.minimum
    if too_low or x > spec.maximum:
        raise ParameterError(name, value, spec.expected(), f"{x:g} is out of range")
    return x


def _masses(value):
    spec = _SPEC["m_nu"]
    expected = f"at most {MAX_NEUTRINO_SPECIES} masses, each 0 ≤ m_ν ≤ {spec.maximum:g} eV"
    if isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(value, bool):
        value = (value,)
    try:
        items = tuple(value)
    except TypeError:
        raise ParameterError("m_nu", value, expected, f"{value!r} is not a list of masses") from None
    if len(items) > MAX_NEUTRINO_SPECIES:
        raise ParameterError("m_nu", value, expected, f"{len(items)} masses given")
    out = []
    for m in items:
        if isinstance(m, bool) or not isinstance(m, (int, float, np.integer, np.floating)):
            raise ParameterError("m_nu", value, expected, f"{m!r} is not a number")
        m = float(m)
        if not math.isfinite(m) or m < 0.0 or m > spec.maximum:
            raise ParameterError("m_nu", value, expected, f"mass {m!r} eV is out of range")
        out.append(m)
    return tuple(out)


def _radiation(h0, t_cmb, n_eff):
    """Ω_γ and Ω of one neutrino species if massless (N_eff/3 of the three), today."""
    omega_gamma = const.photon_density(t_cmb) / const.critical_density(h0)
    return omega_gamma, n_eff / 3.0 * const.NEUTRINO_PER_PHOTON * omega_gamma


# False inside `without_tables()`: construction then skips integrating the background (and its
# big-bang check), for callers that only need the budget, like the fits' growth of many sets.
_BUILD_TABLES = contextvars.ContextVar("build_tables", default=True)


@contextlib.contextmanager
def without_tables():
    """Models built in this block are validated but not integrated (no big-bang check, no
    tables cached): for code that needs only the energy budget of many throwaway models."""
    token = _BUILD_TABLES.set(False)
    try:
        yield
    finally:
        _BUILD_TABLES.reset(token)


# Earlier attribute names -> current ones (read with a DeprecationWarning; removed next release).
_RENAMED = {"omega_cdm": "omega_cold_dark_matter"}


@dataclass(frozen=True, kw_only=True)
class Cosmology:
    """A Friedmann–Lemaître–Robertson–Walker model and its energy budget today.

    Parameters
    ----------
    h0 : float
        Hubble constant H₀ in km s⁻¹ Mpc⁻¹, ``0.01 ≤ h0 ≤ 1000``.
    omega_m : float
        All non-relativistic matter today as a fraction of the critical density,
        **including** the massive neutrinos' share (as published parameter tables quote it).
    omega_b : float, optional
        Baryons today. Default: 0.157 of the cold matter ``omega_m - omega_nu``, the baryon
        fraction of Planck 2018 VI Table 2. Must not exceed the cold matter.
    omega_k : float, optional
        Curvature today, ``Ω_k = -k c² / (a₀ H₀)²``; 0 is flat, > 0 open, < 0 closed.
    w0, wa : float, optional
        Dark energy w(a) = w₀ + w_a (1 − a) (Chevallier & Polarski 2001; Linder 2003).
    t_cmb : float, optional
        CMB temperature today in K (Fixsen 2009); 0 switches photons and neutrinos off.
    n_eff : float, optional
        Effective number of neutrino species; each of the three carries N_eff/3 of the
        massless density. ``n_eff=0`` requires ``m_nu=()`` (no neutrinos at all) unless
        T_CMB = 0; with masses given it is refused (ParameterError naming ``n_eff``).
    m_nu : sequence of float, optional
        Neutrino masses in eV, 0 to 3 entries; missing entries and zeros are massless.
    sigma8 : float, optional
        σ₈, the rms linear density fluctuation in spheres of 8 h⁻¹ Mpc today (dimensionless,
        ``0 < sigma8 <= 3``); it only scales the growth quantities ``f_sigma8`` and
        ``sigma8_at_z``. Default 0.8111 (Planck 2018 VI, Table 2, TT,TE,EE+lowE+lensing).
    label : str, optional
        A name for display; it does not take part in the physics.

    Raises
    ------
    ParameterError
        Naming the field and the accepted range.
    NoBigBangError
        If H² would vanish somewhere in the past (see :func:`model.evaluate`).

    Notes
    -----
    Dark energy closes the budget, Ω_de = 1 − Ω_m − Ω_k − Ω_γ − Ω_ν,massless; use
    :meth:`from_dark_energy` to give Ω_de and derive Ω_k instead.

    Examples
    --------
    >>> c = Cosmology(h0=70.0, omega_m=0.3, t_cmb=0.0)
    >>> round(c.omega_de, 12)
    0.7
    """

    h0: float
    omega_m: float
    omega_b: float | None = None
    omega_k: float = 0.0
    w0: float = -1.0
    wa: float = 0.0
    t_cmb: float = const.T_CMB_DEFAULT
    n_eff: float = const.N_EFF_DEFAULT
    m_nu: tuple = (0.06,)
    sigma8: float = const.SIGMA8_DEFAULT
    label: str = ""

    _derived: dict = field(init=False, repr=False, compare=False, hash=False)

    def __post_init__(self):
        set_ = object.__setattr__
        for name in ("h0", "omega_m", "omega_k", "w0", "wa", "t_cmb", "n_eff", "sigma8"):
            set_(self, name, _real(name, getattr(self, name)))
        set_(self, "m_nu", _masses(self.m_nu))
        if not isinstance(self.label, str):
            raise ParameterError("label", self.label, "a text label", "the label is not text")

        massive = tuple(m for m in self.m_nu if m > 0.0)
        if self.n_eff == 0.0 and self.t_cmb > 0.0 and massive:
            # N_eff = 0 leaves no neutrino density for the masses to act on: refuse rather
            # than drop the masses silently.
            raise ParameterError(
                "n_eff", self.n_eff,
                f"0 < N_eff ≤ {_SPEC['n_eff'].maximum:g} when neutrino masses are given "
                "(or m_nu=() for no neutrinos at all)",
                f"N_eff = 0 would drop the masses {', '.join(f'{m:g}' for m in massive)} eV")
        omega_gamma, omega_nu1 = _radiation(self.h0, self.t_cmb, self.n_eff)
        t_nu = const.NEUTRINO_TEMPERATURE_RATIO * self.t_cmb
        if t_nu > 0.0 and omega_nu1 > 0.0 and massive:
            y0 = np.array([m * const.ELECTRON_VOLT_J / (const.BOLTZMANN * t_nu) for m in massive])
            omega_nu = float(omega_nu1 * np.sum(fermi_dirac(y0)[0]))
        else:
            y0, omega_nu, massive = np.zeros(0), 0.0, ()
        n_massless = MAX_NEUTRINO_SPECIES - len(massive)
        omega_nu_massless = n_massless * omega_nu1
        omega_cb = self.omega_m - omega_nu
        if omega_cb < 0.0:
            raise ParameterError(
                "omega_m", self.omega_m,
                f"Ω_m ≥ Ω_ν = {omega_nu:.6g} (the massive neutrinos alone)",
                f"{self.omega_m:g} is less than the massive neutrinos' share")
        baryons_given = self.omega_b is not None
        if not baryons_given:
            set_(self, "omega_b", const.BARYON_FRACTION_DEFAULT * omega_cb)
        else:
            set_(self, "omega_b", _real("omega_b", self.omega_b))
            if self.omega_b > self.omega_m:
                raise ParameterError("omega_b", self.omega_b, f"0 ≤ Ω_b ≤ Ω_m = {self.omega_m:g}",
                                     f"{self.omega_b:g} exceeds Ω_m")
            if self.omega_b > omega_cb * (1 + 1e-12):
                raise ParameterError(
                    "omega_b", self.omega_b,
                    f"0 ≤ Ω_b ≤ Ω_m − Ω_ν = {omega_cb:.6g}",
                    f"{self.omega_b:g} leaves no room for the massive neutrinos")
        omega_r = omega_gamma + omega_nu_massless
        omega_de = 1.0 - self.omega_m - self.omega_k - omega_r
        set_(self, "_derived", {
            "omega_gamma": omega_gamma,
            "omega_nu1": omega_nu1,
            "omega_nu": omega_nu,
            "omega_nu_massless": omega_nu_massless,
            "omega_r": omega_r,
            "omega_cb": omega_cb,
            "omega_de": omega_de,
            "y0": y0,
            "masses": massive,
            "baryons_given": baryons_given,
        })
        from ._tables import tables  # late: the tables need a built object

        if _BUILD_TABLES.get():
            tables(self)  # integrates the model once (cached) and raises NoBigBangError if needed

    # -- construction -------------------------------------------------------------------
    @classmethod
    def from_dark_energy(cls, *, omega_de, **kwargs):
        """Build a model from Ω_de instead of Ω_k, which is then derived.

        Ω_k = 1 − Ω_m − Ω_de − Ω_γ − Ω_ν,massless. Takes the same keywords as the class,
        except ``omega_k``.

        Examples
        --------
        >>> c = Cosmology.from_dark_energy(h0=70.0, omega_m=0.3, omega_de=0.8, t_cmb=0.0)
        >>> round(c.omega_k, 12)
        -0.1
        """
        if "omega_k" in kwargs:
            raise ParameterError("omega_k", kwargs["omega_k"], "only one of Ω_k and Ω_de",
                                 "Ω_k is derived when Ω_de is given")
        omega_de = _real("omega_de", omega_de)
        probe = dict(kwargs)
        h0 = _real("h0", probe.get("h0"))
        t_cmb = _real("t_cmb", probe.get("t_cmb", const.T_CMB_DEFAULT))
        n_eff = _real("n_eff", probe.get("n_eff", const.N_EFF_DEFAULT))
        masses = _masses(probe.get("m_nu", (0.06,)))
        omega_gamma, omega_nu1 = _radiation(h0, t_cmb, n_eff)
        n_massive = sum(1 for m in masses if m > 0.0) if t_cmb > 0.0 else 0
        omega_r = omega_gamma + (MAX_NEUTRINO_SPECIES - n_massive) * omega_nu1
        omega_m = _real("omega_m", probe.get("omega_m"))
        omega_k = 1.0 - omega_m - omega_de - omega_r
        if abs(omega_k) < 1e-15:
            omega_k = 0.0
        return cls(omega_k=omega_k, **kwargs)

    def replace(self, **changes):
        """A new, validated model with the named inputs changed and every other kept.

        Ω_b keeps its value (also when it was derived from the default baryon fraction);
        pass ``omega_b=None`` to derive it afresh from the new Ω_m. The fits and Δχ² maps
        rely on this: floating Ω_m holds the baryon density fixed.
        """
        return dataclasses.replace(self, **changes)

    def to_dict(self):
        """The inputs as a plain dict (floats, masses as a list)."""
        out = {f.name: getattr(self, f.name) for f in dataclasses.fields(self) if f.init}
        out["m_nu"] = list(self.m_nu)
        return out

    @property
    def key(self):
        """The physical content as a hashable tuple (label excluded; zero masses dropped)."""
        return self.background_key + (self.sigma8,)

    @property
    def background_key(self):
        """The inputs the expansion history depends on (``key`` without σ₈, which only scales
        the growth amplitude): what the per-model tables are cached by."""
        return (self.h0, self.omega_m, self.omega_b, self.omega_k, self.w0, self.wa,
                self.t_cmb, self.n_eff, tuple(sorted(self._derived["masses"])))

    # -- derived quantities -------------------------------------------------------------
    @property
    def h(self):
        """Dimensionless Hubble constant, H₀ / (100 km s⁻¹ Mpc⁻¹)."""
        return self.h0 / 100.0

    @property
    def hubble_distance(self):
        """Hubble distance c/H₀ in Mpc."""
        return const.SPEED_OF_LIGHT_KM_S / self.h0

    @property
    def hubble_time(self):
        """Hubble time 1/H₀ in Gyr."""
        return const.MEGAPARSEC_KM / self.h0 / const.GIGAYEAR_S

    @property
    def omega_gamma(self):
        """Photons today, from T_CMB: ρ_γ = (π²/15)(k_B T)⁴/(ħ³c⁵) over the critical density."""
        return self._derived["omega_gamma"]

    @property
    def omega_nu(self):
        """Massive neutrinos today (their whole energy density), part of Ω_m."""
        return self._derived["omega_nu"]

    @property
    def omega_nu_massless(self):
        """Massless neutrino species today."""
        return self._derived["omega_nu_massless"]

    @property
    def omega_r(self):
        """Radiation today: photons and massless neutrinos."""
        return self._derived["omega_r"]

    @property
    def omega_cb(self):
        """Cold matter today (baryons and cold dark matter), Ω_m − Ω_ν."""
        return self._derived["omega_cb"]

    @property
    def omega_cold_dark_matter(self):
        """Ω_c: cold dark matter today, Ω_m − Ω_ν − Ω_b (the component ``cold_dark_matter``)."""
        return self._derived["omega_cb"] - self.omega_b

    def __getattr__(self, name):
        # names of an earlier release, kept for one release with a warning
        if name in _RENAMED:
            warnings.warn(f"Cosmology.{name} is deprecated; use Cosmology.{_RENAMED[name]}",
                          DeprecationWarning, stacklevel=2)
            return getattr(self, _RENAMED[name])
        raise AttributeError(f"'Cosmology' object has no attribute {name!r}")

    @property
    def omega_de(self):
        """Dark energy today, 1 − Ω_m − Ω_k − Ω_r (negative values are legitimate)."""
        return self._derived["omega_de"]
