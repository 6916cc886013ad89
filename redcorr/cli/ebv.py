"""``redcorr ebv``: look up E(B-V) in a local dust map at given positions."""

from redcorr._constants import INTERPOLATIONS, MAP_FLAGS, MAP_UNITS
from redcorr.cli._common import finite_float, print_json, print_table
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run"]

_COLUMNS = ["ra_deg", "dec_deg", "l_deg", "b_deg", "ebv", "flag"]


def add_parser(sub):
    p = sub.add_parser(
        "ebv",
        help="look up E(B-V) in a dust map file at positions",
        description=(
            "Look up E(B-V) in a local dust map: a HEALPix FITS table, one or more FITS images "
            "with a celestial WCS, or a .toml map description. Positions are RA/Dec (ICRS unless "
            "--frame says otherwise) or galactic l/b, in degrees; give several as repeated values "
            "or comma lists (write a list starting with a minus sign as --dec=-27.4,-27.5). "
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


def run(args):
    import numpy as np

    from redcorr.io.maps import open_map
    from redcorr.maps import describe_flags, parse_frame, transform_lonlat

    lon, lat, frame = _positions(args)
    dust_map = open_map(
        args.map[0] if len(args.map) == 1 else args.map,
        unit=args.unit,
        scale=args.scale,
        interpolation=args.interpolation,
        r_v=args.rv,
        column=args.column,
    )
    ebv, flags = dust_map.reddening_at(lon, lat, frame=frame, r_v=args.rv)
    ra, dec = transform_lonlat(lon, lat, frame, parse_frame("icrs"))
    gl, gb = transform_lonlat(lon, lat, frame, parse_frame("galactic"))
    rows = [
        {"ra_deg": float(r), "dec_deg": float(d), "l_deg": float(x), "b_deg": float(y), "ebv": float(e), "flag": int(f)}
        for r, d, x, y, e, f in zip(ra, dec, gl, gb, np.atleast_1d(ebv), np.atleast_1d(flags), strict=True)
    ]
    if args.json:
        print_json(rows)
        return 0
    info = dust_map.describe()
    unit_note = "" if dust_map.unit == "E(B-V)" else f", A_V / R_V with R_V = {args.rv or dust_map.r_v:g}"
    print(
        f"# map {info['name']} ({info['kind']}, {dust_map.unit}{unit_note}, "
        f"{args.interpolation or dust_map.interpolation}, scale {dust_map.scale:g})"
    )
    print_table(
        rows, _COLUMNS, formats={"ebv": ".4f", "ra_deg": ".5f", "dec_deg": ".5f", "l_deg": ".5f", "b_deg": ".5f"}
    )
    flagged = sorted({int(f) for f in np.atleast_1d(flags) if f})
    if flagged:
        print("# flags: " + "; ".join(f"{f} = {describe_flags(f)}" for f in flagged))
    return 0
