"""Grains heated by starlight: equilibrium temperatures, far-infrared emission, τ per A_V.

A grain of radius a absorbs ∫ C_abs(λ, a) 4πJ_λ dλ from a radiation field
(:mod:`redcorr.grains.fields`) and, in equilibrium, emits as much at its
temperature T: ∫ C_abs 4πJ_λ dλ = ∫ C_abs 4πB_λ(T) dλ. The optically thin
emission of a grain model per H nucleon is then Σ over components and radii of
(grains per H) × C_abs(λ, a) B_λ(T(a)).

Grains so small that a single photon carries more energy than they hold at
their equilibrium temperature (PAHs and the smallest carbonaceous and
silicate grains) do not sit at that temperature: their temperature spikes
after each absorption and they emit at much shorter wavelengths. They are
flagged (``stochastic``), never used: the emission here omits them, and the
result says what share of the absorbed power they take.

:func:`optical_depth_ratios` turns a far-infrared optical depth into A_V or
E(B−V) with the model's own ratio of absorption to visual extinction, and
:func:`fit_modified_blackbody` fits I_λ ∝ λ^−β B_λ(T) to an emission spectrum.

Conventions
-----------
* Wavelengths in µm; radii in µm; temperatures in K.
* 4πJ_λ and 4πB_λ in erg s⁻¹ cm⁻² µm⁻¹; cross sections in cm²; the power a
  grain absorbs in erg s⁻¹.
* Emission per H nucleon: λI_λ/N_H = λ j_λ/n_H of an optically thin cloud, in
  erg s⁻¹ sr⁻¹ H⁻¹.
* Heating is integrated over 0.0912 µm–1 cm (:data:`HEATING_RANGE_UM`), the
  Lyman limit to the millimetre tail, on :data:`N_HEATING` log-spaced
  wavelengths, within the model's optical constants.
* A_V = 2.5 log₁₀(e) N_H C_ext(0.55 µm) and E(B−V) from 0.44 and 0.55 µm,
  monochromatic, as :meth:`redcorr.grains.GrainModel.r_v`.
"""

import math
import warnings
from dataclasses import dataclass

import numpy as np
from astropy import constants as const
from astropy import units as u

from redcorr._validate import check_finite, check_positive, inverse_micron, shown
from redcorr.curves.tabulated import B_WAVE_UM, V_WAVE_UM
from redcorr.exceptions import FitWarning, InputError, OutOfRangeWarning
from redcorr.grains.fields import LYMAN_LIMIT_UM, four_pi_planck
from redcorr.grains.model import CACHE_VERSION, GrainModel, _check_cache, r_v_from_cross_sections
from redcorr.grains.sizes import M_C_G

__all__ = [
    "HEATING_RANGE_UM",
    "N_HEATING",
    "MBB_WAVE_RANGE_UM",
    "T_BRACKET_K",
    "GrainTemperatures",
    "DustEmission",
    "ModifiedBlackbodyFit",
    "equilibrium_temperature",
    "thermal_energy",
    "grain_temperatures",
    "emission_spectrum",
    "optical_depth_ratios",
    "fit_modified_blackbody",
]

HEATING_RANGE_UM = (LYMAN_LIMIT_UM, 1.0e4)
"""µm: wavelengths over which grains absorb and emit (the Lyman limit to 1 cm)."""

N_HEATING = 241
"""Log-spaced wavelengths of the heating and cooling integrals (48 per decade over 0.0912 µm–1 cm)."""

MBB_WAVE_RANGE_UM = (70.0, 1000.0)
"""µm: default wavelengths of :func:`fit_modified_blackbody`; shortward of ~60 µm much of the diffuse
emission comes from stochastically heated grains (Li & Draine 2001, §6; from memory)."""

T_BRACKET_K = (0.1, 1.0e4)
"""K: the equilibrium temperature is searched in this range; outside it the result is NaN (warned)."""

_K_B = float(const.k_B.to_value(u.erg / u.K))
_HC_ERG_UM = float((const.h * const.c).to_value(u.erg * u.um))
_HC_OVER_K_UM_K = _HC_ERG_UM / _K_B  # hc/k, µm K
_AMU_G = float(const.u.to_value(u.g))
_MAG_PER_TAU = 2.5 * math.log10(math.e)

