"""Optical constants of grain materials, interpolated in log λ.

An :class:`OpticalConstants` is one table of the complex refractive index
m = n + ik (k ≥ 0 absorbs) against wavelength. A :class:`Material` combines
tables: an anisotropic material such as graphite is a weighted set of
orientations whose cross sections are averaged (graphite: 1/3 for E ∥ c and
2/3 for E ⊥ c), and a material may hold several such sets for different grain
radii (Draine's graphite tables for a = 0.01 and 0.1 µm), each used for the
radii nearer to it in log a.

The tables themselves are read by :mod:`redcorr.io.grains`; this module only
holds and evaluates them.
"""

import hashlib
import math

import numpy as np

from redcorr._validate import check_positive
from redcorr.exceptions import InputError

__all__ = ["OpticalConstants", "Material"]


class OpticalConstants:
    """A table of the refractive index m = n + ik against wavelength.

    Parameters
    ----------
    wave : array_like
        Wavelengths in µm, at least 2, positive, distinct (any order).
    n, k : array_like
        Real and imaginary parts; n > 0, k ≥ 0 (k > 0 absorbs).
    name, citation : str
        Shown in listings and outputs.

    Notes
    -----
    Between rows, n is interpolated linearly in ln λ and k linearly in
    ln k against ln λ (k = 0 rows are interpolated linearly in k), so power
    laws in λ are followed exactly. Wavelengths outside the table raise
    `InputError`; the table is never extrapolated.
    """

    def __init__(self, wave, n, k, *, name="table", citation="user table"):
        wave = np.asarray(wave, dtype=float)
        n = np.asarray(n, dtype=float)
        k = np.asarray(k, dtype=float)
        if wave.ndim != 1 or n.shape != wave.shape or k.shape != wave.shape or wave.size < 2:
            raise InputError(
                f"{name}: wavelength, n and k must be 1-d of equal length >= 2; "
                f"got shapes {wave.shape}, {n.shape}, {k.shape}"
            )
        for label, arr in (("wavelength", wave), ("n", n), ("k", k)):
            if not np.all(np.isfinite(arr)):
                raise InputError(f"{name}: column {label} has a non-finite value")
        if np.any(wave <= 0):
            raise InputError(f"{name}: wavelength={float(wave[wave <= 0][0])!r} µm must be > 0")
        if np.any(n <= 0):
            raise InputError(f"{name}: n={float(n[n <= 0][0])!r} must be > 0")
        if np.any(k < 0):
            raise InputError(f"{name}: k={float(k[k < 0][0])!r} must be >= 0 (m = n + ik, k >= 0 absorbs)")
        order = np.argsort(wave)
        wave, n, k = wave[order], n[order], k[order]
        if np.any(np.diff(wave) <= 0):
            raise InputError(f"{name}: wavelength {wave[1:][np.diff(wave) <= 0][0]:g} µm is repeated")
        self.wave, self.n, self.k = wave, n, k
        self.name, self.citation = name, citation
        self._lnw = np.log(wave)
        self._lnk = np.log(np.where(k > 0, k, 1.0))
        self._kpos = bool(np.all(k > 0))
        digest = hashlib.sha256()
        for arr in (wave, n, k):
            digest.update(np.ascontiguousarray(arr).tobytes())
        self.digest = digest.hexdigest()[:16]

    @property
    def wave_range(self):
        """tuple of float: (shortest, longest) wavelength in µm."""
        return float(self.wave[0]), float(self.wave[-1])

    def __call__(self, wave_um):
        """Complex m = n + ik at wavelengths ``wave_um`` (µm, any shape)."""
        w = np.asarray(wave_um, dtype=float)
        lo, hi = self.wave_range
        bad = ~((w >= lo) & (w <= hi))
        if np.any(bad):
            raise InputError(
                f"wave={w[bad].flat[0]:g} µm lies outside the optical constants of {self.name}, "
                f"[{lo:.6g}, {hi:.6g}] µm"
            )
        lnw = np.log(w)
        n = np.interp(lnw, self._lnw, self.n)
        if self._kpos:
            k = np.exp(np.interp(lnw, self._lnw, self._lnk))
        else:
            k = np.interp(lnw, self._lnw, self.k)
        return n + 1j * k

    def __repr__(self):
        lo, hi = self.wave_range
        return f"<OpticalConstants {self.name!r} {lo:g}-{hi:g} µm, {self.wave.size} rows>"


