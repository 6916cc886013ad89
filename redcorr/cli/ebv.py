"""``redcorr ebv``: look up E(B-V) in a local dust map at given positions (and distances)."""

from redcorr._constants import INTERPOLATIONS, MAP_FLAGS, MAP_UNITS
from redcorr.cli._common import finite_float, positive_float, print_json, print_table
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run"]

_FORMATS = {
    "ra_deg": ".5f", "dec_deg": ".5f", "l_deg": ".5f", "b_deg": ".5f", "distance_pc": ".1f", "ebv": ".4f",
    "ebv_err": ".4f",
}

_EDSD = "the EDSD prior of Bailer-Jones 2015 (PASP 127, 994)"


def add_parser(sub):
    p = sub.add_parser(
        "ebv",
        help="look up E(B-V) in a dust map file at positions (and distances, for a 3D map)",
        description=(
            "Look up E(B-V) in a local dust map: a HEALPix FITS table, one or more FITS images "
            "with a celestial WCS, or a .toml map description; a distance-resolved (3D) map gives "
            "the reddening out to a star's distance. Positions are RA/Dec (ICRS unless "
            "--frame says otherwise) or galactic l/b, in degrees; give several as repeated values "
            "or comma lists (write a list starting with a minus sign as --dec=-27.4,-27.5). "
            "Distances (--distance, pc) or parallaxes (--parallax, mas) are given the same way, one "
            "per position or one for all; with an uncertainty the output adds ebv_err, the spread of "
            "E(B-V) over the distance distribution. A 2D map ignores distances (with a warning); a 3D "
            "map without a distance gives its whole column, to its last distance. "
            "Output ra_deg/dec_deg are ICRS, l_deg/b_deg galactic. Flag bits: "
            + ", ".join(f"{bit} {name}" for name, bit in MAP_FLAGS.items())
            + " (0 = ok)."
        ),
    )
    p.add_argument(
        "--map", nargs="+", required=True, metavar="FILE_OR_DESCRIPTION", help="map file(s) or a .toml map description"
    )
    p.add_argument("--ra", nargs="+", action="extend", metavar="RA", help="right ascension(s), degrees")
    p.add_argument("--dec", nargs="+", action="extend", metavar="DEC", help="declination(s), degrees")
    p.add_argument("--l", nargs="+", action="extend", metavar="L", help="galactic longitude(s), degrees")
    p.add_argument("--b", nargs="+", action="extend", metavar="B", help="galactic latitude(s), degrees")
    where = p.add_mutually_exclusive_group()
    where.add_argument("--distance", nargs="+", action="extend", metavar="D", help="distance(s) from the Sun, pc")
    where.add_argument(
        "--parallax", nargs="+", action="extend", metavar="MAS",
        help="parallax(es), mas: without --parallax-err the distance is 1000/parallax (parallax > 0)",
    )
    p.add_argument(
        "--distance-err", nargs="+", action="extend", metavar="E",
        help="standard error(s) of --distance, pc (a Gaussian, truncated at 0)",
    )
    p.add_argument(
        "--parallax-err", nargs="+", action="extend", metavar="MAS",
        help=f"standard error(s) of --parallax, mas: the distance posterior with {_EDSD}",
    )
    p.add_argument(
        "--prior-length", type=positive_float, metavar="PC",
        help="length scale of the EDSD prior's exponentially decreasing space density, pc "
        "(default: redcorr.maps.distance.EDSD_LENGTH_SCALE_PC; the header line shows the one used)",
    )
    p.add_argument("--frame", default="icrs", help="astropy frame of --ra/--dec (default icrs; e.g. fk5, fk4)")
    p.add_argument("--interpolation", choices=INTERPOLATIONS, help="default: the map's own (bilinear)")
    p.add_argument("--scale", type=finite_float, help="multiply map values by this factor")
    p.add_argument("--unit", choices=MAP_UNITS, help="what the map holds (default: description's, else E(B-V))")
    p.add_argument("--rv", type=finite_float, metavar="R", help="R_V to turn an A_V map into E(B-V)")
    p.add_argument("--column", help="HEALPix table column (name or 0-based number)")
    p.add_argument("--json", action="store_true", help="print JSON: one object per position")
    p.set_defaults(func=run)


def _numbers(name, texts):
    """Floats from repeated values and comma lists."""
    import numpy as np  # heavy: loaded on use

    from redcorr._validate import check_finite

    out = []
    for text in texts:
        for item in str(text).split(","):
            if item.strip():
                out.append(check_finite(name, item.strip()))
    if not out:
        raise InputError(f"{name} has no values")
    return np.asarray(out)