# Heat capacities of Draine & Li (2001, ApJ 551, 807), eqs. (9)-(11), FROM MEMORY: C = (N − 2) k Σ c_j f_n(T/Θ_j)
# with f_n the n-dimensional Debye function. Graphite: f_2(T/863 K) + 2 f_2(T/2504 K); silicate:
# 2 f_2(T/500 K) + f_3(T/1500 K). Entries: (weight c_j, dimension n, Θ_j in K).
DEBYE_CARBON = ((1.0, 2, 863.0), (2.0, 2, 2504.0))
DEBYE_SILICATE = ((2.0, 2, 500.0), (1.0, 3, 1500.0))
ATOM_MASS_CARBON_G = M_C_G
ATOM_MASS_SILICATE_G = (24.305 + 55.845 + 28.086 + 4 * 15.999) / 7 * _AMU_G
"""g: mean mass of an atom of MgFeSiO₄ (standard atomic weights; common practice, no source)."""

_GL_Z, _GL_W = np.polynomial.legendre.leggauss(64)
_Z_MAX = 60.0  # e⁻⁶⁰: the Debye integrand beyond is negligible


@dataclass(frozen=True, eq=False)
class GrainTemperatures:
    """Equilibrium temperatures of one component's grains, radius by radius.

    Attributes
    ----------
    component : str
        The component, as it prints.
    radius_um : ndarray
        Radii of the size integral, µm.
    weight : ndarray
        Grains per H nucleon each radius stands for.
    temperature_k : ndarray
        Equilibrium temperature, K (NaN if outside :data:`T_BRACKET_K`).
    stochastic : ndarray of bool
        Grains that a single photon heats far above ``temperature_k``
        (``thermal_energy_erg < photon_energy_erg``): not in equilibrium.
    absorbed_erg_s : ndarray
        Power absorbed by one grain, erg s⁻¹.
    photon_energy_erg : ndarray
        Mean energy of the photons a grain absorbs, erg.
    thermal_energy_erg : ndarray
        Heat content of a grain at ``temperature_k``, erg (:func:`thermal_energy`).
    """

    component: str
    radius_um: np.ndarray
    weight: np.ndarray
    temperature_k: np.ndarray
    stochastic: np.ndarray
    absorbed_erg_s: np.ndarray
    photon_energy_erg: np.ndarray
    thermal_energy_erg: np.ndarray

    @property
    def absorbed_per_h(self):
        """float: power absorbed by all these grains, erg s⁻¹ per H nucleon."""
        return float(np.sum(self.weight * self.absorbed_erg_s))

    @property
    def absorbed_stochastic_per_h(self):
        """float: power absorbed by the grains flagged stochastic, erg s⁻¹ per H nucleon."""
        return float(np.sum((self.weight * self.absorbed_erg_s)[self.stochastic]))


@dataclass(frozen=True, eq=False)
class DustEmission:
    """Emission of a grain model's equilibrium grains, per H nucleon.

    Attributes
    ----------
    wave_um : ndarray
        Wavelengths, µm.
    lam_i_lam : ndarray
        λI_λ/N_H, erg s⁻¹ sr⁻¹ H⁻¹, summed over components; grains flagged
        stochastic are left out.
    by_component : ndarray, shape (n_components, n_wave)
        The same, component by component.
    temperatures : tuple of GrainTemperatures
        One per component.
    absorbed : float
        Power absorbed by all grains, erg s⁻¹ H⁻¹.
    absorbed_stochastic : float
        Of which by grains flagged stochastic, whose emission is not in
        ``lam_i_lam``.
    """

    wave_um: np.ndarray
    lam_i_lam: np.ndarray
    by_component: np.ndarray
    temperatures: tuple
    absorbed: float
    absorbed_stochastic: float

    @property
    def stochastic_fraction(self):
        """float: share of the absorbed power that the emission leaves out (stochastic grains)."""
        return self.absorbed_stochastic / self.absorbed

    @property
    def i_lam(self):
        """ndarray: I_λ/N_H, erg s⁻¹ sr⁻¹ µm⁻¹ H⁻¹."""
        return self.lam_i_lam / self.wave_um


