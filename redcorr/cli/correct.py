"""``redcorr correct``: deredden a photometric catalog file, streaming or with Dask."""

import argparse
import sys

from redcorr._constants import CORRECTION_FLAGS, DEFAULT_CHUNK_ROWS, DEFAULT_TEMPERATURE
from redcorr.cli._common import finite_float, print_json
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run"]

_EPILOG = "dered_flags bits: " + ", ".join(f"{v}={k}" for k, v in CORRECTION_FLAGS.items())


def _mapping(text):
    """argparse type: BAND=COLUMN."""
    band, sep, col = text.rpartition("=")
    if not sep or not band or not col:
        raise argparse.ArgumentTypeError(f"{text!r} is not BAND=COLUMN")
    return band, col


def _pair(text):
    """argparse type: BAND1,BAND2."""
    parts = text.split(",")
    if len(parts) != 2 or not all(parts):
        raise argparse.ArgumentTypeError(f"{text!r} is not BAND1,BAND2")
    return tuple(parts)


def _names(text):
    """argparse type: comma-separated column names ('' for none)."""
    return [n for n in text.split(",") if n]


def _positive_int(text):
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number") from None
    if value < 1:
        raise argparse.ArgumentTypeError(f"{text!r} must be >= 1")
    return value


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
    p.add_argument("input", metavar="INPUT", help="catalog file, Parquet folder, or (with --engine dask) a CSV glob")
    p.add_argument("output", metavar="OUTPUT", help="output file (or folder for --engine dask Parquet)")
    g = p.add_argument_group("bands")
    g.add_argument("--band", action="append", required=True, metavar="SPEC",
                   help="a band: filter name (kw-v), file:PATH, tophat:C:W, gauss:C:FWHM (repeat)")
    g.add_argument("--mag", action="append", type=_mapping, default=[], metavar="BAND=COL",
                   help="magnitude column of a band (guessed if omitted)")
    g.add_argument("--err", action="append", type=_mapping, default=[], metavar="BAND=COL",
                   help="error column of a band (guessed if omitted)")
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
    r.add_argument("--lon-col", metavar="COL", help="RA or l column for --map (guessed)")
    r.add_argument("--lat-col", metavar="COL", help="Dec or b column for --map (guessed)")
    r.add_argument("--frame", metavar="FRAME", help="frame of the position columns: icrs (default) or galactic")
    r.add_argument("--distance-col", metavar="COL",
                   help="column of distances (pc): a distance-resolved --map gives the reddening to each star")
    r.add_argument("--distance-err-col", metavar="COL", help="column of the distances' uncertainty (pc)")
    r.add_argument("--parallax-col", metavar="COL",
                   help="column of parallaxes (mas), instead of --distance-col; without --parallax-err-col "
                        "the distance is 1000/parallax and a parallax <= 0 is flagged")
    r.add_argument("--parallax-err-col", metavar="COL",
                   help="column of the parallaxes' uncertainty (mas): distance from the posterior with an "
                        "exponentially decreasing space density prior")
    r.add_argument("--prior-length", type=finite_float, metavar="PC",
                   help="length scale of that prior in pc (with --parallax-err-col; the run summary "
                        "records the value used)")
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
    f = p.add_argument_group("files")
    f.add_argument("--in-format", choices=("csv", "ecsv", "fits", "parquet"), help="input format (from name)")
    f.add_argument("--out-format", choices=("csv", "ecsv", "fits", "parquet"),
                   help="output format (from OUTPUT's suffix, else INPUT's)")
    f.add_argument("--delimiter", default=",", metavar="C", help="CSV delimiter (default ,)")
    f.add_argument("--comment", default="#", metavar="C", help="CSV comment character (default #)")
    f.add_argument("--hdu", metavar="N", help="FITS extension number or name (default: first table)")
    f.add_argument("--chunk-rows", type=_positive_int, default=DEFAULT_CHUNK_ROWS, metavar="N", help="rows per chunk")
    f.add_argument("--keep", type=_names, metavar="COLS",
                   help="input columns to copy to OUTPUT, comma-separated (default all; '' for none)")
    f.add_argument("--suffix", default="_dered", help="suffix of corrected columns (default _dered)")
    f.add_argument("--overwrite", action="store_true", help="replace an existing OUTPUT")
    f.add_argument("--strict", action="store_true", help="fail on text in a number column instead of flagging")
    f.add_argument("--engine", choices=("stream", "dask"), default="stream",
                   help="stream (one process, default) or dask (Parquet datasets, CSV globs)")
    f.add_argument("--scheduler", metavar="ADDRESS", help="distributed scheduler for --engine dask")
    f.add_argument("--json", action="store_true", help="print the run summary as JSON")
    f.add_argument("--quiet", action="store_true",
                   help="no progress bar, no note of the columns guessed and no summary text (errors are shown)")
    p.set_defaults(func=run)


