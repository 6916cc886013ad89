"""``redcorr plan``: exposure times behind dust, band by band."""

import sys
import textwrap

from redcorr._constants import PLAN_CAUTION, TARGET_FLAGS
from redcorr._format import human_time, time_cell
from redcorr.cli._common import (
    check_outputs,
    finite_float,
    positive_float,
    positive_seconds,
    print_json,
    print_table,
)
from redcorr.exceptions import InputError

__all__ = ["add_parser", "run"]

JSON_KEYS = ("band", "A_band", "t_clear_s", "t_dust_s", "time_factor", "snr", "limiting_mag")
_SINGLE_ONLY = ("--mag", "--calibrated", "--av-grid", "--plot", "--av-plot")
_TARGETS_ONLY = ("--output", "--max-time", "--map", "--ebv-col", "--av-col", "--mag-system", "--overwrite")


def add_parser(sub):
    p = sub.add_parser(
        "plan",
        help="exposure time, S/N and depth for a reddened point source, per band",
        description=(
            "Plan exposures of a point source behind dust with an instrument description (TOML, or 'demo'). "
            "The dust's band extinction is computed for the source spectrum through each band's system "
            "throughput; the S/N follows the CCD equation (Howell 2006, Handbook of CCD Astronomy, §4.4). "
            "--mag is the source's dust-free AB magnitude. With --targets FILE, every target of a list "
            "(name, position, magnitude in a band and system, spectrum or spectral type, optional parallax) "
            "in every band, its dust from a constant, a column or a dust map. " + PLAN_CAUTION
        ),
    )
    p.add_argument("--instrument", required=True, metavar="FILE|demo", help="instrument description (TOML) or 'demo'")
    p.add_argument("--band", action="append", metavar="NAME",
                   help="band of the instrument (repeat for several; default: all of them)")
    source = p.add_mutually_exclusive_group()
    source.add_argument("--mag", type=finite_float, metavar="M", help="dust-free AB magnitude of the source")
    source.add_argument("--calibrated", action="store_true",
                        help="take the magnitudes from the --sed file, a flux-calibrated dust-free spectrum "
                             "(ECSV or FITS with units)")
    p.add_argument("--mag-band", metavar="BAND",
                   help="band --mag is measured in (an instrument band or any band spec); "
                        "default: --mag holds in every planned band. With --targets: the band of the targets "
                        "without a mag_band column")
    p.add_argument("--sed", default="flat", metavar="SPEC",
                   help="source spectrum: blackbody:T, powerlaw:ALPHA, flat (default), vega, sun or file:PATH; "
                        "with --targets, that of the targets without a sed column")
    dust = p.add_mutually_exclusive_group()
    dust.add_argument("--av", type=finite_float, metavar="A", help="A_V of the dust, mag")
    dust.add_argument("--ebv", type=finite_float, metavar="E", help="E(B-V) of the dust, mag (A_V = R_V E(B-V))")
    model = p.add_mutually_exclusive_group()
    model.add_argument("--law", metavar="LAW", help="extinction law (see `redcorr curve --list`; default f99)")
    model.add_argument("--grain", metavar="MODEL", help="grain model instead of a law")
    p.add_argument("--rv", type=finite_float, metavar="R", help="R_V of the law (law default if omitted)")
    goal = p.add_mutually_exclusive_group(required=True)
    goal.add_argument("--snr", type=positive_float, metavar="S", help="target signal-to-noise ratio")
    goal.add_argument("--time", type=positive_seconds, metavar="T", help="exposure time, s")
    p.add_argument("--limit-snr", type=positive_float, default=5.0, metavar="S",
                   help="S/N that defines limiting_mag (default 5)")
    p.add_argument("--av-grid", nargs="+", type=finite_float, metavar="A",
                   help="also tabulate the time needed (at --snr, else --limit-snr) at these A_V values")
    p.add_argument(
        "--extrapolate", action="store_true", help="let the law extrapolate outside its range, with a warning"
    )
    p.add_argument("--json", action="store_true", help="print one JSON object per band: " + ", ".join(JSON_KEYS)
                   + " (with --targets: {rows: [one per target and band], summary})")
    p.add_argument("--plot", metavar="FILE.png", help="draw S/N against time, with and without the dust")
    p.add_argument("--av-plot", metavar="FILE.png", help="draw the time needed against A_V, per band")
    targets = p.add_argument_group(
        "target lists",
        "Plan every target of a catalog file (CSV, ECSV, FITS, Parquet) with columns name; ra, dec (or l, b); "
        "mag; and optionally mag_band, mag_system (AB or Vega), sed (a spectrum spec, or a spectral type such as "
        "G2V, planned as a blackbody of its T_eff), parallax and parallax_error (mas) or distance (pc). "
        "Flags: " + ", ".join(f"{v} {k}" for k, v in TARGET_FLAGS.items()) + ".",
    )
    targets.add_argument("--targets", metavar="FILE", help="the target list")
    targets.add_argument("--output", "-o", metavar="FILE",
                         help="write one row per target and band (any catalog format, by suffix) and "
                              "FILE.summary.json; default: print the plan")
    targets.add_argument("--overwrite", action="store_true", help="replace an existing --output")
    targets.add_argument("--max-time", type=positive_seconds, metavar="T",
                         help="time limit per exposure, s: longer plans are flagged over_time and listed")
    targets.add_argument("--mag-system", choices=("AB", "Vega"), default="AB",
                         help="system of the targets without a mag_system column (default AB)")
    red = targets.add_mutually_exclusive_group()
    red.add_argument("--map", metavar="FILE", help="dust map (2D or distance-resolved) looked up at each target")
    red.add_argument("--ebv-col", metavar="COL", help="column of E(B-V)")
    red.add_argument("--av-col", metavar="COL", help="column of A_V")
    p.set_defaults(func=run)


