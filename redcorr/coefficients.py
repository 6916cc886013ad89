"""The coefficient grid: A_b/A_V of blackbody sources over temperature and A_V, and its polynomial.

Because a band's effective wavelength moves redward as the dust column
grows, A_b/A_V depends on A_V and on the source. :func:`coefficient_grid`
tabulates it for blackbody sources over (band, temperature, A_V), with the
band integrals of :mod:`redcorr.extinction`, for fast interpolation;
:meth:`CoefficientGrid.fit_polynomial` condenses it into a polynomial in
(intrinsic colour, A_V). The intrinsic colours are unreddened synthetic AB
colours of the blackbodies (:func:`redcorr.photometry.flat_fnu_mag`).

E(B−V) is the curve's own, A_V / R_V (see :mod:`redcorr.extinction`).
"""

import functools
import warnings

import numpy as np
from astropy import units as u
from astropy.table import Table
from numpy.polynomial import polynomial as P

from redcorr._validate import as_a_v
from redcorr.bandpass import Band
from redcorr.exceptions import InputError, OutOfRangeWarning
from redcorr.extinction import curve_on_band
from redcorr.photometry import flat_fnu_mag
from redcorr.sed import planck_log_flam

__all__ = [
    "CoefficientGrid",
    "GridPolynomial",
    "coefficient_grid",
    "DEFAULT_TEMPERATURES",
    "DEFAULT_A_V",
]

DEFAULT_TEMPERATURES = np.geomspace(3000.0, 50000.0, 30)
"""Default source temperatures of :func:`coefficient_grid`, K (30, log-spaced)."""

DEFAULT_A_V = np.linspace(0.0, 20.0, 41)
"""Default A_V values of :func:`coefficient_grid`, mag (0 to 20 in steps of 0.5)."""


def _as_kelvin(temperature):
    """Temperatures in K as float64 (a Quantity in any temperature unit is converted)."""
    if isinstance(temperature, u.Quantity):
        temperature = temperature.to_value(u.K, equivalencies=u.temperature())
    return np.asarray(temperature, dtype=float)


def _axis(name, values, lo):
    arr = np.asarray(values, dtype=float)
    if arr.ndim != 1 or arr.size < 2:
        raise InputError(f"{name} must be a 1-d list of at least 2 values; got shape {arr.shape}")
    if not np.all(np.isfinite(arr)) or np.any(arr < lo):
        raise InputError(f"{name} must be finite and >= {lo:g}; got {arr.min():g}..{arr.max():g}")
    if np.any(np.diff(arr) <= 0):
        raise InputError(f"{name} must increase strictly")
    return arr


