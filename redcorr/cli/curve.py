"""``redcorr curve``: evaluate an extinction law at given wavelengths."""

from redcorr.cli._common import UNIT_HELP, WAVE_UNITS, check_outputs, finite_float, print_json, print_table, wavelengths
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run"]


def add_parser(sub):
    p = sub.add_parser(
        "curve",
        help="evaluate an extinction law A(λ)/A(V) at wavelengths",
        description=(
            "Evaluate A(λ)/A(V) and A(λ)/E(B-V) of a law at the given wavelengths. "
            "LAW is a name from --list or file:PATH for a table (ECSV, or CSV with "
            "wavelength_um and A_over_AV columns)."
        ),
    )
    p.add_argument("law", nargs="?", metavar="LAW", help="law name or file:PATH")
    p.add_argument(
        "--list", action="store_true",
        help="list every law with its R_V limits (refused outside), the R_V span its paper observed "
        "(warns outside), wavelength range and citation",
    )
    p.add_argument("--rv", type=finite_float, metavar="R", help="R_V = A(V)/E(B-V) (law default if omitted)")
    p.add_argument("--wave", nargs="+", type=finite_float, metavar="W", help="wavelengths, in --unit")
    p.add_argument("--unit", choices=list(WAVE_UNITS), default="um", help=UNIT_HELP)
    p.add_argument("--extrapolate", action="store_true", help="evaluate outside the law's range, with a warning")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.add_argument("--plot", metavar="FILE.png", help="also draw A(λ)/A(V) against 1/λ into a PNG")
    p.set_defaults(func=run)


def _list(as_json):
    from redcorr.curves import list_curves  # heavy: loaded on use, so that the parser builds quickly
    from redcorr.io.grains import list_grain_models

    rows = []
    for info in list_curves():
        r_lo_hi, seen = info["r_v_limits"], info["r_v_observed"]
        rows.append(
            {
                "name": info["name"],
                "R_V": f"{info['default_r_v']:g}" + ("" if r_lo_hi else " (fixed)"),
                "R_V_limits": f"{r_lo_hi[0]:g}-{r_lo_hi[1]:g}" if r_lo_hi else "-",
                "R_V_observed": f"{seen[0]:g}-{seen[1]:g}" if seen else "-",
                "wave_um": "{:.3f}-{:.3f}".format(*info["wave_range_um"]),
                "citation": info["citation"],
            }
        )
    models = list_grain_models()
    if as_json:
        print_json({"laws": list_curves(), "grain_models": models})
    else:
        print_table(rows, ["name", "R_V", "R_V_limits", "R_V_observed", "wave_um", "citation"])
        print("\nGrain models (Mie theory; details with redcorr grain --list):")
        print_table(models, ["name", "description"])
        print("\nAlso: file:PATH, a tabulated curve (ECSV or CSV: wavelength_um, A_over_AV),")
        print("and grain:PATH.toml, a grain model of your own.")
    return 0


def run(args):
    import numpy as np

    from redcorr.io import load_curve

    if args.list:
        extra = [f"LAW={args.law!r}"] * bool(args.law) + ["--wave"] * bool(args.wave)
        if extra:
            raise InputError(f"--list takes no LAW or --wave; drop {' and '.join(extra)}, or --list")
        return _list(args.json)
    if not args.law:
        raise InputError("LAW is missing; give a law name (see --list) or file:PATH")
    if not args.wave:
        raise InputError("--wave is missing; give one or more wavelengths")
    check_outputs(args, "--plot")
    curve = load_curve(args.law, r_v=args.rv)
    wave, wave_um = wavelengths(args.wave, args.unit)
    ratio = np.atleast_1d(curve(wave, extrapolate=args.extrapolate))
    rows = [
        {"wavelength_um": float(w), "A_over_AV": float(r), "A_over_EBV": float(r * curve.r_v)}
        for w, r in zip(np.atleast_1d(wave_um), ratio, strict=True)
    ]
    if args.plot:
        from redcorr.io.figures import save_figure  # noqa: PLC0415
        from redcorr.plotting import curve_figure  # noqa: PLC0415 - matplotlib only when asked

        save_figure(curve_figure(curve, marks=wave_um, extrapolate=args.extrapolate), args.plot)
    if args.json:
        print_json(rows)
    else:
        print(f"# {curve.name}, R_V = {curve.r_v:g}; {curve.citation}")
        print_table(rows, ["wavelength_um", "A_over_AV", "A_over_EBV"])
    return 0
