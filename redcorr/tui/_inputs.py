"""Turn the UI's remembered inputs into core objects and results, through the core only."""

import math
import threading

import numpy as np

from redcorr._validate import check_finite, check_range
from redcorr.band_summary import band_summary
from redcorr.colours import colour_colour, locus_colours, reddening_arrow
from redcorr.correction import CatalogFit, Correction
from redcorr.curves import list_curves
from redcorr.exceptions import InputError
from redcorr.exposure import plan_exposure, snr_vs_time, time_vs_av
from redcorr.io import load_curve
from redcorr.io.catalogs import open_catalog
from redcorr.io.correction import correction_options, fit_options
from redcorr.io.targets import read_targets, write_target_plan
from redcorr.target_plan import plan_targets
from redcorr.tui import _cache

__all__ = [
    "DISTANCE_KINDS",
    "FIT_COLOURS",
    "FIT_EBV",
    "GOALS",
    "RED_KINDS",
    "SPECTRA",
    "TARGET_DUST",
    "av_table",
    "band_rows",
    "catalog_options",
    "build_fit",
    "catalog_fit_options",
    "catalog_probe",
    "colour_diagram",
    "colour_pair",
    "diagram_colours",
    "fit_key",
    "dust_state",
    "fixed_r_v",
    "guess_mapping",
    "guess_reddening",
    "is_3d_map",
    "is_grain",
    "law_r_v",
    "mapping_options",
    "plan_state",
    "preview_correction",
    "preview_fit",
    "ready_fit",
    "split_list",
    "target_list_plan",
    "write_list_plan",
]

GOALS = ("S/N", "time [s]")
"""What the Plan screen aims at: a target S/N, or a fixed exposure time."""


def dust_state(law, r_v_text, amount_text, amount_kind):
    """``(curve, a_v, ebv)`` from the Dust inputs; `InputError` with the core's message if refused.

    ``r_v_text`` empty means the law's default; a grain model ignores it.
    ``amount_kind`` is ``"A_V"``
    or ``"E(B-V)"``; E(B-V) ≡ A_V/R_V with the curve's R_V.
    """
    if is_grain(law):
        curve = _cache.grain_curve(law)  # its R_V follows from the grains
    else:
        curve = load_curve(law, r_v=r_v_text.strip() or None)
    amount = check_range(amount_kind, amount_text, 0.0, math.inf)
    if amount_kind == "A_V":
        return curve, amount, amount / curve.r_v
    return curve, amount * curve.r_v, amount


def band_rows(curve, band_specs, sed_spec, a_v):
    """`redcorr.band_summary.band_summary` for band and source specs (loaded once, then cached)."""
    bands = [_cache.band(spec) for spec in band_specs]
    return band_summary(curve, bands, _cache.sed(sed_spec), a_v)


def plan_state(curve, a_v, instrument_spec, mag_text, mag_band_spec, sed_spec, goal, goal_text, limit_text):
    """Plan exposures as ``redcorr plan`` does; return ``(instrument, plans, t, snr_by_band)``.

    ``mag_band_spec`` empty means the magnitude holds in every band; an
    instrument band name uses that band's system response, anything else
    is a band spec. ``t`` spans the times plotted (up to 4x the longest
    planned exposure, as the CLI's plot) and ``snr_by_band`` is
    `redcorr.exposure.snr_vs_time` over it.
    """
    instrument = _cache.instrument(instrument_spec.strip())
    mag, mag_band = _target(instrument, mag_text, mag_band_spec)
    target = check_finite("snr" if goal == GOALS[0] else "time", goal_text)
    plans = plan_exposure(
        instrument,
        instrument.band_names,
        mag,
        curve=curve,
        sed=_cache.sed(sed_spec),
        a_v=a_v,
        snr=target if goal == GOALS[0] else None,
        time=None if goal == GOALS[0] else target,
        mag_band=mag_band,
        limit_snr=check_finite("limit_snr", limit_text),
    )
    finite = [p.t_dust_s for p in plans if np.isfinite(p.t_dust_s)]
    t_hi = max(max(finite, default=1.0) * 4.0, 1.0)
    t = np.geomspace(t_hi * 1e-4, t_hi, 200)
    return instrument, plans, t, snr_vs_time(instrument, plans, t)