def _curve(args):
    from redcorr.io import load_curve  # heavy: loaded on use

    if args.grain:
        if args.rv is not None:
            raise InputError(f"--rv={args.rv:g} applies to a law; a grain model fixes its own R_V")
        return load_curve(args.grain)
    return load_curve("f99" if args.law is None else args.law, r_v=args.rv)


def _mag_band(args, instrument):
    from redcorr.io.filters import load_band

    if args.mag_band is None:
        return None
    if args.mag_band in instrument.channels:
        return instrument.channels[args.mag_band].band
    return load_band(args.mag_band)


def _given(args, option):
    value = getattr(args, option.lstrip("-").replace("-", "_"))
    return value not in (None, False) and not (option == "--mag-system" and value == "AB")


def _check_mode(args):
    """Refuse options of the other mode, and a missing source or dust, before any work."""
    if args.targets is not None:
        wrong = [o for o in _SINGLE_ONLY if _given(args, o)]
        if wrong:
            raise InputError(f"{wrong[0]} applies to one source; with --targets the list gives each target's "
                             "magnitude (and --av-grid, --plot, --av-plot are not drawn for a list)")
        if (args.av is not None or args.ebv is not None) and (args.map or args.ebv_col or args.av_col):
            raise InputError("give one source of reddening: --av or --ebv (one value), --ebv-col, --av-col or --map")
        return
    wrong = [o for o in _TARGETS_ONLY if _given(args, o)]
    if wrong:
        raise InputError(f"{wrong[0]} applies to a target list; give --targets FILE")
    if args.mag is None and not args.calibrated:
        raise InputError("one of the arguments --mag --calibrated is required (or --targets FILE)")
    if args.av is None and args.ebv is None:
        raise InputError("one of the arguments --av --ebv is required (or --targets FILE)")


