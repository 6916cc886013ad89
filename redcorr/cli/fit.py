"""``redcorr fit``: each star's reddening from its own photometry, for a whole catalog file."""

import argparse

from redcorr._constants import CATALOG_FIT_FLAGS
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

DEFAULT_FLOOR = 0.02
"""mag: the floor of ``--floor`` (``redcorr.photometric_reddening.DEFAULT_FLOOR``, repeated here so that
the parser does not import numpy; a test checks they agree)."""

DEFAULT_RV_RANGE = (2.3, 6.0)
"""The R_V range of ``--rv-free`` when ``--rv-range`` is not given: the span of sight lines of the Milky
Way from the diffuse medium (about 2.3) to dense clouds (about 6; common practice, no source)."""

_EPILOG = (
    "Output columns: ebv_fit, ebv_fit_err, av_fit, av_fit_err, teff_fit, teff_fit_err, [rv_fit, rv_fit_err with "
    "--rv-free], chi2_fit, nbands_fit, fit_flags (posterior mean and standard deviation). They feed "
    "'redcorr correct OUTPUT ... --ebv-col ebv_fit --red-err-col ebv_fit_err'. fit_flags bits: "
    + ", ".join(f"{v}={k}" for k, v in CATALOG_FIT_FLAGS.items())
)


def _range(text):
    """argparse type: LOW,HIGH."""
    parts = text.split(",")
    try:
        low, high = (finite_float(p) for p in parts)
    except (ValueError, argparse.ArgumentTypeError):
        raise argparse.ArgumentTypeError(f"{text!r} is not LOW,HIGH (two numbers)") from None
    return low, high


def _floor(text):
    """argparse type: MAG (every band) or BAND=MAG, MAG finite and >= 0."""
    band, _, value = text.rpartition("=")
    mag = finite_float(value)
    if mag < 0:
        raise argparse.ArgumentTypeError(f"{text!r}: the floor must be >= 0 mag")
    return band or None, mag


def _floors(pairs, bands):
    """The floor of each band (None: the default for all) from --floor values."""
    if not pairs:
        return None
    common = [mag for band, mag in pairs if band is None]
    floors = dict.fromkeys(bands, common[-1] if common else DEFAULT_FLOOR)
    for band, mag in pairs:
        if band is not None:
            if band not in floors:
                raise InputError(f"--floor {band}={mag:g}: {band!r} is not one of the --band values {list(bands)}")
            floors[band] = mag
    return [floors[b] for b in bands]


def add_parser(sub):
    p = sub.add_parser(
        "fit",
        help="fit each star's E(B-V) (and T_eff, R_V) from its own magnitudes",
        description=(
            "Fit every row's reddening from its magnitudes in two or more bands: its colours are those of a "
            "main-sequence star of some T_eff (an intrinsic-colour table) reddened by the dust law through the "
            "bands, with a free distance modulus. Writes INPUT's columns plus the fit's to OUTPUT (never over "
            "INPUT; atomically) and a run summary to OUTPUT.summary.json. Formats and column guessing as for "
            "'redcorr correct'. Colours cannot always tell temperature from reddening: the errors then are "
            "large, and that is the answer."
        ),
        epilog=_EPILOG,
    )
    add_catalog_arguments(p, error_help="error column of a band (guessed if omitted; every band needs one)")
    m = p.add_argument_group("model")
    m.add_argument("--law", default="f99", metavar="NAME",
                   help="extinction law or grain model (see redcorr curve --list), or file:PATH (default f99)")
    rv = m.add_mutually_exclusive_group()
    rv.add_argument("--rv", type=finite_float, metavar="R", help="R_V, fixed (law default if omitted)")
    rv.add_argument("--rv-free", action="store_true", help="fit R_V too, flat over --rv-range")
    m.add_argument("--rv-range", type=_range, metavar="LOW,HIGH",
                   help=f"R_V range of --rv-free (default {DEFAULT_RV_RANGE[0]:g},{DEFAULT_RV_RANGE[1]:g})")
    m.add_argument("--colours", default="dwarfs", metavar="TABLE",
                   help="intrinsic colours: 'dwarfs' (Pecaut & Mamajek 2013, packaged) or an ECSV file of "
                        "your own (e.g. giants; see README)")
    m.add_argument("--floor", action="append", type=_floor, default=[], metavar="[BAND=]MAG",
                   help="model uncertainty added in quadrature to the errors: MAG for every band, "
                        "BAND=MAG for one (repeat; default 0.02)")
    m.add_argument("--ebv-max", type=finite_float, metavar="MAG", help="largest E(B-V) considered (default 3)")
    m.add_argument("--extrapolate", action="store_true", help="allow bands beyond the law's range")
    r = p.add_argument_group("priors (default: flat in log T_eff, E(B-V) >= 0 and R_V)")
    r.add_argument("--teff-col", metavar="COL", help="column of a measured T_eff (K): a Gaussian prior")
    r.add_argument("--teff-err-col", metavar="COL", help="column of its uncertainty (K)")
    r.add_argument("--prior-map", metavar="SPEC",
                   help="a dust map (FITS or TOML description): a 2D map bounds each star's E(B-V); a "
                        "distance-resolved map with a distance or parallax column gives a Gaussian prior")
    r.add_argument("--prior-map-err", type=finite_float, metavar="FRAC",
                   help="relative uncertainty of the map's values (default 0.1)")
    add_distance_options(r, "--prior-map")
    f = add_file_options(p)
    f.add_argument("--strict", action="store_true",
                   help="fail on text in a number column or an error <= 0 instead of flagging the row")
    add_run_options(f)
    p.set_defaults(func=run)


def _options(args):
    """The fit's options from the command line, through the edge shared with the terminal UI."""
    from redcorr.io.correction import fit_options  # noqa: PLC0415 - heavy (pandas): loaded on use

    check_paths(args)
    if args.rv_range is not None and not args.rv_free:
        raise InputError(f"--rv-range {args.rv_range[0]:g},{args.rv_range[1]:g} is used only with --rv-free")
    if (args.teff_col is None) != (args.teff_err_col is None):
        given, other = ("--teff-col", "--teff-err-col") if args.teff_col else ("--teff-err-col", "--teff-col")
        raise InputError(f"{given} needs {other}: a T_eff prior is a value and its uncertainty (K)")
    extra = {"--prior-map-err": args.prior_map_err is not None}
    located = distance_options(args, "--prior-map", args.prior_map, extra)
    model = {name: value for name, value in (("floor", _floors(args.floor, args.band)), ("ebv_max", args.ebv_max),
                                             ("prior_error", args.prior_map_err)) if value is not None}
    if args.prior_map is None:
        located = {}
    return fit_options(
        args.band, law=args.law, r_v=args.rv, r_v_range=(args.rv_range or DEFAULT_RV_RANGE) if args.rv_free else None,
        colours=args.colours, prior_map=args.prior_map, mag_columns=dict(args.mag), err_columns=dict(args.err),
        teff_column=args.teff_col, teff_error_column=args.teff_err_col, extrapolate=args.extrapolate,
        strict=args.strict, **located, **model,
    )


def run(args):
    from redcorr.correction import CatalogFit  # noqa: PLC0415 - heavy (pandas): loaded on use
    from redcorr.correction.columns import guessed_band_columns  # noqa: PLC0415

    options = _options(args)
    job = run_job(args, lambda columns: CatalogFit(columns, options), "fitting")
    report(args, job.summary, guessed_band_columns(job.plan, options.bands))
    return 0
