"""Linear growth of structure: the growth factor D(a) and the growth rate f = d ln D / d ln a.

The density contrast of the clustering matter (cold dark matter plus baryons) on sub-horizon
scales obeys, in s = ln a and with primes for d/ds,

    D'' + (2 + d ln H / d ln a) D' − (3/2) Ω_cb(a) D = 0,        Ω_cb(a) = Ω_cb a⁻³ / E(a)²,

(Peebles 1980, "The Large-Scale Structure of the Universe", §10; written in ln a as in
Linder 2005, PRD 72, 043529, eq. 1). Since 2 + d ln H / d ln a = 1 − q, the coefficients come
from the energy budget alone. Massive neutrinos enter H but do not cluster (they are smooth on
the scales where growth is scale-independent; the usual large-scale approximation).

Solved once per model on a uniform grid in ln a (step 1/64, a = 1e-6 to 100, a node at
today) by the fourth-order Magnus integrator with two Gauss points per step (Iserles &
Nørsett 1999, Phil. Trans. R. Soc. A 357, 983, eq. 4.7): each step's propagator is the exact
exponential of a 2 × 2 matrix, and the steps are multiplied by a parallel prefix product, so
the whole solution is a handful of numpy passes. Values between nodes are cubic Hermite
interpolants with the ODE's own derivatives as slopes.

Initial condition: the growing mode of a universe of clustering matter and smooth radiation,
D ∝ 1 + 3y/2 with y = ρ_cb / ρ_other at a = 1e-6 (Mészáros 1974, A&A 37, 225), which is D ∝ a
when radiation is off (y ≫ 1). Everything else present that early (curvature, dark energy) is
a tiny perturbation, and the decaying mode it excites dies out as a^{-5/2} long before today.
"""

from __future__ import annotations

import math

import numpy as np

from . import _hermite as hermite
from ._background import budget_total, components_x
from ._redshifts import as_redshifts
from ._tables import per_model

__all__ = ["growth", "Growth", "linear_growth", "STEP", "A_START"]

STEP = 1.0 / 64.0  # in ln a
A_START = 1e-6
A_END = 100.0  # the model's future range: z ≥ -0.99
_GAUSS = 0.5 * np.array([-1.0, 1.0]) / math.sqrt(3.0)  # two Gauss–Legendre points on [-1/2, 1/2]


def _coefficients(cosmo, s):
    """1 − q and (3/2) Ω_cb(a) at s = ln a (NaN where E² ≤ 0)."""
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        comp = components_x(cosmo, np.exp(-s))
        e2 = budget_total(comp)
        ok = e2 > 0.0
        e2 = np.where(ok, e2, np.nan)
        one_minus_q = 1.0 - 0.5 * comp["pressure_weight"] / e2
        source = 1.5 * cosmo._derived["omega_cb"] * np.exp(-3.0 * s) / e2
    return one_minus_q, source


def _expm2(m):
    """exp of a stack of 2 × 2 matrices (closed form: Cayley–Hamilton)."""
    half_trace = 0.5 * (m[:, 0, 0] + m[:, 1, 1])
    shifted = m - half_trace[:, None, None] * np.eye(2)
    det = shifted[:, 0, 0] * shifted[:, 1, 1] - shifted[:, 0, 1] * shifted[:, 1, 0]
    disc = -det  # shifted² = disc · I
    root = np.sqrt(np.abs(disc))
    small = root < 1e-4
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        c = np.where(disc >= 0.0, np.cosh(root), np.cos(root))
        s_over = np.where(disc >= 0.0, np.sinh(root), np.sin(root)) / np.where(small, 1.0, root)
    series_c = 1.0 + disc / 2.0 + disc * disc / 24.0
    series_s = 1.0 + disc / 6.0 + disc * disc / 120.0
    c = np.where(small, series_c, c)
    s_over = np.where(small, series_s, s_over)
    scale = np.exp(half_trace)
    return scale[:, None, None] * (c[:, None, None] * np.eye(2) + s_over[:, None, None] * shifted)


