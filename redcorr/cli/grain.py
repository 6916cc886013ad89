"""``redcorr grain``: extinction, albedo and g of a grain model at given wavelengths."""

from redcorr.cli._common import UNIT_HELP, WAVE_UNITS, check_outputs, finite_float, print_json, print_table, wavelengths
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run", "grain_rows"]


def add_parser(sub):
    p = sub.add_parser(
        "grain",
        help="extinction, albedo and g of a grain model (Mie theory)",
        description=(
            "Compute A(λ)/A(V), the albedo and the asymmetry g of a dust grain model at the "
            "given wavelengths with Mie theory. MODEL is a name from --list or grain:PATH.toml. "
            "R_V is monochromatic: A(0.55 µm)/[A(0.44 µm) - A(0.55 µm)]. Results are cached on "
            "disk (user cache folder, or $REDCORR_CACHE_DIR)."
        ),
    )
    p.add_argument("model", nargs="?", metavar="MODEL", help="grain-model name or grain:PATH.toml")
    p.add_argument("--list", action="store_true", help="list the named grain models and materials")
    p.add_argument("--wave", nargs="+", type=finite_float, metavar="W", help="wavelengths, in --unit")
    p.add_argument("--unit", choices=list(WAVE_UNITS), default="um", help=UNIT_HELP)
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.add_argument("--no-cache", action="store_true", help="compute afresh; neither read nor write the cache")
    p.add_argument(
        "--plot", metavar="FILE.png",
        help="draw A(λ)/A(V), albedo and g against 1/λ, and the phase function, into a PNG",
    )
    p.set_defaults(func=run)


def grain_rows(model, wave_um, *, cache):
    """R_V and one row per wavelength: wavelength_um, A_over_AV, albedo, g, C_ext_per_H, kappa_ext.

    Cross sections are computed at exactly these wavelengths (no interpolation),
    kept in ``cache`` (the disk cache, or None), as for `GrainModel.optics`.
    """
    import numpy as np  # heavy: loaded on use

    from redcorr.curves.tabulated import B_WAVE_UM, V_WAVE_UM
    from redcorr.grains.model import r_v_from_cross_sections

    wave_um = np.atleast_1d(np.asarray(wave_um, dtype=float))
    optics = model.optics(np.append(wave_um, [B_WAVE_UM, V_WAVE_UM]), cache=cache)
    c_b, c_v = optics.c_ext[-2:]
    rows = [
        {
            "wavelength_um": float(w),
            "A_over_AV": float(c / c_v),
            "albedo": float(alb),
            "g": float(g),
            "C_ext_per_H": float(c),
            "kappa_ext": float(k),
        }
        for w, c, alb, g, k in zip(
            wave_um, optics.c_ext[:-2], optics.albedo[:-2], optics.g[:-2], optics.kappa_ext[:-2], strict=True
        )
    ]
    return r_v_from_cross_sections(c_b, c_v, model.name), rows


def _list(as_json):
    from redcorr.io.grains import list_grain_models, list_materials

    models, materials = list_grain_models(), list_materials()
    if as_json:
        print_json({"models": models, "materials": materials})
        return 0
    print_table(models, ["name", "description"])
    print("Also: grain:PATH.toml, a model described in TOML (see README).")
    print()
    print_table(materials, ["name", "density", "carbon", "citation"], formats={"density": ".2f"})
    print("Also: file:PATH in a TOML component, a table of wavelength_um, n, k.")
    return 0


def run(args):
    from redcorr.io.grains import default_cache, get_grain_model

    if args.list:
        extra = [f"MODEL={args.model!r}"] * bool(args.model) + [o for o in ("--wave", "--plot") if getattr(args, o[2:])]
        if extra:
            raise InputError(f"--list takes no MODEL, --wave or --plot; drop {' and '.join(extra)}, or --list")
        return _list(args.json)
    if not args.model:
        raise InputError("MODEL is missing; give a grain-model name (see --list) or grain:PATH.toml")
    check_outputs(args, "--plot")
    if not args.wave and not args.plot:
        raise InputError("--wave is missing; give one or more wavelengths (or --plot FILE.png)")
    model = get_grain_model(args.model)
    cache = None if args.no_cache else default_cache()
    r_v, rows = None, []
    if args.wave:
        _, wave_um = wavelengths(args.wave, args.unit)
        r_v, rows = grain_rows(model, wave_um, cache=cache)
    if args.plot:
        _plot(model, args.plot, cache=cache)
    if not rows:
        return 0
    if args.json:
        keys = ("wavelength_um", "A_over_AV", "albedo", "g")
        print_json({"R_V": r_v, "rows": [{k: row[k] for k in keys} for row in rows]})
    else:
        print(f"# {model.name}, R_V = {r_v:.3f} (A(0.55)/[A(0.44) - A(0.55)]); {model.citation}")
        print_table(
            rows,
            ["wavelength_um", "A_over_AV", "albedo", "g", "C_ext_per_H", "kappa_ext"],
            formats={"C_ext_per_H": ".4e", "kappa_ext": ".4e"},
        )
        print("C_ext_per_H in cm² per H nucleon; kappa_ext in cm² per gram of dust.")
    return 0


def _plot(model, path, *, cache):
    from redcorr.io.figures import save_figure  # noqa: PLC0415
    from redcorr.plotting import grain_model_figure  # noqa: PLC0415 - matplotlib only when asked

    save_figure(grain_model_figure(model.curve(cache=cache)), path)
