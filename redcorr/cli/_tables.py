"""What ``redcorr correct`` and ``redcorr fit`` share: table options, the run through an engine, the report.

Both commands read a catalog, run a table job (:class:`redcorr.correction.TableJob`)
on every row with the stream or the Dask engine (:mod:`redcorr.io.batch`)
and write the input's columns plus the job's to an output with a summary
beside it. Imports at module level: the standard library and
:mod:`redcorr.cli._common` only (see :mod:`redcorr.cli`, "Start-up").
"""

import argparse
import sys

from redcorr._constants import DEFAULT_CHUNK_ROWS
from redcorr.cli._common import finite_float, print_json
from redcorr.exceptions import InputError

__all__ = [
    "add_catalog_arguments",
    "add_distance_options",
    "add_file_options",
    "add_run_options",
    "check_paths",
    "column_map",
    "distance_options",
    "report",
    "run_job",
]


def column_map(text):
    """argparse type: BAND=COLUMN."""
    band, sep, col = text.rpartition("=")
    if not sep or not band or not col:
        raise argparse.ArgumentTypeError(f"{text!r} is not BAND=COLUMN")
    return band, col


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


def add_catalog_arguments(parser, *, error_help):
    """INPUT, OUTPUT and the bands group (--band, --mag, --err); returns the group."""
    parser.add_argument("input", metavar="INPUT",
                        help="catalog file, Parquet folder, or (with --engine dask) a CSV glob")
    parser.add_argument("output", metavar="OUTPUT", help="output file (or folder for --engine dask Parquet)")
    group = parser.add_argument_group("bands")
    group.add_argument("--band", action="append", required=True, metavar="SPEC",
                       help="a band: filter name (kw-v), file:PATH, tophat:C:W, gauss:C:FWHM (repeat)")
    group.add_argument("--mag", action="append", type=column_map, default=[], metavar="BAND=COL",
                       help="magnitude column of a band (guessed if omitted)")
    group.add_argument("--err", action="append", type=column_map, default=[], metavar="BAND=COL",
                       help=error_help)
    return group


def add_distance_options(group, map_option):
    """Positions and distances of the rows, for the map given with ``map_option``."""
    group.add_argument("--lon-col", metavar="COL", help=f"RA or l column for {map_option} (guessed)")
    group.add_argument("--lat-col", metavar="COL", help=f"Dec or b column for {map_option} (guessed)")
    group.add_argument("--frame", metavar="FRAME", help="frame of the position columns: icrs (default) or galactic")
    group.add_argument("--distance-col", metavar="COL",
                       help=f"column of distances (pc): a distance-resolved {map_option} gives the reddening "
                            "to each star")
    group.add_argument("--distance-err-col", metavar="COL", help="column of the distances' uncertainty (pc)")
    group.add_argument("--parallax-col", metavar="COL",
                       help="column of parallaxes (mas), instead of --distance-col; without --parallax-err-col "
                            "the distance is 1000/parallax and a parallax <= 0 is flagged")
    group.add_argument("--parallax-err-col", metavar="COL",
                       help="column of the parallaxes' uncertainty (mas): distance from the posterior with an "
                            "exponentially decreasing space density prior")
    group.add_argument("--prior-length", type=finite_float, metavar="PC",
                       help="length scale of that prior in pc (with --parallax-err-col; the run summary "
                            "records the value used)")


def distance_options(args, map_option, map_value, extra=None):
    """The map's position and distance options as keywords; refuses them without the map."""
    given = {"--lon-col": args.lon_col, "--lat-col": args.lat_col, "--frame": args.frame,
             "--distance-col": args.distance_col, "--distance-err-col": args.distance_err_col,
             "--parallax-col": args.parallax_col, "--parallax-err-col": args.parallax_err_col,
             "--prior-length": args.prior_length is not None} | (extra or {})
    if map_value is None:
        stray = [option for option, value in given.items() if value]
        if stray:
            raise InputError(f"{', '.join(stray)}: used only with {map_option}; give {map_option} or drop "
                             f"{', '.join(stray)}")
    if args.distance_col and args.parallax_col:
        raise InputError(f"--distance-col {args.distance_col} and --parallax-col {args.parallax_col}: "
                         "give a distance or a parallax column, not both")
    return dict(lon_column=args.lon_col, lat_column=args.lat_col, frame=args.frame,
                distance_column=args.distance_col, distance_error_column=args.distance_err_col,
                parallax_column=args.parallax_col, parallax_error_column=args.parallax_err_col,
                prior_length=args.prior_length)