def _prefix_products(steps):
    """P[n] = steps[n] @ ... @ steps[0] for every n (Hillis–Steele scan: log2(n) passes), with
    the four entries as separate arrays: elementwise products are several times faster than
    numpy's matmul on a stack of 2 × 2 matrices."""
    a, b, c, d = (np.ascontiguousarray(steps[:, i, j]) for i, j in ((0, 0), (0, 1), (1, 0), (1, 1)))
    shift = 1
    while shift < a.size:
        a1, b1, c1, d1 = a[shift:], b[shift:], c[shift:], d[shift:]
        a0, b0, c0, d0 = a[:-shift], b[:-shift], c[:-shift], d[:-shift]
        # every new entry from the old ones before any is written back (the views overlap)
        new = (a1 * a0 + b1 * c0, a1 * b0 + b1 * d0, c1 * a0 + d1 * c0, c1 * b0 + d1 * d0)
        a[shift:], b[shift:], c[shift:], d[shift:] = new
        shift *= 2
    return np.stack([np.stack([a, b], axis=-1), np.stack([c, d], axis=-1)], axis=-2)


class Growth:
    """The growth solution of one cosmology on the ln a grid (see the module docstring)."""

    def __init__(self, cosmo, step=STEP, a_end=A_END):
        # a coarser step or an earlier end (the fits: 1/16 up to today) trades accuracy for speed
        self.step = step
        k = np.arange(math.floor(math.log(A_START) / step), math.ceil(math.log(a_end) / step) + 1)
        nodes = k * step
        mid = 0.5 * (nodes[:-1] + nodes[1:])
        # the budget at the nodes and at both Gauss points of every step, in one pass
        every = np.concatenate([nodes, mid + step * _GAUSS[0], mid + step * _GAUSS[1]])
        a_all, b_all = _coefficients(cosmo, every)
        size = nodes.size
        a_coef, b_coef = a_all[:size], b_all[:size]
        a1, b1 = a_all[size:2 * size - 1], b_all[size:2 * size - 1]
        a2, b2 = a_all[2 * size - 1:], b_all[2 * size - 1:]
        # the grid ends before the first node where E² ≤ 0 (a future turnaround)
        bad = np.flatnonzero(~np.isfinite(a_coef) | ~np.isfinite(b_coef))
        end = int(bad[0]) if bad.size else size
        s, a_coef, b_coef = nodes[:end], a_coef[:end], b_coef[:end]
        a1, b1, a2, b2 = a1[:end - 1], b1[:end - 1], a2[:end - 1], b2[:end - 1]
        n = max(end - 1, 0)

        def system(a, b):
            m = np.zeros((a.size, 2, 2))
            m[:, 0, 1] = 1.0
            m[:, 1, 0] = b
            m[:, 1, 1] = -a
            return m

        m1, m2 = system(a1, b1), system(a2, b2)
        commutator = m2 @ m1 - m1 @ m2
        omega = 0.5 * step * (m1 + m2) + (math.sqrt(3.0) / 12.0) * step * step * commutator
        propagators = _expm2(omega) if n else np.zeros((0, 2, 2))
        # growing mode of clustering matter plus smooth radiation (Mészáros 1974)
        comp = components_x(cosmo, np.exp(-s[:1]))
        rho_cb = cosmo._derived["omega_cb"] * math.exp(-3.0 * s[0])
        other = float(budget_total(comp)[0]) - rho_cb  # ρ_cb / y: radiation, and the rest
        # D = 1 + 3y/2 normalised to 1, so dD/d ln a = (3y/2) / (1 + 3y/2)
        # without clustering matter there is no growing mode: NaN throughout
        start = (np.array([1.0, 1.0 / (1.0 + other / (1.5 * rho_cb))]) if rho_cb > 0.0
                 else np.array([np.nan, np.nan]))
        states = np.empty((s.size, 2))
        states[0] = start
        if n:
            states[1:] = _prefix_products(propagators) @ start
        today = int(np.flatnonzero(s == 0.0)[0]) if np.any(s == 0.0) else None
        norm = states[today, 0] if today is not None else np.nan
        self.s = s
        self.d = states[:, 0] / norm
        self.dd = states[:, 1] / norm  # dD/d ln a
        self.ddd = b_coef * self.d - a_coef * self.dd  # the ODE gives D''
        self._coef = None

    def at(self, a):
        """(D/D(today), dD/d ln a / D(today)) at scale factors `a` (NaN outside the grid)."""
        return self.at_log(np.log(np.asarray(a, dtype=float)))

    def at_log(self, s):
        """As :meth:`at`, at s = ln a: cubic Hermite pieces (``model._hermite``) by Horner."""
        if self._coef is None:  # the pieces of D and of D' (slopes D' and D''), made once
            self._coef = (hermite.coefficients(self.d, self.dd, self.step),
                          hermite.coefficients(self.dd, self.ddd, self.step))
        s = np.asarray(s, dtype=float)
        shape = s.shape
        position = np.subtract(s.reshape(-1), self.s[0])
        position *= 1.0 / self.step
        last = self.s.size - 1
        outside = None
        if position.size and not (position.min() >= 0.0 and position.max() <= last):  # rare: no mask
            with np.errstate(invalid="ignore"):
                outside = ~((position >= 0.0) & (position <= last))
            position[outside] = 0.0
        i = np.minimum(position.astype(np.int64), max(last - 1, 0))
        t = position
        t -= i
        if last < 1:
            i[:], t[:] = 0, 0.0
            d, dd = np.full(position.shape, float(self.d[0])), np.full(position.shape, float(self.dd[0]))
        else:
            d, dd = hermite.evaluate(self._coef[0], i, t), hermite.evaluate(self._coef[1], i, t)
        if outside is not None:
            d[outside] = np.nan
            dd[outside] = np.nan
        return d.reshape(shape), dd.reshape(shape)


