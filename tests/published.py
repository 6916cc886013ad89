"""Published values the tests check against: each table once, its source beside it.

Plain data, no code. "From memory" marks values quoted without the paper at
hand; the tolerances in the tests that use them allow for that and for the
rounding of the printed digits.
"""

# --------------------------------------------------------------------------- photometric systems
AB_ZERO_POINT_JY = 3631.0
"""Oke, J. B. & Gunn, J. E. 1983, ApJ 266, 713: an AB magnitude m has F_ν = 3631 Jy × 10^(−0.4 m)
(their zero point, 48.60 in erg s⁻¹ cm⁻² Hz⁻¹, written in Jy)."""

# --------------------------------------------------------------------------- extinction laws
CCM89_TABLE3_RV31 = {
    "U": (0.36, 1.569),
    "B": (0.44, 1.337),
    "V": (0.55, 1.000),
    "R": (0.70, 0.751),
    "I": (0.90, 0.479),
    "J": (1.25, 0.282),
    "H": (1.60, 0.190),
    "K": (2.20, 0.114),
}
"""Cardelli, J. A., Clayton, G. C. & Mathis, J. S. 1989, ApJ 345, 245, Table 3: A(λ)/A(V) for
R_V = 3.1 at the effective wavelengths (µm) of U B V R I J H K, three decimals. From memory. The
table sets the fitted law beside the mean observed curve, so the fit agrees to about 0.015."""

SF11_TABLE6_RV31 = {
    "SDSS u": 4.239,
    "SDSS g": 3.303,
    "SDSS r": 2.285,
    "SDSS i": 1.698,
    "SDSS z": 1.263,
    "2MASS J": 0.723,
    "2MASS H": 0.460,
    "2MASS Ks": 0.310,
    "Landolt U": 4.334,
    "Landolt B": 3.626,
    "Landolt V": 2.742,
    "Landolt R": 2.169,
    "Landolt I": 1.505,
}
"""Schlafly, E. F. & Finkbeiner, D. P. 2011, ApJ 737, 103, Table 6, column R_V = 3.1: A_b/E(B−V)_SFD
for the Fitzpatrick (1999) law and a 7000 K source (a Munari et al. 2005 model atmosphere), three
decimals. From memory. Their E(B−V)_SFD scale (the 0.86 recalibration) cancels in the ratio of two
bands, which is what the tests compare."""

# --------------------------------------------------------------------------- grain models
WD01_CASE_A_B_C = {"3.1": 6.0e-5, "4.0": 4.0e-5, "5.5": 3.0e-5}
"""Weingartner, J. C. & Draine, B. T. 2001, ApJ 548, 296, Table 1: carbon in very small grains,
b_C (C atoms per H), of the Milky Way size distributions for R_V = 3.1, 4.0 and 5.5, case A."""

DRAINE03_RENORMALIZATION = {"3.1": 0.93, "4.0": 1.18, "5.5": 1.42}
"""Draine, B. T. 2003, ARA&A 41, 241: factors multiplying the WD01 size distributions above so that
they match the observed extinction per H. From memory."""

# --------------------------------------------------------------------------- Mie theory
MIEPYTHON_EFFICIENCIES_MX_EXAMPLE = {
    "m": 1.5 - 0.01j,  # in miepython's convention m = n − ik
    "x": 2.0,
    "q_ext": 1.812597,
    "q_sca": 1.724396,
    "q_back": 0.266214,
    "g": 0.630214,
}
"""miepython 3.3 (PyPI, S. Prahl), docstring example of ``efficiencies_mx``: m = 1.5 − 0.01i, x = 2
prints "1.812597 1.724396 0.266214 0.630214" (Q_ext, Q_sca, Q_back, g), six decimals."""

# --------------------------------------------------------------------------- sky coordinates
NGP_J2000_DEG = (192.85948, 27.12825)
"""ESA 1997, The Hipparcos and Tycho Catalogues, Vol. 1, Sect. 1.5.3: right ascension and declination
(ICRS/J2000) of the north galactic pole of the IAU 1958 system, five decimals. From memory."""

NODE_L_DEG = 32.93192
"""ESA 1997 (as above): galactic longitude of the ascending node of the galactic plane on the
equator (at RA = 192.85948° + 90°, Dec = 0). From memory."""

GALACTIC_CENTRE_B1950 = ((17, 42.4), (-28, 55))
"""Blaauw, A., Gum, C. S., Pawsey, J. L. & Westerhout, G. 1960, MNRAS 121, 123 (the IAU 1958
system): l = b = 0 lies at B1950 RA 17h 42.4m, Dec −28° 55′ (0.1 min and 1 arcmin). From memory."""

GALACTIC_CENTRE_ICRS_DEG = (266.40499, -28.93617)
"""l = b = 0 in ICRS as implied by the pole and node of ESA 1997 above (five decimals). From memory."""
