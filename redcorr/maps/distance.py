"""Distances to look a distance-resolved map up at: single values, or distributions as weighted nodes.

A distance-resolved map gives the cumulative E(B-V) from the Sun out to a distance r. A star
whose distance is uncertain gets the mean and the standard deviation of that reddening over its
distance distribution, which `DistanceSamples` represents by m nodes and weights per star:
``E[g(r)] ≈ Σ w_j g(r_j)`` for any function g of distance. The map classes use only
``nodes_pc``, ``weights``, ``size`` and ``usable``.

Three kinds of distribution
---------------------------
``DistanceSamples.point(d)``
    One exact distance (m = 1).
``DistanceSamples.gaussian(d, σ)``
    A normal distribution N(d, σ) truncated at r = 0, on m equally spaced nodes from
    max(0, d - 5σ) to d + 5σ with weights ∝ density × trapezoid spacing (composite trapezoid
    rule). For a smooth integrand this rule converges faster than any power of the spacing
    (the Gaussian vanishes at both ends), so the mean and variance of r come out exact to
    rounding; at a kink of a piecewise-linear g (cumulative reddening is linear between a
    map's distances) its error is O(h²) in the spacing h = 10σ/(m-1). We chose it over
    Gauss–Hermite nodes (sparse where the density is high, so a kink there costs more) and
    over equal-probability quantile nodes (which lose the variance in the tails): with the
    default m = 64, for g with up to four random kinks within ±2.5σ, the errors of the mean
    and of the standard deviation of g are within 1e-3 of the standard deviation of g (median
    1e-4), and within 3e-3 where the truncation at 0 cuts the density (the rule is second
    order at that end too). The mass beyond ±5σ, 5.7e-7, is dropped.
``DistanceSamples.from_parallax(ϖ, σ_ϖ, length_scale_pc=L)``
    The distance posterior for a parallax ϖ ± σ_ϖ (mas) under the exponentially decreasing
    space density ("EDSD") prior of Bailer-Jones (2015), sect. 5:

        P(r | ϖ, σ_ϖ) ∝ r² exp(-r/L) exp(-(ϖ - 1000/r)² / (2σ_ϖ²)),  r in pc, r > 0.

    Negative and zero parallaxes are allowed (the prior keeps the posterior proper).
    The posterior can be bimodal: for a star much nearer than L with a fractional error
    above ≈ 0.1 a second, broad bump near r ≈ 2L (the prior's own mode) holds up to
    tens of per cent of the probability, and the nodes must cover it. In u = ln r the
    posterior density is bounded above by r³ exp(-r/L) on the far side and by r³ on the
    near side, which gives, for each star, an interval outside which the density is below
    e^-18 times its value at the mode. That interval is cut into a core, the mode ± 6 widths
    of the Laplace (curvature) approximation at the mode, and two outer stretches, each
    scanned on 24 points and shrunk to where the density is above that cutoff. Each outer
    stretch left with density above it gets m // 4 nodes, the core the rest, each piece a
    composite trapezoid grid in u; the weights are the density in u times the trapezoid
    weights, normalised. The tests check the mean and standard deviation of r and of
    piecewise-linear functions of r against adaptive quadrature (`scipy.integrate.quad`) over
    regimes from 0.1 % errors to negative parallaxes. With the default m = 64, for unimodal
    posteriors the mean and standard deviation of r are within 5e-5 (relative), those of a
    piecewise-linear g within 5e-3 of the standard deviation of g (the kinks again); for
    bimodal ones both within 3e-3 relative. The error at kinks falls as 1/m².

`edsd_mode` returns the posterior's mode from the closed-form roots of the cubic of
Bailer-Jones (2015).

Rows without a usable distance are rows of NaN nodes (``usable`` False): a NaN, infinite or
negative distance; a NaN, infinite or negative distance error; a NaN or infinite parallax, or
a parallax error that is NaN, infinite or <= 0. A missing distance error is *not* taken as
zero: an exact distance is asked for with `DistanceSamples.point`. Arguments that hold one
value for all rows (the length scale, the number of nodes) raise `InputError` instead.

References
----------
.. [1] Bailer-Jones, C. A. L. 2015, PASP 127, 994, "Estimating distances from parallaxes",
   sect. 5 (the exponentially decreasing space density prior, its posterior and the cubic
   whose root is the mode; the section number is from memory).
"""

