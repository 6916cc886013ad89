"""Published grain models, assembled from tables that have already been read.

Each function takes objects — a row of Weingartner & Draine (2001) Table 1,
materials holding their optical constants — and returns size distributions or
a :class:`~redcorr.grains.GrainModel`. Finding the row and reading the tables
is the job of :mod:`redcorr.io.grains`, which also names the results
(``wd01-rv3.1``, ``mrn77``).
"""

from redcorr.grains.model import Component, GrainModel, PAHBlend
from redcorr.grains.sizes import WD01Carbonaceous, WD01Silicate, mrn77

__all__ = ["wd01_distributions", "wd01_model", "mrn77_model"]


def wd01_distributions(row, b_c, *, scale=1.0):
    """The WD01 Milky Way carbonaceous and silicate distributions of one Table 1 row.

    Parameters
    ----------
    row : mapping
        One row of WD01 Table 1 (an astropy Table row or a dict) with the
        carbonaceous ``alpha_g``, ``beta_g``, ``a_t_g``, ``a_c_g`` and ``C_g``
        and the silicate ``alpha_s``, ``beta_s``, ``a_t_s`` and ``C_s``
        (radii in µm).
    b_c : float
        C atoms per H in the log-normal very small grains: the row's b_C.
    scale : float, optional
        Multiplies both distributions (default 1).

    Returns
    -------
    (WD01Carbonaceous, WD01Silicate)

    Notes
    -----
    The silicate cut-off radius is a_c,s = 0.1 µm for every row (WD01 §3).

    References
    ----------
    .. [1] Weingartner, J. C., & Draine, B. T. 2001, ApJ, 548, 296, Table 1.
       doi:10.1086/318651

    Examples
    --------
    >>> row = {"alpha_g": -2.25, "beta_g": -0.0648, "a_t_g": 0.00745, "a_c_g": 0.606, "C_g": 9.94e-11,
    ...        "alpha_s": -1.48, "beta_s": -9.34, "a_t_s": 0.172, "C_s": 1.02e-12}  # R_V = 3.1, b_C = 0
    >>> carbon, silicate = wd01_distributions(row, 0.0)
    >>> round(silicate.a_max, 3)  # a_t,s + 3.5 a_c,s
    0.522
    """
    carbon = WD01Carbonaceous(
        row["alpha_g"], row["beta_g"], row["a_t_g"], row["a_c_g"], row["C_g"], float(b_c), scale=scale
    )
    silicate = WD01Silicate(row["alpha_s"], row["beta_s"], row["a_t_s"], 0.1, row["C_s"], scale=scale)
    return carbon, silicate


def wd01_model(row, b_c, silicate, graphite, *, scale=1.0, name, citation):
    """A WD01 Milky Way grain model: silicate grains, and carbonaceous grains whose smallest are PAHs.

    Parameters
    ----------
    row, b_c, scale
        As for :func:`wd01_distributions`.
    silicate : Material
        Optical constants of the silicate grains.
    graphite : Material
        Optical constants of the carbonaceous grains (``carbon=True``); the
        smallest of them are blended with PAHs (`PAHBlend` defaults).
    name, citation : str
        Given to the `GrainModel`.

    Returns
    -------
    GrainModel
        Two components, silicate first.

    References
    ----------
    .. [1] Weingartner, J. C., & Draine, B. T. 2001, ApJ, 548, 296.
       doi:10.1086/318651
    .. [2] Li, A., & Draine, B. T. 2001, ApJ, 554, 778. doi:10.1086/323147
    """
    carbon, silicate_sizes = wd01_distributions(row, b_c, scale=scale)
    return GrainModel(
        [Component(silicate, silicate_sizes), Component(graphite, carbon, pah=PAHBlend())],
        name=name,
        citation=citation,
    )


def mrn77_model(silicate, graphite, *, name, citation):
    """The MRN model: silicate and graphite grains, each with the MRN power law.

    Parameters
    ----------
    silicate, graphite : Material
        Optical constants of the two populations.
    name, citation : str
        Given to the `GrainModel`.

    Returns
    -------
    GrainModel
        Two components, silicate first, with the sizes of
        :func:`redcorr.grains.mrn77`.

    References
    ----------
    .. [1] Mathis, J. S., Rumpl, W., & Nordsieck, K. H. 1977, ApJ, 217, 425.
       doi:10.1086/155591
    """
    return GrainModel(
        [Component(silicate, mrn77("silicate")), Component(graphite, mrn77("graphite"))],
        name=name,
        citation=citation,
    )
