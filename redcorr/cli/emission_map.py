"""``redcorr emission-map``: a map of dust optical depth or hydrogen column turned into an E(B-V) or A_V map."""

from redcorr.cli._common import positive_float, print_table
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run"]

_QUANTITIES = ("nh", "hi", "tau")
_TO = {"ebv": "E(B-V)", "av": "A_V"}
_DEFAULT_RATIO = "bsd78"


def add_parser(sub):
    p = sub.add_parser(
        "emission-map",
        help="turn a map of dust optical depth or hydrogen column into an E(B-V) or A_V map",
        description=(
            "Convert INPUT, a map of the hydrogen column N_H (cm-2), of N(HI), or of the dust's "
            "optical depth tau at a far-infrared or submillimetre wavelength, into a map of E(B-V) "
            "(or A_V with --to av) that --map of 'redcorr ebv' and 'redcorr correct' reads. INPUT is a "
            "HEALPix FITS table or a FITS image with a celestial WCS; OUTPUT (.fits) keeps its layout "
            "and gets the conversion's provenance in its header. An A_V map also gets a map "
            "description beside it (OUTPUT with .toml), through which it is read. A column is "
            f"divided by a published ratio (--ratio, default {_DEFAULT_RATIO}; see --list) or your "
            "own (--per-ebv, --per-av); an optical depth by a grain model's tau/E(B-V) "
            "(--grain) or your own ratio. The caution printed with the result applies to every map."
        ),
    )
    p.add_argument("input", nargs="?", metavar="INPUT", help="the map to convert (never modified)")
    p.add_argument("output", nargs="?", metavar="OUTPUT", help="the map to write, a .fits file")
    p.add_argument("--list", action="store_true", help="list the published ratios of a column to reddening")
    p.add_argument(
        "--quantity", choices=_QUANTITIES,
        help="what INPUT holds: nh = N_H = N(HI) + 2 N(H2), cm-2; hi = N(HI), cm-2; tau = optical depth at "
        "--wave (default: tau with --wave or --grain, else nh)",
    )
    p.add_argument("--wave", type=positive_float, metavar="UM", help="wavelength of the optical depth, um")
    how = p.add_mutually_exclusive_group()
    how.add_argument("--ratio", metavar="NAME", help=f"a published column ratio (see --list; default {_DEFAULT_RATIO})")
    how.add_argument("--grain", metavar="MODEL", help="grain model giving tau/E(B-V) and tau/A_V (or grain:PATH.toml)")
    how.add_argument("--per-ebv", type=positive_float, metavar="X", help="your ratio: INPUT's quantity per mag E(B-V)")
    how.add_argument("--per-av", type=positive_float, metavar="X", help="your ratio: INPUT's quantity per mag A_V")
    p.add_argument("--to", choices=tuple(_TO), default="ebv", help="what OUTPUT holds: ebv = E(B-V), av = A_V")
    p.add_argument(
        "--rv", type=positive_float, metavar="R",
        help="R_V = A_V/E(B-V): to go between E(B-V) and A_V when the ratio gives the other one "
        "(recorded in an A_V map's description)",
    )
    p.add_argument("--scale", type=positive_float, metavar="F",
                   help="multiply INPUT's values first (e.g. 1e20 for a map in units of 1e20 cm-2)")
    p.add_argument("--negative", choices=("mask", "keep"), default="mask",
                   help="negative INPUT values: leave blank (default) or convert (negative reddening)")
    p.add_argument("--column", help="HEALPix table column of INPUT (name or 0-based number)")
    p.add_argument("--hdu", help="HDU of INPUT (number or name; default the first map)")
    p.add_argument("--overwrite", action="store_true", help="replace an existing OUTPUT (and its .toml)")
    p.set_defaults(func=run)


def _list():
    from redcorr.maps.emission import PUBLISHED_RATIOS

    rows = [
        {
            "name": r.name,
            "quantity": r.quantity,
            "per E(B-V)": "" if r.per_ebv is None else f"{r.per_ebv:.3g}",
            "per A_V": "" if r.per_av is None else f"{r.per_av:.3g}",
            "source": r.citation,
        }
        for r in PUBLISHED_RATIOS.values()
    ]
    print_table(rows, list(rows[0]))
    print("# ratios in cm-2 mag-1")
    for r in PUBLISHED_RATIOS.values():
        print(f"# {r.name}: {r.note}")
    return 0