import numpy as np
from astropy import units as u

from redcorr._validate import as_float_array, check_positive, shown
from redcorr.exceptions import InputError

__all__ = ["DistanceSamples", "edsd_mode", "prior_dominated", "EDSD_LENGTH_SCALE_PC", "PRIOR_FRACTION"]

EDSD_LENGTH_SCALE_PC = 1350.0
"""float: default length scale L (pc) of the EDSD prior: 1.35 kpc, the value Bailer-Jones (2015)
uses in the examples of sect. 5 (from memory). It suits no population in particular: set L for yours."""

PRIOR_FRACTION = 0.2
"""float: a parallax whose fractional error σ_ϖ/ϖ exceeds this (or which is <= 0) gives a distance
that comes mostly from the prior (`prior_dominated`). Bailer-Jones (2015, sect. 4) finds that above
about 0.1–0.2 the posterior depends strongly on the prior (the range is from memory); 0.2 is our
choice of where to warn."""

_GAUSS_HALF_WIDTH = 5.0
"""Gaussian nodes reach this many σ either side of the mean (mass beyond: 5.7e-7)."""

_EDSD_DROP = 18.0
"""How far (in natural log) the posterior density in ln r may fall below its value at the mode
before the EDSD grid stops; the core grid spans ±sqrt(2·_EDSD_DROP) = ±6 Laplace widths. Chosen by
the accuracy against quadrature: 12.5 left errors of 2e-3 in the mean of bimodal posteriors, 18 5e-4."""

_SCAN = 24
"""Points on which each outer stretch of an EDSD grid is scanned for density above the cut."""

_CHUNK_ROWS = 1024
"""Stars whose nodes are made at once: temporaries of m × 8 kB, within the CPU's L2 cache (measured
fastest among 256-4096 rows)."""

_MIN_NODES = {"gaussian": 3, "from_parallax": 16}


