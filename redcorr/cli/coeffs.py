"""``redcorr coeffs``: band-integrated extinction for a source behind dust."""

import math
import sys

from redcorr.cli._common import check_outputs, finite_float, print_json, print_table
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run"]


def add_parser(sub):
    p = sub.add_parser(
        "coeffs",
        help="band extinction A_b, A_b/A_V and A_b/E(B-V) through filters",
        description=(
            "Integrate an extinction curve through band responses for a source spectrum. "
            "A band is a name (redcorr bands --list), file:PATH (ECSV, CSV or two-column text; "
            "file:PATH[nm] gives the unit), tophat:CENTRE_UM:WIDTH_UM, gauss:CENTRE_UM:FWHM_UM, "
            "or a product of these joined by '*'. E(B-V) is A_V/R_V with the curve's R_V."
        ),
    )
    dust = p.add_mutually_exclusive_group(required=True)
    dust.add_argument("--law", metavar="LAW", help="law name (redcorr curve --list) or file:PATH")
    dust.add_argument("--grain", metavar="MODEL", help="grain model name or grain:PATH.toml")
    p.add_argument("--rv", type=finite_float, metavar="R", help="R_V of the law (law default if omitted)")
    p.add_argument("--band", action="append", required=True, metavar="NAME", help="a band; repeat for more")
    p.add_argument(
        "--sed",
        required=True,
        metavar="SOURCE",
        help="source spectrum: blackbody:T, powerlaw:ALPHA (F_nu ~ nu^ALPHA), flat, vega, sun or file:PATH",
    )
    amount = p.add_mutually_exclusive_group(required=True)
    amount.add_argument("--av", type=finite_float, metavar="A", help="A_V in mag")
    amount.add_argument("--ebv", type=finite_float, metavar="E", help="E(B-V) in mag; A_V = R_V × E(B-V)")
    p.add_argument(
        "--extrapolate", action="store_true", help="let the curve extrapolate beyond its range, with a warning"
    )
    p.add_argument("--json", action="store_true", help="print a JSON list, one object per band")
    p.add_argument(
        "--grid",
        metavar="FILE.ecsv",
        help="also write A_b/A_V over blackbody temperature 3000-50000 K and A_V 0-20 (ECSV) "
        "and report a polynomial fit in (intrinsic colour, A_V)",
    )
    p.add_argument("--plot", metavar="FILE.png", help="draw the bands over the curve and A_b/A_V against A_V")
    p.set_defaults(func=run)


def _curve(args):
    from redcorr.io import load_curve  # heavy: loaded on use

    if args.grain is not None:
        if args.rv is not None:
            raise InputError("--rv cannot be used with --grain: a grain model fixes its own R_V")
        return load_curve(args.grain)
    return load_curve(args.law, r_v=args.rv)


def _a_v(args, curve):
    if args.av is not None:
        a_v = args.av
    else:
        if not math.isfinite(curve.r_v):
            raise InputError(f"--ebv needs the curve's R_V, which {curve.name} does not define; give --av")
        a_v = curve.r_v * args.ebv
    if a_v < 0:
        raise InputError(f"A_V={a_v:g} mag is negative; give --av or --ebv >= 0")
    return float(a_v)


def _write_grid(curve, bands, path, extrapolate, out):
    from redcorr.coefficients import coefficient_grid
    from redcorr.io.grids import write_coefficient_grid

    grid = coefficient_grid(curve, bands, extrapolate=extrapolate)
    poly = grid.fit_polynomial() if len(bands) >= 2 else None
    write_coefficient_grid(grid, path, poly)
    print(
        f"# grid: {len(bands)} band(s) x {grid.temperatures.size} T x {grid.a_v.size} A_V written to {path}", file=out
    )
    if poly is None:
        print("# polynomial fit skipped: the intrinsic colour needs two bands", file=out)
        return
    b1, b2 = poly.colour_bands
    print(
        f"# polynomial A_b/A_V in ({b1} - {b2})_0 and A_V, degrees {poly.coeffs.shape[1] - 1},"
        f"{poly.coeffs.shape[2] - 1}; residuals in A_b over the grid:",
        file=out,
    )
    for name, rms, worst in zip(poly.bands, poly.rms_mag, poly.max_mag, strict=True):
        print(f"#   {name}: rms {rms:.2e} mag, max {worst:.2e} mag", file=out)


def run(args):
    from redcorr.band_summary import band_summary
    from redcorr.extinction import colour_excess_ratio
    from redcorr.io.filters import load_band
    from redcorr.io.spectra import load_sed

    check_outputs(args, "--grid", "--plot")
    curve = _curve(args)
    bands = [load_band(spec) for spec in args.band]
    sed = load_sed(args.sed)
    a_v = _a_v(args, curve)
    rows = band_summary(curve, bands, sed, a_v, args.extrapolate)
    info = sys.stderr if args.json else sys.stdout
    if args.json:
        print_json(rows)
    else:
        print(f"# {curve.name}, R_V = {curve.r_v:g}; {curve.citation}")
        print(f"# source {sed.name}; A_V = {a_v:g} mag, E(B-V) = A_V/R_V = {a_v / curve.r_v:.4g} mag")
        print_table(rows, ["band", "lambda_eff_um", "A_band", "A_over_AV", "A_over_EBV"])
        if len(bands) >= 2:
            print("\n# colour-excess ratios E(b1-b2)/E(B-V)")
            pairs = [
                {
                    "colour": f"{b1.name} - {b2.name}",
                    "E_over_EBV": float(colour_excess_ratio(curve, b1, b2, sed, a_v, args.extrapolate)),
                }
                for b1, b2 in zip(bands[:-1], bands[1:], strict=True)
            ]
            print_table(pairs, ["colour", "E_over_EBV"])
    if args.grid is not None:
        _write_grid(curve, bands, args.grid, args.extrapolate, info)
    if args.plot is not None:
        from redcorr.io.figures import save_figure  # noqa: PLC0415
        from redcorr.plotting import band_coefficients_figure  # noqa: PLC0415 - matplotlib only when asked

        fig = band_coefficients_figure(curve, bands, sed, a_v_max=max(20.0, a_v), extrapolate=args.extrapolate)
        save_figure(fig, args.plot)
    return 0
