"""Extinction curves A(λ)/A(V): published laws, tables, and a registry.

Choose a law by its short name::

    >>> from redcorr.curves import get_curve
    >>> curve = get_curve("CCM89", r_v=3.1)
    >>> round(float(curve(0.55)), 2)
    1.0

Every curve is a :class:`DustCurve`; see its docstring for the
conventions shared by all of them.
"""

from redcorr._validate import check_choice
from redcorr.curves._base import DustCurve
from redcorr.curves.calzetti import Calzetti00
from redcorr.curves.ccm import CCM89, O94
from redcorr.curves.fitzpatrick import F99, FM90, G03Lmc2Supershell, G03LmcAverage, G03SmcBar, fm90_excess
from redcorr.curves.tabulated import TabulatedCurve, monochromatic_r_v

__all__ = [
    "DustCurve",
    "TabulatedCurve",
    "CCM89",
    "O94",
    "F99",
    "FM90",
    "Calzetti00",
    "G03SmcBar",
    "G03LmcAverage",
    "G03Lmc2Supershell",
    "LAWS",
    "get_curve",
    "list_curves",
    "register_law",
    "fm90_excess",
    "monochromatic_r_v",
]

LAWS = {}
"""dict: registry name → curve class. Add to it with :func:`register_law`."""


def register_law(cls):
    """Add a `DustCurve` subclass to the registry under ``cls.name``.

    Usable as a class decorator. Names are stored lower case.
    """
    if not (isinstance(cls, type) and issubclass(cls, DustCurve)) or not cls.name:
        raise TypeError(f"{cls!r} is not a named DustCurve subclass")
    LAWS[cls.name.lower()] = cls
    return cls


for _cls in (CCM89, O94, F99, FM90, Calzetti00, G03SmcBar, G03LmcAverage, G03Lmc2Supershell):
    register_law(_cls)


def get_curve(name, r_v=None, **params):
    """Instantiate a registered law by name (case-insensitive).

    Parameters
    ----------
    name : str
        Registry name, e.g. ``"ccm89"``; see :func:`list_curves`.
    r_v : float, optional
        R_V; the law's default if omitted.
    **params
        Extra law parameters (e.g. ``c1`` ... ``gamma`` for FM90).

    Raises
    ------
    UnknownNameError
        For an unknown name, with close-match suggestions.
    """
    key = check_choice("law", name, sorted(LAWS))
    return LAWS[key](r_v, **params)


def list_curves():
    """Describe every registered law.

    Returns
    -------
    list of dict
        Keys ``name``, ``r_v_limits`` (allowed R_V; None if fixed),
        ``r_v_observed`` (R_V span of the law's data, warning outside it; None
        if not given), ``default_r_v``, ``wave_range_um`` and ``citation``.
    """
    out = []
    for key in sorted(LAWS):
        cls = LAWS[key]
        lo, hi = cls.wavenumber_limits
        out.append(
            {
                "name": key,
                "r_v_limits": cls.r_v_limits,
                "r_v_observed": cls.r_v_observed,
                "default_r_v": cls.default_r_v,
                "wave_range_um": (1.0 / hi, 1.0 / lo),
                "citation": cls.citation,
            }
        )
    return out
