"""Grain models: populations of spheres turned into extinction, albedo and g.

A :class:`GrainModel` is a list of :class:`Component` s, each a material, a
size distribution (per H nucleon) and an abundance factor. Mie theory
(:func:`redcorr.mie.sphere`) gives each sphere's efficiencies; integrating over
sizes gives cross sections per H nucleon, from which follow A(λ)/A(V), R_V,
the albedo, the asymmetry g, mass opacities and an extinction curve that
plugs into :class:`redcorr.curves.DustCurve`.

Conventions
-----------
* Wavelengths: plain numbers in µm, or any Quantity of length, frequency,
  energy or wavenumber. Radii in µm.
* Cross sections are in cm² per H nucleon; mass opacities in cm² per gram of
  dust; extinction A(λ) ∝ C_ext(λ) (A = 1.086 N_H C_ext).
* R_V is monochromatic: R_V = A(0.55 µm) / [A(0.44 µm) − A(0.55 µm)].
"""

import math
import warnings
from dataclasses import dataclass

import numpy as np

from redcorr._validate import check_positive, check_range, inverse_micron, shown
from redcorr.curves.tabulated import B_WAVE_UM, V_WAVE_UM, TabulatedCurve
from redcorr.exceptions import InputError, OutOfRangeWarning
from redcorr.grains.materials import Material
from redcorr.grains.pah import n_carbon, pah_cross_section, pah_fraction
from redcorr.grains.sizes import SizeDistribution

__all__ = [
    "PAHBlend",
    "Component",
    "GrainModel",
    "GrainOptics",
    "GrainCurve",
    "DEFAULT_WAVE_UM",
    "CACHE_VERSION",
    "r_v_from_cross_sections",
]

DEFAULT_WAVE_UM = np.geomspace(0.1, 100.0, 200)
"""Wavelengths (µm) on which :meth:`GrainModel.curve` tabulates by default."""

CACHE_VERSION = 2
"""Bumped whenever the computation changes, so old cache entries are not reused."""


def r_v_from_cross_sections(c_b, c_v, name="grain model"):
    """Monochromatic R_V = C_ext(0.55)/[C_ext(0.44) − C_ext(0.55)].

    Follows from R_V = A_V/E(B−V) with A ∝ C_ext, B = 0.44 µm and V = 0.55 µm
    (definition; common practice, no source). When the extinction does not
    rise from V to B (grey or blue-flat dust), the value is infinite or
    negative and an `OutOfRangeWarning` says that R_V means nothing there.
    """
    c_b, c_v = float(c_b), float(c_v)
    if not c_b > c_v:
        warnings.warn(
            f"{name}: extinction at 0.44 µm ({c_b:.4g}) is not above that at 0.55 µm ({c_v:.4g}) "
            "per H, so R_V = A(V)/E(B-V) is infinite or negative and should not be used",
            OutOfRangeWarning,
            stacklevel=3,
        )
        return math.inf if c_b == c_v else c_v / (c_b - c_v)
    return c_v / (c_b - c_v)


@dataclass(frozen=True)
class PAHBlend:
    """Blend the smallest carbonaceous grains with PAHs (Li & Draine 2001).

    Attributes
    ----------
    ionized_fraction : float
        Fraction of ionized PAHs, in [0, 1] (default 0.5).
    q_gra : float
        Graphite fraction left at the smallest sizes (default 0.01).
    a_xi_um : float
        Radius below which grains are mostly PAH, µm (default 0.005 = 50 Å).

    Notes
    -----
    See :mod:`redcorr.grains.pah`: C_abs = ξ N_C σ_PAH + (1 − ξ) C_abs^gra,
    C_sca = (1 − ξ) C_sca^gra, ξ(a) = (1 − q_gra) min[1, (a_ξ/a)³].
    """

    ionized_fraction: float = 0.5
    q_gra: float = 0.01
    a_xi_um: float = 0.005

    def __post_init__(self):
        check_range("ionized_fraction", self.ionized_fraction, 0.0, 1.0)
        check_range("q_gra", self.q_gra, 0.0, 1.0)
        check_positive("a_xi", self.a_xi_um)