def _target(instrument, mag_text, mag_band_spec):
    """The target's magnitude and the band it is given in (None: every band), as ``redcorr plan``."""
    mag = check_finite("mag", mag_text)
    name = mag_band_spec.strip()
    if not name:
        return mag, None
    return mag, instrument.channels[name].band if name in instrument.channels else _cache.band(name)


def av_table(curve, plans, instrument_spec, mag_text, mag_band_spec, sed_spec, goal, goal_text, limit_text,
             grid_text):
    """Time to reach the S/N against A_V, as ``redcorr plan --av-grid`` prints it.

    `redcorr.exposure.time_vs_av` for the planned bands (in the plan's
    order) at the goal S/N, or at the limiting S/N when the goal is a
    time. ``grid_text`` lists the A_V values (commas or spaces). Returns
    ``(snr, a_v, times)``: the S/N used, the grid and band → seconds.
    """
    instrument = _cache.instrument(instrument_spec.strip())
    mag, mag_band = _target(instrument, mag_text, mag_band_spec)
    grid = [check_finite("av_grid", v) for v in split_list(str(grid_text).replace(" ", ","), "av_grid")]
    snr = check_finite("snr", goal_text) if goal == GOALS[0] else check_finite("limit_snr", limit_text)
    a_v, times, _ = time_vs_av(instrument, [p.band for p in plans], mag, curve=curve, sed=_cache.sed(sed_spec),
                               a_v=grid, snr=snr, mag_band=mag_band)
    return snr, a_v, times


TARGET_DUST = {"av": "Dust screen A_V", "map": "dust map"}
"""The dust of a target list on the Plan screen: the Dust screen's A_V for every target (as ``--av``), or a
dust map looked up at each target (as ``--map``; a distance-resolved one to the list's parallax or distance)."""


def target_list_plan(curve, a_v, instrument_spec, targets_path, dust_kind, map_spec, mag_band_spec, sed_spec, goal,
                     goal_text, limit_text, max_time_text):
    """Plan every target of a list in every band, as ``redcorr plan --targets`` does.

    `redcorr.io.targets.read_targets` then `redcorr.target_plan.plan_targets`,
    with the arguments the CLI passes for the equivalent options:
    ``mag_band_spec`` and ``sed_spec`` are the defaults of the targets
    without a band or a spectrum of their own (``--mag-band``, ``--sed``;
    empty: none, and ``flat``); ``dust_kind`` is one of :data:`TARGET_DUST`;
    ``max_time_text`` empty means no time limit (``--max-time``). Returns
    ``(instrument, targets, plan)``: the `redcorr.io.targets.TargetList` read
    and its `redcorr.target_plan.TargetPlan`.
    """
    if dust_kind not in TARGET_DUST:
        raise InputError(f"dust={dust_kind!r} is not one of {list(TARGET_DUST)}")
    instrument = _cache.instrument(instrument_spec.strip())
    path = str(targets_path).strip()
    if not path:
        raise InputError("targets='' is empty; give the target list's path (CSV, ECSV, FITS or Parquet)")
    if dust_kind == "av":
        reddening = {"av": a_v}
    elif not str(map_spec).strip():
        raise InputError("map='' is empty; give the dust map's path (2D or distance-resolved)")
    else:
        reddening = {"dust_map": _cache.dust_map(str(map_spec).strip())}
    targets = read_targets(path, instrument, curve=curve, mag_band=mag_band_spec.strip() or None,
                           sed=sed_spec.strip() or "flat", reddening=reddening)
    target = check_finite("snr" if goal == GOALS[0] else "time", goal_text)
    max_time = check_finite("max_time", max_time_text) if str(max_time_text).strip() else None
    plan = plan_targets(instrument, instrument.band_names, targets.mag, mag_band=targets.mag_band, sed=targets.sed,
                        a_v=targets.a_v, curve=curve, snr=target if goal == GOALS[0] else None,
                        time=None if goal == GOALS[0] else target, limit_snr=check_finite("limit_snr", limit_text),
                        max_time=max_time, flags=targets.flags, names=targets.names)
    return instrument, targets, plan


