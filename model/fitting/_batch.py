"""H(z), D_C(z) and D_M(z) at fixed redshifts for many parameter sets at once.

The quick fits and the delta-chi^2 maps score thousands of parameter sets; building one
:class:`~model.Cosmology` per set would cost a millisecond each. :class:`DistanceBatch`
instead writes E^2 of every set as per-set coefficients times per-redshift rows taken from
the background code (the radiation of ``model._background.components``, the dark-energy
factor of ``model._background.dark_energy_factor``) and the curvature shape D_M/D_C of
``model._distances.transverse``, and integrates 1/E on fixed quadrature panels.
"""

import math
from types import SimpleNamespace

import numpy as np

from .._background import components, dark_energy_factor
from .._constants import SPEED_OF_LIGHT_KM_S
from .._distances import transverse

__all__ = ["DistanceBatch"]

#: The parameters a batch varies per set.
COSMOLOGICAL = ("h0", "omega_m", "omega_k", "w0", "wa")

# Gauss-Lobatto-Legendre panels in u = ln(1+z), at most _PANEL wide: the 3-point rule
# (Simpson's) when at most _NARROW wide, the 5-point rule otherwise (exact for polynomials of
# degree 3 and 7; Abramowitz & Stegun 1964, eq. 25.4.32 and Table 25.6). Lobatto rules include
# the panel ends, so E at the data redshifts is shared by neighbouring panels and gives H(z)
# there at no extra cost. The integrand (1+z)/E changes on scales of order 0.1 in u even for
# extreme w0, wa; these rules are then accurate to better than 1e-10 relative.
_PANEL = 0.1
_NARROW = 0.02
# rule -> (interior nodes on [-1, 1], their weights, weight of each end)
_LOBATTO = {
    3: (np.array([0.0]), np.array([4.0 / 3.0]), 1.0 / 3.0),
    5: (np.array([-math.sqrt(3.0 / 7.0), 0.0, math.sqrt(3.0 / 7.0)]),
        np.array([49.0 / 90.0, 32.0 / 45.0, 49.0 / 90.0]), 1.0 / 10.0),
}
# Redshift-independent check for a big bang: E^2 > 0 on this grid in u (model._background
# checks the same range on a grid 25 times finer; a fit's best model passes that check too).
_BIG_BANG_U = np.linspace(0.0, 25.0, 126)
# Parameter sets per vectorised block, sized to keep temporaries near 10 MB.
_BLOCK_ELEMENTS = 1 << 20


def _lobatto_panels(edges):
    """Panels covering [edges[0], edges[-1]] with every edge a panel end.

    Returns the panel ends (E,), the interior nodes (I,) with their weights, the index of
    each panel's first interior node, the end weight of each panel (E - 1,), and the index
    in the ends of every edge.
    """
    ends, interior, weights, end_weights, starts, edge_index = [edges[0]], [], [], [], [], [0]
    n_interior = 0
    for lo, hi in zip(edges[:-1], edges[1:]):
        n_panels = max(1, math.ceil((hi - lo) / _PANEL))
        step = (hi - lo) / n_panels
        nodes, node_weights, end_weight = _LOBATTO[3 if step <= _NARROW else 5]
        for k in range(n_panels):
            left = lo + k * step
            starts.append(n_interior)
            n_interior += nodes.size
            interior.append(left + 0.5 * step * (nodes + 1.0))
            weights.append(0.5 * step * node_weights)
            end_weights.append(0.5 * step * end_weight)
            ends.append(hi if k == n_panels - 1 else left + step)
        edge_index.append(len(ends) - 1)
    concat = (lambda parts: np.concatenate(parts)) if interior else (lambda parts: np.zeros(0))
    return (np.array(ends), concat(interior), concat(weights), np.array(starts, dtype=int),
            np.array(end_weights), np.array(edge_index, dtype=int))


