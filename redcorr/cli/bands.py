"""``redcorr bands``: list the known bands, or describe some."""

from redcorr.cli._common import print_json, print_table
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run"]


def add_parser(sub):
    p = sub.add_parser(
        "bands",
        help="list bands, or show a band's range, pivot and mean wavelength and width",
        description=(
            "With --list, every band name known by name: the project's filters/ folder, then the "
            "curves shipped by speclite. With NAME (a name, file:PATH, tophat:C:W, gauss:C:FWHM, or "
            "a product joined by '*'), the band's wavelength range, pivot and mean wavelength and "
            "width in µm."
        ),
    )
    p.add_argument("names", nargs="*", metavar="NAME", help="bands to describe")
    p.add_argument("--list", action="store_true", help="list every known band name")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")
    p.set_defaults(func=run)


def _list(as_json):
    from redcorr.io.filters import list_bands, project_bands  # heavy: loaded on use

    own = set(project_bands())
    rows = [{"band": n, "from": "filters/" if n in own else "speclite"} for n in list_bands()]
    if as_json:
        print_json(rows)
    else:
        print_table(rows, ["band", "from"])
        print("Also: file:PATH, tophat:CENTRE_UM:WIDTH_UM, gauss:CENTRE_UM:FWHM_UM, and products A*B.")
    return 0


def run(args):
    from redcorr.io.filters import load_band

    if args.list:
        if args.names:
            raise InputError(f"--list takes no NAME; drop {' '.join(args.names)!r} or --list")
        return _list(args.json)
    if not args.names:
        raise InputError("NAME is missing; give one or more bands, or --list")
    bands = [load_band(spec) for spec in args.names]
    for band in bands:
        band.warn_if_truncated()
    rows = [band.describe() for band in bands]
    if args.json:
        print_json(rows)
    else:
        print_table(
            rows,
            ["band", "convention", "wave_min_um", "wave_max_um", "pivot_um", "mean_um", "width_um"],
        )
        for row in rows:
            print(f"# {row['band']}: {row['provenance']}")
    return 0
