"""The options of a catalog correction: one small frozen object per concern.

==========================  ===================================================
:class:`BandSelection`      what to correct: bands, their columns, colours
:class:`DustOptions`        the dust: curve, R_V per row, its error, the method
:class:`ReddeningSource`    how much dust: a constant, a column or a dust map
:class:`SpectrumOptions`    the source's blackbody temperature
:class:`OutputOptions`      names of the new columns, handling of bad cells
:class:`CorrectionOptions`  the five together, as :class:`Correction` takes them
==========================  ===================================================

Every field is checked when the object is made (`InputError`, naming the
field, the value and what is allowed). They hold objects (bands, curves,
maps), never names: :func:`redcorr.io.correction.correction_options` turns
the names a user types into these objects, so the command line, the
terminal UI and Python callers build them the same way. Checks that need
the columns of a table (guessing and finding columns) are made by
:class:`~redcorr.correction.Correction`.
"""

from dataclasses import dataclass, field

from redcorr._constants import DEFAULT_TEMPERATURE
from redcorr._validate import check_choice, check_finite, check_positive
from redcorr.exceptions import InputError

__all__ = [
    "BandSelection",
    "CorrectionOptions",
    "DustOptions",
    "OutputOptions",
    "ReddeningSource",
    "SpectrumOptions",
    "bands_beyond_curve",
]

SPECTRA = ("fixed", "column", "colour")
"""Ways of setting the source temperature: one value, a column, or solved from a colour."""


_DISTANCE_FIELDS = ("distance_column", "distance_error_column", "parallax_column", "parallax_error_column")
"""The columns giving each row's distance to a distance-resolved map."""


def _set(obj, name, value):
    """Store a normalised field value on a frozen dataclass (from its ``__post_init__``)."""
    object.__setattr__(obj, name, value)


def _non_negative(name, value):
    out = check_finite(name, value or 0.0)
    if out < 0:
        raise InputError(f"{name}={value!r} must be >= 0")
    return out


def _whole(name, value, lo):
    """Return ``int(value)`` or raise if it is not a whole number >= ``lo``."""
    try:
        whole = not isinstance(value, bool) and float(value).is_integer()
    except (TypeError, ValueError):
        whole = False
    if not whole or float(value) < lo:
        raise InputError(f"{name}={value!r} must be a whole number >= {lo}")
    return int(value)


def _column_name(name, value):
    if value is not None and (not isinstance(value, str) or not value.strip()):
        raise InputError(f"{name}={value!r} is not a column name (a non-empty string)")
    return value


@dataclass(frozen=True)
class BandSelection:
    """What to correct: the bands, the columns holding them, and the colours wanted.

    Parameters
    ----------
    bands : sequence of redcorr.bandpass.Band
        At least one band.
    labels : sequence of str, optional
        The name of each band in ``mag_columns``, ``err_columns``,
        ``colours``, the summary and the ``A_LABEL`` output columns; the
        bands' own names by default.
    mag_columns : dict, optional
        Label → magnitude column; the others are guessed from the table's
        columns (``kw-v`` finds ``kw-v``, ``kw_v``, ``vmag``, ``v_mag``, ``v``).
    err_columns : dict, optional
        Label → error column, or None to switch the guess off; the others
        are guessed (``e_MAG``, ``MAG_err``, ``err_MAG`` ...).
    colours : sequence of (str, str)
        Label pairs whose corrected colours are written (default none).
    """

    bands: tuple
    labels: tuple = None
    mag_columns: dict = field(default_factory=dict)
    err_columns: dict = field(default_factory=dict)
    colours: tuple = ()

    def __post_init__(self):
        bands = tuple(self.bands)
        if not bands:
            raise InputError("bands=[] is empty; give at least one band")
        for band in bands:
            if not (hasattr(band, "wave_um") and hasattr(band, "wave_range_um")):
                raise InputError(f"bands: {band!r} is not a Band; name it through redcorr.io.load_band")
        labels = [str(b.name) for b in bands] if self.labels is None else [str(x) for x in self.labels]
        if len(labels) != len(bands):
            raise InputError(f"labels={labels} names {len(labels)} bands; there are {len(bands)}")
        if len(set(labels)) != len(labels):
            raise InputError(f"bands={labels} lists a band twice")
        _set(self, "bands", bands)
        _set(self, "labels", tuple(labels))
        mags, errs = dict(self.mag_columns or {}), dict(self.err_columns or {})
        for key in list(mags) + list(errs):
            self.index(key, "column mapping")
        for key, col in mags.items():
            _column_name(f"mag_columns[{key!r}]", col)
        for key, col in errs.items():
            _column_name(f"err_columns[{key!r}]", col)
        _set(self, "mag_columns", mags)
        _set(self, "err_columns", errs)
        for pair in self.colours:
            self.pair(pair, "colours")
        _set(self, "colours", tuple(tuple(p) for p in self.colours))

    def index(self, label, what):
        """Position of the band ``label``; `InputError` naming ``what`` if there is none."""
        try:
            return self.labels.index(label)
        except ValueError:
            raise InputError(f"{what}: band {label!r} is not one of the bands {list(self.labels)}") from None

    def pair(self, pair, what):
        """Positions ``(i, j)`` of two different bands named by ``pair``."""
        if len(pair) != 2:
            raise InputError(f"{what}={pair!r} must be two band names")
        i, j = self.index(pair[0], what), self.index(pair[1], what)
        if i == j:
            raise InputError(f"{what}={pair!r} needs two different bands")
        return i, j