def coefficient_grid(curve, bands, temperatures=None, a_v=None, extrapolate=False):
    """A_b/A_V for blackbody sources over (band, temperature, A_V).

    Parameters
    ----------
    curve : DustCurve
    bands : sequence of Band
    temperatures : array_like or `~astropy.units.Quantity` ['temperature'], optional
        Increasing temperatures (plain numbers in K, > 0); default
        :data:`DEFAULT_TEMPERATURES` (3000–50000 K).
    a_v : array_like or `~astropy.units.Quantity` ['mag'], optional
        Increasing A_V values in mag (>= 0); default :data:`DEFAULT_A_V`
        (0–20).
    extrapolate : bool
        As for :func:`redcorr.extinction.band_extinction`.

    Returns
    -------
    CoefficientGrid

    Notes
    -----
    Each band is put once on its quadrature grid (:func:`redcorr.extinction.band_quadrature`),
    the grids are padded to a common length, and the whole
    (band, temperature, A_V) cube is one batched matrix product with
    wavelength as the contracted axis:
    N[b,t,a] = Σ_j W[b,t,j] E[b,j,a], W = q B_λ(T), E = 10^(−0.4 A_V (r − r_min)).
    The A_V = 0 column holds the limit of :func:`redcorr.extinction.band_ratio`.
    """
    if isinstance(bands, Band):
        bands = [bands]
    bands = list(bands)
    if not bands:
        raise InputError("bands is empty; give at least one band")
    temps = _axis("temperatures", DEFAULT_TEMPERATURES if temperatures is None else _as_kelvin(temperatures), 1e-300)
    avs = _axis("a_v", DEFAULT_A_V if a_v is None else as_a_v(a_v), 0.0)
    names = [b.name for b in bands]
    if len(set(names)) != len(names):
        raise InputError(f"band names must be distinct; got {names}")
    quads = [curve_on_band(curve, band, extrapolate) for band in bands]
    n = max(len(qd[0]) for qd in quads)
    nodes = np.empty((len(bands), n))
    weights = np.zeros((len(bands), n))
    r = np.empty((len(bands), n))
    for i, (nd, q, rr) in enumerate(quads):
        m = len(nd)
        nodes[i, :m], weights[i, :m], r[i, :m] = nd, q, rr
        nodes[i, m:], r[i, m:] = nd[0], rr[0]  # padding with zero weight

    log_s = planck_log_flam(nodes[:, None, :], temps[None, :, None])  # (B, T, n)
    log_shift = log_s.max(-1)
    planck = np.exp(log_s - log_shift[..., None])
    w = weights[:, None, :] * planck
    den = w.sum(-1)  # (B, T)
    ratio0 = np.einsum("btn,bn->bt", w, r) / den
    r_min = r.min(-1)
    # 10^(−0.4 A_V (r − r_min)) through exp (a third of the time of **), (B, n, A) as matmul takes it
    e = np.exp((-0.4 * np.log(10.0)) * (r - r_min[:, None])[:, :, None] * avs)
    # A_b = A_V r_min − 2.5 log10(num / den), then A_b / A_V, in place in num's (B, T, A) array: the
    # cube can be tens of MB (the per-star fit's grids), and each temporary of that size costs its
    # allocation and first touch
    ratio = np.matmul(w, e)  # num, (B, T, A)
    ratio /= den[..., None]
    with np.errstate(divide="ignore"):
        np.log10(ratio, out=ratio)
    ratio *= 2.5
    np.subtract(avs * r_min[:, None, None], ratio, out=ratio)
    k0 = 1 if avs[0] == 0 else 0  # (A_V increases from >= 0: only the first can be 0)
    ratio[..., k0:] /= avs[k0:]
    if k0:
        ratio[..., 0] = ratio0
    # Unreddened AB magnitude up to one constant shared by all bands.
    mag0 = flat_fnu_mag(nodes[:, None, :], planck, weights[:, None, :], log_scale=log_shift)
    meta = {
        "law": curve.name,
        "citation": curve.citation,
        "R_V": float(curve.r_v),
        "bands": {
            b.name: {"convention": b.convention, "pivot_um": b.pivot_um, "provenance": b.provenance} for b in bands
        },
    }
    return CoefficientGrid(names, temps, avs, ratio, mag0, meta=meta)