def _positive_numbers(name, texts, unit):
    """Floats > 0 from repeated values and comma lists."""
    values = _numbers(name, texts)
    for value in values:
        if not value > 0:
            raise InputError(f"{name}={float(value)!r} is not allowed; it must be > 0 ({unit})")
    return values


def _positions(args):
    """(lon, lat, frame name) from --ra/--dec or --l/--b."""
    import numpy as np

    from redcorr._validate import check_range
    from redcorr.maps import parse_frame

    equatorial = args.ra is not None or args.dec is not None
    galactic = args.l is not None or args.b is not None
    if equatorial == galactic:
        raise InputError("give positions either as --ra and --dec or as --l and --b (one pair, not both)")
    lon_name, lat_name = ("--ra", "--dec") if equatorial else ("--l", "--b")
    lon_text, lat_text = (args.ra, args.dec) if equatorial else (args.l, args.b)
    if lon_text is None or lat_text is None:
        missing = lon_name if lon_text is None else lat_name
        raise InputError(f"{missing} is missing; {lon_name} and {lat_name} go together")
    lon, lat = _numbers(lon_name, lon_text), _numbers(lat_name, lat_text)
    for value in lat:
        check_range(lat_name, float(value), -90, 90)
    if lon.size != lat.size and 1 not in (lon.size, lat.size):
        raise InputError(f"{lon_name} has {lon.size} values and {lat_name} {lat.size}; give as many of each (or one)")
    lon, lat = np.broadcast_arrays(lon, lat)
    return lon, lat, (parse_frame(args.frame, "--frame") if equatorial else parse_frame("galactic"))


def _distance_options(args):
    """The distance options, checked: (kind, value, error) with kind None, "distance" or "parallax".

    Values and errors are float arrays (pc for distances, mas for parallaxes)
    whose lengths match or are one; the error is None when not given.
    """
    import numpy as np

    if args.distance_err is not None and args.distance is None:
        raise InputError("--distance-err is the error of --distance; give --distance too")
    if args.parallax_err is not None and args.parallax is None:
        raise InputError("--parallax-err is the error of --parallax; give --parallax too")
    if args.prior_length is not None and args.parallax_err is None:
        raise InputError(
            f"--prior-length={args.prior_length:g} is the length scale of the parallaxes' prior; "
            "it needs --parallax and --parallax-err"
        )
    if args.distance is not None:
        kind, name, value = "distance", "--distance", _positive_numbers("--distance", args.distance, "pc")
        err_name, err = "--distance-err", args.distance_err
        err = None if err is None else _positive_numbers(err_name, err, "pc")
    elif args.parallax is not None:
        kind, name, value = "parallax", "--parallax", _numbers("--parallax", args.parallax)
        err_name, err = "--parallax-err", args.parallax_err
        err = None if err is None else _positive_numbers(err_name, err, "mas")
        if err is None and not np.all(value > 0):
            bad = float(value[~(value > 0)][0])
            raise InputError(
                f"--parallax={bad!r} cannot be turned into a distance without an error: 1000/parallax needs "
                "a parallax > 0; give --parallax-err to use the distance posterior with a prior"
            )
    else:
        return None, None, None
    if err is not None:
        if err.size != value.size and 1 not in (err.size, value.size):
            raise InputError(f"{err_name} has {err.size} values and {name} {value.size}; give as many (or one)")
    return kind, value, err


def _broadcast(lon, lat, named):
    """Positions and the (name, array) pairs of ``named`` broadcast to one length, or an InputError."""
    import numpy as np

    for name, values in named:
        if values.size != lon.size and 1 not in (values.size, lon.size):
            raise InputError(
                f"{name} has {values.size} values for {lon.size} positions; give one per position or one for all"
            )
    return np.broadcast_arrays(lon, lat, *(values for _, values in named))


