"""Correction and fit options from the names a user types: the one place that resolves them.

``redcorr correct``, ``redcorr fit``, the terminal UI's Catalog screen and
Python callers all build the options of a catalog correction with
:func:`correction_options` (of a fit: :func:`fit_options`): band names become :class:`~redcorr.bandpass.Band`
objects (:func:`redcorr.io.filters.load_band`), a law or grain-model name
becomes a curve (:func:`redcorr.io.curves.load_curve`) and a map file a
:class:`~redcorr.maps.ReddeningMap` (:func:`redcorr.io.maps.open_map`);
every other option goes unchanged to the field of the same name in
:mod:`redcorr.correction.options`, which checks it.
"""

import dataclasses
import functools

import numpy as np

from redcorr.correction import (
    BandSelection,
    CatalogFit,
    Correction,
    CorrectionOptions,
    DustOptions,
    FitOptions,
    OutputOptions,
    ReddeningSource,
    SpectrumOptions,
)
from redcorr.exceptions import InputError

__all__ = ["correct_dataframe", "correction_options", "fit_dataframe", "fit_options"]

_PARTS = {"bands": BandSelection, "dust": DustOptions, "reddening": ReddeningSource,
          "spectrum": SpectrumOptions, "output": OutputOptions}
_RESOLVED = {"bands", "labels", "curve", "law", "curve_at"}
"""Fields set here from ``bands``, ``law`` and ``r_v``, never given directly."""
_OWNER = {f.name: part for part, cls in _PARTS.items() for f in dataclasses.fields(cls) if f.name not in _RESOLVED}


def correction_options(bands, *, law="f99", r_v=None, **options):
    """The options of a correction, with every name resolved.

    Parameters
    ----------
    bands : list of str or redcorr.bandpass.Band
        Band names (a filter name such as ``kw-v``, ``file:PATH``,
        ``tophat:C:W``, ...) or Band objects. A name is also the band's
        label (in column mappings, colours and ``A_LABEL`` columns); a Band
        is labelled by its own name.
    law : str or redcorr.curves.DustCurve
        A law or grain-model name, ``file:PATH`` or ``grain:PATH.toml``
        (:func:`redcorr.io.curves.load_curve`), or a curve object (then R_V
        is the curve's own). Default ``"f99"``.
    r_v : float, optional
        R_V of a named law (the law's default if omitted).
    **options
        Any field of :class:`~redcorr.correction.BandSelection`
        (``mag_columns``, ``err_columns``, ``colours``),
        :class:`~redcorr.correction.DustOptions` (``rv_column``, ``rv_error``,
        ``rv_error_column``, ``nonlinear``, ``extrapolate``, ``rv_step``),
        :class:`~redcorr.correction.ReddeningSource` (``ebv``, ``av``,
        ``ebv_column``, ``av_column``, ``dust_map`` — a path or map
        description, or a map object —, ``reddening_error``,
        ``reddening_error_column``, ``map_scale``, ``lon_column``,
        ``lat_column``, ``frame``, ``distance_column``,
        ``distance_error_column``, ``parallax_column``,
        ``parallax_error_column``, ``prior_length``),
        :class:`~redcorr.correction.SpectrumOptions` (``spectrum``,
        ``temperature``, ``temperature_column``, ``solve_colour``,
        ``colour_offset``, ``max_iterations``, ``tolerance``) or
        :class:`~redcorr.correction.OutputOptions` (``suffix``, ``strict``).

    Returns
    -------
    redcorr.correction.CorrectionOptions

    Raises
    ------
    InputError
        For an unknown option, name or file, or a value the options refuse.
    """
    unknown = sorted(set(options) - set(_OWNER))
    if unknown:
        raise InputError(f"options {unknown} are not known; the options are {sorted(_OWNER)}")
    parts = {part: {} for part in _PARTS}
    for name, value in options.items():
        parts[_OWNER[name]][name] = value
    if options.get("rv_column") is not None and r_v is not None:
        raise InputError("give R_V either as a constant (r_v) or as a column (rv_column), not both")
    dust_map = parts["reddening"].get("dust_map")
    if dust_map is not None and not hasattr(dust_map, "lookup"):
        from redcorr.io.maps import open_map  # noqa: PLC0415 - only when a map is asked for

        parts["reddening"]["dust_map"] = open_map(dust_map)
    return CorrectionOptions(
        bands=BandSelection(*_bands(bands), **parts["bands"]),
        dust=DustOptions(**_dust(law, r_v), **parts["dust"]),
        reddening=ReddeningSource(**parts["reddening"]),
        spectrum=SpectrumOptions(**parts["spectrum"]),
        output=OutputOptions(**parts["output"]),
    )


_FIT_PRIOR = {f.name for f in dataclasses.fields(ReddeningSource)} - {"ebv", "av", "ebv_column", "av_column",
                                                                       "reddening_error", "reddening_error_column"}
"""Options of :func:`fit_options` that go to the prior map's :class:`~redcorr.correction.ReddeningSource`."""


