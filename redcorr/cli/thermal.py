"""``redcorr thermal``: equilibrium temperatures and far-infrared emission of a grain model in a radiation field."""

import math

from redcorr.cli._common import (
    UNIT_HELP,
    WAVE_UNITS,
    check_outputs,
    finite_float,
    positive_float,
    print_json,
    print_table,
    wavelengths,
)
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run", "radiation_field"]

_SHOWN_RADII = 15
"""About this many radii per component in the text table (every radius in --json)."""


def add_parser(sub):
    p = sub.add_parser(
        "thermal",
        help="temperatures and far-infrared emission of a grain model heated by starlight",
        description=(
            "Heat the grains of MODEL (a name from 'redcorr grain --list', or grain:PATH.toml) in a "
            "radiation field: the interstellar starlight of Mathis, Mezger & Panagia (1983) times U "
            "(--scale, default 1), or a star's blackbody diluted by W (--star-temp and --dilution). "
            "Prints the equilibrium temperature of the grains against their radius, component by "
            "component (grains too small to reach it are flagged stochastic); the emission per H "
            "nucleon of the grains in equilibrium with the absorption optical depth per A_V and per "
            "E(B-V) at the wavelengths given (default 61 from 1 um to 1 mm); and a modified blackbody "
            "fitted to the emission at those default wavelengths that lie in 70-1000 um, whatever "
            "--wave. The emission leaves out the stochastically heated grains; a warning says how "
            "much of the absorbed power they take."
        ),
    )
    p.add_argument("model", nargs="?", metavar="MODEL", help="grain-model name or grain:PATH.toml")
    p.add_argument("--scale", type=positive_float, metavar="U",
                   help="the interstellar field of Mathis, Mezger & Panagia (1983) times U (> 0; default 1)")
    p.add_argument("--star-temp", type=positive_float, metavar="K",
                   help="instead, a star's blackbody at this temperature (K, > 0), with --dilution")
    p.add_argument("--dilution", type=finite_float, metavar="W",
                   help="the star's dilution W in (0, 1]: its solid angle over 4 pi, R^2/(4 d^2) far from it")
    p.add_argument("--wave", nargs="+", type=finite_float, metavar="W",
                   help="wavelengths of the emission, in --unit (default 61 from 1 um to 1 mm)")
    p.add_argument("--unit", choices=list(WAVE_UNITS), default="um", help=UNIT_HELP)
    p.add_argument("--json", action="store_true", help="print JSON instead of tables (every radius)")
    p.add_argument("--no-cache", action="store_true", help="compute afresh; neither read nor write the cache")
    p.add_argument("--plot", metavar="FILE.png",
                   help="draw the temperatures against radius and the emission spectrum into a PNG")
    p.set_defaults(func=run)


def radiation_field(scale=None, star_temp=None, dilution=None):
    """The radiation field of the options: MMP83 × U, or a diluted blackbody; default MMP83 × 1.

    Parameters
    ----------
    scale : float, optional
        U of the interstellar field (``--scale``).
    star_temp, dilution : float, optional
        T_star (K) and W of a diluted blackbody (``--star-temp``, ``--dilution``), given together.

    Returns
    -------
    redcorr.grains.fields.RadiationField
    """
    from redcorr.grains.fields import DilutedBlackbody, MMP83Field

    if star_temp is None and dilution is None:
        return MMP83Field(1.0 if scale is None else scale)
    if scale is not None:
        raise InputError(
            f"--scale={scale:g} scales the interstellar field; --star-temp and --dilution give a star's instead: "
            "use one or the other"
        )
    if dilution is None:
        raise InputError(f"--star-temp={star_temp:g} needs --dilution W, a number in (0, 1]")
    if star_temp is None:
        raise InputError(f"--dilution={dilution:g} needs --star-temp K, the star's temperature")
    return DilutedBlackbody(star_temp, dilution)


def run(args):
    import warnings

    from redcorr.exceptions import RedcorrWarning
    from redcorr.io.grains import default_cache, get_grain_model
    from redcorr.thermal_summary import stochastic_caution, thermal_summary

    if not args.model:
        raise InputError("MODEL is missing; give a grain-model name (see redcorr grain --list) or grain:PATH.toml")
    check_outputs(args, "--plot")
    field = radiation_field(args.scale, args.star_temp, args.dilution)
    wave_um = wavelengths(args.wave, args.unit)[1] if args.wave else None
    model = get_grain_model(args.model)
    cache = None if args.no_cache else default_cache()
    out, emission, fitted, fit = thermal_summary(model, field, wave_um, cache=cache)
    caution = stochastic_caution(emission)
    if caution:
        warnings.warn(caution, RedcorrWarning, stacklevel=1)
    if args.plot:
        _plot(fitted, fit, args.plot, marks=None if wave_um is None else emission,
              title=f"{model.name} heated by {field.name}")
    if args.json:
        print_json(out)
        return 0
    _print_tables(out, fit)
    return 0


def _print_tables(out, fit):
    print(f"# {out['model']} heated by {out['field']}: equilibrium temperature against grain radius")
    for comp in out["temperatures"]:
        rows = comp["rows"]
        step = max(1, round(len(rows) / _SHOWN_RADII))
        shown = rows[::step] + ([rows[-1]] if (len(rows) - 1) % step else [])
        print(f"## {comp['component']}: {len(shown)} of its {len(rows)} radii (--json lists all)")
        print_table(
            [{**r, "stochastic": "yes" if r["stochastic"] else ""} for r in shown],
            ["radius_um", "T_K", "stochastic"],
            formats={"radius_um": ".4g", "T_K": ".2f"},
        )
    print("stochastic: a single photon heats the grain far above T_K, so it does not stay at it (left out below).")
    print()
    print(f"# emission per H of the grains in equilibrium ({100 * out['stochastic_fraction']:.3g} % of the "
          "absorbed power, taken by stochastic grains, is left out)")
    print_table(
        out["rows"],
        ["wavelength_um", "lamI_per_H", "tau_over_AV", "tau_over_EBV"],
        formats={"wavelength_um": ".4g", "lamI_per_H": ".4e", "tau_over_AV": ".4e", "tau_over_EBV": ".4e"},
    )
    print("lamI_per_H: lambda I_lambda / N_H, erg s-1 sr-1 per H nucleon (optically thin); tau: absorption "
          "optical depth.")
    lo, hi = fit.wave_range_um
    sigma_t = f" ± {fit.sigma_temperature_k:.2g}" if math.isfinite(fit.sigma_temperature_k) else ""
    sigma_b = f" ± {fit.sigma_beta:.2g}" if math.isfinite(fit.sigma_beta) else ""
    print(
        f"modified blackbody I ~ lambda^-beta B_lambda(T) fitted to the emission at {fit.n_points} wavelengths "
        f"in {lo:g}-{hi:g} um: T = {fit.temperature_k:.2f}{sigma_t} K, beta = {fit.beta:.3f}{sigma_b}"
    )


def _plot(fitted, fit, path, *, marks, title):
    from redcorr.io.figures import save_figure  # noqa: PLC0415
    from redcorr.plotting import grain_emission_figure  # noqa: PLC0415 - matplotlib only when asked

    save_figure(grain_emission_figure(fitted, fit=fit, marks=marks, title=title), path)