class Component:
    """One grain population: a material with a size distribution.

    Parameters
    ----------
    material : Material
    sizes : SizeDistribution
        (1/n_H) dn/da in µm⁻¹.
    abundance : float, optional
        Multiplies the size distribution (default 1).
    pah : PAHBlend or None, optional
        For a carbonaceous material, treat small grains as PAHs.
    n_sizes : int, optional
        Radii in the size integral (log-spaced over the distribution's
        range; default 150).
    """

    def __init__(self, material, sizes, abundance=1.0, *, pah=None, n_sizes=150):
        if not isinstance(material, Material):
            raise InputError(f"material={material!r} is not a Material")
        if not isinstance(sizes, SizeDistribution):
            raise InputError(f"sizes={sizes!r} is not a SizeDistribution")
        if pah is not None and not material.carbon:
            raise InputError(f"pah is set for material {material.name!r}; only carbonaceous materials take PAHs")
        self.material = material
        self.sizes = sizes
        self.abundance = check_positive("abundance", abundance)
        self.pah = pah
        self.n_sizes = int(n_sizes)
        if self.n_sizes < 8:
            raise InputError(f"n_sizes={n_sizes!r} is too few; at least 8 are needed")

    def radii(self):
        """Radii (µm) of the size integral and their weights w with ∫f dn = Σ w f (per H)."""
        a = self.sizes.grid(self.n_sizes)
        lna = np.log(a)
        dl = np.diff(lna)
        trap = np.zeros_like(a)
        trap[:-1] += dl / 2
        trap[1:] += dl / 2
        return a, trap * a * self.sizes(a) * self.abundance

    def mass_per_h(self):
        """Dust mass per H nucleon, g: ρ (4π/3) Σ w a³."""
        a, w = self.radii()
        return float(self.material.density * 4 * math.pi / 3 * np.sum(w * (a * 1e-4) ** 3))

    def key(self):
        """Description for the cross-section cache."""
        return {
            "material": self.material.key(),
            "sizes": self.sizes.key(),
            "abundance": self.abundance,
            "n_sizes": self.n_sizes,
            "pah": None if self.pah is None else [self.pah.ionized_fraction, self.pah.q_gra, self.pah.a_xi_um],
        }

    def cross_sections_by_size(self, wave_um):
        """Cross sections of single grains, radius by radius, and the weights of the size integral.

        Parameters
        ----------
        wave_um : ndarray
            Wavelengths, µm (1-d), inside the material's optical constants.

        Returns
        -------
        a : ndarray, shape (n_sizes,)
            Radii, µm (as :meth:`radii`).
        w : ndarray, shape (n_sizes,)
            Grains per H nucleon each radius stands for (as :meth:`radii`).
        parts : dict of ndarray, shape (wave_um.size, n_sizes)
            ``"c_abs"``, ``"c_sca"`` and ``"g_sca"`` (g·C_sca) of one grain of
            each radius, cm², orientation-averaged and with the PAH blend applied.

        Notes
        -----
        The one home of the size loop: :meth:`cross_sections` sums these
        columns with the weights ``w``; :mod:`redcorr.grains.emission` heats
        each radius on its own.
        """
        from redcorr.mie import sphere  # noqa: PLC0415 - the kernel module is heavy; load on use

        lo, hi = self.material.wave_range
        if np.any((wave_um < lo) | (wave_um > hi)):
            bad = wave_um[(wave_um < lo) | (wave_um > hi)][0]
            raise InputError(
                f"wave={bad:g} µm lies outside the optical constants of {self.material.name}, "
                f"[{lo:.6g}, {hi:.6g}] µm"
            )
        a, w = self.radii()
        lam = wave_um[:, None]
        area = math.pi * (a * 1e-4) ** 2  # cm²
        cabs = np.zeros((wave_um.size, a.size))
        csca = np.zeros_like(cabs)
        gsca = np.zeros_like(cabs)
        for mask, parts in self.material.pieces(a):
            x = 2 * math.pi * a[mask][None, :] / lam
            for weight, table in parts:
                m = table(wave_um)[:, None]
                res = sphere(m, x)
                cabs[:, mask] += weight * area[mask] * res.q_abs
                csca[:, mask] += weight * area[mask] * res.q_sca
                gsca[:, mask] += weight * area[mask] * res.q_sca * res.g
        if self.pah is not None:
            xi = pah_fraction(a, self.pah.q_gra, self.pah.a_xi_um)[None, :]
            sigma = pah_cross_section(lam, a[None, :], self.pah.ionized_fraction)
            pah_abs = n_carbon(a)[None, :] * sigma
            pah_abs = np.where(np.isnan(pah_abs), cabs, pah_abs)  # graphite above 17.25 µm⁻¹
            cabs = xi * pah_abs + (1 - xi) * cabs
            csca = (1 - xi) * csca
            gsca = (1 - xi) * gsca
        return a, w, {"c_abs": cabs, "c_sca": csca, "g_sca": gsca}

    def cross_sections(self, wave_um):
        """C_ext, C_sca, C_abs and g·C_sca per H nucleon (cm²) at ``wave_um`` (1-d, µm)."""
        _, w, parts = self.cross_sections_by_size(wave_um)
        # Σ_a per wavelength row: a row-wise sum gives each wavelength the same bits whatever
        # else is computed in the call (a matrix product may not: BLAS blocks the rows)
        cabs, csca, gsca = (np.sum(parts[k] * w, axis=1) for k in ("c_abs", "c_sca", "g_sca"))
        return {"c_ext": cabs + csca, "c_sca": csca, "c_abs": cabs, "g_sca": gsca}

    def scattering_populations(self, wave_um):
        """(m, radii, weights) of every population that scatters at one wavelength.

        The weights are grains per H times the orientation weight, times
        1 − ξ(a) when PAHs are blended in (the PAH part absorbs only).
        """
        a, w = self.radii()
        if self.pah is not None:
            w = w * (1 - pah_fraction(a, self.pah.q_gra, self.pah.a_xi_um))
        out = []
        for mask, parts in self.material.pieces(a):
            for weight, table in parts:
                out.append((complex(table(wave_um)), a[mask], weight * w[mask]))
        return out

    def __repr__(self):
        return f"<Component {self.material.name} × {self.sizes.label} × {self.abundance:g}>"