class Material:
    """A grain material: orientation-weighted optical constants and a density.

    Parameters
    ----------
    name : str
        Registry name, e.g. ``"graphite-d03"``.
    parts : list of (float, OpticalConstants)
        Orientation weights (summing to 1) and tables; one entry for an
        isotropic material.
    density : float
        Bulk density in g cm⁻³ (for mass opacities).
    citation : str
        Source of the optical constants.
    radius_sets : list of (float, list of (float, OpticalConstants)), optional
        Alternative ``parts`` computed for given grain radii (µm); each grain
        uses the set whose radius is nearest in log a. Replaces ``parts``.
    carbon : bool
        Whether the material is carbonaceous (may be blended with PAHs).

    Notes
    -----
    A size-averaged cross section of an anisotropic material is
    C = Σ_j w_j C(m_j), the usual approximation for randomly oriented
    graphite with w = 1/3 (E ∥ c) and 2/3 (E ⊥ c) (Draine & Lee 1984, §2c).

    References
    ----------
    .. [1] Draine, B. T., & Lee, H. M. 1984, ApJ, 285, 89. doi:10.1086/162480
    """

    def __init__(self, name, parts=None, *, density, citation, radius_sets=None, carbon=False):
        self.name = name
        self.citation = citation
        self.density = check_positive("density", density)
        self.carbon = bool(carbon)
        if radius_sets is None:
            radius_sets = [(math.nan, parts)]
        self.radius_sets = []
        for radius, pset in radius_sets:
            weights = np.array([w for w, _ in pset], dtype=float)
            if not pset or np.any(weights <= 0) or not np.isclose(weights.sum(), 1.0):
                raise InputError(f"material {name!r}: orientation weights {weights.tolist()} must be > 0 and sum to 1")
            self.radius_sets.append((float(radius), list(pset)))
        self.radius_sets.sort(key=lambda item: item[0])

    @property
    def tables(self):
        """list of OpticalConstants: every table the material uses."""
        return [t for _, pset in self.radius_sets for _, t in pset]

    @property
    def wave_range(self):
        """tuple of float: wavelengths (µm) covered by every table of the material."""
        return (max(t.wave_range[0] for t in self.tables), min(t.wave_range[1] for t in self.tables))

    def pieces(self, a_um):
        """Split radii among the radius sets.

        Parameters
        ----------
        a_um : ndarray
            Grain radii, µm (1-d).

        Returns
        -------
        list of (ndarray of bool, list of (float, OpticalConstants))
            For each set used: which radii use it, and its weighted tables.
        """
        a_um = np.asarray(a_um, dtype=float)
        if len(self.radius_sets) == 1:
            return [(np.ones(a_um.shape, bool), self.radius_sets[0][1])]
        radii = np.log([r for r, _ in self.radius_sets])
        nearest = np.argmin(np.abs(np.log(a_um)[:, None] - radii[None, :]), axis=1)
        return [(nearest == i, pset) for i, (_, pset) in enumerate(self.radius_sets) if np.any(nearest == i)]

    def key(self):
        """Description for the cross-section cache: name, density and table digests."""
        return {
            "name": self.name,
            "density": self.density,
            "sets": [[r if math.isfinite(r) else None, [[w, t.digest] for w, t in p]] for r, p in self.radius_sets],
        }

    def __repr__(self):
        return f"<Material {self.name!r} ({len(self.tables)} table(s), {self.density:g} g/cm3)>"
