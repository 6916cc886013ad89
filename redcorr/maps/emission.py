"""Reddening from dust emission or gas: maps of optical depth or hydrogen column turned into E(B-V) or A_V.

A far-infrared or submillimetre map gives the dust's absorption optical
depth τ(λ) along each sight line; a radio or ultraviolet survey gives the
hydrogen column N_H (or N(HI) alone). Either is proportional to the
reddening through a ratio measured or modelled elsewhere:

    E(B-V) = X / (X/E(B-V)),    A_V = X / (X/A_V),

with X the map's quantity (τ(λ), or N_H in cm⁻²) and the ratio in X per
magnitude. When a ratio gives only one of E(B-V) and A_V, the other needs
R_V = A_V/E(B-V); a grain model gives both, and with them its own R_V.

This module takes numbers and does no I/O; :mod:`redcorr.io.map_files`
reads and writes the map files.

Cautions
--------
One ratio for a whole map assumes that every sight line has the same dust.
An optical depth derived from emission further assumes one dust temperature
along each line of sight: where warm and cold dust mix, a single-temperature
fit underestimates τ (and so the reddening) of the cold dust, and where small
grains are stochastically heated the emission is no longer that of grains in
equilibrium. The published gas-to-dust ratios themselves scatter from one
sight line to the next. :data:`CAUTION` says this in one line.

References
----------
.. [1] Bohlin, R. C., Savage, B. D. & Drake, J. F. 1978, ApJ 224, 132
.. [2] Rachford, B. L. et al. 2009, ApJS 180, 125
.. [3] Liszt, H. 2014, ApJ 780, 10
.. [4] Güver, T. & Özel, F. 2009, MNRAS 400, 2050
"""

import warnings
from typing import NamedTuple

import numpy as np

from redcorr._constants import MAP_UNITS
from redcorr._validate import check_choice, check_positive, shown
from redcorr.exceptions import InputError, OutOfRangeWarning
from redcorr.grains.emission import optical_depth_ratios

__all__ = [
    "EmissionRatio",
    "ConvertedValues",
    "PUBLISHED_RATIOS",
    "QUANTITIES",
    "NEGATIVE_POLICIES",
    "CAUTION",
    "published_ratio",
    "given_ratio",
    "grain_ratio",
    "reddening_from_emission",
]

QUANTITIES = {
    "nh": ("N_H", "cm-2"),
    "hi": ("N(HI)", "cm-2"),
    "tau": ("tau", ""),
}
"""What an input map may hold: key → (name, unit). N_H = N(HI) + 2 N(H2) counts every H nucleus;
N(HI) only the atomic gas; tau is the dust's absorption optical depth at a stated wavelength."""

NEGATIVE_POLICIES = ("mask", "keep")
"""What to do with negative input values: leave them blank, or convert them (negative reddening)."""

CAUTION = (
    "Caution: one ratio for the whole map; temperature gradients along the line of sight and stochastically "
    "heated small grains bias an emission-derived optical depth, and the ratio itself scatters between "
    "sight lines."
)
"""The caution shown with every converted map."""

_PLAUSIBLE = {"N_H": (1e15, None), "N(HI)": (1e15, None), "tau": (None, 1.0)}
"""(lowest, highest) plausible median of a map's positive values, to catch a map in other units: a column
under 1e15 cm⁻² is E(B-V) ~ 2e-7 mag, a far-infrared τ above 1 an A_V of thousands (our choice)."""


class EmissionRatio(NamedTuple):
    """How much of a map's quantity goes with one magnitude of reddening.

    Attributes
    ----------
    name : str
        Short name (``"bsd78"``, ``"given"``, a grain model's name).
    quantity : {"N_H", "N(HI)", "tau"}
        What the map holds.
    per_ebv, per_av : float or None
        The quantity per magnitude of E(B-V) and of A_V (cm⁻² mag⁻¹ for a
        column, mag⁻¹ for an optical depth); None when the source gives
        only the other.
    unit : str
        Unit of ``per_ebv`` and ``per_av``.
    citation : str
        Where the ratio comes from.
    wave_um : float or None
        Wavelength of an optical depth, µm; None for a column.
    ebv_max : float or None
        Largest E(B-V) at which the ratio was measured to hold, if the
        source says so.
    note : str
        What the ratio measures, and how sure the value is.
    """

    name: str
    quantity: str
    per_ebv: float | None
    per_av: float | None
    unit: str
    citation: str
    wave_um: float | None = None
    ebv_max: float | None = None
    note: str = ""

    @property
    def r_v(self):
        """float or None: A_V/E(B-V) implied by a ratio that gives both (a grain model)."""
        if self.per_ebv is None or self.per_av is None:
            return None
        return self.per_ebv / self.per_av

    @property
    def label(self):
        """str: the input quantity as a header or a table shows it, e.g. ``tau(250 um)``."""
        return self.quantity if self.wave_um is None else f"tau({self.wave_um:g} um)"