class CoefficientGrid:
    """A_b/A_V tabulated over blackbody temperature and A_V, for fast lookup.

    Parameters
    ----------
    bands : list of str
    temperatures : ndarray
        Increasing, K.
    a_v : ndarray
        Increasing, mag.
    ratio : ndarray, shape (n_band, n_T, n_AV)
        A_b/A_V.
    mag0 : ndarray, shape (n_band, n_T)
        Unreddened synthetic AB magnitudes of B_λ(T), up to one constant per
        temperature shared by all bands (so differences are AB colours).
    meta : dict
        Provenance (law, citation, R_V, bands).

    Notes
    -----
    :meth:`a_band` interpolates ``ratio`` bilinearly in (ln T, A_V) and
    multiplies by A_V. With the default axes this stays within 2e-3 mag of
    direct integration between the nodes (tested on the KW-CAM bands; the
    largest errors are for cool stars at large A_V). Points outside the grid
    take the value at the nearest edge, with an `OutOfRangeWarning`;
    :meth:`inside` flags them.
    """

    def __init__(self, bands, temperatures, a_v, ratio, mag0, *, meta=None):
        self.bands = list(bands)
        self.temperatures = np.asarray(temperatures, dtype=float)
        self.a_v = np.asarray(a_v, dtype=float)
        self.ratio = np.asarray(ratio, dtype=float)
        self.mag0 = np.asarray(mag0, dtype=float)
        expect = (len(self.bands), self.temperatures.size, self.a_v.size)
        if self.ratio.shape != expect or self.mag0.shape != expect[:2]:
            raise InputError(f"grid shapes do not match: ratio {self.ratio.shape}, expected {expect}")
        self.meta = dict(meta or {})
        self._log_t = np.log(self.temperatures)

    @functools.cached_property
    def _ratio_flat(self):
        """(T·A, B): one contiguous row of band ratios per grid node, for fast gathers (made on first lookup)."""
        return np.ascontiguousarray(np.moveaxis(self.ratio, 0, -1)).reshape(-1, len(self.bands))

    def inside(self, a_v, temperature):
        """bool ndarray: whether (a_v, temperature) lies inside the grid (NaN → False)."""
        a = as_a_v(a_v)
        t = _as_kelvin(temperature)
        return (a >= self.a_v[0]) & (a <= self.a_v[-1]) & (t >= self.temperatures[0]) & (t <= self.temperatures[-1])

    @staticmethod
    def _locate(axis, values):
        idx = np.clip(np.searchsorted(axis, values, side="right") - 1, 0, axis.size - 2)
        frac = (np.clip(values, axis[0], axis[-1]) - axis[idx]) / (axis[idx + 1] - axis[idx])
        return idx, frac

    def ratio_at(self, a_v, temperature):
        """A_b/A_V interpolated; shape ``broadcast(a_v, temperature).shape + (n_band,)``."""
        a = as_a_v(a_v)
        t = _as_kelvin(temperature)
        a, t = np.broadcast_arrays(a, t)
        if np.any(t <= 0):
            raise InputError(f"temperature={t[t <= 0].flat[0]:g} must be > 0 K")
        bad = ~self.inside(a, t) & np.isfinite(a) & np.isfinite(t)
        if np.any(bad):
            warnings.warn(
                f"{int(bad.sum())} point(s) lie outside the coefficient grid (A_V "
                f"{self.a_v[0]:g}-{self.a_v[-1]:g} mag, T {self.temperatures[0]:g}-"
                f"{self.temperatures[-1]:g} K); the grid's edge values are used there",
                OutOfRangeWarning,
                stacklevel=3,
            )
        nan = ~(np.isfinite(a) & np.isfinite(t))
        a0 = np.where(nan, self.a_v[0], a)
        lt = np.log(np.where(nan, self.temperatures[0], t))
        i, fi = self._locate(self._log_t, lt)
        j, fj = self._locate(self.a_v, a0)
        g = self._ratio_flat
        n_a = self.a_v.size
        k = i * n_a + j
        out = g.take(k, axis=0)
        out *= ((1 - fi) * (1 - fj))[..., None]
        for step, weight in ((n_a, fi * (1 - fj)), (1, (1 - fi) * fj), (n_a + 1, fi * fj)):
            out += g.take(k + step, axis=0) * weight[..., None]
        out[nan] = np.nan
        return out

    def a_band(self, a_v, temperature):
        """A_b in mag; shape ``broadcast(a_v, temperature).shape + (n_band,)``."""
        a = as_a_v(a_v)
        ratio = self.ratio_at(a, temperature)
        return ratio * np.broadcast_to(a, ratio.shape[:-1])[..., None]

    def colour0(self, band1, band2):
        """Unreddened AB colour band1 − band2 of the blackbody at each grid temperature."""
        i, j = self._index(band1), self._index(band2)
        return self.mag0[i] - self.mag0[j]

    def _index(self, band):
        try:
            return self.bands.index(band)
        except ValueError:
            raise InputError(f"band={band!r} is not in the grid; it has {self.bands}") from None

    def fit_polynomial(self, colour_bands=None, degree=(3, 3)):
        """Fit A_b/A_V as a polynomial in (intrinsic colour, A_V) for each band.

        Parameters
        ----------
        colour_bands : (str, str), optional
            Bands whose unreddened AB colour is the variable; default the
            grid's first two bands.
        degree : (int, int)
            Highest powers of colour and of A_V.

        Returns
        -------
        GridPolynomial
            With the coefficients and the residuals (mag) over the grid.

        Notes
        -----
        A_b/A_V ≈ Σᵢ Σⱼ c_bij C⁰ⁱ A_Vʲ, C⁰ = m⁰(b₁) − m⁰(b₂), fitted by least
        squares over every (T, A_V) node of the grid.
        """
        if colour_bands is None:
            if len(self.bands) < 2:
                raise InputError("the polynomial needs an intrinsic colour, hence at least two bands in the grid")
            colour_bands = (self.bands[0], self.bands[1])
        b1, b2 = colour_bands
        dc, da = (int(d) for d in degree)
        if dc < 0 or da < 0:
            raise InputError(f"degree={degree!r} must be non-negative integers")
        colour = self.colour0(b1, b2)
        cc, aa = np.meshgrid(colour, self.a_v, indexing="ij")
        vander = P.polyvander2d(cc.ravel(), aa.ravel(), [dc, da])
        target = self.ratio.reshape(len(self.bands), -1).T  # (T*A, B)
        coef, *_ = np.linalg.lstsq(vander, target, rcond=None)
        resid = (vander @ coef - target) * aa.ravel()[:, None]
        coeffs = coef.T.reshape(len(self.bands), dc + 1, da + 1)
        return GridPolynomial(
            self.bands,
            (b1, b2),
            coeffs,
            colour_range=(float(colour.min()), float(colour.max())),
            a_v_range=(float(self.a_v[0]), float(self.a_v[-1])),
            rms_mag=np.sqrt(np.mean(resid**2, axis=0)),
            max_mag=np.max(np.abs(resid), axis=0),
        )

    def to_table(self, polynomial=None):
        """The grid as an ECSV-ready `~astropy.table.Table`, one row per (band, T, A_V).

        Columns ``band``, ``temperature`` (K), ``A_V`` (mag), ``A_over_AV``,
        ``A_band`` (mag) and ``mag0`` (unreddened AB magnitude up to a
        constant per temperature). The meta holds the provenance, the E(B−V)
        definition and, if given or computable, the polynomial fit.
        """
        nb, nt, na = self.ratio.shape
        band = np.repeat(np.asarray(self.bands), nt * na)
        temp = np.tile(np.repeat(self.temperatures, na), nb)
        av = np.tile(self.a_v, nb * nt)
        table = Table(
            {
                "band": band,
                "temperature": temp * u.K,
                "A_V": av * u.mag,
                "A_over_AV": self.ratio.ravel(),
                "A_band": (self.ratio.ravel() * av) * u.mag,
                "mag0": np.repeat(self.mag0.ravel(), na) * u.mag,
            }
        )
        table["A_over_AV"].description = "A_band/A_V (the A_V -> 0 limit in the A_V = 0 rows)"
        table[
            "mag0"
        ].description = "unreddened synthetic AB magnitude of the blackbody, up to a constant per temperature"
        meta = dict(self.meta)
        meta["source_spectrum"] = "blackbody B_lambda(T)"
        meta["E(B-V)"] = "A_V / R_V with the curve's R_V (not a band-integrated colour excess)"
        meta["formula"] = (
            "A_b = -2.5 log10[ int F T w 10^(-0.4 A_V r) dl / int F T w dl ], w = l (photon) or 1 (energy)"
        )
        if polynomial is None and len(self.bands) >= 2:
            polynomial = self.fit_polynomial()
        if polynomial is not None:
            meta["polynomial"] = polynomial.to_meta()
        table.meta.update(meta)
        return table

    @classmethod
    def from_table(cls, table):
        """Rebuild a grid from :meth:`to_table`'s output (e.g. read back from ECSV)."""
        need = {"band", "temperature", "A_V", "A_over_AV", "mag0"}
        if not need <= set(table.colnames):
            raise InputError(f"a coefficient grid table needs columns {sorted(need)}; got {table.colnames}")
        bands = list(dict.fromkeys(str(b) for b in table["band"]))
        temps = np.unique(u.Quantity(table["temperature"], u.K).value)
        avs = np.unique(u.Quantity(table["A_V"], u.mag).value)
        shape = (len(bands), temps.size, avs.size)
        if len(table) != np.prod(shape):
            raise InputError(
                f"the grid table has {len(table)} rows; a full grid of shape {shape} needs {np.prod(shape)}"
            )
        order = np.lexsort(
            (
                u.Quantity(table["A_V"], u.mag).value,
                u.Quantity(table["temperature"], u.K).value,
                [bands.index(str(b)) for b in table["band"]],
            )
        )
        ratio = np.asarray(table["A_over_AV"], dtype=float)[order].reshape(shape)
        mag0 = u.Quantity(table["mag0"], u.mag).value[order].reshape(shape)[:, :, 0]
        meta = {k: v for k, v in table.meta.items() if k in ("law", "citation", "R_V", "bands")}
        return cls(bands, temps, avs, ratio, mag0, meta=meta)

    def __repr__(self):
        return (
            f"<CoefficientGrid {len(self.bands)} bands × {self.temperatures.size} T "
            f"({self.temperatures[0]:g}-{self.temperatures[-1]:g} K) × {self.a_v.size} A_V "
            f"({self.a_v[0]:g}-{self.a_v[-1]:g} mag), {self.meta.get('law', '?')}>"
        )


