"""Intrinsic (unreddened) magnitudes and colours of stars against effective temperature.

A :class:`ColourLocus` holds a table of stars' intrinsic magnitudes in several
bands, each relative to one reference band (M_band − M_ref), on a grid of
effective temperatures, optionally labelled by spectral type, and
interpolates it. The packaged table of main-sequence stars (Pecaut & Mamajek
2013, maintained version) and users' own tables are read by
:func:`redcorr.io.load_intrinsic_colours`; nothing here opens a file.

Interpolation is linear in log T_eff between neighbouring rows. Nothing is
extrapolated: outside the table's T_eff range, and between two rows of which
one lacks the band, the result is NaN; :meth:`ColourLocus.covers` says where
a value exists.
"""

import difflib

import numpy as np
from astropy import units as u

from redcorr._validate import as_float_array, shown
from redcorr.exceptions import InputError, UnknownNameError

__all__ = ["ColourLocus"]


class ColourLocus:
    """Intrinsic magnitudes relative to a reference band, tabulated against T_eff.

    Parameters
    ----------
    teff : array_like or Quantity ['temperature']
        Effective temperatures of the rows (K), finite, > 0, all different,
        at least 2; any order (rows are sorted into increasing T_eff).
    magnitudes : array_like, shape (n_teff, n_band)
        Intrinsic magnitudes (mag); NaN where a row has no value for a band.
        If ``reference`` is one of ``bands``, they may be on any per-row
        zero point (absolute magnitudes, or relative to any band): each row
        is shifted so that the reference column is 0, and a row with values
        but none for the reference is refused. If it is not, they are taken
        as already relative to it.
    bands : sequence of str
        Band names, one per column, all different, at least 2.
    reference : str
        The band the magnitudes are relative to.
    labels : sequence of str, optional
        Spectral-type labels of the rows (e.g. ``"G2V"``), all different
        (case-insensitively).
    absolute : array_like, optional
        Absolute magnitude of each row in the reference band (mag; NaN where
        unknown).
    name : str, optional
        Shown in messages.
    citation : str, optional
        Where the table comes from.

    Notes
    -----
    Values are interpolated linearly in x = ln T_eff between the two rows
    that bracket T_eff, and only where both rows have a value: a table is
    never filled in or extrapolated. At a row's T_eff the row's value is
    returned exactly.

    Why ln T_eff rather than T_eff: in Wien's approximation to the Planck
    law a colour index is linear in 1/T, m₁ − m₂ = a + b/T with
    b = 1.0857 (hc/k)(1/λ₁ − 1/λ₂) [1]_. The error of linear interpolation
    over a step h is about h²|f''|/8; for f = a + b/T it is
    (Δln T)² |b| / (8T) in ln T, and (ΔT/T)² |b| / (4T) in T — half as
    large in ln T for the same rows. Stellar colour tables are also
    spaced about evenly in ln T_eff over a wide range (tens of kelvin for
    M dwarfs, thousands for O stars), which linear steps in T would not
    respect.

    References
    ----------
    .. [1] Rybicki, G. B. & Lightman, A. P. 1979, Radiative Processes in
       Astrophysics (Wiley), chapter 1 (the Planck law and its Wien limit).
    .. [2] Pecaut, M. J. & Mamajek, E. E. 2013, ApJS, 208, 9, Table 5 (the
       intrinsic colours of dwarfs this class is built for).

    Examples
    --------
    >>> locus = ColourLocus([5000, 6000], [[0.0, 0.9], [0.0, 0.6]], ["V", "B"], reference="V")
    >>> float(locus.colour(6000, "B", "V"))
    0.6
    >>> bool(locus.covers(7000))
    False
    """

    def __init__(self, teff, magnitudes, bands, *, reference, labels=None, absolute=None, name="table",
                 citation=""):
        self.name = str(name)
        self.citation = str(citation)
        t = as_float_array("teff", teff, u.K, "a temperature")
        mags = as_float_array("magnitudes", magnitudes)
        bands = tuple(str(b) for b in bands)
        if t.ndim != 1 or t.size < 2:
            raise InputError(f"teff must be 1-d with at least 2 rows; got shape {t.shape}")
        if mags.shape != (t.size, len(bands)):
            raise InputError(
                f"magnitudes must have shape (n_teff, n_band) = ({t.size}, {len(bands)}); got {mags.shape}"
            )
        if len(bands) < 2:
            raise InputError(f"bands={list(bands)} has {len(bands)} band; a colour needs at least 2")
        if len(set(bands)) != len(bands):
            twice = next(b for b in bands if bands.count(b) > 1)
            raise InputError(f"bands has {twice!r} twice; each band once")
        bad = ~np.isfinite(t) | (t <= 0)
        if np.any(bad):
            raise InputError(f"teff={shown(t[bad][0])} K must be a finite number > 0")
        if np.any(np.isinf(mags)):
            raise InputError("magnitudes must be finite or NaN (missing); an infinity was given")
        order = np.argsort(t, kind="stable")
        t, mags = t[order], mags[order]
        if np.any(np.diff(t) == 0):
            raise InputError(f"teff has {t[1:][np.diff(t) == 0][0]:g} K twice; each T_eff once")
        self.reference = str(reference)
        if self.reference in bands:
            ref = mags[:, bands.index(self.reference)]
            orphan = np.isnan(ref) & np.any(np.isfinite(mags), axis=1)
            if np.any(orphan):
                raise InputError(
                    f"the row at teff={t[orphan][0]:g} K has magnitudes but none in the reference band "
                    f"{self.reference!r}, so they cannot be made relative to it"
                )
            mags = mags - ref[:, None]
        self._labels = self._check_labels(labels, t.size, order)
        self._absolute = None
        if absolute is not None:
            a = as_float_array("absolute", absolute)
            if a.shape != t.shape:
                raise InputError(f"absolute must have one value per row ({t.size}); got shape {a.shape}")
            self._absolute = a[order]
        self._teff, self._x, self._mags, self._bands = t, np.log(t), mags, bands

    @staticmethod
    def _check_labels(labels, n, order):
        if labels is None:
            return None
        labels = [str(s).strip() for s in labels]
        if len(labels) != n:
            raise InputError(f"labels has {len(labels)} entries; one per row ({n}) is needed")
        folded = [s.lower() for s in labels]
        twice = next((s for s, f in zip(labels, folded, strict=True) if folded.count(f) > 1), None)
        if twice is not None:
            raise InputError(f"labels has {twice!r} twice; each spectral type once")
        return tuple(labels[i] for i in order)

    # ------------------------------------------------------------------ what the table holds
    @property
    def teff(self):
        """T_eff of the rows (K), increasing (a copy)."""
        return self._teff.copy()

    @property
    def bands(self):
        """Band names, in column order."""
        return self._bands

    @property
    def labels(self):
        """Spectral-type labels of the rows in increasing T_eff, or None."""
        return self._labels

    @property
    def magnitudes(self):
        """Magnitudes relative to :attr:`reference`, shape (n_teff, n_band), NaN where missing (a copy)."""
        return self._mags.copy()

    @property
    def absolute(self):
        """Absolute magnitude in the reference band per row (a copy), or None."""
        return None if self._absolute is None else self._absolute.copy()

    @property
    def teff_range(self):
        """(lowest, highest) T_eff of the table (K)."""
        return float(self._teff[0]), float(self._teff[-1])

    def band_teff_range(self, band):
        """(lowest, highest) T_eff (K) of the rows that have a value for ``band``.

        A gap between them (rows without a value) still gives NaN; see
        :meth:`covers`. (NaN, NaN) if the band has no value at all.
        """
        have = np.isfinite(self._mags[:, self._index(band)])
        if not np.any(have):
            return float("nan"), float("nan")
        return float(self._teff[have][0]), float(self._teff[have][-1])

    def _index(self, band):
        band = str(band)
        if band in self._bands:
            return self._bands.index(band)
        raise UnknownNameError(
            f"band={band!r} is not in the intrinsic-colour table {self.name!r}; it covers {', '.join(self._bands)}"
        )

    def subset(self, bands):
        """A locus with only ``bands`` (in that order), still relative to :attr:`reference`."""
        bands = [str(b) for b in ([bands] if isinstance(bands, str) else bands)]
        cols = [self._index(b) for b in bands]
        return ColourLocus(self._teff, self._mags[:, cols], bands, reference=self.reference, labels=self._labels,
                           absolute=self._absolute, name=self.name, citation=self.citation)

    # ------------------------------------------------------------------ interpolation
    def _weights(self, teff):
        """Row index i, weight w in [0, 1] of row i + 1, and a mask of T_eff inside the table."""
        t = as_float_array("teff", teff, u.K, "a temperature")
        if np.any(t <= 0):
            raise InputError(f"teff={shown(t[t <= 0].ravel()[0])} K must be > 0")
        with np.errstate(invalid="ignore"):
            x = np.log(t)
            inside = (x >= self._x[0]) & (x <= self._x[-1])
        i = np.clip(np.searchsorted(self._x, np.where(inside, x, self._x[0]), side="right") - 1, 0,
                    self._x.size - 2)
        w = (np.where(inside, x, self._x[0]) - self._x[i]) / (self._x[i + 1] - self._x[i])
        return i, w, inside

    def _interp(self, columns, teff):
        i, w, inside = self._weights(teff)
        lo, hi = self._mags[i][..., columns], self._mags[i + 1][..., columns]
        w = w[..., None]
        out = np.where(w == 0, lo, np.where(w == 1, hi, (1 - w) * lo + w * hi))  # rows exactly, even beside a gap
        return np.where(inside[..., None], out, np.nan)

    def magnitude(self, teff, band=None):
        """Intrinsic magnitude relative to :attr:`reference` at ``teff``.

        Parameters
        ----------
        teff : float, array_like or Quantity ['temperature']
            T_eff (K), > 0; NaN gives NaN.
        band : str or sequence of str, optional
            One band (result of ``teff``'s shape), several, or None for all
            (result of shape ``teff.shape + (n_band,)``).

        Returns
        -------
        ndarray
            M_band − M_reference (mag); NaN outside :attr:`teff_range` and
            where a bracketing row has no value for the band.
        """
        if isinstance(band, str):
            return self._interp([self._index(band)], teff)[..., 0]
        cols = list(range(len(self._bands))) if band is None else [self._index(b) for b in band]
        return self._interp(cols, teff)

    def colour(self, teff, band1, band2):
        """Intrinsic colour index m₁ − m₂ at ``teff`` (mag); NaN where either band has no value.

        Examples
        --------
        >>> locus = ColourLocus([5000, 6000], [[0.0, 0.9], [0.0, 0.6]], ["V", "B"], reference="V")
        >>> round(float(locus.colour(5500, "B", "V")), 4)
        0.7432
        """
        m = self._interp([self._index(band1), self._index(band2)], teff)
        return m[..., 0] - m[..., 1]

    def absolute_magnitude(self, teff, band=None):
        """Absolute magnitude at ``teff``: the interpolated reference-band one plus :meth:`magnitude`.

        Raises
        ------
        InputError
            If the table has no absolute magnitudes.
        """
        if self._absolute is None:
            raise InputError(f"the intrinsic-colour table {self.name!r} has no absolute magnitudes")
        i, w, inside = self._weights(teff)
        lo, hi = self._absolute[i], self._absolute[i + 1]
        ref = np.where(inside, np.where(w == 0, lo, np.where(w == 1, hi, (1 - w) * lo + w * hi)), np.nan)
        if band is None or not isinstance(band, str):
            ref = ref[..., None]
        return ref + self.magnitude(teff, band)

    def covers(self, teff, band=None):
        """True where a value exists at ``teff``: inside :attr:`teff_range`, or for ``band``, where it is finite."""
        if band is None:
            return self._weights(teff)[2]
        return np.isfinite(self.magnitude(teff, band))

    # ------------------------------------------------------------------ spectral types
    def teff_of(self, spectral_type):
        """T_eff (K) of the rows labelled ``spectral_type`` (a label or a sequence of them).

        Labels are matched case-insensitively, whole (``"G2V"``, not ``"G2"``).

        Raises
        ------
        UnknownNameError
            For a label the table does not have, with close matches.
        InputError
            If the table has no labels.
        """
        if self._labels is None:
            raise InputError(f"the intrinsic-colour table {self.name!r} has no spectral-type labels")
        lookup = {s.lower(): k for k, s in enumerate(self._labels)}
        single = isinstance(spectral_type, str)
        out = []
        for label in [spectral_type] if single else list(spectral_type):
            key = str(label).strip().lower()
            if key not in lookup:
                close = difflib.get_close_matches(key, list(lookup), n=3, cutoff=0.6)
                hint = ("did you mean " + ", ".join(repr(self._labels[lookup[c]]) for c in close) + "?") if close \
                    else f"it has {self._labels[-1]} to {self._labels[0]} ({len(self._labels)} types)"
                raise UnknownNameError(
                    f"spectral_type={label!r} is not in the intrinsic-colour table {self.name!r}; {hint}"
                )
            out.append(self._teff[lookup[key]])
        return float(out[0]) if single else np.array(out)

    def __repr__(self):
        lo, hi = self.teff_range
        return (f"ColourLocus({self.name!r}, {len(self._teff)} rows, T_eff {lo:g}-{hi:g} K, "
                f"bands {', '.join(self._bands)} relative to {self.reference})")