def write_list_plan(targets, plan, output, targets_path, meta):
    """`redcorr.io.targets.write_target_plan` as ``redcorr plan --targets FILE -o OUTPUT --overwrite`` calls it.

    The screen has asked first (and said when ``output`` exists); the target
    list itself is never replaced. Returns the summary written.
    """
    path = str(output).strip()
    if not path:
        raise InputError("output='' is empty; give the file to write the plan to (any catalog format, by suffix)")
    return write_target_plan(plan, targets, path, overwrite=True, inputs=[str(targets_path).strip()], meta=meta)


RED_KINDS = {
    "ebv_column": "E(B-V) column",
    "av_column": "A_V column",
    "ebv": "E(B-V) constant",
    "av": "A_V constant",
    "map": "dust map",
    "photometry": "from the photometry",
}
"""Sources of reddening on the Catalog screen: `Correction` keyword (or ``photometry``: each row's
E(B-V) fitted from its magnitudes by `redcorr.correction.CatalogFit`) → label."""

FIT_COLOURS = "dwarfs"
"""The intrinsic-colour table the Catalog screen fits against (`redcorr.io.intrinsic.load_intrinsic_colours`)."""

FIT_EBV = ("ebv_fit", "ebv_fit_err")
"""The fit's E(B-V) columns (`redcorr.correction.fit`) that the correction after a fit reads."""

DISTANCE_KINDS = {"distance": "distance [pc]", "parallax": "parallax [mas]"}
"""What the distance column of a distance-resolved map holds, as ``--distance-col`` or ``--parallax-col``."""

SPECTRA = {"fixed": "fixed T [K]", "colour": "T from the colour"}
"""Source temperature: a constant, or solved from the dereddened colour (as ``--solve-colour``)."""


def split_list(text, name):
    """``"kw-b, kw-v"`` → ``["kw-b", "kw-v"]``; `InputError` when empty."""
    items = [t.strip() for t in str(text).split(",") if t.strip()]
    if not items:
        raise InputError(f"{name}={text!r} is empty; give names separated by commas")
    return items


def colour_pair(text):
    """``"kw-b,kw-v"`` → ``("kw-b", "kw-v")``, or None for an empty text."""
    if not str(text).strip():
        return None
    items = split_list(text, "colour")
    if len(items) != 2:
        raise InputError(f"colour={text!r} must be two band names, B1,B2")
    return tuple(items)


def law_r_v(law, r_v_text):
    """The ``r_v`` to pass with ``law``: None for the law's default, a fixed-R_V law or a grain model."""
    text = str(r_v_text).strip()
    if not text or fixed_r_v(law) is not None or is_grain(law):
        return None
    return check_finite("r_v", text)


def fixed_r_v(law):
    """R_V of a registered law whose R_V cannot change; None otherwise (also for grain models)."""
    return next((i["default_r_v"] for i in list_curves() if i["name"] == law and i["r_v_limits"] is None), None)


def is_grain(law):
    """True for a grain-model name or ``grain:PATH.toml`` (computed with Mie theory, slow the first time)."""
    from redcorr.io.grains import GRAIN_MODELS  # noqa: PLC0415

    return law.startswith("grain:") or law.strip().lower() in GRAIN_MODELS


def catalog_probe(path, rows=5):
    """Column names and the first ``rows`` rows of a catalog file (as `redcorr.io.catalogs` reads it)."""
    with open_catalog(path, chunk_rows=rows) as reader:
        columns = list(reader.columns)
        first = next(iter(reader), None)
    return columns, first


def guess_mapping(columns, bands, law, r_v):
    """``{band: (magnitude column or None, error column or None)}`` as `Correction` guesses them."""
    out = {}
    for spec in bands:
        try:
            corr = Correction(columns, correction_options([spec], ebv=0.0, law=law, r_v=r_v))
            out[spec] = (corr.mag_cols[0], corr.err_cols[0])
        except InputError:
            out[spec] = (None, None)
    return out


def guess_reddening(columns, bands, mapping, law, r_v):
    """``(kind, column)`` of the reddening column `Correction` finds, or None."""
    try:
        corr = Correction(columns, correction_options(bands, law=law, r_v=r_v, **mapping_options(mapping)))
    except InputError:
        return None
    return ("ebv_column" if corr.red_quantity == "ebv" else "av_column"), corr.red_col