@dataclass(frozen=True)
class GrainOptics:
    """Optical properties of a grain model at a set of wavelengths.

    Attributes
    ----------
    wave_um : ndarray
        Wavelengths, µm.
    c_ext, c_sca, c_abs : ndarray
        Cross sections per H nucleon, cm².
    g : ndarray
        Asymmetry parameter ⟨cos θ⟩ of the scattered light.
    mass_per_h : float
        Dust mass per H nucleon, g.
    """

    wave_um: np.ndarray
    c_ext: np.ndarray
    c_sca: np.ndarray
    c_abs: np.ndarray
    g: np.ndarray
    mass_per_h: float

    @property
    def albedo(self):
        """ndarray: C_sca / C_ext."""
        return self.c_sca / self.c_ext

    @property
    def kappa_ext(self):
        """ndarray: extinction mass opacity, cm² per gram of dust."""
        return self.c_ext / self.mass_per_h

    @property
    def kappa_abs(self):
        """ndarray: absorption mass opacity, cm² per gram of dust."""
        return self.c_abs / self.mass_per_h


class GrainModel:
    """A dust model: components whose cross sections add.

    Parameters
    ----------
    components : list of Component
    name : str
        Short name, e.g. ``"wd01-rv3.1"``.
    citation : str
        Where the model comes from.
    description : str, optional

    Notes
    -----
    Per H nucleon, C(λ) = Σ_c A_c ∫ (1/n_H)(dn_c/da) πa² Q(m_c(λ), 2πa/λ) da,
    summed over components c (abundance A_c) and, for anisotropic materials,
    over orientations with their weights. The size integral is a trapezoid in
    ln a on ``n_sizes`` log-spaced radii (150 by default: 0.05% from a
    600-radius integral for the WD01 models). g = Σ g C_sca / Σ C_sca;
    A(λ)/A(V) = C_ext(λ)/C_ext(0.55 µm); the mass opacity is C divided by the
    dust mass per H, Σ_c A_c ρ_c ∫ (4π/3) a³ (1/n_H)(dn_c/da) da.

    References
    ----------
    .. [1] Bohren, C. F., & Huffman, D. R. 1983, Absorption and Scattering of
       Light by Small Particles (Wiley), ch. 4.
    .. [2] Weingartner, J. C., & Draine, B. T. 2001, ApJ, 548, 296.
       doi:10.1086/318651

    Examples
    --------
    >>> from redcorr.grains import Material, OpticalConstants, PowerLaw
    >>> glass = OpticalConstants([0.1, 10.0], [1.5, 1.5], [0.01, 0.01], name="glass")
    >>> sizes = PowerLaw(1e-25, 3.5, 0.005, 0.25)
    >>> model = GrainModel([Component(Material("glass", [(1.0, glass)], density=2.5, citation="example"), sizes)])
    >>> round(float(model.a_over_av(0.55)), 6)
    1.0

    Named models and models described in TOML come from
    :func:`redcorr.io.grains.get_grain_model`.
    """

    def __init__(self, components, *, name="grain model", citation="", description=""):
        components = list(components)
        if not components:
            raise InputError("a grain model needs at least one component")
        for c in components:
            if not isinstance(c, Component):
                raise InputError(f"component {c!r} is not a Component")
        self.components = components
        self.name = name
        self.citation = citation
        self.description = description

    @property
    def wave_range(self):
        """tuple of float: wavelengths (µm) where every material has optical constants."""
        ranges = [c.material.wave_range for c in self.components]
        return max(r[0] for r in ranges), min(r[1] for r in ranges)

    def key(self, wave_um):
        """Everything the cross sections depend on, for the cache."""
        return {
            "version": CACHE_VERSION,
            "wave": np.asarray(wave_um, dtype=float).tolist(),
            "components": [c.key() for c in self.components],
        }

    def optics(self, wave, *, cache=None):
        """Cross sections per H, albedo and g at ``wave``.

        Parameters
        ----------
        wave : float, array_like or Quantity
            Wavelengths (plain numbers in µm); 1-d or scalar.
        cache : object or None, optional
            Where computed cross sections are kept: any object with
            ``get(key)`` (the stored arrays or None) and ``put(key, arrays)``,
            such as the disk cache :func:`redcorr.io.grains.default_cache`;
            None (the default) computes afresh and keeps nothing.

        Returns
        -------
        GrainOptics

        Notes
        -----
        The values at one wavelength do not depend on which other
        wavelengths are asked for in the same call (bitwise): Mie results
        are per sphere (:mod:`redcorr.mie`) and the size integral is summed
        row by row. So R_V, which subtracts two nearly equal numbers for grey
        dust, is the same from :meth:`r_v`, :meth:`curve` and any grid that
        holds 0.44 and 0.55 µm.
        """
        wave_um = np.atleast_1d(1.0 / inverse_micron(wave))
        if wave_um.ndim != 1 or not np.all(np.isfinite(wave_um)):
            raise InputError("wave must be a scalar or a 1-d list of finite wavelengths")
        store = _check_cache(cache)
        key = self.key(wave_um)
        hit = store.get(key) if store is not None else None
        if hit is None:
            total = {"c_ext": 0.0, "c_sca": 0.0, "c_abs": 0.0, "g_sca": 0.0}
            for comp in self.components:
                part = comp.cross_sections(wave_um)
                total = {k: total[k] + part[k] for k in total}
            total = {k: np.asarray(v, dtype=float) for k, v in total.items()}
            if store is not None:
                store.put(key, total)
        else:
            total = hit
        with np.errstate(invalid="ignore", divide="ignore"):
            g = np.where(total["c_sca"] > 0, total["g_sca"] / total["c_sca"], 0.0)
        return GrainOptics(
            wave_um=wave_um,
            c_ext=total["c_ext"],
            c_sca=total["c_sca"],
            c_abs=total["c_abs"],
            g=g,
            mass_per_h=sum(c.mass_per_h() for c in self.components),
        )

    def phase_function(self, wave, theta):
        """Exact Mie phase function of the whole model at one wavelength.

        Parameters
        ----------
        wave : float or Quantity
            One wavelength (plain numbers in µm).
        theta : array_like or Quantity ['angle']
            Scattering angles in [0, π]; plain numbers are radians.

        Returns
        -------
        ndarray
            p(θ) in sr⁻¹, normalized so that ∫ p dΩ = 1.

        Notes
        -----
        p = Σ_j C_sca,j p_j / Σ_j C_sca,j over every component, grain-radius
        set and orientation j, each p_j from
        :func:`redcorr.phase.population_phase_function` (Bohren & Huffman
        1983, §3.4 and §4.4).
        """
        from redcorr.phase import population_phase_function  # noqa: PLC0415

        wave_um = 1.0 / inverse_micron(wave)
        if np.ndim(wave_um) != 0 or not np.isfinite(wave_um):
            raise InputError(f"wave={shown(wave)} must be one finite wavelength")
        num, den = 0.0, 0.0
        for comp in self.components:
            for m, a, w in comp.scattering_populations(float(wave_um)):
                pop = population_phase_function(m, a, w, float(wave_um), theta)
                c_sca = pop.c_sca * np.sum(w)
                num = num + c_sca * pop.p
                den += c_sca
        return num / den

    def r_v(self, *, cache=None):
        """Monochromatic R_V = A(0.55 µm)/[A(0.44 µm) − A(0.55 µm)]."""
        c_b, c_v = self.optics([B_WAVE_UM, V_WAVE_UM], cache=cache).c_ext
        return r_v_from_cross_sections(c_b, c_v, self.name)

    def a_over_av(self, wave, *, cache=None):
        """A(λ)/A(V) = C_ext(λ)/C_ext(0.55 µm) at ``wave``; scalar in, scalar out."""
        wave_um = 1.0 / inverse_micron(wave)
        flat = np.append(np.ravel(wave_um), V_WAVE_UM)
        c = self.optics(flat, cache=cache).c_ext
        return (c[:-1] / c[-1]).reshape(np.shape(wave_um))[()]

    def curve(self, wave=None, *, cache=None):
        """The model as an extinction curve (`GrainCurve`, a `TabulatedCurve`).

        Parameters
        ----------
        wave : array_like or Quantity, optional
            Tabulation wavelengths; default `DEFAULT_WAVE_UM` (200 values,
            0.1-100 µm, log-spaced). 0.44 and 0.55 µm are always added so that
            A(V) and R_V are exact, not interpolated.
        cache : object or None, optional
            As for :meth:`optics`.
        """
        grid = DEFAULT_WAVE_UM if wave is None else np.ravel(1.0 / inverse_micron(wave))
        grid = np.union1d(grid, [B_WAVE_UM, V_WAVE_UM])
        return GrainCurve(self, self.optics(grid, cache=cache))

    def __repr__(self):
        return f"<GrainModel {self.name!r}: {len(self.components)} component(s)>"


