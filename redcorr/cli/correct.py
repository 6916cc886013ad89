"""``redcorr correct``: deredden a photometric catalog file, streaming or with Dask."""

import argparse

from redcorr._constants import CORRECTION_FLAGS, DEFAULT_TEMPERATURE
from redcorr.cli._common import finite_float
from redcorr.cli._tables import (
    add_catalog_arguments,
    add_distance_options,
    add_file_options,
    add_run_options,
    check_paths,
    distance_options,
    report,
    run_job,
)
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run"]

_EPILOG = "dered_flags bits: " + ", ".join(f"{v}={k}" for k, v in CORRECTION_FLAGS.items())


def _pair(text):
    """argparse type: BAND1,BAND2."""
    parts = text.split(",")
    if len(parts) != 2 or not all(parts):
        raise argparse.ArgumentTypeError(f"{text!r} is not BAND1,BAND2")
    return tuple(parts)


def add_parser(sub):
    p = sub.add_parser(
        "correct",
        help="deredden a catalog: corrected magnitudes, colours, errors and flags",
        description=(
            "Correct the magnitudes of every row of INPUT for interstellar reddening and write "
            "INPUT's columns plus the corrected ones to OUTPUT (never over INPUT; atomically). "
            "INPUT: CSV (also .gz), ECSV, FITS table, Parquet file or folder. A run summary is "
            "written to OUTPUT.summary.json. Column names are guessed when not given (also the names of the "
            "Gaia archive, 2MASS, Pan-STARRS, SDSS and WISE tables, and VizieR's) and the guesses listed "
            "on stderr."
        ),
        epilog=_EPILOG,
    )
    g = add_catalog_arguments(p, error_help="error column of a band (guessed if omitted)")
    g.add_argument("--colour", action="append", type=_pair, default=[], metavar="B1,B2",
                   help="also write the corrected colour B1-B2 (repeat)")
    r = p.add_argument_group("reddening (one source)")
    r.add_argument("--ebv-col", metavar="COL", help="column of E(B-V)")
    r.add_argument("--av-col", metavar="COL", help="column of A_V")
    r.add_argument("--ebv", type=finite_float, metavar="X", help="one E(B-V) for every row")
    r.add_argument("--av", type=finite_float, metavar="X", help="one A_V for every row")
    r.add_argument("--map", metavar="SPEC", help="a local dust map (FITS or TOML description)")
    r.add_argument("--red-err-col", metavar="COL", help="column of the reddening's uncertainty")
    r.add_argument("--red-err", type=finite_float, default=0.0, metavar="X",
                   help="one uncertainty of the reddening for every row")
    r.add_argument("--map-scale", type=finite_float, default=1.0, metavar="F", help="multiply map values by F")
    add_distance_options(r, "--map")
    d = p.add_argument_group("dust")
    d.add_argument("--law", default="f99", metavar="NAME",
                   help="extinction law or grain model (see redcorr curve --list), or file:PATH (default f99)")
    d.add_argument("--rv", type=finite_float, metavar="R", help="R_V (law default if omitted)")
    d.add_argument("--rv-col", metavar="COL", help="column of R_V per row")
    d.add_argument("--rv-err", type=finite_float, default=0.0, metavar="S", help="uncertainty of R_V")
    d.add_argument("--rv-err-col", metavar="COL", help="column of the uncertainty of R_V")
    d.add_argument("--linear", action="store_true",
                   help="A_b = R_b x E(B-V) (no dependence of A_b/A_V on the amount of dust)")
    d.add_argument("--extrapolate", action="store_true", help="allow bands beyond the law's range (flagged)")
    s = p.add_argument_group("source spectrum (blackbody)")
    s.add_argument("--teff", type=finite_float, default=DEFAULT_TEMPERATURE, metavar="K",
                   help=f"fixed temperature, and first guess of --solve-colour (default {DEFAULT_TEMPERATURE:g})")
    s.add_argument("--teff-col", metavar="COL", help="column of temperatures (K)")
    s.add_argument("--solve-colour", type=_pair, metavar="B1,B2",
                   help="solve each row's temperature from its dereddened colour B1-B2")
    s.add_argument("--colour-offset", type=finite_float, default=0.0, metavar="MAG",
                   help="added to the blackbody AB colour for --solve-colour (catalog system - AB)")
    f = add_file_options(p)
    f.add_argument("--suffix", default="_dered", help="suffix of corrected columns (default _dered)")
    f.add_argument("--strict", action="store_true", help="fail on text in a number column instead of flagging")
    add_run_options(f)
    p.set_defaults(func=run)


def _options(args):
    """The correction's options from the command line, through the edge shared with the terminal UI."""
    from redcorr.io.correction import correction_options  # noqa: PLC0415 - heavy (pandas): loaded on use

    check_paths(args)
    if args.teff_col and args.solve_colour:
        raise InputError("give --teff-col or --solve-colour, not both")
    located = distance_options(args, "--map", args.map, {"--map-scale": args.map_scale != 1.0})
    spectrum = "column" if args.teff_col else "colour" if args.solve_colour else "fixed"
    return correction_options(
        args.band, law=args.law, r_v=args.rv,
        mag_columns=dict(args.mag), err_columns=dict(args.err), colours=args.colour,
        ebv_column=args.ebv_col, av_column=args.av_col, ebv=args.ebv, av=args.av, dust_map=args.map,
        reddening_error_column=args.red_err_col, reddening_error=args.red_err, map_scale=args.map_scale,
        **located,
        rv_column=args.rv_col, rv_error=args.rv_err, rv_error_column=args.rv_err_col,
        nonlinear=not args.linear, extrapolate=args.extrapolate,
        spectrum=spectrum, temperature=args.teff, temperature_column=args.teff_col,
        solve_colour=args.solve_colour, colour_offset=args.colour_offset, strict=args.strict,
        suffix=args.suffix,
    )


def run(args):
    from redcorr.correction import Correction  # noqa: PLC0415 - heavy (pandas): loaded on use
    from redcorr.correction.columns import guessed_columns  # noqa: PLC0415

    options = _options(args)
    job = run_job(args, lambda columns: Correction(columns, options), "correcting")
    report(args, job.summary, guessed_columns(job.plan, options))
    return 0