def mapping_options(mapping):
    """Options of `redcorr.io.correction.correction_options` for a column mapping.

    An empty error column switches the guess off.
    """
    mags = {b: m for b, (m, _) in mapping.items() if m}
    errs = {b: (e or None) for b, (_, e) in mapping.items()}
    return {"mag_columns": mags, "err_columns": errs}


def is_3d_map(red_kind, red_value):
    """True when the reddening is a dust map with distances (the screen then offers a distance column)."""
    if red_kind != "map" or not str(red_value).strip():
        return False
    return getattr(_cache.dust_map(str(red_value).strip()), "distances_pc", None) is not None


def catalog_options(bands, mapping, red_kind, red_value, law, r_v, spectrum, teff_text, colour, distance=None):
    """The correction's options from the Catalog screen's choices.

    Built by `redcorr.io.correction.correction_options`, the function
    ``redcorr correct`` builds them with from the equivalent options
    (``--band``, ``--mag``/``--err``, ``--ebv-col``/``--av-col``/``--ebv``/``--av``/``--map``,
    ``--distance-col``/``--distance-err-col``/``--parallax-col``/``--parallax-err-col``,
    ``--law``, ``--rv``, ``--teff``, ``--solve-colour``, ``--colour``). The kind
    ``photometry`` corrects a table the fit has written (`CatalogFit`) with its
    columns :data:`FIT_EBV` (``--ebv-col ebv_fit --red-err-col ebv_fit_err``). ``distance`` is
    ``(kind, column, error column)`` with a kind of `DISTANCE_KINDS`, used for a
    distance-resolved map only; an empty column means none.
    """
    if red_kind not in RED_KINDS:
        raise InputError(f"reddening={red_kind!r} is not one of {list(RED_KINDS)}")
    if spectrum not in SPECTRA:
        raise InputError(f"spectrum={spectrum!r} is not one of {list(SPECTRA)}")
    value = str(red_value).strip()
    reddening = {}
    if red_kind in ("ebv_column", "av_column"):
        if not value:
            raise InputError(f"{red_kind}='' is empty; name the column")
        reddening[red_kind] = value
    elif red_kind in ("ebv", "av"):
        reddening[red_kind] = check_finite(red_kind, value)
    elif red_kind == "photometry":
        reddening.update(ebv_column=FIT_EBV[0], reddening_error_column=FIT_EBV[1])
    else:
        reddening["dust_map"] = _cache.dust_map(value)
        if distance is not None and is_3d_map(red_kind, value):
            reddening.update(_distance_options(*distance))
    pair = colour_pair(colour)
    if spectrum == "colour" and pair is None:
        raise InputError("spectrum='colour' needs the colour B1,B2 to solve the temperature from")
    return correction_options(
        bands,
        law=law,
        r_v=r_v,
        **mapping_options(mapping),
        **reddening,
        colours=[pair] if pair else [],
        spectrum=spectrum,
        temperature=check_finite("temperature", teff_text),
        solve_colour=pair if spectrum == "colour" else None,
    )


def _distance_options(kind, column, error_column):
    """``{kind}_column`` and ``{kind}_error_column`` of `correction_options`, for the names given."""
    if kind not in DISTANCE_KINDS:
        raise InputError(f"distance kind={kind!r} is not one of {list(DISTANCE_KINDS)}")
    out = {}
    if str(column).strip():
        out[f"{kind}_column"] = str(column).strip()
    if str(error_column).strip():
        out[f"{kind}_error_column"] = str(error_column).strip()
    return out


def preview_correction(frame, options):
    """The first rows corrected by `redcorr.correction.Correction` (nothing is written)."""
    corr = Correction(list(frame.columns), options)
    return corr.correct(frame), corr


def catalog_fit_options(bands, mapping, law, r_v):
    """The options of a fit of the Catalog screen's bands and column mapping against :data:`FIT_COLOURS`.

    Built by `redcorr.io.correction.fit_options`, as ``redcorr fit`` builds
    them (``--band``, ``--mag``/``--err``, ``--law``, ``--rv``); ``law`` is a law
    name or a curve object (a grain model).
    """
    return fit_options(list(bands), law=law, r_v=r_v, colours=FIT_COLOURS, **mapping_options(mapping))


_FITS_KEPT = 4
_fits = {}
_fits_lock = threading.Lock()