PUBLISHED_RATIOS = {
    "bsd78": EmissionRatio(
        "bsd78", "N_H", 5.8e21, None, "cm-2 mag-1",
        "Bohlin, Savage & Drake 1978, ApJ 224, 132",
        note="N_H = N(HI) + 2 N(H2) per E(B-V), from Lyman-alpha and H2 absorption toward OB stars",
    ),
    "rachford09": EmissionRatio(
        "rachford09", "N_H", 5.94e21, None, "cm-2 mag-1",
        "Rachford et al. 2009, ApJS 180, 125",
        note="N_H per E(B-V) on translucent sight lines (value from memory)",
    ),
    "liszt14": EmissionRatio(
        "liszt14", "N(HI)", 8.3e21, None, "cm-2 mag-1",
        "Liszt 2014, ApJ 780, 10",
        ebv_max=0.1,
        note="N(HI) per E(B-V) at low reddening, E(B-V) below about 0.1 (value and limit from memory)",
    ),
    "guver-ozel09": EmissionRatio(
        "guver-ozel09", "N_H", None, 2.21e21, "cm-2 mag-1",
        "Güver & Özel 2009, MNRAS 400, 2050",
        note="N_H per A_V, from X-ray absorption and optical extinction (value from memory)",
    ),
}
"""Published ratios of a hydrogen column to reddening, by name (see each one's ``note``)."""


def published_ratio(name):
    """A ratio of :data:`PUBLISHED_RATIOS` by name (case-insensitive)."""
    return PUBLISHED_RATIOS[check_choice("ratio", name, tuple(PUBLISHED_RATIOS), listed_by=None)]


def _wave(wave_um, quantity):
    """The wavelength, checked: needed (> 0) for an optical depth, refused for a column."""
    if quantity == "tau":
        if wave_um is None:
            raise InputError("wave_um is missing; an optical depth needs the wavelength it is given at (µm)")
        return check_positive("wave_um", wave_um)
    if wave_um is not None:
        raise InputError(f"wave_um={shown(wave_um)} is only for an optical depth; a column ({quantity}) has none")
    return None


def given_ratio(quantity, *, per_ebv=None, per_av=None, wave_um=None, citation="given by the user"):
    """A ratio given as a number: the map's quantity per magnitude of E(B-V) or of A_V.

    Parameters
    ----------
    quantity : {"nh", "hi", "tau"}
        A key of :data:`QUANTITIES`.
    per_ebv, per_av : float, optional
        Exactly one: the quantity per magnitude of E(B-V) (or of A_V); cm⁻²
        mag⁻¹ for a column, mag⁻¹ for an optical depth; > 0.
    wave_um : float, optional
        Wavelength of an optical depth, µm (needed for ``"tau"``).
    citation : str
        Where the number comes from.

    Returns
    -------
    EmissionRatio
    """
    name, unit = QUANTITIES[check_choice("quantity", quantity, tuple(QUANTITIES), listed_by=None)]
    if (per_ebv is None) == (per_av is None):
        raise InputError("give one ratio: per_ebv (per magnitude of E(B-V)) or per_av (per magnitude of A_V)")
    per_ebv = None if per_ebv is None else check_positive("per_ebv", per_ebv)
    per_av = None if per_av is None else check_positive("per_av", per_av)
    return EmissionRatio(
        "given", name, per_ebv, per_av, f"{unit} mag-1".strip(), citation, wave_um=_wave(wave_um, name)
    )