class DistanceSamples:
    """Distances of n objects, each a distribution given as m weighted nodes.

    Parameters
    ----------
    nodes_pc : array_like, shape (n, m)
        Distances in pc, finite and >= 0; a row of NaN means "no usable
        distance" for that object.
    weights : array_like, shape (n, m)
        Non-negative; each usable row sums to 1. A map lookup returns the
        weighted mean (and standard deviation) of the reddening over the nodes.
    method : str
        How the distribution was made (for summaries and provenance).

    Attributes
    ----------
    length_scale_pc : float or None
        The EDSD prior's length scale L for samples made by `from_parallax`, else None.

    Examples
    --------
    >>> s = DistanceSamples.gaussian([500.0, np.nan], [50.0, 10.0])
    >>> s.size, s.usable.tolist()
    (2, [True, False])
    >>> print(np.round(s.mean_pc(), 3))
    [500.  nan]
    """

    def __init__(self, nodes_pc, weights, method=""):
        nodes = np.atleast_2d(np.asarray(nodes_pc, dtype=float))
        weights = np.atleast_2d(np.asarray(weights, dtype=float))
        if nodes.ndim != 2 or nodes.shape != weights.shape:
            raise InputError(f"nodes_pc shape {nodes.shape} and weights shape {weights.shape} must be equal and 2-d")
        self.nodes_pc = nodes
        self.weights = weights
        self.method = str(method)
        self.length_scale_pc = None

    @property
    def size(self):
        """Number of objects n."""
        return self.nodes_pc.shape[0]

    def __len__(self):
        return self.size

    def __repr__(self):
        n, m = self.nodes_pc.shape
        return f"<DistanceSamples: {n} objects ({int(self.usable.sum())} usable), {m} nodes each, {self.method!r}>"

    @property
    def usable(self):
        """Bool (n,): objects with a usable distance."""
        return np.all(np.isfinite(self.nodes_pc), axis=1)

    def mean_pc(self):
        """Mean distance of each object (pc), NaN where not usable: ``Σ w r``."""
        return np.sum(self.weights * self.nodes_pc, axis=1)

    def std_pc(self):
        """Standard deviation of each object's distance (pc), NaN where not usable."""
        dev = self.nodes_pc - self.mean_pc()[:, None]
        return np.sqrt(np.sum(self.weights * dev * dev, axis=1))

    @classmethod
    def point(cls, distance_pc):
        """One exact distance per object (m = 1); NaN, infinite or negative distances are not usable."""
        d = np.asarray(distance_pc, dtype=float).reshape(-1)
        d = np.where(np.isfinite(d) & (d >= 0), d, np.nan)
        return cls(d[:, None], np.ones((d.size, 1)), method="exact distance")

    @classmethod
    def gaussian(cls, distance_pc, error_pc, n_nodes=64):
        """Normal distances N(d, σ) truncated at 0, on ``n_nodes`` equally spaced nodes.

        Parameters
        ----------
        distance_pc, error_pc : array_like or `~astropy.units.Quantity` ['length']
            Mean d and standard deviation σ before truncation (plain numbers are pc); they
            broadcast together and are flattened. A row is not usable (NaN nodes) where d or σ
            is NaN, infinite or negative. σ = 0 gives the exact distance d (all nodes at d,
            all the weight on the first).
        n_nodes : int
            Nodes per object, >= 3.

        Returns
        -------
        DistanceSamples

        Notes
        -----
        Nodes r_j are equally spaced from max(0, d - 5σ) to d + 5σ; weights are the normal
        density at r_j times the composite trapezoid weights, normalised to sum 1, so the
        truncation at 0 and the tails beyond 5σ (5.7e-7 of the mass) are left out. See the
        module documentation for the accuracy.
        """
        m = _n_nodes(n_nodes, "gaussian")
        d, sigma = _broadcast_flat(
            ("distance_pc", _length(distance_pc, "distance_pc")), ("error_pc", _length(error_pc, "error_pc"))
        )
        good = np.isfinite(d) & (d >= 0) & np.isfinite(sigma) & (sigma >= 0)
        nodes, weights = _in_chunks(_gaussian_chunk, good, m, d, sigma)
        return cls(nodes, weights, method=f"normal distance truncated at 0, {m} trapezoid nodes within ±5σ")

    @classmethod
    def from_parallax(cls, parallax_mas, error_mas, length_scale_pc=EDSD_LENGTH_SCALE_PC, n_nodes=64):
        """Distance posteriors from parallaxes, with the EDSD prior of Bailer-Jones (2015).

        Parameters
        ----------
        parallax_mas, error_mas : array_like or `~astropy.units.Quantity` ['angle']
            Parallax ϖ and its standard error σ_ϖ (plain numbers are mas); they broadcast
            together and are flattened. ϖ may be zero or negative. A row is not usable (NaN
            nodes) where ϖ is NaN or infinite, or σ_ϖ is NaN, infinite or <= 0.
        length_scale_pc : float or `~astropy.units.Quantity` ['length']
            The prior's length scale L (pc), > 0; default `EDSD_LENGTH_SCALE_PC`.
        n_nodes : int
            Nodes per object, >= 16: ``n_nodes // 4`` on each outer stretch that holds
            probability, the rest on the core around the mode.

        Returns
        -------
        DistanceSamples
            With ``length_scale_pc`` set to L.

        Notes
        -----
        The posterior is P(r) ∝ r² exp(-r/L) exp(-(ϖ - 1000/r)²/(2σ_ϖ²)) (Bailer-Jones 2015,
        sect. 5). The nodes are three composite trapezoid grids in ln r, described in the
        module documentation; the weights are the posterior density in ln r at the nodes
        times the trapezoid weights, normalised to sum 1.

        A posterior of a star with a large fractional error (ϖ/σ_ϖ ≲ 5) or a parallax <= 0 is
        mostly the prior's: its distances and the reddening found there follow from the
        choice of L, not from the measurement.

        References
        ----------
        .. [1] Bailer-Jones, C. A. L. 2015, PASP 127, 994, sect. 5.
        """
        m = _n_nodes(n_nodes, "from_parallax")
        length = _length_scale(length_scale_pc)
        plx, err = _broadcast_flat(
            ("parallax_mas", _angle(parallax_mas, "parallax_mas")), ("error_mas", _angle(error_mas, "error_mas"))
        )
        w, s = _scaled(plx, err, length)
        nodes, weights = _in_chunks(_edsd_chunk, np.isfinite(w) & np.isfinite(s), m, w, s)
        nodes *= length
        samples = cls(nodes, weights, method=f"EDSD prior (Bailer-Jones 2015), L = {length:g} pc, {m} nodes")
        samples.length_scale_pc = length
        return samples