def fit_key(columns, bands, mapping, law, r_v):
    """The key of a `CatalogFit` of `catalog_fit_options` for tables of ``columns`` (see `build_fit`)."""
    return tuple(columns), tuple(bands), tuple(sorted(mapping.items())), law, r_v


def ready_fit(key):
    """The `CatalogFit` of ``key`` built already by `build_fit`, or None."""
    with _fits_lock:
        return _fits.get(key)


def build_fit(key):
    """Build the `CatalogFit` of ``key`` (`fit_key`) and keep it, with the last few, for previews.

    Its model grid takes seconds to build: the screen calls this in a
    worker thread and reads it with `ready_fit`.
    """
    columns, bands, mapping, law, r_v = key
    job = ready_fit(key) or CatalogFit(list(columns), catalog_fit_options(bands, dict(mapping), law, r_v))
    with _fits_lock:
        _fits[key] = job
        for old in list(_fits)[:-_FITS_KEPT]:
            del _fits[old]
    return job


def preview_fit(frame, job, options):
    """The first rows fitted by ``job`` (a `CatalogFit`), then corrected with the fitted E(B-V).

    ``options`` are the correction's (`catalog_options` with the kind
    ``photometry``). Returns ``(corrected, correction)``; nothing is written.
    """
    fitted = job.correct(frame)
    corr = Correction(list(fitted.columns), options)
    return corr.correct(fitted), corr


def diagram_colours(text, labels):
    """The two colours of the colour–colour diagram: ``((b1, b2), (b3, b4))``.

    ``text`` names three bands ``b1,b2,b3`` (the colours b1−b2 and b2−b3) or
    four ``b1,b2,b3,b4`` (b1−b2 and b3−b4), each one of ``labels``; empty
    means the first three of ``labels``.
    """
    names = [t.strip() for t in str(text).split(",") if t.strip()] or list(labels)[:3]
    if len(names) == 3:
        names = [names[0], names[1], names[1], names[2]]
    if len(names) != 4:
        raise InputError(f"diagram={text!r} must name 3 bands b1,b2,b3 (b1-b2 against b2-b3) or 4 bands b1,b2,b3,b4 "
                         f"(b1-b2 against b3-b4), of the catalog's bands {list(labels)}")
    unknown = [n for n in names if n not in labels]
    if unknown:
        raise InputError(f"diagram={text!r}: band {unknown[0]!r} is not one of the catalog's bands {list(labels)}")
    return (names[0], names[1]), (names[2], names[3])


def colour_diagram(job, colours, teff_text, stars, corrected=None, suffix="_dered"):
    """The colour–colour diagram's series, all from `redcorr.colours`.

    Parameters
    ----------
    job : CatalogFit
        Its locus, curve and bands.
    colours : ((str, str), (str, str))
        Band labels of x and y (`diagram_colours`).
    teff_text : str
        T_eff (K) of the locus point the reddening arrow starts from.
    stars : DataFrame
        Rows with the observed magnitude columns of ``job``.
    corrected : DataFrame, optional
        The same rows corrected (``MAG + suffix`` columns): drawn as well.

    Returns
    -------
    list of (str, ndarray, ndarray, bool)
        ``(label, x, y, as_points)``: the locus, the arrow for E(B-V) = 1
        (from its start to its end), the stars as observed (and dereddened).
    """
    (b1, b2), (b3, b4) = colours
    column = dict(zip(job.labels, job.mag_cols, strict=True))
    _, lx, ly = locus_colours(job.locus, (b1, b2), (b3, b4))
    bands = dict(zip(job.labels, job.options.bands.bands, strict=True))
    teff = check_finite("temperature", teff_text)
    start, end = reddening_arrow(job.locus, job.curve, bands, (b1, b2), (b3, b4), teff, ebv=1.0)
    series = [
        (f"locus ({job.locus.name})", lx, ly, False),
        (f"E(B-V) = 1 at {teff:g} K", np.array([start[0], end[0]]), np.array([start[1], end[1]]), False),
        ("stars as observed", *colour_colour(stars, (column[b1], column[b2]), (column[b3], column[b4])), True),
    ]
    if corrected is not None:
        dered = {k: v + suffix for k, v in column.items()}
        series.append(("dereddened", *colour_colour(corrected, (dered[b1], dered[b2]), (dered[b3], dered[b4])), True))
    return series