class DistanceBatch:
    """H(z), D_C(z) and D_M(z) at fixed redshifts for many parameter sets at once.

    Parameters
    ----------
    base : Cosmology
        Supplies everything that is not varied: T_CMB, N_eff, neutrino masses
        and the default values of h0, omega_m, omega_k, w0, wa.
    z : array_like, 1-D
        Redshifts, ``0 <= z <= 1e5``, any order, repeats allowed.

    Notes
    -----
    D_C = (c/H0) ∫_0^ln(1+z) e^u / E du (Hogg 1999, arXiv:astro-ph/9905116, eq. 15,
    in u = ln(1+z)), by fixed Gauss-Lobatto-Legendre panels between the sorted
    distinct redshifts, summed cumulatively; D_M from D_C (eq. 16, ``model._distances.
    transverse``), NaN beyond the antipode of a closed model. E^2 = Omega_cb (1+z)^3
    + R(z) (h_base/h)^2 + Omega_k (1+z)^2 + Omega_de f_de(z), where R(z) is the base
    model's photon and neutrino density over its critical density today
    (``model._background.components``; it scales as 1/h^2 at fixed T_CMB and neutrino
    masses), Omega_cb = Omega_m - Omega_nu, and f_de = exp[3(1+w0+wa) u - 3 wa (1 - e^-u)]
    the background's dark-energy factor (Linder 2003, PRL 90, 091301, eq. 5).
    Sets whose E^2 is not positive somewhere between z = 0 and z ~ 7e10 (no big
    bang) give NaN.
    """

    def __init__(self, base, z):
        z = np.asarray(z, dtype=float)
        if z.ndim != 1 or not np.all(np.isfinite(z)) or (z.size and (z.min() < 0 or z.max() > 1e5)):
            raise ValueError("z: expected a 1-D array of redshifts 0 <= z <= 1e5")
        self.base = base
        self.z = z
        distinct, inverse = np.unique(z, return_inverse=True)
        edges = np.concatenate([[0.0], np.log1p(distinct[distinct > 0.0])])
        ends, interior, weights, self._starts, end_weights, edge_index = _lobatto_panels(edges)
        # Column of the panel ends holding each input redshift (z = 0 is the first end).
        self._column = (edge_index if distinct[0] == 0.0 else edge_index[1:])[inverse] \
            if z.size else np.zeros(0, dtype=int)
        # Every redshift where E^2 is needed: panel ends, interior nodes, big-bang check.
        self._u = np.concatenate([ends, interior, _BIG_BANG_U])
        self._n_ends, self._n_interior = ends.size, interior.size
        x = np.exp(self._u)
        c = components(base, np.expm1(self._u))
        radiation = c["photons"] + c["neutrinos_massless"] + c["neutrinos_massive"]
        self._matter_basis = np.stack([x**3, radiation, x**2])
        # ln(rho_de/rho_de,0) is linear in (1 + w0, wa) for w(a) = w0 + wa (1 - a) (Linder
        # 2003, PRL 90, 091301, eq. 5): its two rows are the background's factor at
        # (w0, wa) = (0, 0) and (-1, 1), and any set's factor is exp of their combination.
        with np.errstate(divide="ignore"):
            self._de_basis = np.log(np.stack([
                dark_energy_factor(_Only(w0=0.0, wa=0.0), x, self._u),
                dark_energy_factor(_Only(w0=-1.0, wa=1.0), x, self._u)]))
        # Quadrature weights times e^u (the integrand is e^u / E in u).
        self._end_factor = x[:ends.size]
        self._end_weights = end_weights
        self._interior_factor = x[ends.size:ends.size + interior.size] * weights
        self._h2_base = base.h**2
        self._omega_nu_h2 = base.omega_nu * self._h2_base
        self._omega_r_h2 = base.omega_r * self._h2_base

    def defaults(self):
        """The base model's values of the varied parameters, as a dict of floats."""
        return {name: float(getattr(self.base, name)) for name in COSMOLOGICAL}

    def _e2(self, h0, omega_m, omega_k, w0, wa):
        """E^2 at every redshift of the batch for parameter columns of shape (P, 1).

        Written as matrix products of per-set coefficients with per-redshift basis rows,
        which is several times faster than broadcasting element by element.
        """
        h2 = (h0 / 100.0) ** 2
        omega_cb = omega_m - self._omega_nu_h2 / h2
        omega_de = 1.0 - omega_m - omega_k - self._omega_r_h2 / h2
        coefficients = np.concatenate([omega_cb, self._h2_base / h2, omega_k], axis=1)
        if np.all((w0 == -1.0) & (wa == 0.0)):
            return coefficients @ self._matter_basis + omega_de
        exponent = np.concatenate([1.0 + w0, wa], axis=1) @ self._de_basis
        with np.errstate(over="ignore"):
            np.exp(exponent, out=exponent)
        exponent *= omega_de
        exponent += coefficients @ self._matter_basis
        return exponent

    def evaluate(self, **params):
        """H, D_C and D_M at the batch's redshifts for P parameter sets.

        Parameters
        ----------
        h0, omega_m, omega_k, w0, wa : array_like, optional
            Values for each set, broadcast to a common shape (P,); missing
            ones take the base model's value.

        Returns
        -------
        dict
            ``hubble_parameter`` [km/s/Mpc], ``comoving_distance`` and
            ``transverse_comoving_distance`` [Mpc], each of shape (P, N) for the
            N redshifts given at construction; NaN for sets with no big bang and
            beyond a closed model's antipode.
        """
        unknown = set(params) - set(COSMOLOGICAL)
        if unknown:
            raise ValueError(f"unknown parameter(s) {sorted(unknown)}; expected some of {COSMOLOGICAL}")
        values = {**self.defaults(), **params}
        arrays = np.broadcast_arrays(*(np.atleast_1d(np.asarray(values[n], dtype=float))
                                       for n in COSMOLOGICAL))
        if arrays[0].ndim != 1:
            raise ValueError("parameters: expected scalars or 1-D arrays")
        n_sets = arrays[0].size
        block = max(1, _BLOCK_ELEMENTS // self._u.size)
        out = {key: np.empty((n_sets, self.z.size)) for key in
               ("hubble_parameter", "comoving_distance", "transverse_comoving_distance")}
        for start in range(0, n_sets, block):
            rows = slice(start, start + block)
            self._evaluate_block(*(a[rows, None] for a in arrays),
                                 out={key: value[rows] for key, value in out.items()})
        return out

    def _evaluate_block(self, h0, omega_m, omega_k, w0, wa, out):
        """Fill ``out`` (views of shape (P, N)) for the parameter columns of shape (P, 1)."""
        e2 = self._e2(h0, omega_m, omega_k, w0, wa)
        n_sets, ne, ni = e2.shape[0], self._n_ends, self._n_interior
        with np.errstate(invalid="ignore", divide="ignore"):
            no_big_bang = ~np.all(e2 > 0.0, axis=1)
            e = np.sqrt(e2[:, :ne + ni])
            chi = np.zeros((n_sets, ne))
            if ne > 1:
                at_ends = self._end_factor / e[:, :ne]
                panels = np.add.reduceat(self._interior_factor / e[:, ne:], self._starts, axis=1)
                panels += self._end_weights * (at_ends[:, :-1] + at_ends[:, 1:])
                np.cumsum(panels, axis=1, out=chi[:, 1:])
            d_c, d_m, hubble = (out[k] for k in ("comoving_distance",
                                                 "transverse_comoving_distance",
                                                 "hubble_parameter"))
            np.take(chi, self._column, axis=1, out=d_c)
            curvatures, which = np.unique(omega_k[:, 0], return_inverse=True)
            for index, value in enumerate(curvatures.tolist()):
                rows = slice(None) if curvatures.size == 1 else which == index
                d_m[rows] = transverse(_Only(omega_k=value), d_c[rows])
            d_c *= SPEED_OF_LIGHT_KM_S / h0
            d_m *= SPEED_OF_LIGHT_KM_S / h0
            np.take(e, self._column, axis=1, out=hubble)
            hubble *= h0
            for array in (d_c, d_m, hubble):
                array[no_big_bang] = np.nan


def _Only(**parameters):
    """The few parameters a background helper reads (w0 and wa for ``dark_energy_factor``,
    Omega_k for ``transverse``), for values no :class:`~model.Cosmology` is built for."""
    return SimpleNamespace(**parameters)