@dataclass(frozen=True)
class DustOptions:
    """The dust: its extinction curve, R_V per row and its uncertainty, and how A_b is computed.

    Parameters
    ----------
    curve : redcorr.curves.DustCurve
        An extinction law, a table or a grain model's curve, at its R_V.
    law : str, optional
        The name the curve was asked for, recorded in summaries; the
        curve's own name by default.
    curve_at : callable, optional
        ``curve_at(r_v)`` gives the same law at another R_V. Needed for
        ``rv_column``, ``rv_error`` and ``rv_error_column``;
        :func:`redcorr.io.correction.correction_options` supplies it for a
        law with an R_V parameter.
    rv_column : str, optional
        Column of R_V per row (see the Notes of :mod:`redcorr.correction`).
    rv_error : float
        σ(R_V) of every row (default 0).
    rv_error_column : str, optional
        Column of σ(R_V) per row.
    nonlinear : bool
        Band-integrated A_b(A_V, T) (True, default) or A_b = R_b E(B-V).
    extrapolate : bool
        Allow bands beyond the curve's wavelengths (rows flagged); default False.
    rv_step : float
        Spacing of the R_V nodes for a per-row R_V (default 0.1).
    """

    curve: object
    law: str = None
    curve_at: object = None
    rv_column: str = None
    rv_error: float = 0.0
    rv_error_column: str = None
    nonlinear: bool = True
    extrapolate: bool = False
    rv_step: float = 0.1

    def __post_init__(self):
        if not all(hasattr(self.curve, a) for a in ("r_v", "wave_range", "name")):
            raise InputError(f"curve={self.curve!r} is not an extinction curve; name it through redcorr.io.load_curve")
        if self.curve_at is not None and not callable(self.curve_at):
            raise InputError(f"curve_at={self.curve_at!r} is not callable; give a function of R_V")
        _set(self, "law", self.curve.name if self.law is None else str(self.law))
        _column_name("rv_column", self.rv_column)
        _column_name("rv_error_column", self.rv_error_column)
        _set(self, "rv_error", _non_negative("rv_error", self.rv_error))
        _set(self, "rv_step", check_positive("rv_step", self.rv_step))
        _set(self, "nonlinear", bool(self.nonlinear))
        _set(self, "extrapolate", bool(self.extrapolate))
        if self.varying_rv and (self.curve_at is None or self.r_v_limits is None):
            raise InputError(
                f"law={self.law!r} has a fixed R_V of {self.curve.r_v:g}; a per-row R_V or an R_V "
                "uncertainty needs a law with an R_V parameter (e.g. f99, ccm89)"
            )

    @property
    def varying_rv(self):
        """bool: whether R_V changes per row or has an uncertainty (the law is needed at other R_V)."""
        return self.rv_column is not None or self.rv_error_column is not None or self.rv_error > 0

    @property
    def r_v_limits(self):
        """tuple of float or None: the R_V range of the curve's law (None for a fixed R_V)."""
        return getattr(self.curve, "r_v_limits", None)