growth = per_model(Growth)
growth.__doc__ = "The growth solution of a cosmology, cached by its physics."


def linear_growth(cosmo, z):
    """Linear growth factor and growth rate of the clustering matter (CDM plus baryons).

    Parameters
    ----------
    cosmo : Cosmology
    z : array_like
        Redshifts, ``-0.99 <= z <= 1e5`` (any shape); negative values are the future.

    Returns
    -------
    growth_factor : ndarray
        D(z) / D(0), dimensionless (1 today).
    growth_rate : ndarray
        f = d ln D / d ln a, dimensionless. Both NaN beyond a future turnaround, and
        everywhere in a model without cold matter (Ω_cb = 0: no growing mode).

    Notes
    -----
    Solves D'' + (1 − q) D' − (3/2) Ω_cb(a) D = 0 in ln a (Linder 2005, PRD 72, 043529,
    eq. 1) from the growing mode D ∝ 1 + 3y/2, y = ρ_cb/ρ_radiation (Mészáros 1974, A&A 37,
    225); massive neutrinos are smooth. With Λ and curvature only it equals Heath's (1977,
    MNRAS 179, 351) integral D ∝ E ∫₀^a da′/(a′E)³, which is what the tests compare with.

    Examples
    --------
    Einstein–de Sitter grows as the scale factor, D = a and f = 1:

    >>> from model import Cosmology
    >>> d, f = linear_growth(Cosmology(h0=70.0, omega_m=1.0, t_cmb=0.0), [0.0, 1.0, 3.0])
    >>> [round(float(v), 9) for v in d], [round(float(v), 9) for v in f]
    ([1.0, 0.5, 0.25], [1.0, 1.0, 1.0])
    """
    x = 1.0 + as_redshifts(z)
    d, dd = growth(cosmo).at(1.0 / x)
    with np.errstate(invalid="ignore", divide="ignore"):
        return d, dd / d