def prior_dominated(parallax_mas, error_mas):
    """True where a parallax says little about the distance, so that the prior decides it.

    Parameters
    ----------
    parallax_mas, error_mas : array_like or `~astropy.units.Quantity` ['angle']
        Parallax ϖ and its standard error σ_ϖ (plain numbers are mas); they broadcast.

    Returns
    -------
    ndarray of bool
        ϖ <= 0, or σ_ϖ/ϖ > `PRIOR_FRACTION`, for finite values; False where either is NaN
        or infinite (those give no distance at all).

    Examples
    --------
    >>> prior_dominated([10.0, 2.0, -0.5, np.nan], [0.5, 1.0, 0.3, 0.1]).tolist()
    [False, True, True, False]

    References
    ----------
    .. [1] Bailer-Jones, C. A. L. 2015, PASP 127, 994, sect. 4.
    """
    plx = _angle(parallax_mas, "parallax_mas")
    err = _angle(error_mas, "error_mas")
    finite = np.isfinite(plx) & np.isfinite(err)
    with np.errstate(invalid="ignore"):
        return finite & ((plx <= 0) | (err > PRIOR_FRACTION * plx))


def edsd_mode(parallax_mas, error_mas, length_scale_pc=EDSD_LENGTH_SCALE_PC):
    """Mode (pc) of the distance posterior with the EDSD prior (Bailer-Jones 2015).

    Parameters
    ----------
    parallax_mas, error_mas : array_like or `~astropy.units.Quantity` ['angle']
        Parallax ϖ (any sign) and its standard error σ_ϖ (plain numbers are mas); they
        broadcast together.
    length_scale_pc : float or `~astropy.units.Quantity` ['length']
        The prior's length scale L (pc), > 0.

    Returns
    -------
    ndarray or float
        The mode in pc, of the broadcast shape (a float for scalar inputs); NaN where ϖ is not
        finite or σ_ϖ is NaN, infinite or <= 0.

    Notes
    -----
    With r in pc, ϖ and σ_ϖ in mas, the derivative of the log-posterior vanishes where

        r³/L - 2r² + (1000 ϖ/σ_ϖ²) r - 1000²/σ_ϖ² = 0

    (Bailer-Jones 2015, sect. 5; the 1000s turn mas into arcsec). Written for y = L/r, it is
    y³ - ϖ' y² + 2σ'² y - σ'² = 0 with ϖ' = ϖL/1000 and σ' = σ_ϖL/1000 (parallaxes in units
    of the parallax at r = L), whose coefficients stay bounded as σ_ϖ → 0; it is solved in closed form
    (Cardano's formula for one real root, the trigonometric form for three; Newton steps
    polish the result). For ϖ <= 0 there is exactly one positive root (Descartes' rule of
    signs). For ϖ > 0 there can be three: the posterior is then bimodal, and the mode
    returned is the root of the higher posterior density — usually the smallest, but near the
    edge of that regime the far one (near 2L) can be higher.

    References
    ----------
    .. [1] Bailer-Jones, C. A. L. 2015, PASP 127, 994, sect. 5.

    Examples
    --------
    >>> print(round(float(edsd_mode(10.0, 0.01, 1350.0)), 2))  # 1/ϖ limit for a tiny error
    100.0
    """
    length = _length_scale(length_scale_pc)
    plx = _angle(parallax_mas, "parallax_mas")
    err = _angle(error_mas, "error_mas")
    try:
        plx, err = np.broadcast_arrays(plx, err)
    except ValueError:
        raise InputError(
            f"parallax_mas has shape {plx.shape} and error_mas shape {err.shape}; they must broadcast together"
        ) from None
    w, s = _scaled(plx, err, length)
    return (_mode_scaled(w, s) * length)[()]