def grain_ratio(model, wave_um, *, cache=None):
    """The ratios τ_abs(λ)/E(B-V) and τ_abs(λ)/A_V of a grain model at one wavelength.

    Parameters
    ----------
    model : redcorr.grains.GrainModel
    wave_um : float
        Wavelength of the map's optical depth, µm.
    cache : optional
        Disk cache of cross sections, as for :meth:`redcorr.grains.GrainModel.optics`.

    Returns
    -------
    EmissionRatio
        With both ratios, hence the model's R_V (``.r_v``).
    """
    wave_um = _wave(wave_um, "tau")
    per_av, per_ebv = optical_depth_ratios(model, wave_um, cache=cache)
    per_av, per_ebv = float(np.asarray(per_av).reshape(-1)[0]), float(np.asarray(per_ebv).reshape(-1)[0])
    return EmissionRatio(
        model.name, "tau", per_ebv, per_av, "mag-1", model.citation or model.name, wave_um=wave_um,
        note="absorption optical depth per magnitude, from the grain model's cross sections",
    )


class ConvertedValues(NamedTuple):
    """A converted map and what happened to its pixels.

    Attributes
    ----------
    values : ndarray
        E(B-V) or A_V (``unit``), mag, the input's shape; NaN where blank.
    unit : {"E(B-V)", "A_V"}
    divisor : float
        What each input value, times the scale, was divided by: the
        quantity per magnitude of ``unit``.
    r_v : float or None
        R_V relating this map's A_V and E(B-V): used to convert, given for
        an A_V map's readers, or the grain model's; None if unknown.
    converted : int
        Pixels with a value.
    blank : int
        Pixels blank in the input (NaN or masked).
    non_finite : int
        Pixels holding ±inf in the input, left blank.
    negative : int
        Pixels with a negative input value (blank, or converted when kept).
    above_limit : int
        Pixels whose E(B-V) exceeds the ratio's ``ebv_max``.
    """

    values: np.ndarray
    unit: str
    divisor: float
    r_v: float | None
    converted: int
    blank: int
    non_finite: int
    negative: int
    above_limit: int

    def stats(self):
        """dict: ``min``, ``median`` and ``max`` of the values (NaN when none is left)."""
        good = self.values[np.isfinite(self.values)]
        if good.size == 0:
            return {"min": float("nan"), "median": float("nan"), "max": float("nan")}
        return {"min": float(good.min()), "median": float(np.median(good)), "max": float(good.max())}


def _divisor(ratio, unit, r_v):
    """(divisor, R_V of the output) for turning the quantity into ``unit``."""
    if ratio.r_v is not None:
        if r_v is not None:
            raise InputError(
                f"r_v={shown(r_v)} is not used: {ratio.name} gives E(B-V) and A_V itself "
                f"(its R_V is {ratio.r_v:.3g}); leave r_v out"
            )
        return (ratio.per_ebv if unit == "E(B-V)" else ratio.per_av), ratio.r_v
    if r_v is not None:
        r_v = check_positive("r_v", r_v)
    direct = ratio.per_ebv if unit == "E(B-V)" else ratio.per_av
    if direct is not None:
        if unit == "E(B-V)" and r_v is not None:
            raise InputError(
                f"r_v={shown(r_v)} is not used: {ratio.name} gives E(B-V) directly; R_V is only needed for A_V"
            )
        return direct, r_v
    if r_v is None:
        have = "E(B-V)" if ratio.per_ebv is not None else "A_V"
        raise InputError(f"{ratio.name} gives {have}; r_v (R_V = A_V/E(B-V)) is needed to give {unit}")
    return (ratio.per_ebv / r_v if unit == "A_V" else ratio.per_av * r_v), r_v


def _check_plausible(positive, ratio):
    """Warn when the map's typical value does not look like its quantity (another unit, say)."""
    if positive.size == 0:
        return
    low, high = _PLAUSIBLE[ratio.quantity]
    typical = float(np.median(positive))
    if low is not None and typical < low:
        warnings.warn(
            f"the map's median {ratio.label} is {typical:.3g} cm-2, below {low:g} cm-2: is it in units of "
            "1e20 or 1e21 cm-2? Give the factor as scale",
            OutOfRangeWarning,
            stacklevel=3,
        )
    if high is not None and typical > high:
        warnings.warn(
            f"the map's median {ratio.label} is {typical:.3g}, above {high:g}: far-infrared dust is optically "
            "thin; is the map an optical depth, in plain numbers?",
            OutOfRangeWarning,
            stacklevel=3,
        )