def fit_options(bands, *, law="f99", r_v=None, r_v_range=None, colours="dwarfs", prior_map=None, mag_columns=None,
                err_columns=None, **options):
    """The options of a per-star reddening fit, with every name resolved.

    Parameters
    ----------
    bands : list of str or redcorr.bandpass.Band
        As for :func:`correction_options`; each must be a band of the
        intrinsic-colour table.
    law : str or redcorr.curves.DustCurve
        As for :func:`correction_options`.
    r_v : float, optional
        R_V of a named law (its default if omitted); not with ``r_v_range``.
    r_v_range : (float, float), optional
        Fit R_V too, with a flat prior over this range (a named law only).
    colours : str or path-like or redcorr.intrinsic.ColourLocus
        The intrinsic-colour table: a packaged name (``"dwarfs"``), an ECSV
        file (:func:`redcorr.io.intrinsic.load_intrinsic_colours`) or a locus.
    prior_map : str or path-like or map, optional
        A dust map giving each row a prior on E(B−V)
        (:mod:`redcorr.correction.fit`, "Priors from a dust map").
    mag_columns, err_columns : dict, optional
        Band label → column, as for a correction.
    **options
        Fields of :class:`~redcorr.correction.FitOptions` (``floor``,
        ``teff_column``, ``teff_error_column``, ``prior_error``, ``ebv_max``,
        ``extrapolate``, ``strict``) and, with ``prior_map``, the map's
        fields of :class:`~redcorr.correction.ReddeningSource`
        (``lon_column``, ``lat_column``, ``frame``, ``map_scale``,
        ``distance_column``, ``distance_error_column``, ``parallax_column``,
        ``parallax_error_column``, ``prior_length``).

    Returns
    -------
    redcorr.correction.FitOptions

    Raises
    ------
    InputError
        For an unknown option, name or file, or a value the options refuse.
    """
    from redcorr.io.intrinsic import load_intrinsic_colours  # noqa: PLC0415

    fit_fields = {f.name for f in dataclasses.fields(FitOptions)} - {"bands", "locus", "curve", "curve_at",
                                                                       "r_v_range", "prior"}
    unknown = sorted(set(options) - fit_fields - _FIT_PRIOR)
    if unknown:
        raise InputError(f"options {unknown} are not known; the options are {sorted(fit_fields | _FIT_PRIOR)}")
    if r_v is not None and r_v_range is not None:
        raise InputError(f"give r_v={r_v!r} (R_V fixed) or r_v_range={r_v_range!r} (R_V fitted), not both")
    map_part = {k: v for k, v in options.items() if k in _FIT_PRIOR}
    prior = None
    if prior_map is not None:
        if not hasattr(prior_map, "lookup"):
            from redcorr.io.maps import open_map  # noqa: PLC0415 - only when a map is asked for

            prior_map = open_map(prior_map)
        prior = ReddeningSource(dust_map=prior_map, **map_part)
    elif map_part:
        raise InputError(f"{sorted(map_part)[0]}={map_part[sorted(map_part)[0]]!r} is for a prior map; "
                         "give prior_map (--prior-map)")
    locus = colours if hasattr(colours, "subset") else load_intrinsic_colours(colours)
    dust = _dust(law, r_v)
    return FitOptions(
        bands=BandSelection(*_bands(bands), mag_columns=dict(mag_columns or {}), err_columns=dict(err_columns or {})),
        locus=locus, curve=dust["curve"], curve_at=dust.get("curve_at"), r_v_range=r_v_range, prior=prior,
        **{k: v for k, v in options.items() if k in fit_fields},
    )


def fit_dataframe(frame, bands, **options):
    """Fit each row's reddening from its photometry, for a pandas DataFrame in memory.

    Parameters
    ----------
    frame : pandas.DataFrame
    bands : list of str or Band
    **options
        As for :func:`fit_options` (the columns are ``frame``'s).

    Returns
    -------
    out : pandas.DataFrame
        Input columns plus the fit's columns (:mod:`redcorr.correction.fit`).
    summary : dict
        As :meth:`redcorr.correction.RunSummary.to_dict`.

    Warns
    -----
    FitWarning
        If some rows carry flags that could mislead.
    """
    job = CatalogFit(list(frame.columns), fit_options(bands, **options))
    out = job.correct(frame)
    summary = job.summary.finish()
    summary.warn()
    return out, summary.to_dict()


def _bands(specs):
    """``(bands, labels)``: Band objects, and the name each was given by."""
    from redcorr.io.filters import load_band  # noqa: PLC0415

    if isinstance(specs, str):
        raise InputError(f"bands={specs!r} is one string; give a list of band names")
    bands, labels = [], []
    for spec in specs:
        if isinstance(spec, str):
            bands.append(load_band(spec))
            labels.append(spec)
        elif hasattr(spec, "wave_um"):
            bands.append(spec)
            labels.append(spec.name)
        else:
            raise InputError(f"band={spec!r} is neither a band name nor a Band")
    return bands, labels


def _dust(law, r_v):
    """``curve``, ``law`` and ``curve_at`` of :class:`DustOptions` for a law name or a curve."""
    from redcorr.io.curves import load_curve  # noqa: PLC0415

    if isinstance(law, str):
        return {"curve": load_curve(law, r_v=r_v), "law": law, "curve_at": functools.partial(load_curve, law)}
    if r_v is not None and not np.isclose(float(r_v), law.r_v):
        raise InputError(f"r_v={r_v!r} conflicts with the curve object's R_V {law.r_v:g}")
    return {"curve": law}


def correct_dataframe(frame, bands, **options):
    """Correct a pandas DataFrame in memory.

    Parameters
    ----------
    frame : pandas.DataFrame
    bands : list of str or Band
    **options
        As for :func:`correction_options` (the columns are ``frame``'s).

    Returns
    -------
    out : pandas.DataFrame
        Input columns plus the output columns (see :mod:`redcorr.correction`).
    summary : dict
        As :meth:`redcorr.correction.RunSummary.to_dict`.

    Warns
    -----
    OutOfRangeWarning
        If some rows fell outside the coefficient grid (clamped, flagged).
    """
    corr = Correction(list(frame.columns), correction_options(bands, **options))
    out = corr.correct(frame)
    summary = corr.summary.finish()
    summary.warn()
    return out, summary.to_dict()