@dataclass(frozen=True, eq=False)
class ModifiedBlackbodyFit:
    """I_λ = τ_ref (λ/λ_ref)^−β B_λ(T) fitted to a spectrum.

    Attributes
    ----------
    temperature_k, beta : float
        Fitted T (K) and emissivity index β.
    tau_ref : float
        Scale at ``wave_ref_um``: the optical depth there if the intensity
        was in erg s⁻¹ cm⁻² µm⁻¹ sr⁻¹, otherwise in the intensity's units per
        those.
    wave_ref_um : float
        Reference wavelength, µm.
    sigma_temperature_k, sigma_beta : float
        1σ uncertainties from the curvature of χ² (NaN when there are no
        degrees of freedom left); with no ``sigma`` given, scaled by the
        residual scatter.
    correlation : float
        Correlation of T and β (NaN with β fixed).
    wave_range_um : tuple of float
        Wavelengths the fit used.
    n_points : int
        Points inside ``wave_range_um``.
    problems : tuple of str
        Why the fit may mislead (also warned); empty if none.
    """

    temperature_k: float
    beta: float
    tau_ref: float
    wave_ref_um: float
    sigma_temperature_k: float
    sigma_beta: float
    correlation: float
    wave_range_um: tuple
    n_points: int
    problems: tuple

    @property
    def degenerate(self):
        """bool: whether any problem was found."""
        return bool(self.problems)

    def i_lam(self, wave_um):
        """The fitted I_λ at ``wave_um`` (µm), in the units of the fitted intensity."""
        lam = np.asarray(wave_um, dtype=float)
        return self.tau_ref * (lam / self.wave_ref_um) ** -self.beta * four_pi_planck(lam, self.temperature_k) / (
            4 * math.pi
        )


def _trapezoid_weights(wave_um):
    """Weights q with ∫ f dλ ≈ Σ q f: the trapezoid in ln λ."""
    lnw = np.log(wave_um)
    d = np.diff(lnw)
    q = np.zeros_like(wave_um)
    q[:-1] += d / 2
    q[1:] += d / 2
    return q * wave_um


def _check_wave_grid(wave_um, name="wave_um"):
    lam = np.asarray(wave_um, dtype=float)
    if lam.ndim != 1 or lam.size < 2:
        raise InputError(f"{name} must be a 1-d list of at least 2 wavelengths; got shape {lam.shape}")
    if not np.all(np.isfinite(lam)) or np.any(lam <= 0) or np.any(np.diff(lam) <= 0):
        raise InputError(f"{name} must hold finite, positive, increasing wavelengths (µm)")
    return lam