def run(args):
    _check_mode(args)
    if args.targets is not None:
        return _run_targets(args)
    import numpy as np

    from redcorr.exposure import CAUTION, plan_exposure, snr_vs_time, time_vs_av
    from redcorr.io.instrument import load_instrument
    from redcorr.io.spectra import REFERENCE_SPECTRA, load_sed
    from redcorr.photometry import synthetic_ab

    check_outputs(args, "--plot", "--av-plot")
    instrument = load_instrument(args.instrument)
    curve = _curve(args)
    sed = load_sed(args.sed)
    if args.av is not None:
        a_v = args.av
    else:
        if args.ebv < 0:
            raise InputError(f"--ebv={args.ebv:g} is not allowed; E(B-V) must be >= 0")
        a_v = args.ebv * curve.r_v
    bands = args.band or instrument.band_names
    if args.calibrated:
        united = args.sed.lower().endswith((".ecsv", ".fits", ".fit")) and args.sed.startswith("file:")
        if not (united or sed.name in REFERENCE_SPECTRA):
            raise InputError(
                f"--sed={args.sed!r}: --calibrated needs file:PATH to an ECSV or FITS spectrum whose flux "
                "column carries its unit, or vega or sun"
            )
        if args.mag_band:
            raise InputError("--mag-band applies to --mag; a calibrated spectrum gives every band's magnitude")
        mag = {instrument.channel(b).name: synthetic_ab(sed, instrument.channel(b).band) for b in bands}
    else:
        mag = args.mag
    mag_band = _mag_band(args, instrument)
    common = dict(curve=curve, sed=sed, mag_band=mag_band, extrapolate=args.extrapolate)
    plans = plan_exposure(
        instrument, bands, mag, a_v=a_v, snr=args.snr, time=args.time, limit_snr=args.limit_snr, **common
    )

    where = f" in {args.mag_band}" if args.mag_band else ""
    label = "from the spectrum" if args.calibrated else f"{args.mag:g}"
    grid_snr = args.snr if args.snr is not None else args.limit_snr
    table = None
    if args.av_grid or args.av_plot:
        grid = np.asarray(args.av_grid) if args.av_grid else np.linspace(0.0, max(2.0 * a_v, 2.0), 41)
        table = time_vs_av(instrument, [p.band for p in plans], mag, a_v=grid, snr=grid_snr, **common)

    if args.plot:
        from redcorr.io.figures import save_figure  # noqa: PLC0415
        from redcorr.plotting import snr_vs_time_figure  # noqa: PLC0415 - matplotlib only when asked

        t_hi = max(p.t_dust_s for p in plans if np.isfinite(p.t_dust_s)) * 4.0
        t = np.geomspace(max(t_hi, 1.0) * 1e-4, max(t_hi, 1.0), 200)
        fig = snr_vs_time_figure(
            t,
            snr_vs_time(instrument, plans, t),
            target=args.snr,
            title=f"{instrument.name}: AB {label}{where}, A_V = {a_v:g} ({curve.name}, R_V {curve.r_v:g})",
        )
        save_figure(fig, args.plot)
    if args.av_plot:
        from redcorr.io.figures import save_figure  # noqa: PLC0415
        from redcorr.plotting import time_vs_av_figure  # noqa: PLC0415

        fig = time_vs_av_figure(
            table[0],
            table[1],
            mark=a_v,
            title=f"{instrument.name}: AB {label}{where} to S/N {grid_snr:g} ({curve.name}, R_V {curve.r_v:g})",
        )
        save_figure(fig, args.av_plot)

    if args.json:
        print_json([p.as_dict(JSON_KEYS) for p in plans])
        print(CAUTION, file=sys.stderr)
        return 0

    print(f"# {instrument.name}; source AB {label}{where or ' in each band'} (dust-free), SED {sed.name}")
    print(f"# dust: A_V = {a_v:g} mag, {curve.name} R_V = {curve.r_v:g}; {curve.citation}")
    goal = f"S/N {args.snr:g}" if args.snr is not None else f"{args.time:g} s exposures"
    print(f"# goal: {goal}; limiting_mag = apparent AB mag at S/N {args.limit_snr:g} in t_dust_s")
    rows = [
        p.as_dict(("band", "mag", "A_band", "t_clear_s", "t_dust_s", "time_factor", "snr", "limiting_mag", "noise"))
        for p in plans
    ]
    print_table(
        rows,
        list(rows[0]),
        formats={
            "mag": ".3f",
            "A_band": ".3f",
            "t_clear_s": time_cell,
            "t_dust_s": time_cell,
            "time_factor": ".3g",
            "snr": ".1f",
            "limiting_mag": ".2f",
        },
    )
    order = "time needed" if args.snr is not None else "S/N reached"
    print(f"Ranked by {order}: " + ", ".join(p.band for p in plans))
    if table is not None and args.av_grid:
        grid, times, a_bands = table
        print(f"\nTime (s) to reach S/N {grid_snr:g} against A_V:")
        av_rows = [{"A_V": float(a), **{b: float(times[b][i]) for b in times}} for i, a in enumerate(grid)]
        print_table(av_rows, ["A_V", *times], formats={"A_V": ".2f", **{b: time_cell for b in times}})
    print(CAUTION)
    return 0