def add_file_options(parser):
    """The files group: formats, CSV marks, chunks, columns kept, overwrite, engine, output of the summary."""
    f = parser.add_argument_group("files")
    f.add_argument("--in-format", choices=("csv", "ecsv", "fits", "parquet"), help="input format (from name)")
    f.add_argument("--out-format", choices=("csv", "ecsv", "fits", "parquet"),
                   help="output format (from OUTPUT's suffix, else INPUT's)")
    f.add_argument("--delimiter", default=",", metavar="C", help="CSV delimiter (default ,)")
    f.add_argument("--comment", default="#", metavar="C", help="CSV comment character (default #)")
    f.add_argument("--hdu", metavar="N", help="FITS extension number or name (default: first table)")
    f.add_argument("--chunk-rows", type=_positive_int, default=DEFAULT_CHUNK_ROWS, metavar="N", help="rows per chunk")
    f.add_argument("--keep", type=_names, metavar="COLS",
                   help="input columns to copy to OUTPUT, comma-separated (default all; '' for none)")
    return f


def add_run_options(group):
    """--overwrite, --strict, --engine, --scheduler, --partition-rows, --json, --quiet (after the command's own)."""
    group.add_argument("--overwrite", action="store_true", help="replace an existing OUTPUT")
    group.add_argument("--engine", choices=("stream", "dask"), default="stream",
                       help="stream (one process, default) or dask (Parquet datasets, CSV globs)")
    group.add_argument("--scheduler", metavar="ADDRESS", help="distributed scheduler for --engine dask")
    group.add_argument("--partition-rows", type=_positive_int, metavar="N",
                       help="rows per task of --engine dask (default 131072; a worker holds a few "
                            "--chunk-rows chunks at a time, whatever N)")
    group.add_argument("--json", action="store_true", help="print the run summary as JSON")
    group.add_argument("--quiet", action="store_true",
                       help="no progress bar, no note of the columns guessed and no summary text (errors are shown)")


def check_paths(args):
    """INPUT and OUTPUT must not be empty."""
    for name, path in (("INPUT", args.input), ("OUTPUT", args.output)):
        if not path.strip():
            raise InputError(f"{name}={path!r} is empty; give the path of a catalog")


class _Progress:
    """A rich progress bar (rows, rows/s, ETA) shown on a terminal after the first second."""

    def __init__(self, enabled, verb):
        self.enabled = enabled and sys.stderr.isatty()
        self.verb = verb
        self._bar = None

    def __enter__(self):
        if self.enabled:
            from rich.console import Console  # noqa: PLC0415
            from rich.progress import BarColumn, Progress, TextColumn, TimeRemainingColumn  # noqa: PLC0415

            self._bar = Progress(
                TextColumn(self.verb), BarColumn(), TextColumn("{task.fields[rows]:>12,} rows"),
                TextColumn("{task.fields[rate]:>10,.0f} rows/s"), TimeRemainingColumn(),
                console=Console(stderr=True), transient=True,
            )
            self._bar.start()
            self._task = self._bar.add_task(self.verb, total=1000, rows=0, rate=0.0)
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


def run_job(args, make, verb):
    """Run the table job ``make(columns)`` over INPUT into OUTPUT with the engine asked for; report it.

    Parameters
    ----------
    args : argparse.Namespace
        With the options of :func:`add_file_options` and :func:`add_run_options`.
    make : callable
        ``make(columns) -> TableJob``.
    verb : str
        For the progress bar (``"correcting"``).

    Returns
    -------
    TableJob
        The job as set up for the (last) pass, e.g. for its column plan.
    """
    from redcorr.io.batch import correct_file, correct_file_dask  # noqa: PLC0415 - heavy (pandas): loaded on use

    made = []

    def job(columns):
        made.append(make(columns))
        return made[-1]

    if args.engine == "dask":
        summary = correct_file_dask(
            args.input, args.output, job, in_format=args.in_format, out_format=args.out_format,
            delimiter=args.delimiter, comment=args.comment, overwrite=args.overwrite,
            scheduler=args.scheduler, keep_columns=args.keep, chunk_rows=args.chunk_rows,
            partition_rows=args.partition_rows,
        )
    else:
        for option, value in (("--scheduler", args.scheduler), ("--partition-rows", args.partition_rows)):
            if value:
                raise InputError(f"{option} needs --engine dask")
        hdu = int(args.hdu) if args.hdu and args.hdu.isdigit() else args.hdu
        with _Progress(not args.quiet and not args.json, verb) as progress:
            summary = correct_file(
                args.input, args.output, job, in_format=args.in_format, out_format=args.out_format,
                chunk_rows=args.chunk_rows, delimiter=args.delimiter, comment=args.comment, hdu=hdu,
                overwrite=args.overwrite, progress=progress, keep_columns=args.keep,
            )
    made[-1].summary = summary
    return made[-1]


def report(args, summary, guessed=()):
    """The note of the columns guessed (stderr), then the summary (JSON or lines), unless --quiet."""
    if not args.quiet and guessed:  # after the run, so that a failure stays one line
        text = ", ".join(f"{what} → {col if col is not None else 'none found'}" for what, col in guessed)
        print(f"redcorr {args.command}: columns guessed: {text} (name others with --mag, --err, ...)",
              file=sys.stderr)
    if args.json:
        print_json(summary.to_dict())
    elif not args.quiet:
        print(f"wrote {args.output}")
        for line in summary.lines():
            print(line)