def equilibrium_temperature(wave_um, c_abs, four_pi_j):
    """Temperature at which grains emit what they absorb.

    Parameters
    ----------
    wave_um : array_like, shape (n,)
        Increasing wavelengths, µm, spanning both the field and the emission.
    c_abs : array_like, shape (..., n)
        Absorption cross sections, cm² (any scale: only ratios over λ
        matter), wavelength last.
    four_pi_j : array_like, shape (n,)
        4πJ_λ of the field, erg s⁻¹ cm⁻² µm⁻¹.

    Returns
    -------
    ndarray, shape c_abs.shape[:-1]
        T in K, solving ∫ C_abs 4πJ_λ dλ = ∫ C_abs 4πB_λ(T) dλ; NaN where
        the solution lies outside :data:`T_BRACKET_K` (with an
        `OutOfRangeWarning`).

    Notes
    -----
    Both integrals are trapezoids in ln λ on ``wave_um``. The emitted power
    rises monotonically with T, so the root is found by bisection in ln T
    (60 halvings of ln(10⁵): relative precision ~1e-17, i.e. to rounding),
    all grains at once.

    Examples
    --------
    >>> from redcorr.grains.fields import DilutedBlackbody
    >>> wave = np.geomspace(0.05, 1e5, 2000)
    >>> field = DilutedBlackbody(5000.0, 1e-8)
    >>> round(float(equilibrium_temperature(wave, np.ones(wave.size), field.four_pi_j(wave))), 2)
    50.0
    """
    lam = _check_wave_grid(wave_um)
    c = np.asarray(c_abs, dtype=float)
    fj = np.asarray(four_pi_j, dtype=float)
    if c.shape[-1:] != lam.shape or fj.shape != lam.shape:
        raise InputError(
            f"c_abs (shape {c.shape}) and four_pi_j (shape {fj.shape}) must end in the {lam.size} wavelengths"
        )
    if np.any(~np.isfinite(c)) or np.any(c < 0) or np.any(~np.isfinite(fj)) or np.any(fj < 0):
        raise InputError("c_abs and four_pi_j must be finite and >= 0")
    q = _trapezoid_weights(lam)
    absorbed = np.sum(c * (q * fj), axis=-1)

    def emitted(temp):
        return np.sum(c * q * four_pi_planck(lam, temp[..., None]), axis=-1)

    lo = np.full(absorbed.shape, math.log(T_BRACKET_K[0]))
    hi = np.full(absorbed.shape, math.log(T_BRACKET_K[1]))
    ok = (absorbed > 0) & (emitted(np.exp(lo)) <= absorbed) & (absorbed <= emitted(np.exp(hi)))
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        too_hot = emitted(np.exp(mid)) > absorbed
        hi = np.where(too_hot, mid, hi)
        lo = np.where(too_hot, lo, mid)
    temp = np.where(ok, np.exp(0.5 * (lo + hi)), np.nan)
    if not np.all(ok):
        warnings.warn(
            f"{int(np.sum(~ok))} grain(s) absorb nothing or would lie outside "
            f"{T_BRACKET_K[0]:g}-{T_BRACKET_K[1]:g} K; their temperature is NaN",
            OutOfRangeWarning,
            stacklevel=2,
        )
    return temp[()]


def _debye_energy(n, x):
    """g_n(x) = n ∫₀¹ yⁿ/(e^(y/x) − 1) dy, the heat content per mode in units of kΘ (x = T/Θ)."""
    top = np.minimum(1.0 / x, _Z_MAX)[..., None]
    z = 0.5 * top * (_GL_Z + 1.0)
    integral = 0.5 * top[..., 0] * np.sum(_GL_W * z**n / np.expm1(z), axis=-1)
    return n * x ** (n + 1) * integral


def thermal_energy(radius_um, temperature_k, *, density, carbon):
    """Heat content E(T) = ∫₀ᵀ C dT of a grain, erg.

    Parameters
    ----------
    radius_um, temperature_k : array_like
        Radius (µm) and temperature (K), broadcast together.
    density : float
        Bulk density, g cm⁻³ (gives the number of atoms).
    carbon : bool
        Carbonaceous (graphite heat capacity) or not (silicate heat capacity).

    Returns
    -------
    ndarray
        E in erg.

    Notes
    -----
    Draine & Li (2001) write the heat capacity of N atoms as
    C = (N − 2) k Σ_j c_j f_n(T/Θ_j), with f_n the n-dimensional Debye
    function: graphite f_2(T/863 K) + 2 f_2(T/2504 K), silicate
    2 f_2(T/500 K) + f_3(T/1500 K) (their eqs. 9–11, from memory). Its
    integral is E = (N − 2) k Σ_j c_j Θ_j g_n(T/Θ_j) with
    g_n(x) = n x^(n+1) ∫₀^(1/x) zⁿ/(eᶻ − 1) dz (64-point Gauss–Legendre).
    N = ρ (4π/3) a³ / m̄ with m̄ the mass of a C atom or the mean atomic mass
    of MgFeSiO₄. Non-carbonaceous materials take the silicate heat capacity.

    References
    ----------
    .. [1] Draine, B. T., & Li, A. 2001, ApJ, 551, 807. doi:10.1086/320227
    """
    a_cm = np.asarray(radius_um, dtype=float) * 1e-4
    temp = np.asarray(temperature_k, dtype=float)
    atom = ATOM_MASS_CARBON_G if carbon else ATOM_MASS_SILICATE_G
    n_atoms = density * 4.0 * math.pi / 3.0 * a_cm**3 / atom
    modes = sum(c * theta * _debye_energy(n, temp / theta) for c, n, theta in (
        DEBYE_CARBON if carbon else DEBYE_SILICATE))
    return np.maximum(n_atoms - 2.0, 0.0) * _K_B * modes