def _lookup_distance(kind, value, err, prior_length):
    """What to give the map as ``distance``, the distance_pc to print, and header lines on both."""
    import warnings

    import numpy as np

    from redcorr.exceptions import OutOfRangeWarning
    from redcorr.maps import PRIOR_FRACTION, DistanceSamples, edsd_mode, prior_dominated

    if kind is None:
        return None, None, []
    if kind == "distance" and err is None:
        return value, value, []
    if kind == "distance":
        note = ["ebv_err: standard deviation of E(B-V) over a Gaussian distance error (truncated at 0 pc)"]
        return DistanceSamples.gaussian(value, err), value, note
    if err is None:
        distance = 1000.0 / value
        return distance, distance, ["distance_pc = 1000/parallax (exact: no parallax error, so no prior)"]
    scale = {} if prior_length is None else {"length_scale_pc": prior_length}
    samples = DistanceSamples.from_parallax(value, err, **scale)
    length = samples.length_scale_pc
    weak = int(np.count_nonzero(prior_dominated(value, err) & (err > 0)))
    if weak:
        warnings.warn(
            f"{weak} of {samples.size} parallax(es) say little about the distance (error above "
            f"{PRIOR_FRACTION:g} of the parallax, or a parallax <= 0): their distance and E(B-V) come mostly "
            f"from the prior and its length scale, {length:g} pc (--prior-length)",
            OutOfRangeWarning,
            stacklevel=2,
        )
    note = [
        f"distance_pc: mode of the distance posterior with {_EDSD}, length scale {length:g} pc",
        "ebv_err: standard deviation of E(B-V) over that posterior",
    ]
    return samples, edsd_mode(value, err, length), note


def _flag_notes(flagged, dust_map, kind):
    """Lines explaining the distance bits among the ``flagged`` values."""
    from redcorr.maps import BEYOND_WEIGHT

    bits = 0
    for flag in flagged:
        bits |= flag
    last = "" if dust_map.distances_pc is None else f"{dust_map.distances_pc[-1]:g} pc"
    notes = []
    if bits & MAP_FLAGS["beyond"]:
        if kind is None:
            notes.append(f"beyond: no distance given; E(B-V) is all the map holds, out to {last}")
        else:
            notes.append(
                f"beyond: the distance (or over {BEYOND_WEIGHT:.0%} of its distribution) is past the map's "
                f"reach, {last}: its last value, a lower limit"
            )
    if bits & MAP_FLAGS["no-distance"]:
        notes.append("no-distance: no usable distance for this position")
    return notes


def run(args):
    import numpy as np

    from redcorr.io.maps import open_map
    from redcorr.maps import describe_flags, parse_frame, transform_lonlat

    lon, lat, frame = _positions(args)
    kind, value, err = _distance_options(args)
    if kind is not None:
        named = [(f"--{kind}", value)] + ([] if err is None else [(f"--{kind}-err", err)])
        lon, lat, value, *rest = _broadcast(lon, lat, named)
        err = rest[0] if rest else None
    dust_map = open_map(
        args.map[0] if len(args.map) == 1 else args.map,
        unit=args.unit,
        scale=args.scale,
        interpolation=args.interpolation,
        r_v=args.rv,
        column=args.column,
    )
    three_d = dust_map.distances_pc is not None
    distance, distance_pc, note = _lookup_distance(kind, value, err, args.prior_length)
    with_err = three_d and err is not None
    result = dust_map.reddening_at(lon, lat, frame=frame, r_v=args.rv, distance=distance, return_error=with_err)
    ra, dec = transform_lonlat(lon, lat, frame, parse_frame("icrs"))
    gl, gb = transform_lonlat(lon, lat, frame, parse_frame("galactic"))
    table = {"ra_deg": ra, "dec_deg": dec, "l_deg": gl, "b_deg": gb}
    if three_d and distance_pc is not None:
        table["distance_pc"] = distance_pc
    table["ebv"] = result[0]
    if with_err:
        table["ebv_err"] = result[1]
    table["flag"] = result[-1]
    columns = list(table)
    rows = [
        {c: (int(v) if c == "flag" else float(v)) for c, v in zip(columns, values, strict=True)}
        for values in zip(*(np.atleast_1d(table[c]) for c in columns), strict=True)
    ]
    if args.json:
        print_json(rows)
        return 0
    info = dust_map.describe()
    unit_note = "" if dust_map.unit == "E(B-V)" else f", A_V / R_V with R_V = {args.rv or dust_map.r_v:g}"
    reach = ""
    if three_d:
        d = dust_map.distances_pc
        reach = f", {d.size} distances {d[0]:g}-{d[-1]:g} pc"
    print(
        f"# map {info['name']} ({info['kind']}, {dust_map.unit}{unit_note}, "
        f"{args.interpolation or dust_map.interpolation}, scale {dust_map.scale:g}{reach})"
    )
    if three_d:
        for line in note:
            print(f"# {line}")
    print_table(rows, columns, formats=_FORMATS)
    flagged = sorted({int(f) for f in np.atleast_1d(table["flag"]) if f})
    if flagged:
        print("# flags: " + "; ".join(f"{f} = {describe_flags(f)}" for f in flagged))
        for line in _flag_notes(flagged, dust_map, kind):
            print(f"#   {line}")
    return 0
