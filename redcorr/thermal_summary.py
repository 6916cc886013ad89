"""Grain temperatures and emission of a grain model as rows of plain numbers: what ``redcorr thermal`` prints.

The command line and the terminal UI's Dust screen (its emission view) show
the same numbers through :func:`thermal_summary`, built on
:mod:`redcorr.grains.emission`.
"""

import numpy as np

from redcorr.exceptions import InputError
from redcorr.grains.emission import emission_spectrum, fit_modified_blackbody, optical_depth_ratios

__all__ = ["DEFAULT_GRID_UM", "default_wave_um", "thermal_summary", "stochastic_caution"]

DEFAULT_GRID_UM = (1.0, 1000.0, 61)
"""(first µm, last µm, number): the log-spaced wavelengths shown by default, 20 per decade over 1 µm-1 mm;
the modified blackbody is always fitted to the emission on them (its points in 70-1000 µm)."""

def default_wave_um(model):
    """The :data:`DEFAULT_GRID_UM` wavelengths (µm), kept within the model's optical constants."""
    first, last, number = DEFAULT_GRID_UM
    lo, hi = max(first, model.wave_range[0]), min(last, model.wave_range[1])
    if not lo < hi:
        raise InputError(
            f"grain model {model.name!r} has optical constants over {model.wave_range[0]:g}-{model.wave_range[1]:g} "
            f"µm only: none at the wavelengths its emission is shown and fitted on, {first:g}-{last:g} µm"
        )
    return np.geomspace(lo, hi, number)


def thermal_summary(model, field, wave_um, *, cache):
    """What ``redcorr thermal`` and the Dust screen show: a dict of plain numbers and the core's results.

    Parameters
    ----------
    model : GrainModel
    field : RadiationField
    wave_um : ndarray or None
        Wavelengths of the emission table, µm; None for :func:`default_wave_um`.
    cache : object or None
        As for :meth:`redcorr.grains.GrainModel.optics`.

    Returns
    -------
    out : dict
        ``model``, ``field``, ``temperatures`` (per component: ``component`` and ``rows`` of
        ``radius_um``, ``T_K``, ``stochastic``), ``absorbed_per_H``, ``absorbed_stochastic_per_H``,
        ``stochastic_fraction``, ``rows`` (``wavelength_um``, ``lamI_per_H``, ``tau_over_AV``,
        ``tau_over_EBV``) and ``fit`` (of :func:`redcorr.grains.fit_modified_blackbody`).
    emission, fitted : DustEmission
        The emission at ``wave_um``, and on the default grid (the one fitted; the same object
        when ``wave_um`` is None).
    fit : ModifiedBlackbodyFit
    """
    grid = default_wave_um(model)
    wave = grid if wave_um is None else wave_um
    per_av, per_ebv = optical_depth_ratios(model, wave, cache=cache)  # first: refuses bad wavelengths at once
    emission = emission_spectrum(model, wave, field, cache=cache)
    fitted = emission if wave_um is None else emission_spectrum(model, grid, field, cache=cache)
    fit = fit_modified_blackbody(fitted.wave_um, fitted.i_lam)
    out = {
        "model": model.name,
        "field": field.name,
        "temperatures": [
            {
                "component": t.component,
                "rows": [
                    {"radius_um": float(a), "T_K": float(temp), "stochastic": bool(s)}
                    for a, temp, s in zip(t.radius_um, t.temperature_k, t.stochastic, strict=True)
                ],
            }
            for t in emission.temperatures
        ],
        "absorbed_per_H": emission.absorbed,
        "absorbed_stochastic_per_H": emission.absorbed_stochastic,
        "stochastic_fraction": emission.stochastic_fraction,
        "rows": [
            {"wavelength_um": float(w), "lamI_per_H": float(e), "tau_over_AV": float(a), "tau_over_EBV": float(b)}
            for w, e, a, b in zip(emission.wave_um, emission.lam_i_lam, per_av.ravel(), per_ebv.ravel(), strict=True)
        ],
        "fit": {
            "T_K": fit.temperature_k,
            "sigma_T_K": fit.sigma_temperature_k,
            "beta": fit.beta,
            "sigma_beta": fit.sigma_beta,
            "correlation": float(fit.correlation),
            "wave_range_um": list(fit.wave_range_um),
            "n_points": fit.n_points,
            "problems": list(fit.problems),
        },
    }
    return out, emission, fitted, fit


def stochastic_caution(emission):
    """What the emission leaves out, in a sentence: the power absorbed by grains flagged stochastic ('' if none).

    Parameters
    ----------
    emission : DustEmission
    """
    if not emission.absorbed_stochastic > 0:
        return ""
    return (
        "the emission leaves out the grains flagged stochastic (too small to stay at their equilibrium "
        f"temperature): they absorb {100 * emission.stochastic_fraction:.3g} % of the power the grains absorb "
        f"({emission.absorbed_stochastic:.3e} of {emission.absorbed:.3e} erg s-1 per H), re-emitted at "
        "shorter, mid-infrared wavelengths"
    )