# --- internals: the EDSD posterior in scaled units x = r/L, w = ϖL/1000, s = σ_ϖL/1000 ---------------


def _scaled(plx, err, length):
    """ϖ' = ϖL/1000 and σ' = σ_ϖL/1000 (parallaxes in units of the parallax at r = L); NaN where unusable."""
    good = np.isfinite(plx) & np.isfinite(err) & (err > 0)
    scale = length / 1000.0
    return np.where(good, plx * scale, np.nan), np.where(good, err * scale, np.nan)


def _log_post_x(x, w, s):
    """ln of the posterior density in x = r/L, up to a constant: 2 ln x - x - (w - 1/x)²/(2s²)."""
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        return 2.0 * np.log(x) - x - (w - 1.0 / x) ** 2 / (2.0 * s * s)


def _cubic_roots(a, b, c):
    """The real roots of y³ + a y² + b y + c = 0, shape (3, ...), NaN for complex ones.

    Cardano's formula where there is one real root, the trigonometric form where there are
    three (Abramowitz & Stegun 1964, 3.8.2; from memory).
    """
    p = b - a * a / 3.0
    q = 2.0 * a**3 / 27.0 - a * b / 3.0 + c
    shift = -a / 3.0
    disc = q * q / 4.0 + p**3 / 27.0
    one = disc > 0
    with np.errstate(invalid="ignore", divide="ignore"):
        # one real root: u = cbrt(-q/2 - sign(q)·sqrt(disc)) avoids cancellation; t = u - p/(3u)
        big = np.cbrt(-q / 2.0 - np.copysign(np.sqrt(np.where(one, disc, 0.0)), q))
        t_one = np.where(big != 0, big - p / (3.0 * np.where(big != 0, big, 1.0)), 0.0)
        # three real roots (p < 0): t_k = 2 sqrt(-p/3) cos(θ/3 - 2πk/3)
        neg_p = np.where(one, 1.0, -p)
        arg = np.clip(-q / 2.0 * np.sqrt(27.0 / neg_p**3), -1.0, 1.0)
        theta = np.arccos(arg)
        k = np.arange(3).reshape((3,) + (1,) * np.ndim(a))
        t_three = 2.0 * np.sqrt(neg_p / 3.0) * np.cos(theta / 3.0 - 2.0 * np.pi * k / 3.0)
    roots = np.where(one, np.stack([t_one, np.full_like(t_one, np.nan), np.full_like(t_one, np.nan)]), t_three)
    return roots + shift