class GridPolynomial:
    """A_b/A_V ≈ Σᵢ Σⱼ c_bij C⁰ⁱ A_Vʲ per band, from :meth:`CoefficientGrid.fit_polynomial`.

    Attributes
    ----------
    bands : list of str
    colour_bands : (str, str)
        The intrinsic colour is C⁰ = m⁰(b₁) − m⁰(b₂), unreddened AB.
    coeffs : ndarray, shape (n_band, n_colour_powers, n_av_powers)
    colour_range, a_v_range : (float, float)
        Span of the fit.
    rms_mag, max_mag : ndarray, shape (n_band,)
        Residuals of A_b over the grid, mag.
    """

    def __init__(self, bands, colour_bands, coeffs, *, colour_range, a_v_range, rms_mag, max_mag):
        self.bands = list(bands)
        self.colour_bands = tuple(colour_bands)
        self.coeffs = np.asarray(coeffs, dtype=float)
        self.colour_range = colour_range
        self.a_v_range = a_v_range
        self.rms_mag = np.asarray(rms_mag, dtype=float)
        self.max_mag = np.asarray(max_mag, dtype=float)

    def ratio(self, colour, a_v):
        """A_b/A_V at intrinsic colour and A_V; shape broadcast + (n_band,)."""
        c = np.asarray(colour, dtype=float)[..., None]
        a = as_a_v(a_v)[..., None]
        out = np.zeros(np.broadcast_shapes(c.shape, a.shape)[:-1] + (len(self.bands),))
        for i in range(self.coeffs.shape[1]):
            for j in range(self.coeffs.shape[2]):
                out = out + self.coeffs[:, i, j] * c**i * a**j
        return out

    def a_band(self, colour, a_v):
        """A_b in mag at intrinsic colour and A_V; shape broadcast + (n_band,)."""
        a = as_a_v(a_v)
        return self.ratio(colour, a) * a[..., None]

    def to_meta(self):
        """A plain dict (for ECSV headers and JSON)."""
        return {
            "form": "A_over_AV = sum_ij c[band][i][j] * C0**i * A_V**j, C0 = mag0(b1) - mag0(b2) (unreddened AB)",
            "colour_bands": list(self.colour_bands),
            "colour_range": list(self.colour_range),
            "A_V_range": list(self.a_v_range),
            "coefficients": {b: self.coeffs[k].tolist() for k, b in enumerate(self.bands)},
            "residual_rms_mag": {b: float(v) for b, v in zip(self.bands, self.rms_mag, strict=True)},
            "residual_max_mag": {b: float(v) for b, v in zip(self.bands, self.max_mag, strict=True)},
        }