def _check_cache(cache):
    if cache is not None and not (hasattr(cache, "get") and hasattr(cache, "put")):
        raise InputError(f"cache={cache!r} must be None or an object with get() and put()")
    return cache


class GrainCurve(TabulatedCurve):
    """A grain model's A(λ)/A(V), tabulated and interpolated like any table.

    Parameters
    ----------
    model : GrainModel
    optics : GrainOptics
        Must include 0.55 µm (and 0.44 µm for R_V).

    Attributes
    ----------
    model : GrainModel
    optics : GrainOptics
        The tabulated cross sections, albedo and g.

    Notes
    -----
    A(λ)/A(V) = C_ext(λ)/C_ext(0.55 µm); R_V is monochromatic,
    C_ext(0.55)/[C_ext(0.44) − C_ext(0.55)]. Interpolation as in
    `TabulatedCurve` (PCHIP in 1/λ); no extrapolation.
    """

    def __init__(self, model, optics):
        w = optics.wave_um
        i_b = np.flatnonzero(np.isclose(w, B_WAVE_UM, rtol=0, atol=1e-12))
        i_v = np.flatnonzero(np.isclose(w, V_WAVE_UM, rtol=0, atol=1e-12))
        if i_b.size == 0 or i_v.size == 0:
            raise InputError("a grain curve needs cross sections at 0.44 and 0.55 µm")
        c_b, c_v = optics.c_ext[i_b[0]], optics.c_ext[i_v[0]]
        r_v = r_v_from_cross_sections(c_b, c_v, model.name)
        super().__init__(
            w,
            optics.c_ext / c_v,
            r_v=r_v if 0 < r_v < math.inf else None,
            name=model.name,
            citation=model.citation or "grain model",
        )
        self._r_v = self.default_r_v = r_v  # exact, even where meaningless (warned above)
        self.model = model
        self.optics = optics