def _heating_grid(model, field):
    lo = max(HEATING_RANGE_UM[0], model.wave_range[0], getattr(field, "wave_range_um", (0.0, math.inf))[0])
    hi = min(HEATING_RANGE_UM[1], model.wave_range[1])
    return np.geomspace(lo, hi, N_HEATING)


def _c_abs_by_size(component, wave_um, cache):
    """(radii, weights, C_abs per grain of shape (n_sizes, n_wave)), through the cache when given."""
    key = {
        "version": CACHE_VERSION,
        "quantity": "c_abs by size",
        "wave": wave_um.tolist(),
        "component": component.key(),
    }
    hit = cache.get(key) if cache is not None else None
    if hit is None:
        a, w, parts = component.cross_sections_by_size(wave_um)
        hit = {"a": a, "w": w, "c_abs": np.ascontiguousarray(parts["c_abs"].T)}
        if cache is not None:
            cache.put(key, hit)
    return hit["a"], hit["w"], hit["c_abs"]


def _check_model_field(model, field):
    if not isinstance(model, GrainModel):
        raise InputError(f"model={model!r} is not a GrainModel")
    if not callable(getattr(field, "four_pi_j", None)):
        raise InputError(f"field={field!r} is not a radiation field (it needs four_pi_j(wave_um))")


def grain_temperatures(model, field, *, cache=None):
    """Equilibrium temperatures of every grain of a model in a radiation field.

    Parameters
    ----------
    model : GrainModel
    field : RadiationField
        E.g. :class:`redcorr.grains.fields.MMP83Field`.
    cache : object or None, optional
        As for :meth:`GrainModel.optics`; holds the per-radius cross sections.

    Returns
    -------
    tuple of GrainTemperatures
        One per component, in the model's order.

    Notes
    -----
    Each radius a of each component's size integral solves
    ∫ C_abs(λ, a) 4πJ_λ dλ = ∫ C_abs(λ, a) 4πB_λ(T) dλ
    (:func:`equilibrium_temperature`) over :data:`HEATING_RANGE_UM`.

    A grain is flagged ``stochastic`` when its heat content at that
    temperature is below the mean energy of the photons it absorbs,
    E(T_eq) < ⟨hν⟩ = P_abs/Ṅ_abs: one photon then at least doubles its heat
    content (T jumps by ≥ 2^(1/3)) and it cools before the next arrives, so
    it spends its time far from T_eq — the condition under which Draine
    (2003) describes grains as stochastically heated (from memory).
    PAHs, being tiny, always fall under it.

    References
    ----------
    .. [1] Draine, B. T. 2003, ARA&A, 41, 241. doi:10.1146/annurev.astro.41.011802.094840
    .. [2] Draine, B. T., & Li, A. 2001, ApJ, 551, 807. doi:10.1086/320227
    """
    _check_model_field(model, field)
    store = _check_cache(cache)
    wave = _heating_grid(model, field)
    fj = field.four_pi_j(wave)
    q = _trapezoid_weights(wave)
    out = []
    for comp in model.components:
        a, w, c_abs = _c_abs_by_size(comp, wave, store)
        temp = equilibrium_temperature(wave, c_abs, fj)
        absorbed = np.sum(c_abs * (q * fj), axis=-1)
        photons = np.sum(c_abs * (q * fj * wave / _HC_ERG_UM), axis=-1)
        with np.errstate(invalid="ignore", divide="ignore"):
            photon_energy = absorbed / photons
        heat = thermal_energy(a, temp, density=comp.material.density, carbon=comp.material.carbon)
        out.append(
            GrainTemperatures(
                component=repr(comp),
                radius_um=a,
                weight=w,
                temperature_k=temp,
                stochastic=~(heat >= photon_energy),  # NaN temperatures count as not in equilibrium
                absorbed_erg_s=absorbed,
                photon_energy_erg=photon_energy,
                thermal_energy_erg=heat,
            )
        )
    return tuple(out)