def _run_targets(args):
    from redcorr.exposure import CAUTION
    from redcorr.io import check_output_path
    from redcorr.io.instrument import load_instrument
    from redcorr.io.targets import read_targets, write_target_plan
    from redcorr.target_plan import plan_targets

    check_outputs(args, "--output")
    if args.output:  # an existing output is refused before any work
        check_output_path(args.output, overwrite=args.overwrite, inputs=[args.targets], name="--output")
    instrument = load_instrument(args.instrument)
    curve = _curve(args)
    if args.ebv is not None and args.ebv < 0:
        raise InputError(f"--ebv={args.ebv:g} is not allowed; E(B-V) must be >= 0")
    if args.av is not None and args.av < 0:
        raise InputError(f"--av={args.av:g} is not allowed; A_V must be >= 0")
    reddening = None
    if args.map:
        from redcorr.io.maps import open_map

        reddening = {"dust_map": open_map(args.map)}
    elif args.av is not None or args.ebv is not None or args.ebv_col or args.av_col:
        reddening = {"ebv": args.ebv, "av": args.av, "ebv_column": args.ebv_col, "av_column": args.av_col}
    targets = read_targets(args.targets, instrument, curve=curve, mag_band=args.mag_band,
                           mag_system=args.mag_system, sed=args.sed, reddening=reddening)
    bands = args.band or instrument.band_names
    plan = plan_targets(instrument, bands, targets.mag, mag_band=targets.mag_band, sed=targets.sed,
                        a_v=targets.a_v, curve=curve, snr=args.snr, time=args.time, limit_snr=args.limit_snr,
                        max_time=args.max_time, flags=targets.flags, names=targets.names,
                        extrapolate=args.extrapolate)
    goal = f"S/N {args.snr:g}" if args.snr is not None else f"{args.time:g} s exposures"
    dust = (f"map {args.map}" if args.map else f"column {args.ebv_col or args.av_col}" if args.ebv_col or args.av_col
            else f"A_V {args.av:g}" if args.av is not None else f"E(B-V) {args.ebv:g}" if args.ebv is not None
            else "a guessed E(B-V)/A_V column")
    meta = {"instrument": instrument.name, "targets": str(args.targets), "goal": goal, "dust": dust,
            "law": curve.name, "R_V": float(curve.r_v), "limit_snr": args.limit_snr, "spectra": targets.spectra}
    if args.output:
        summary = write_target_plan(plan, targets, args.output, overwrite=args.overwrite,
                                    inputs=[args.targets], meta=meta)
    else:
        summary = {"setup": meta, **plan.summary()}
    if args.json:
        columns = {key: value.tolist() for key, value in plan.rows().items()}
        print_json({"rows": [dict(zip(columns, values, strict=True)) for values in zip(*columns.values(), strict=True)],
                    "summary": summary})
        print(CAUTION, file=sys.stderr)
        return 0
    print(f"# {instrument.name}; {len(plan.names)} targets from {args.targets}; goal: {goal}")
    print(f"# dust: {dust}, {curve.name} R_V = {curve.r_v:g}; limiting_mag at S/N {args.limit_snr:g}")
    spectra = ", ".join(f"{k} = {v}" for k, v in targets.spectra.items() if k != v)
    if spectra:
        text = f"spectral types planned as blackbodies of their T_eff: {spectra}"
        print("\n".join(textwrap.wrap(text, 98, initial_indent="# ", subsequent_indent="#   ")))
    if not args.output:
        _print_rows(plan)
    _print_summary(plan, summary, args.output)
    print(CAUTION)
    return 0


def _print_rows(plan):
    rows = {key: value.tolist() for key, value in plan.rows().items()}
    keys = ("name", "band", "mag", "A_band", "t_dust_s", "time_factor", "snr", "limiting_mag", "flags")
    table = [{k: rows[k][i] for k in keys} | {"best": "*" if rows["band"][i] == rows["best_band"][i] else ""}
             for i in range(len(rows["name"]))]
    print_table(table, [*keys, "best"], formats={"mag": ".2f", "A_band": ".3f", "t_dust_s": time_cell,
                                                "time_factor": ".3g", "snr": ".1f", "limiting_mag": ".2f"})


def _print_summary(plan, summary, output):
    if output:
        print(f"Wrote {len(plan.names) * len(plan.bands)} rows to {output} and its summary beside it.")
    limit = f" within {summary['max_time']:g} s" if summary["max_time"] is not None else ""
    print(f"\nTotal time per band (targets planned{limit}):")
    rows = [{"band": b, "targets": v["targets"], "total_s": v["total_s"], "cheapest_for": summary["best_counts"][b]}
            for b, v in summary["bands"].items()]
    print_table(rows, ["band", "targets", "total_s", "cheapest_for"], formats={"total_s": time_cell})
    total = summary["best_total_s"]
    print(f"Each target in its cheapest band: {total:.4g} s ({human_time(total)}) in all.")
    if summary["missed"]:
        print(f"Cannot reach the goal{limit} in any band: {', '.join(summary['missed'])}")
    if summary["no_plan"]:
        print(f"Not planned (no magnitude or no reddening; see flags): {', '.join(summary['no_plan'])}")