@dataclass(frozen=True)
class ReddeningSource:
    """How much dust each row has: one constant, a column, or a dust map (at most one).

    With none of ``ebv``, ``av``, ``ebv_column``, ``av_column`` or
    ``dust_map``, a column of E(B-V) or A_V is guessed from common names.

    Parameters
    ----------
    ebv, av : float, optional
        One E(B-V) or A_V for every row.
    ebv_column, av_column : str, optional
        Column of E(B-V) or of A_V.
    dust_map : redcorr.maps.ReddeningMap, optional
        Looked up at ``lon_column``, ``lat_column`` (RA/Dec "icrs" or l/b
        "galactic", guessed from the columns when not given).
    reddening_error : float
        σ of the reddening for every row, in its own quantity (default 0).
    reddening_error_column : str, optional
        Column of σ of the reddening (guessed beside a reddening column).
    map_scale : float
        Factor applied to the map values (e.g. a recalibration; default 1).
    lon_column, lat_column : str, optional
        Position columns for the map (both or neither).
    frame : str, optional
        Frame of the position columns: ``"icrs"`` (default) or ``"galactic"``.
    distance_column : str, optional
        Column of each row's distance in pc, for a distance-resolved map:
        the reddening is then the map's to that distance.
    distance_error_column : str, optional
        Column of σ of the distance in pc (a Gaussian distance, truncated
        at 0); the reddening's σ over it joins the reddening's error.
    parallax_column : str, optional
        Column of parallaxes in mas, instead of ``distance_column``. Without
        ``parallax_error_column`` the distance is 1000/parallax, and a
        parallax <= 0 gives no usable distance (the row is flagged).
    parallax_error_column : str, optional
        Column of σ of the parallax in mas: the distance is then the
        posterior with an exponentially decreasing space density prior
        (:meth:`redcorr.maps.distance.DistanceSamples.from_parallax`).
    prior_length : float, optional
        pc; the prior's length scale, with ``parallax_error_column`` only
        (default :data:`redcorr.maps.distance.EDSD_LENGTH_SCALE_PC`).
    """

    ebv: float = None
    av: float = None
    ebv_column: str = None
    av_column: str = None
    dust_map: object = None
    reddening_error: float = 0.0
    reddening_error_column: str = None
    map_scale: float = 1.0
    lon_column: str = None
    lat_column: str = None
    frame: str = None
    distance_column: str = None
    distance_error_column: str = None
    parallax_column: str = None
    parallax_error_column: str = None
    prior_length: float = None

    def __post_init__(self):
        chosen = [n for n in ("ebv", "av", "ebv_column", "av_column", "dust_map") if getattr(self, n) is not None]
        if len(chosen) > 1:
            raise InputError(f"give one source of reddening, not {chosen}")
        for name in ("ebv", "av"):
            if getattr(self, name) is not None:
                _set(self, name, check_finite(name, getattr(self, name)))
        for name in ("ebv_column", "av_column", "reddening_error_column", "lon_column", "lat_column",
                     *_DISTANCE_FIELDS):
            _column_name(name, getattr(self, name))
        self._check_distance()
        if self.dust_map is not None:
            if not (hasattr(self.dust_map, "lookup") and hasattr(self.dust_map, "unit")):
                raise InputError(f"dust_map={self.dust_map!r} is not a reddening map; open it with redcorr.io.open_map")
            _set(self, "map_scale", check_positive("map_scale", self.map_scale))
            if (self.lon_column is None) != (self.lat_column is None):
                raise InputError("give both position columns (lon_column and lat_column) or neither")
        _set(self, "reddening_error", _non_negative("reddening_error", self.reddening_error))

    def _check_distance(self):
        """Distance options only with a map, a distance or a parallax (not both), errors with their value."""
        given = [n for n in (*_DISTANCE_FIELDS, "prior_length") if getattr(self, n) is not None]
        if given and self.dust_map is None:
            raise InputError(f"{given[0]}={getattr(self, given[0])!r} is used only with a dust map; give dust_map")
        if self.distance_column is not None and self.parallax_column is not None:
            raise InputError(f"distance_column={self.distance_column!r} and parallax_column="
                             f"{self.parallax_column!r}: give a distance or a parallax column, not both")
        for error, value in (("distance_error_column", "distance_column"),
                             ("parallax_error_column", "parallax_column")):
            if getattr(self, error) is not None and getattr(self, value) is None:
                raise InputError(f"{error}={getattr(self, error)!r} needs {value}")
        if self.prior_length is not None:
            if self.parallax_error_column is None:
                raise InputError(f"prior_length={self.prior_length!r} is the prior of a parallax with an error; "
                                 "it needs parallax_error_column")
            _set(self, "prior_length", check_positive("prior_length", self.prior_length))

    @property
    def kind(self):
        """str: ``"constant"``, ``"map"`` or ``"column"`` (given or guessed)."""
        if self.ebv is not None or self.av is not None:
            return "constant"
        return "map" if self.dust_map is not None else "column"