def _quantity(args):
    """INPUT's quantity, from --quantity or guessed from --wave/--grain, checked against the other options."""
    quantity = args.quantity or ("tau" if args.wave is not None or args.grain is not None else "nh")
    if quantity == "tau":
        if args.wave is None:
            raise InputError("an optical depth (--quantity tau) needs --wave, its wavelength in um")
        if args.ratio is not None:
            raise InputError(
                f"--ratio {args.ratio} is a ratio of a hydrogen column; an optical depth needs --grain, "
                "--per-ebv or --per-av"
            )
        if args.grain is not None and args.rv is not None:
            raise InputError(f"--rv={args.rv:g} is not used: --grain {args.grain} has its own R_V (E(B-V) and A_V)")
        if args.grain is None and args.per_ebv is None and args.per_av is None:
            raise InputError("an optical depth (--quantity tau) needs --grain MODEL, --per-ebv X or --per-av X")
        return quantity
    if args.wave is not None:
        raise InputError(f"--wave={args.wave:g} is the wavelength of an optical depth; --quantity {quantity} has none")
    if args.grain is not None:
        raise InputError(f"--grain {args.grain} gives ratios for an optical depth; --quantity {quantity} is a column")
    return quantity


def _ratio(args, quantity):
    """The EmissionRatio the options ask for."""
    from redcorr.maps.emission import QUANTITIES, given_ratio, grain_ratio, published_ratio

    if args.per_ebv is not None or args.per_av is not None:
        return given_ratio(quantity, per_ebv=args.per_ebv, per_av=args.per_av, wave_um=args.wave)
    if args.grain is not None:
        from redcorr.io.grains import default_cache, get_grain_model

        return grain_ratio(get_grain_model(args.grain), args.wave, cache=default_cache())
    if args.ratio is None and quantity == "hi":
        raise InputError("--quantity hi needs a ratio for N(HI): --ratio liszt14 (see --list), or --per-ebv/--per-av")
    ratio = published_ratio(args.ratio or _DEFAULT_RATIO)
    wanted = QUANTITIES[quantity][0]
    if ratio.quantity != wanted:
        raise InputError(f"--ratio {ratio.name} is a ratio of {ratio.quantity}; INPUT holds {wanted} (--quantity)")
    return ratio


def _hdu(text):
    return None if text is None else int(text) if text.strip().isdigit() else text


def _show(value):
    return "nan" if value != value else f"{value:.4g}"


def run(args):
    if args.list:
        extra = [name for name in ("input", "output") if getattr(args, name) is not None]
        if extra:
            raise InputError(f"--list takes no {' or '.join(n.upper() for n in extra)}; drop them, or --list")
        return _list()
    if args.input is None or args.output is None:
        raise InputError("INPUT and OUTPUT are needed: the map to convert and the .fits file to write (or --list)")
    quantity = _quantity(args)
    unit = _TO[args.to]

    from redcorr.io.map_files import check_map_output, read_map_values, write_reddening_map
    from redcorr.maps.emission import CAUTION, reddening_from_emission

    check_map_output(args.output, unit=unit, overwrite=args.overwrite, source=args.input)
    source = read_map_values(args.input, column=args.column, hdu=_hdu(args.hdu))
    ratio = _ratio(args, quantity)
    scale = 1.0 if args.scale is None else args.scale
    result = reddening_from_emission(source.values, ratio, unit=unit, r_v=args.rv, scale=scale, negative=args.negative)
    written = write_reddening_map(
        source, result, ratio, args.output, scale=scale, negative=args.negative, overwrite=args.overwrite
    )
    stats = result.stats()
    how = f"{result.divisor:.4g} {ratio.unit}, {ratio.citation}"
    r_v = "" if result.r_v is None else f"; R_V = {result.r_v:.3g}"
    print(f"# {source.path.name} ({source.kind}): {ratio.label} -> {unit} with {ratio.name} ({how}){r_v}")
    rows = [
        {"pixels": "converted", "count": result.converted},
        {"pixels": "blank in INPUT", "count": result.blank},
        {"pixels": "infinite in INPUT (left blank)", "count": result.non_finite},
        {"pixels": f"negative in INPUT ({'left blank' if args.negative == 'mask' else 'converted'})",
         "count": result.negative},
    ]
    print_table(rows, ["pixels", "count"])
    print(f"{unit}: min {_show(stats['min'])}, median {_show(stats['median'])}, max {_show(stats['max'])} mag")
    if len(written) > 1:
        note = "" if result.r_v is not None else " (it holds no R_V: give --rv to 'redcorr ebv')"
        print(f"wrote {written[0]} and its description {written[1]}: use --map {written[1]}{note}")
    else:
        print(f"wrote {written[0]}: use --map {written[0]}")
    print(CAUTION)
    return 0