def _mode_scaled(w, s):
    """Mode x = r/L of the posterior (NaN where w or s is NaN)."""
    # 1/x = y solves y³ - w y² + 2s² y - s² = 0 (the cubic of Bailer-Jones 2015 times s²/x³)
    s2 = s * s
    roots = _cubic_roots(-w, 2.0 * s2, -s2)
    roots = np.where(roots > 0, roots, np.nan)
    with np.errstate(divide="ignore", invalid="ignore"):
        density = _log_post_x(1.0 / roots, w, s)
    density = np.where(np.isnan(density), -np.inf, density)
    best = np.argmax(density, axis=0)
    y = np.take_along_axis(roots, best[None], axis=0)[0]
    for _ in range(2):  # Newton polish of the closed-form root
        f = ((y - w) * y + 2.0 * s2) * y - s2
        df = (3.0 * y - 2.0 * w) * y + 2.0 * s2
        with np.errstate(divide="ignore", invalid="ignore"):
            y_new = y - f / df
            f_new = ((y_new - w) * y_new + 2.0 * s2) * y_new - s2
        y = np.where(np.isfinite(y_new) & (y_new > 0) & (np.abs(f_new) <= np.abs(f)), y_new, y)
    with np.errstate(divide="ignore", invalid="ignore"):
        return 1.0 / y


def _log_post_u(u_, w, s):
    """ln of the posterior density in u = ln x, up to a constant: 3u - e^u - (w - e^-u)²/(2s²)."""
    with np.errstate(over="ignore", invalid="ignore"):
        return 3.0 * u_ - np.exp(u_) - (w - np.exp(-u_)) ** 2 / (2.0 * s * s)


def _trapezoid_shape(m):
    """Composite trapezoid weights of m equally spaced nodes on [0, 1]."""
    t = np.full(m, 1.0 / (m - 1))
    t[[0, -1]] *= 0.5
    return t


def _in_chunks(build, usable, m, *columns):
    """Nodes and weights (n, m) made by ``build(*columns_of_rows, m)`` chunk by chunk; NaN rows where not usable.

    Chunks of `_CHUNK_ROWS` rows keep the temporary arrays small enough to stay in the CPU's cache.
    """
    n = usable.size
    nodes = np.empty((n, m))
    weights = np.empty((n, m))
    nodes[~usable] = np.nan
    weights[~usable] = np.nan
    rows = np.flatnonzero(usable)
    for start in range(0, rows.size, _CHUNK_ROWS):
        take = rows[start:start + _CHUNK_ROWS]
        nodes[take], weights[take] = build(*(c[take] for c in columns), m)
    return nodes, weights


def _gaussian_chunk(d, sigma, m):
    """Nodes (pc) and weights of N(d, σ) truncated at 0, for rows with finite d >= 0 and σ >= 0."""
    lo = np.maximum(d - _GAUSS_HALF_WIDTH * sigma, 0.0)
    hi = d + _GAUSS_HALF_WIDTH * sigma
    nodes = lo[:, None] + (hi - lo)[:, None] * np.linspace(0.0, 1.0, m)
    exact = sigma == 0
    with np.errstate(divide="ignore", invalid="ignore"):
        z = (nodes - d[:, None]) / sigma[:, None]
    weights = np.exp(-0.5 * z * z) * _trapezoid_shape(m)
    weights[exact] = 0.0
    weights[exact, 0] = 1.0
    return nodes, weights / np.sum(weights, axis=1, keepdims=True)