def reddening_from_emission(values, ratio, *, unit="E(B-V)", r_v=None, scale=1.0, negative="mask"):
    """Turn optical depths or hydrogen columns into E(B-V) or A_V.

    Parameters
    ----------
    values : array_like or numpy.ma.MaskedArray
        The map's values (any shape), in the units of ``ratio`` after
        multiplying by ``scale``. NaN and masked elements are blank.
    ratio : EmissionRatio
        From :func:`published_ratio`, :func:`given_ratio` or :func:`grain_ratio`.
    unit : {"E(B-V)", "A_V"}
        What to give.
    r_v : float, optional
        R_V = A_V/E(B-V), > 0: needed when the ratio gives the other of
        E(B-V) and A_V; for an A_V result whose ratio gives A_V, it is
        only carried along (for the map's readers). Refused where it
        would not be used, and with a grain model (which has its own).
    scale : float
        Factor applied to every value first (e.g. 1e20 for a column map
        in units of 10²⁰ cm⁻²); finite and > 0.
    negative : {"mask", "keep"}
        Negative values (noise around zero, or a subtracted background)
        are left blank, or converted into negative reddening. Counted
        either way.

    Returns
    -------
    ConvertedValues
        The values (float64, NaN where blank) and the counts of blank,
        non-finite, negative and converted pixels.

    Warns
    -----
    OutOfRangeWarning
        When the map's median is implausible for its quantity (a column
        below 1e15 cm⁻², an optical depth above 1), and when some E(B-V)
        exceed the range the ratio holds over (``ratio.ebv_max``).

    Notes
    -----
    E(B-V) = s·X / (X/E(B-V)) and A_V = s·X / (X/A_V), with X the map's
    value and s the scale; when only X/E(B-V) is known, A_V = R_V·E(B-V),
    and E(B-V) = A_V/R_V when only X/A_V is.

    References
    ----------
    .. [1] Bohlin, R. C., Savage, B. D. & Drake, J. F. 1978, ApJ 224, 132 (N_H/E(B-V))
    .. [2] Güver, T. & Özel, F. 2009, MNRAS 400, 2050 (N_H/A_V)

    Examples
    --------
    >>> from redcorr.maps.emission import published_ratio, reddening_from_emission
    >>> out = reddening_from_emission([5.8e21, float("nan")], published_ratio("bsd78"))
    >>> out.values.tolist(), out.blank
    ([1.0, nan], 1)
    """
    unit = check_choice("unit", unit, MAP_UNITS, listed_by=None)
    negative = check_choice("negative", negative, NEGATIVE_POLICIES, listed_by=None)
    scale = check_positive("scale", scale)
    if not isinstance(ratio, EmissionRatio):
        raise InputError(f"ratio={ratio!r} is not an EmissionRatio; make one with published_ratio or given_ratio")
    divisor, out_r_v = _divisor(ratio, unit, r_v)
    masked = np.ma.getmaskarray(values)
    try:
        x = np.array(np.ma.getdata(values), dtype=float)  # a copy: the input is never changed
    except (TypeError, ValueError):
        raise InputError("values are not numeric") from None
    blank = masked | np.isnan(x)
    infinite = ~blank & np.isinf(x)
    below = ~blank & ~infinite & (x < 0)
    x[blank | infinite] = np.nan
    if negative == "mask":
        x[below] = np.nan
    _check_plausible(x[x > 0] * scale, ratio)
    out = x * scale / divisor
    above = 0
    if ratio.ebv_max is not None and (unit == "E(B-V)" or out_r_v is not None):
        ebv = out if unit == "E(B-V)" else out / out_r_v
        above = int(np.count_nonzero(ebv > ratio.ebv_max))
        if above:
            warnings.warn(
                f"{above} pixel(s) have E(B-V) above {ratio.ebv_max:g}, beyond the range {ratio.name} "
                f"was measured over ({ratio.citation})",
                OutOfRangeWarning,
                stacklevel=2,
            )
    return ConvertedValues(
        out,
        unit,
        float(divisor),
        out_r_v,
        int(np.count_nonzero(np.isfinite(out))),
        int(np.count_nonzero(blank)),
        int(np.count_nonzero(infinite)),
        int(np.count_nonzero(below)),
        above,
    )