def emission_spectrum(model, wave_um, field, *, cache=None):
    """Far-infrared emission per H nucleon of a grain model's equilibrium grains.

    Parameters
    ----------
    model : GrainModel
    wave_um : array_like or Quantity
        Output wavelengths (plain numbers in µm), 1-d, inside the model's
        optical constants.
    field : RadiationField
    cache : object or None, optional
        As for :meth:`GrainModel.optics`.

    Returns
    -------
    DustEmission
        λI_λ/N_H in erg s⁻¹ sr⁻¹ H⁻¹, and the absorbed power per H, total and
        taken by grains flagged stochastic (left out of the emission; the
        caller should say so when ``stochastic_fraction`` is not small).

    Notes
    -----
    λI_λ/N_H = Σ_c Σ_a w_a C_abs(λ, a) λB_λ(T_a) over the radii a of every
    component c that are in equilibrium (:func:`grain_temperatures`), with
    w_a grains per H. Optically thin: no self-absorption.
    """
    _check_model_field(model, field)
    store = _check_cache(cache)
    lam = np.atleast_1d(1.0 / inverse_micron(wave_um, name="wave_um"))
    if lam.ndim != 1 or not np.all(np.isfinite(lam)):
        raise InputError("wave_um must be a scalar or a 1-d list of finite wavelengths")
    temps = grain_temperatures(model, field, cache=store)
    rows = []
    for comp, t in zip(model.components, temps, strict=True):
        _, w, c_abs = _c_abs_by_size(comp, lam, store)
        keep = ~t.stochastic
        b = four_pi_planck(lam, t.temperature_k[keep][:, None]) / (4 * math.pi)
        rows.append(np.sum((w[keep][:, None] * c_abs[keep]) * b, axis=0) * lam)
    by_component = np.array(rows)
    return DustEmission(
        wave_um=lam,
        lam_i_lam=by_component.sum(axis=0),
        by_component=by_component,
        temperatures=temps,
        absorbed=sum(t.absorbed_per_h for t in temps),
        absorbed_stochastic=sum(t.absorbed_stochastic_per_h for t in temps),
    )


def optical_depth_ratios(model, wave_um, *, cache=None):
    """Absorption optical depth per magnitude of visual extinction and of reddening.

    Parameters
    ----------
    model : GrainModel
    wave_um : float, array_like or Quantity
        Wavelengths (plain numbers in µm), inside the model's optical constants.
    cache : object or None, optional
        As for :meth:`GrainModel.optics`.

    Returns
    -------
    per_av, per_ebv : ndarray
        τ_abs(λ)/A_V and τ_abs(λ)/E(B−V), shaped like ``wave_um`` (scalars
        for a scalar).

    Notes
    -----
    Along a sight line with N_H per cm², τ_abs(λ) = N_H C_abs(λ),
    A_V = 2.5 log₁₀(e) N_H C_ext(0.55 µm) and E(B−V) = A_V/R_V with the
    monochromatic R_V of :meth:`GrainModel.r_v` (warned when meaningless).
    So τ_abs/A_V = C_abs(λ)/[1.0857 C_ext(V)] and τ_abs/E(B−V) = R_V τ_abs/A_V.
    A map of far-infrared optical depth becomes A_V = τ/per_av — only as
    good as the model's ratio of far-infrared absorption to visual
    extinction.

    Examples
    --------
    >>> from redcorr.io.grains import get_grain_model
    >>> per_av, per_ebv = optical_depth_ratios(get_grain_model("wd01-rv3.1"), 0.55)
    >>> round(float(per_av), 2)  # τ_abs/A_V at V: (1 − albedo_V)/1.086
    0.3
    """
    if not isinstance(model, GrainModel):
        raise InputError(f"model={model!r} is not a GrainModel")
    lam = 1.0 / inverse_micron(wave_um, name="wave_um")
    flat = np.append(np.ravel(lam), [B_WAVE_UM, V_WAVE_UM])
    optics = model.optics(flat, cache=cache)
    c_b, c_v = optics.c_ext[-2:]
    r_v = r_v_from_cross_sections(c_b, c_v, model.name)
    per_av = (optics.c_abs[:-2] / (_MAG_PER_TAU * c_v)).reshape(np.shape(lam))
    return per_av[()], (per_av * r_v)[()]