def _edsd_chunk(w, s, m):
    """Nodes x = r/L and weights of the EDSD posteriors, for rows with finite w and s > 0."""
    x0 = _mode_scaled(w, s)
    u0 = np.log(x0)
    top = _log_post_u(u0, w, s)
    cut = top - _EDSD_DROP
    # bounds beyond which the density in u is below the cut: 3u - e^u (far side) and 3u (near side)
    far = 3.0 - cut  # 3 ln x - x = cut for x >= 3, by x <- 3 ln x - cut, which falls towards the root from above
    for _ in range(12):
        far = 3.0 * np.log(far) - cut
    u_hi = np.log(np.maximum(far, x0))
    u_lo = np.minimum(cut / 3.0, u0)
    # core: ±sqrt(2·drop) Laplace widths; the curvature of ln P in u at the mode is -2 - (3 - 2w x0)/(s x0)²
    curv = 2.0 + (3.0 - 2.0 * w * x0) / (s * x0) ** 2
    half = np.sqrt(2.0 * _EDSD_DROP / np.maximum(curv, 1e-12))
    c_lo = np.clip(u0 - half, u_lo, u0)
    c_hi = np.clip(u0 + half, u0, u_hi)
    near = _outer_stretch(c_lo, u_lo, w, s, cut)
    far = _outer_stretch(c_hi, u_hi, w, s, cut)
    # m // 4 nodes on each outer stretch holding density above the cut, the rest on the core
    k = m // 4
    has_near, has_far = near[0] != near[1], far[0] != far[1]
    grid = np.empty((w.size, m))
    spacing = np.empty((w.size, m))
    for with_near in (False, True):
        for with_far in (False, True):
            rows = np.flatnonzero((has_near == with_near) & (has_far == with_far))
            if rows.size == 0:
                continue
            pieces = [(c_lo, c_hi, m - k * (with_near + with_far))]
            pieces += [near + (k,)] if with_near else []
            pieces += [far + (k,)] if with_far else []
            col = 0
            for a, b, count in pieces:
                a, b = a[rows, None], b[rows, None]
                grid[rows, col:col + count] = a + (b - a) * np.linspace(0.0, 1.0, count)
                spacing[rows, col:col + count] = np.abs(b - a) * _trapezoid_shape(count)
                col += count
    # spacing × exp(3u - x - (w - 1/x)²/(2s²) - top), in place; exp's argument floored at -700
    # (a weight below 1e-304 of the mode's) to keep exp off its slow path for underflows
    x = np.exp(grid)
    misfit = np.divide(1.0, x)
    misfit -= w[:, None]
    misfit *= misfit
    misfit *= (0.5 / (s * s))[:, None]
    density = np.multiply(grid, 3.0)
    density -= x
    density -= misfit
    density -= top[:, None]
    np.maximum(density, -700.0, out=density)
    np.exp(density, out=density)
    density *= spacing
    density /= np.sum(density, axis=1, keepdims=True)
    return x, density


def _outer_stretch(inner, outer, w, s, cut):
    """Where, between ``inner`` and ``outer`` (u), the density rises above ``cut``: (start, end).

    The stretch is scanned on `_SCAN` equally spaced points; the result runs from the point before
    the first one above the cut to the point after the last, or is (inner, inner) if none is above.
    """
    t = np.linspace(0.0, 1.0, _SCAN)
    scan = inner[:, None] + (outer - inner)[:, None] * t
    above = _log_post_u(scan, w[:, None], s[:, None]) >= cut[:, None]
    some = above.any(axis=1)
    first = np.maximum(np.argmax(above, axis=1) - 1, 0)
    last = np.minimum(_SCAN - np.argmax(above[:, ::-1], axis=1), _SCAN - 1)
    start = np.take_along_axis(scan, first[:, None], axis=1)[:, 0]
    end = np.take_along_axis(scan, last[:, None], axis=1)[:, 0]
    return np.where(some, start, inner), np.where(some, end, inner)


# --- input checks -----------------------------------------------------------------------------------


def _length(value, name):
    return as_float_array(name, value, u.pc, "a length (plain numbers are pc)")


def _angle(value, name):
    return as_float_array(name, value, u.mas, "an angle (plain numbers are mas)")


def _length_scale(value):
    arr = _length(value, "length_scale_pc")
    if arr.ndim != 0:
        raise InputError(f"length_scale_pc={shown(arr)} must be one number of pc > 0, not an array")
    return check_positive("length_scale_pc", arr)


def _n_nodes(value, method):
    low = _MIN_NODES[method]
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < low:
        raise InputError(f"n_nodes={shown(value)} must be a whole number >= {low}")
    return int(value)


def _broadcast_flat(*named):
    """The named arrays broadcast together and flattened to 1-d."""
    try:
        arrays = np.broadcast_arrays(*(a for _, a in named))
    except ValueError:
        shapes = " and ".join(f"{name} has shape {a.shape}" for name, a in named)
        raise InputError(f"{shapes}; they must have the same shape (or one be a single value)") from None
    return tuple(a.reshape(-1) for a in arrays)