def _options(args):
    """The correction's options from the command line, through the edge shared with the terminal UI."""
    from redcorr.io.correction import correction_options  # noqa: PLC0415 - heavy (pandas): loaded on use

    for name, path in (("INPUT", args.input), ("OUTPUT", args.output)):
        if not path.strip():
            raise InputError(f"{name}={path!r} is empty; give the path of a catalog")
    if args.teff_col and args.solve_colour:
        raise InputError("give --teff-col or --solve-colour, not both")
    if args.map is None:
        given = {"--map-scale": args.map_scale != 1.0, "--lon-col": args.lon_col, "--lat-col": args.lat_col,
                 "--frame": args.frame, "--distance-col": args.distance_col,
                 "--distance-err-col": args.distance_err_col, "--parallax-col": args.parallax_col,
                 "--parallax-err-col": args.parallax_err_col, "--prior-length": args.prior_length is not None}
        stray = [option for option, value in given.items() if value]
        if stray:
            raise InputError(f"{', '.join(stray)}: used only with --map; give --map or drop {', '.join(stray)}")
    if args.distance_col and args.parallax_col:
        raise InputError(f"--distance-col {args.distance_col} and --parallax-col {args.parallax_col}: "
                         "give a distance or a parallax column, not both")
    spectrum = "column" if args.teff_col else "colour" if args.solve_colour else "fixed"
    return correction_options(
        args.band, law=args.law, r_v=args.rv,
        mag_columns=dict(args.mag), err_columns=dict(args.err), colours=args.colour,
        ebv_column=args.ebv_col, av_column=args.av_col, ebv=args.ebv, av=args.av, dust_map=args.map,
        reddening_error_column=args.red_err_col, reddening_error=args.red_err, map_scale=args.map_scale,
        lon_column=args.lon_col, lat_column=args.lat_col, frame=args.frame,
        distance_column=args.distance_col, distance_error_column=args.distance_err_col,
        parallax_column=args.parallax_col, parallax_error_column=args.parallax_err_col,
        prior_length=args.prior_length,
        rv_column=args.rv_col, rv_error=args.rv_err, rv_error_column=args.rv_err_col,
        nonlinear=not args.linear, extrapolate=args.extrapolate,
        spectrum=spectrum, temperature=args.teff, temperature_column=args.teff_col,
        solve_colour=args.solve_colour, colour_offset=args.colour_offset, strict=args.strict,
        suffix=args.suffix,
    )


class _Progress:
    """A rich progress bar (rows, rows/s, ETA) shown on a terminal after the first second."""

    def __init__(self, enabled):
        self.enabled = enabled and sys.stderr.isatty()
        self._bar = None

    def __enter__(self):
        if self.enabled:
            from rich.console import Console  # noqa: PLC0415
            from rich.progress import BarColumn, Progress, TextColumn, TimeRemainingColumn  # noqa: PLC0415

            self._bar = Progress(
                TextColumn("correcting"), BarColumn(), TextColumn("{task.fields[rows]:>12,} rows"),
                TextColumn("{task.fields[rate]:>10,.0f} rows/s"), TimeRemainingColumn(),
                console=Console(stderr=True), transient=True,
            )
            self._bar.start()
            self._task = self._bar.add_task("correct", total=1000, rows=0, rate=0.0)
        return self

    def __call__(self, rows, fraction):
        if self._bar is None:
            return
        task = self._bar.tasks[0]
        elapsed = task.elapsed or 1e-9
        done = 1000 * fraction if fraction is not None else None
        self._bar.update(self._task, completed=done, rows=rows, rate=rows / elapsed)

    def __exit__(self, *exc):
        if self._bar is not None:
            self._bar.stop()


def _note_guesses(plan, options):
    """Say on stderr which input columns were guessed (``kw-b → Bmag``), so that a wrong guess is seen.

    Said once the run succeeded: a failure is one line on stderr (its message names the column at fault).
    """
    from redcorr.correction.columns import guessed_columns  # noqa: PLC0415

    pairs = guessed_columns(plan, options)
    if pairs:
        text = ", ".join(f"{what} → {col if col is not None else 'none found'}" for what, col in pairs)
        print(f"redcorr correct: columns guessed: {text} (name others with --mag, --err, ...)", file=sys.stderr)


def run(args):
    from redcorr.correction import Correction  # noqa: PLC0415 - heavy (pandas): loaded on use
    from redcorr.io.batch import correct_file, correct_file_dask  # noqa: PLC0415

    options = _options(args)

    made = []

    def make(columns):
        made.append(Correction(columns, options))
        return made[-1]

    if args.engine == "dask":
        summary = correct_file_dask(
            args.input, args.output, make, in_format=args.in_format, out_format=args.out_format,
            delimiter=args.delimiter, comment=args.comment, overwrite=args.overwrite,
            scheduler=args.scheduler, keep_columns=args.keep,
        )
    else:
        if args.scheduler:
            raise InputError("--scheduler needs --engine dask")
        hdu = int(args.hdu) if args.hdu and args.hdu.isdigit() else args.hdu
        with _Progress(not args.quiet and not args.json) as progress:
            summary = correct_file(
                args.input, args.output, make, in_format=args.in_format, out_format=args.out_format,
                chunk_rows=args.chunk_rows, delimiter=args.delimiter, comment=args.comment, hdu=hdu,
                overwrite=args.overwrite, progress=progress, keep_columns=args.keep,
            )
    if not args.quiet:  # after the run, so that a failure stays one line
        _note_guesses(made[-1].plan, options)
    if args.json:
        print_json(summary.to_dict())
    elif not args.quiet:
        print(f"wrote {args.output}")
        for line in summary.lines():
            print(line)
    return 0