@dataclass(frozen=True)
class SpectrumOptions:
    """The source spectrum: a blackbody of one temperature, of a column's, or solved from a colour.

    Parameters
    ----------
    spectrum : {"fixed", "column", "colour"}
        ``temperature`` for every row (default); ``temperature_column`` (or
        a column guessed from common names); or solved per row from the
        colour ``solve_colour``.
    temperature : float
        K; the fixed temperature, and the solver's first guess (default
        :data:`redcorr._constants.DEFAULT_TEMPERATURE`).
    temperature_column : str, optional
        Used with ``spectrum="column"``.
    solve_colour : (str, str), optional
        Two band labels whose observed colour sets the temperature
        (``spectrum="colour"``).
    colour_offset : float
        Added to the blackbody AB colour before comparing (e.g. the offset
        of the catalog's system from AB; default 0).
    max_iterations : int
        Of the colour solver (default 20).
    tolerance : float
        Mag; the solver stops when no A_b changes by more (default 1e-7).
    """

    spectrum: str = "fixed"
    temperature: float = DEFAULT_TEMPERATURE
    temperature_column: str = None
    solve_colour: tuple = None
    colour_offset: float = 0.0
    max_iterations: int = 20
    tolerance: float = 1e-7

    def __post_init__(self):
        _set(self, "spectrum", check_choice("spectrum", self.spectrum, SPECTRA))
        _set(self, "temperature", check_positive("temperature", self.temperature))
        _column_name("temperature_column", self.temperature_column)
        if self.spectrum == "colour":
            if not self.solve_colour:
                raise InputError("spectrum='colour' needs solve_colour, two band names such as ('kw-b', 'kw-v')")
            if len(self.solve_colour) != 2:
                raise InputError(f"solve_colour={self.solve_colour!r} must be two band names")
        if self.solve_colour is not None:
            _set(self, "solve_colour", tuple(self.solve_colour))
        _set(self, "colour_offset", check_finite("colour_offset", self.colour_offset))
        _set(self, "max_iterations", _whole("max_iterations", self.max_iterations, 1))
        _set(self, "tolerance", check_positive("tolerance", self.tolerance))


@dataclass(frozen=True)
class OutputOptions:
    """The new columns' names and how bad cells are handled.

    Parameters
    ----------
    suffix : str
        Appended to the magnitude (and colour) columns for their corrected
        values (default ``"_dered"``).
    strict : bool
        Raise on text in a number column instead of flagging the row
        (default False).
    """

    suffix: str = "_dered"
    strict: bool = False

    def __post_init__(self):
        if not isinstance(self.suffix, str):
            raise InputError(f"suffix={self.suffix!r} is not a string")
        _set(self, "strict", bool(self.strict))


def bands_beyond_curve(curve, bands):
    """The bands reaching beyond the curve's wavelengths, as ``(band, lo_um, hi_um)``."""
    wmin, wmax = curve.wave_range.to_value("um")
    out = []
    for band in bands:
        lo, hi = band.wave_range_um
        if lo < wmin or hi > wmax:
            out.append((band, lo, hi))
    return out


@dataclass(frozen=True)
class CorrectionOptions:
    """Everything a :class:`~redcorr.correction.Correction` needs besides the table's columns.

    Parameters
    ----------
    bands : BandSelection
    dust : DustOptions
    reddening : ReddeningSource
        Default: guess a reddening column.
    spectrum : SpectrumOptions
        Default: a 7000 K blackbody.
    output : OutputOptions
        Default: suffix ``"_dered"``, bad cells flagged.

    Notes
    -----
    Checks across the parts: ``solve_colour`` names two of the bands, and a
    band beyond the curve's wavelengths is refused unless
    ``dust.extrapolate``.
    """

    bands: BandSelection
    dust: DustOptions
    reddening: ReddeningSource = field(default_factory=ReddeningSource)
    spectrum: SpectrumOptions = field(default_factory=SpectrumOptions)
    output: OutputOptions = field(default_factory=OutputOptions)

    def __post_init__(self):
        for name, cls in (("bands", BandSelection), ("dust", DustOptions), ("reddening", ReddeningSource),
                          ("spectrum", SpectrumOptions), ("output", OutputOptions)):
            if not isinstance(getattr(self, name), cls):
                raise InputError(f"{name}={getattr(self, name)!r} is not a {cls.__name__}")
        if self.spectrum.spectrum == "colour":
            self.bands.pair(self.spectrum.solve_colour, "solve_colour")
        if not self.dust.extrapolate:
            curve = self.dust.curve
            for band, lo, hi in bands_beyond_curve(curve, self.bands.bands):
                wmin, wmax = curve.wave_range.to_value("um")
                raise InputError(
                    f"band {band.name!r} spans {lo:.4g}-{hi:.4g} µm, beyond the {curve.name} range "
                    f"[{wmin:.4g}, {wmax:.4g}] µm; allow extrapolation to use it anyway"
                )