def _peak_wave_um(temperature_k, beta):
    """Wavelength (µm) where λ^−β B_λ(T) peaks: y = (5 + β)(1 − e⁻ʸ), y = hc/λkT."""
    y = 5.0 + beta
    for _ in range(60):
        y = (5.0 + beta) * (1.0 - math.exp(-y))
    return _HC_OVER_K_UM_K / (y * temperature_k)


def fit_modified_blackbody(wave_um, intensity, *, sigma=None, beta=None, wave_range=MBB_WAVE_RANGE_UM,
                           wave_ref_um=250.0, t_bounds=(3.0, 300.0)):
    """Fit I_λ = τ_ref (λ/λ_ref)^−β B_λ(T) to a far-infrared spectrum.

    Parameters
    ----------
    wave_um : array_like
        Wavelengths, µm.
    intensity : array_like
        I_λ (per unit wavelength; any units), > 0, same shape. To fit a
        :class:`DustEmission`, pass its ``i_lam``.
    sigma : array_like, optional
        1σ uncertainties of ``intensity``; default: equal relative weights.
    beta : float, optional
        Fix β instead of fitting it.
    wave_range : (float, float), optional
        Only points in this range (µm) are used; default
        :data:`MBB_WAVE_RANGE_UM`, 70–1000 µm, leaving out the mid-infrared
        where stochastically heated grains emit.
    wave_ref_um : float, optional
        Reference wavelength of ``tau_ref`` (default 250 µm).
    t_bounds : (float, float), optional
        Temperatures searched, K (default 3–300).

    Returns
    -------
    ModifiedBlackbodyFit

    Warns
    -----
    FitWarning
        When the fit may mislead: no degrees of freedom left, T at a bound
        of ``t_bounds``, or no point on one side of the fitted peak of
        λ^−β B_λ(T) — on the Rayleigh–Jeans side alone only β + 1 and τT
        are constrained, so T and β trade off freely (the T–β degeneracy).

    Notes
    -----
    Least squares in ln I. For given T, ln τ_ref and β enter linearly and
    are solved exactly; χ²(T) is scanned on 200 log-spaced temperatures and
    refined by a bounded scalar minimisation. Uncertainties come from the
    Jacobian at the minimum.

    Examples
    --------
    >>> wave = np.array([100.0, 160.0, 250.0, 350.0, 500.0])
    >>> from redcorr.grains.fields import four_pi_planck
    >>> i_lam = 1e-3 * (wave / 250.0) ** -1.8 * four_pi_planck(wave, 18.0)
    >>> fit = fit_modified_blackbody(wave, i_lam)
    >>> round(fit.temperature_k, 3), round(fit.beta, 3)
    (18.0, 1.8)
    """
    from scipy.optimize import minimize_scalar  # noqa: PLC0415 - heavy; only fits need it

    lam_all = np.asarray(wave_um, dtype=float)
    i_all = np.asarray(intensity, dtype=float)
    if lam_all.ndim != 1 or i_all.shape != lam_all.shape:
        raise InputError(f"wave_um (shape {lam_all.shape}) and intensity (shape {i_all.shape}) must be 1-d alike")
    if sigma is None:
        s_all = None
    else:
        s_all = np.broadcast_to(np.asarray(sigma, dtype=float), lam_all.shape)
    lo, hi = (check_finite("wave_range", v) for v in wave_range)
    if not 0 < lo < hi:
        raise InputError(f"wave_range={shown(tuple(wave_range))} must be two increasing wavelengths > 0 µm")
    t_lo, t_hi = (check_finite("t_bounds", v) for v in t_bounds)
    if not 0 < t_lo < t_hi:
        raise InputError(f"t_bounds={shown(tuple(t_bounds))} must be two increasing temperatures > 0 K")
    wave_ref = check_positive("wave_ref_um", wave_ref_um)
    use = np.isfinite(lam_all) & (lam_all >= lo) & (lam_all <= hi)
    lam, i_lam = lam_all[use], i_all[use]
    if np.any(~np.isfinite(i_lam) | (i_lam <= 0)):
        bad = i_lam[~np.isfinite(i_lam) | (i_lam <= 0)][0]
        raise InputError(f"intensity={shown(bad)} is not allowed; intensities in {lo:g}-{hi:g} µm must be > 0")
    if s_all is None:
        sig_ln = np.ones_like(lam)
    else:
        sig_ln = s_all[use] / i_lam
        if np.any(~np.isfinite(sig_ln) | (sig_ln <= 0)):
            raise InputError("sigma must be finite and > 0 at every point used")
    n_par = 2 if beta is None else 1
    beta_fixed = None if beta is None else check_finite("beta", beta)
    if lam.size <= n_par:
        raise InputError(
            f"wave_range={shown((lo, hi))} µm keeps {lam.size} point(s); at least {n_par + 1} are needed "
            f"to fit {'T, β and the scale' if beta is None else 'T and the scale'}"
        )
    y = np.log(i_lam)
    x_beta = -np.log(lam / wave_ref)
    wts = 1.0 / sig_ln

    def solve(temp):
        base = y - np.log(four_pi_planck(lam, temp) / (4 * math.pi))
        if beta_fixed is None:
            design = np.stack([np.ones_like(lam), x_beta], axis=-1) * wts[:, None]
            coef = np.linalg.lstsq(design, base * wts, rcond=None)[0]
            ln_tau, b = coef
        else:
            b = beta_fixed
            ln_tau = np.sum((base - b * x_beta) * wts**2) / np.sum(wts**2)
        resid = (base - ln_tau - b * x_beta) * wts
        return float(np.sum(resid**2)), float(ln_tau), float(b)

    grid = np.geomspace(t_lo, t_hi, 200)
    chi = np.array([solve(t)[0] for t in grid])
    k = int(np.argmin(chi))
    bracket = (grid[max(k - 1, 0)], grid[min(k + 1, grid.size - 1)])
    best = minimize_scalar(lambda lt: solve(math.exp(lt))[0], bounds=np.log(bracket), method="bounded",
                           options={"xatol": 1e-10})
    temp = math.exp(best.x)
    chi2, ln_tau, b = solve(temp)

    # Jacobian of the model ln I in (ln τ, β, ln T), weighted
    yy = _HC_OVER_K_UM_K / (lam * temp)
    d_lnt = yy / -np.expm1(-yy)
    cols = [np.ones_like(lam)] + ([x_beta] if beta_fixed is None else []) + [d_lnt]
    jac = np.stack(cols, axis=-1) * wts[:, None]
    dof = lam.size - (n_par + 1)
    problems = []
    sig_t = sig_b = corr = math.nan
    if dof < 1:
        problems.append(f"{lam.size} points for {n_par + 1} parameters: no check of the fit and no uncertainties")
    else:
        scale = 1.0 if s_all is not None else chi2 / dof
        cov = np.linalg.pinv(jac.T @ jac) * scale
        sig_t = temp * math.sqrt(cov[-1, -1])
        if beta_fixed is None:
            sig_b = math.sqrt(cov[1, 1])
            corr = float(cov[1, 2] / math.sqrt(cov[1, 1] * cov[2, 2]))
    if temp <= t_lo * (1 + 1e-6) or temp >= t_hi * (1 - 1e-6):
        problems.append(f"T = {temp:.4g} K is at a bound of t_bounds={shown(tuple(t_bounds))}")
    peak = _peak_wave_um(temp, b)
    if np.all(lam > peak):
        problems.append(
            f"every point lies longward of the fitted peak ({peak:.3g} µm): T and β are degenerate "
            "on the Rayleigh-Jeans side"
        )
    elif np.all(lam < peak):
        problems.append(f"every point lies shortward of the fitted peak ({peak:.3g} µm): β is poorly constrained")
    if problems:
        warnings.warn("modified blackbody fit: " + "; ".join(problems), FitWarning, stacklevel=2)
    return ModifiedBlackbodyFit(
        temperature_k=temp,
        beta=b,
        tau_ref=math.exp(ln_tau),
        wave_ref_um=wave_ref,
        sigma_temperature_k=sig_t,
        sigma_beta=sig_b,
        correlation=corr,
        wave_range_um=(lo, hi),
        n_points=int(lam.size),
        problems=tuple(problems),
    )
