"""Mie theory for homogeneous spheres: efficiencies, amplitudes, phase function.

Conventions
-----------
* Refractive index ``m = n + ik`` relative to the surrounding medium, with
  ``k >= 0`` for an absorbing sphere (the time dependence is exp(-iωt), as in
  Bohren & Huffman 1983). Values written in the other convention,
  ``m = n - ik``, are accepted with ``convention="n-ik"`` and conjugated.
  An imaginary part of the wrong sign for the chosen convention is an error,
  never silently flipped.
* Size parameter ``x = 2πa/λ`` with ``a`` the radius and ``λ`` the wavelength
  in the medium.
* Efficiencies are cross sections divided by the geometric cross section
  πa². ``q_back`` is the radar backscattering efficiency of Bohren & Huffman
  (1983, eq. 4.82), 4π times the differential cross section at 180° over πa².
* The phase function is normalized over the sphere, ∫ p dΩ = 1 (sr⁻¹).

Method
------
The Mie coefficients a_n, b_n follow Bohren & Huffman (1983, §4.8), with the
series cut at n_stop = x + 4.05 x^(1/3) + 2 terms (Wiscombe 1980). The
logarithmic derivative D_n(z) = ψ_n'(z)/ψ_n(z) of the Riccati–Bessel function
enters through s_n(z) = z D_n(z) − (n + 1), obtained by the downward recurrence
s_(n−1) = −z²/(2n + 1 + s_n) for z = mx and for z = x. The recurrence starts
at n_stop(w) + 6 w^(1/3) + 16 with w = max(x, |mx|): Wiscombe's start,
max(n_stop, |mx|) + 16, leaves errors up to 1e-5 in D_n near n_stop at
x ~ 1e4, because the Airy transition region widens as w^(1/3). ψ_n(x) is
built upward from ψ_n = ψ_(n−1) x/(2n + 1 + s_n(x)) and χ_n(x) by the
(stable) upward recurrence.

Small spheres need no separate expansion: written with s_n, which carries no
1/x term, a_n and b_n keep full relative precision as x → 0 (the usual form
loses it through m D_n(mx) − D_n(x) ≈ 1/x − 1/x). Against a 60-digit
evaluation the series agrees to ~1e-15 at x = 1e-6, and it follows the
Rayleigh power laws exactly down to x = 1e-30, the smallest size accepted; a
truncated small-x (Rayleigh/Penndorf) expansion would only be less accurate.

Every result depends only on its own (m, x): each element starts its
recurrences at its own index and sums its own series term by term, so it is
bitwise the same whether computed alone or among any other spheres.

Engines
-------
Two engines evaluate the same formulas: a numba-compiled kernel and a pure
numpy path, which gives the same numbers (to ~1e-14 relative; the two round
complex division differently) more slowly. :func:`sphere`,
:func:`sphere_amplitudes` and :func:`sphere_phase_function` take
``engine="auto" | "numba" | "numpy"``. ``"auto"`` (the default) means the
engine named by :func:`default_engine`: numba when it can be imported,
unless the environment variable ``REDCORR_MIE_NUMPY=1`` was set when this
module was imported, which selects numpy. ``"numba"`` without numba installed
raises ImportError. Nothing in the module changes its own state at run time:
the environment is read once at import and numba is looked up once, on the
first call that wants it (so ``import redcorr.mie`` does not load numba).

Equation and section numbers of Bohren & Huffman (1983) are cited from memory.

References
----------
.. [1] Bohren, C. F. & Huffman, D. R. 1983, Absorption and Scattering of
   Light by Small Particles (Wiley), §4.4 and §4.8.
.. [2] Wiscombe, W. J. 1980, Appl. Opt. 19, 1505.
"""

import functools
import os
from dataclasses import dataclass

import numpy as np
from astropy import units as u

from redcorr._validate import as_float_array
from redcorr.exceptions import InputError

__all__ = [
    "SphereOptics",
    "sphere",
    "sphere_amplitudes",
    "sphere_phase_function",
    "series_coefficients",
    "n_terms",
    "ENGINES",
    "default_engine",
]

X_MIN = 1.0e-30
"""Smallest size parameter accepted: below it g (∝ x²) is built from terms
∝ x⁸ that reach the subnormal range of float64."""

X_MAX = 1.0e6
"""Largest size parameter accepted (the cost grows as x · max(1, |m|))."""

ENGINES = ("auto", "numba", "numpy")
"""Values accepted by the ``engine`` keyword (see the module docstring)."""

_NUMPY_REQUESTED = os.environ.get("REDCORR_MIE_NUMPY", "").strip() not in ("", "0")
# read once, at import: REDCORR_MIE_NUMPY=1 makes engine="auto" mean numpy


@dataclass(frozen=True)
class SphereOptics:
    """Efficiencies and asymmetry of homogeneous spheres.

    Every attribute is a float64 ndarray of the broadcast shape of ``m`` and
    ``x`` (0-d for scalar input).

    Attributes
    ----------
    q_ext, q_sca, q_abs : ndarray
        Extinction, scattering and absorption efficiencies, Q = C / (πa²);
        ``q_abs = q_ext - q_sca`` (exactly 0 where Im(m) = 0).
    q_back : ndarray
        Radar backscattering efficiency (Bohren & Huffman 1983, eq. 4.82).
    g : ndarray
        Asymmetry parameter ⟨cos θ⟩ of the scattered light.

    References
    ----------
    .. [1] Bohren, C. F. & Huffman, D. R. 1983, Absorption and Scattering of
       Light by Small Particles (Wiley), eqs. 4.61, 4.62 and 4.82.
    """

    q_ext: np.ndarray
    q_sca: np.ndarray
    q_abs: np.ndarray
    q_back: np.ndarray
    g: np.ndarray

    @property
    def albedo(self):
        """Single-scattering albedo Q_sca / Q_ext."""
        return self.q_sca / self.q_ext


def _as_index(m, convention):
    """Complex refractive index in the n + ik convention, validated."""
    if convention not in ("n+ik", "n-ik"):
        raise InputError(f"convention={convention!r} is not known; choose 'n+ik' or 'n-ik'")
    if isinstance(m, u.Quantity):
        try:
            m = m.to_value(u.dimensionless_unscaled)
        except u.UnitConversionError:
            raise InputError(f"m has unit {m.unit!s}; a refractive index is dimensionless") from None
    try:
        arr = np.asarray(m, dtype=complex)
    except (TypeError, ValueError):
        raise InputError(f"m={m!r} is not a complex number") from None
    bad = ~np.isfinite(arr)
    if np.any(bad):
        raise InputError(f"m={complex(arr[bad].flat[0])!r} must be a finite complex number")
    bad = arr.real <= 0
    if np.any(bad):
        raise InputError(f"m={complex(arr[bad].flat[0])!r} must have a real part > 0")
    if convention == "n+ik":
        bad = arr.imag < 0
        if np.any(bad):
            raise InputError(
                f"m={complex(arr[bad].flat[0])!r} has a negative imaginary part; with "
                "convention='n+ik' an absorbing sphere has Im(m) >= 0 (for indices "
                "written n - ik pass convention='n-ik', on the command line --convention n-ik)"
            )
    else:
        bad = arr.imag > 0
        if np.any(bad):
            raise InputError(
                f"m={complex(arr[bad].flat[0])!r} has a positive imaginary part; with "
                "convention='n-ik' an absorbing sphere has Im(m) <= 0"
            )
        arr = np.conj(arr)
    return arr


def _as_size(x):
    """Size parameter as a float64 array, validated."""
    if isinstance(x, u.Quantity):
        try:
            x = x.to_value(u.dimensionless_unscaled)
        except u.UnitConversionError:
            raise InputError(f"x has unit {x.unit!s}; the size parameter 2πa/λ is dimensionless") from None
    try:
        arr = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"x={x!r} is not a real number") from None
    bad = ~np.isfinite(arr) | (arr < X_MIN) | (arr > X_MAX)
    if np.any(bad):
        raise InputError(
            f"x={float(arr[bad].flat[0])!r} is outside the allowed range [{X_MIN:g}, {X_MAX:g}] "
            "for the size parameter 2πa/λ"
        )
    return arr


def _broadcast(m, x):
    """Shape of the result and flat, writable float64/complex128 copies of m and x."""
    try:
        shape = np.broadcast_shapes(m.shape, x.shape)
    except ValueError:
        raise InputError(f"m of shape {m.shape} and x of shape {x.shape} do not broadcast") from None
    mf = np.array(np.broadcast_to(m, shape), dtype=complex).ravel()
    xf = np.array(np.broadcast_to(x, shape), dtype=float).ravel()
    return shape, mf, xf


def n_terms(x):
    """Number of terms kept in the Mie series, n_stop = x + 4.05 x^(1/3) + 2.

    Parameters
    ----------
    x : array_like
        Size parameter (validated by the callers).

    Returns
    -------
    ndarray of int64

    References
    ----------
    .. [1] Wiscombe, W. J. 1980, Appl. Opt. 19, 1505 (his count for 8 < x < 4200,
       used here at every x).
    """
    x = np.asarray(x, dtype=float)
    return (x + 4.05 * np.cbrt(x) + 2.0).astype(np.int64)


def _start_index(w):
    """Start of the downward recurrence of D_n(z) for |z| = w: n_stop(w) + 6 w^(1/3) + 16.

    Wiscombe (1980) starts at max(n_stop, |mx|) + 16; at x ~ 1e3-1e4 that
    leaves errors up to 1e-5 in D_n near n_stop (measured against a start
    far above). The extra 6 w^(1/3) terms span the Airy transition region,
    whose width grows as w^(1/3), and give double precision up to x = 1e4.
    """
    w = np.asarray(w, dtype=float)
    return n_terms(w) + (6.0 * np.cbrt(w)).astype(np.int64) + 16


# ---------------------------------------------------------------- numpy path
_CHUNK_CELLS = 2_000_000  # elements × terms held at once by the numpy path


def _ratio_s(z, start, nstop):
    """s_n(z) = z D_n(z) - (n + 1) for n = 0..nstop (rows), each element downward from its own start.

    s_(n-1) = -z² / (2n + 1 + s_n), started at s = 0 at each element's
    ``start`` (held at 0 above it), as the numba kernel does: an element's
    values never depend on which other elements share the block. Unlike
    D_n itself s_n carries no 1/z term, so differences like
    m D_n(mx) - D_n(x) keep full precision when x ≪ 1.
    """
    z2 = z * z
    out = np.zeros((nstop + 1,) + z.shape, dtype=z.dtype)
    s = np.zeros(z.shape, dtype=z.dtype)
    for n in range(int(start.max()), 0, -1):
        s = np.where(n <= start, -z2 / (2 * n + 1 + s), 0)
        if n <= nstop + 1:
            out[n - 1] = s
    return out


def _coefficients_block(m, x, nstop, start):
    """a_n, b_n for n = 1..nstop (rows) of 1-d arrays m, x; ``start`` = per-element starts (for mx, for x)."""
    sz = _ratio_s(m * x, start[0], nstop)
    sx = _ratio_s(x, start[1], nstop)
    m2 = m * m
    psi = np.sin(x)
    chi_prev, chi = -np.sin(x), np.cos(x)
    a = np.empty((nstop,) + x.shape, dtype=complex)
    b = np.empty((nstop,) + x.shape, dtype=complex)
    for n in range(1, nstop + 1):
        psi_prev = psi
        psi = psi_prev * x / (sx[n] + 2 * n + 1)
        chi_prev, chi = chi, (2 * n - 1) / x * chi - chi_prev
        xi, xi_prev = psi - 1j * chi, psi_prev - 1j * chi_prev
        a[n - 1] = (psi * (sz[n] - m2 * sx[n] + (n + 1) * (1 - m2))
                    / ((sz[n] + n + 1 + n * m2) * xi - m2 * x * xi_prev))
        b[n - 1] = psi * (sz[n] - sx[n]) / ((sz[n] + 2 * n + 1) * xi - x * xi_prev)
    return a, b


def _starts(m, x):
    """Per-element starts of the downward recurrences, for mx and for x."""
    return _start_index(np.maximum(np.abs(m), 1.0) * x), _start_index(x)


def _chunks(m, x):
    """Yield (indices, n_stop per element, (starts for mx, starts for x)) for groups of similar cost."""
    nstop = n_terms(x)
    start_z, start_x = _starts(m, x)
    order = np.argsort(start_z, kind="stable")
    i = 0
    while i < x.size:
        # elements whose start index is within 1.5× of the first one
        top = np.searchsorted(start_z[order], 1.5 * start_z[order[i]], side="right")
        j = min(top, i + max(1, _CHUNK_CELLS // int(start_z[order[top - 1]])))
        sel = order[i:j]
        yield sel, nstop[sel], (start_z[sel], start_x[sel])
        i = j


def _masked_coefficients(m, x, nstop_each, start):
    """a_n, b_n (rows n = 1..max n_stop) set to 0 beyond each element's n_stop."""
    nstop = int(nstop_each.max())
    with np.errstate(all="ignore"):  # terms beyond an element's n_stop may overflow
        a, b = _coefficients_block(m, x, nstop, start)
    keep = np.arange(1, nstop + 1)[:, None] <= nstop_each
    return np.where(keep, a, 0), np.where(keep, b, 0)


def _efficiencies_numpy(m, x):
    """Q_ext, Q_sca, Q_back, g of 1-d arrays m, x.

    The series are summed term by term in order, as the numba kernel does,
    so that an element's sums do not depend on the other elements of its
    block (the zeros beyond its own n_stop add nothing).
    """
    out = np.empty((4, x.size))
    for sel, nstop_each, start in _chunks(m, x):
        xs = x[sel]
        a, b = _masked_coefficients(m[sel], xs, nstop_each, start)
        ext, sca, cross = np.zeros((3, xs.size))
        back = np.zeros(xs.size, dtype=complex)
        for k in range(a.shape[0]):
            n = k + 1
            an, bn = a[k], b[k]
            f = 2.0 * n + 1.0
            ext += f * (an.real + bn.real)
            sca += f * (an.real * an.real + an.imag * an.imag + bn.real * bn.real + bn.imag * bn.imag)
            cross += f / (n * (n + 1.0)) * (an.real * bn.real + an.imag * bn.imag)
            if k + 1 < a.shape[0]:
                a1, b1 = a[k + 1], b[k + 1]
                cross += (n * (n + 2.0) / (n + 1.0)) * (
                    an.real * a1.real + an.imag * a1.imag + bn.real * b1.real + bn.imag * b1.imag
                )
            back += (-1.0) ** n * f * (an - bn)
        scale = 2.0 / (xs * xs)
        out[0, sel] = scale * ext
        out[1, sel] = scale * sca
        out[2, sel] = (back.real * back.real + back.imag * back.imag) / (xs * xs)
        with np.errstate(invalid="ignore"):  # 0/0 only for m = 1, which sphere() sets to 0
            out[3, sel] = 2.0 * scale * cross / out[1, sel]
    return out


def _amplitudes_numpy(m, x, mu):
    """S1, S2 of shape (m.size, mu.size) for 1-d arrays m, x, mu."""
    s1 = np.zeros((x.size, mu.size), dtype=complex)
    s2 = np.zeros_like(s1)
    for sel, nstop_each, start in _chunks(m, x):
        a, b = _masked_coefficients(m[sel], x[sel], nstop_each, start)
        pi_prev, pi = np.zeros(mu.shape), np.ones(mu.shape)
        for n in range(1, a.shape[0] + 1):
            tau = n * mu * pi - (n + 1) * pi_prev
            f = (2 * n + 1) / (n * (n + 1))
            an, bn = f * a[n - 1][:, None], f * b[n - 1][:, None]
            s1[sel] += an * pi + bn * tau
            s2[sel] += an * tau + bn * pi
            pi_prev, pi = pi, ((2 * n + 1) * mu * pi - (n + 1) * pi_prev) / n
    return s1, s2


@functools.cache
def _numba_kernels():
    """The numba kernel module, or None when numba cannot be imported (tried once)."""
    try:
        from redcorr import _mie_kernels  # noqa: PLC0415 - numba is imported only when needed
    except ImportError:
        return None
    return _mie_kernels


def default_engine():
    """The engine that ``engine="auto"`` selects.

    Returns
    -------
    {"numba", "numpy"}
        ``"numpy"`` when ``REDCORR_MIE_NUMPY=1`` was set at import or numba
        cannot be imported, else ``"numba"``. Asking imports numba (once).
    """
    if _NUMPY_REQUESTED or _numba_kernels() is None:
        return "numpy"
    return "numba"


def _kernels(engine):
    """The numba kernel module for ``engine``, or None for the numpy path."""
    if engine not in ENGINES:
        raise InputError(f"engine={engine!r} is not known; choose one of {', '.join(map(repr, ENGINES))}")
    if engine == "auto":
        engine = default_engine()
    if engine == "numpy":
        return None
    kernels = _numba_kernels()
    if kernels is None:
        raise ImportError("engine='numba' needs numba, which cannot be imported; use engine='numpy' or 'auto'")
    return kernels


def sphere(m, x, *, convention="n+ik", engine="auto"):
    """Mie efficiencies and asymmetry parameter of homogeneous spheres.

    Parameters
    ----------
    m : complex or array_like
        Refractive index of the sphere relative to the medium, ``n + ik``
        with ``k >= 0`` for absorption (see ``convention``).
    x : float or array_like
        Size parameter 2πa/λ, in [1e-30, 1e6]; broadcast against ``m``.
    convention : {"n+ik", "n-ik"}
        Sign convention in which ``m`` is written. With ``"n-ik"`` the
        imaginary part must be <= 0 and is conjugated.
    engine : {"auto", "numba", "numpy"}
        Which implementation evaluates the series; ``"auto"`` is the one
        :func:`default_engine` names (see the module docstring). The
        engines agree to ~1e-14 relative.

    Returns
    -------
    SphereOptics
        ``q_ext``, ``q_sca``, ``q_abs``, ``q_back`` and ``g``, each a float64
        ndarray of the broadcast shape of ``m`` and ``x``.

    Raises
    ------
    InputError
        For NaN or infinite values, x outside [1e-30, 1e6], Re(m) <= 0, an
        imaginary part of the wrong sign for ``convention``, shapes that
        do not broadcast, or an unknown ``engine``.
    ImportError
        For ``engine="numba"`` when numba cannot be imported.

    Notes
    -----
    With the Mie coefficients a_n, b_n (Bohren & Huffman 1983, eq. 4.88)

    .. math::

        Q_{ext} = \\frac{2}{x^2}\\sum_n (2n+1)\\,\\mathrm{Re}(a_n+b_n), \\qquad
        Q_{sca} = \\frac{2}{x^2}\\sum_n (2n+1)(|a_n|^2+|b_n|^2),

        g\\,Q_{sca} = \\frac{4}{x^2}\\Big[\\sum_n \\frac{n(n+2)}{n+1}
        \\mathrm{Re}(a_n a_{n+1}^* + b_n b_{n+1}^*) +
        \\sum_n \\frac{2n+1}{n(n+1)}\\mathrm{Re}(a_n b_n^*)\\Big],

        Q_{back} = \\frac{1}{x^2}\\Big|\\sum_n (2n+1)(-1)^n (a_n - b_n)\\Big|^2,

    and ``Q_abs = Q_ext - Q_sca``. A sphere of the medium's own index
    (m = 1 exactly) does not scatter: every efficiency is 0, and g, which
    is then undefined, is given as 0. For contrasts |m − 1| below about
    1e-8 the difference D_n(mx)/m − D_n(x) is lost to rounding and the
    (tiny, ∝ |m − 1|²) results are not to be trusted. The coefficients are written with
    ψ_n(x) and D_n(z) = ψ_n'(z)/ψ_n(z) as

    .. math::

        a_n = \\frac{\\psi_n(x)\\,[D_n(mx)/m - D_n(x)]}
                    {[D_n(mx)/m + n/x]\\,\\xi_n(x) - \\xi_{n-1}(x)},

    and b_n likewise with m D_n(mx) in place of D_n(mx)/m, where
    ξ_n = ψ_n − iχ_n and ψ_(n-1) = ψ_n [D_n(x) + n/x] was used in the
    numerator (Bohren & Huffman 1983, eq. 4.88).

    References
    ----------
    .. [1] Bohren, C. F. & Huffman, D. R. 1983, Absorption and Scattering of
       Light by Small Particles (Wiley), eqs. 4.61, 4.62, 4.82, 4.88 and
       App. A.
    .. [2] Wiscombe, W. J. 1980, Appl. Opt. 19, 1505.

    Examples
    --------
    >>> from redcorr.mie import sphere
    >>> r = sphere(1.5 + 0.01j, [1.0, 10.0])
    >>> r.q_ext.round(4)
    array([0.2425, 2.7707])
    """
    shape, mf, xf = _broadcast(_as_index(m, convention), _as_size(x))
    kernels = _kernels(engine)
    if kernels is not None:
        q_ext, q_sca, q_back, g = kernels.efficiencies(mf, xf)
    else:
        q_ext, q_sca, q_back, g = _efficiencies_numpy(mf, xf)
    matched = mf == 1  # a_n = b_n = 0 exactly; the sums would hold rounding noise only
    if matched.any():
        for q in (q_ext, q_sca, q_back, g):
            q[matched] = 0.0
    q_abs = np.where(mf.imag == 0, 0.0, q_ext - q_sca)
    return SphereOptics(*(q.reshape(shape) for q in (q_ext, q_sca, q_abs, q_back, g)))


def series_coefficients(m, x, *, convention="n+ik"):
    """The Mie coefficients a_n, b_n of one sphere.

    Parameters
    ----------
    m : complex
        Refractive index ``n + ik`` (see :func:`sphere`).
    x : float
        Size parameter 2πa/λ.
    convention : {"n+ik", "n-ik"}

    Returns
    -------
    a, b : ndarray of complex, shape (n_stop,)
        a_n and b_n for n = 1 .. n_stop (:func:`n_terms`).

    Notes
    -----
    Same formulation as :func:`sphere` (Bohren & Huffman 1983, eq. 4.88),
    always evaluated by the numpy engine.

    References
    ----------
    .. [1] Bohren, C. F. & Huffman, D. R. 1983, Absorption and Scattering of
       Light by Small Particles (Wiley), eq. 4.88.
    .. [2] Wiscombe, W. J. 1980, Appl. Opt. 19, 1505.
    """
    m = _as_index(m, convention)
    x = _as_size(x)
    if m.ndim or x.ndim:
        raise InputError(f"m and x must be single numbers here, not shapes {m.shape} and {x.shape}")
    nstop = int(n_terms(x))
    if m == 1:  # no contrast with the medium: no scattering
        return np.zeros(nstop, dtype=complex), np.zeros(nstop, dtype=complex)
    m, x = m.reshape(1), x.reshape(1)
    a, b = _coefficients_block(m, x, nstop, _starts(m, x))
    return a[:, 0], b[:, 0]


def _angles(theta):
    """Scattering angles as float64 radians (plain numbers are radians)."""
    arr = as_float_array("theta", theta, u.rad, "an angle")
    bad = ~np.isfinite(arr) | (arr < 0) | (arr > np.pi)
    if np.any(bad):
        raise InputError(f"theta={float(arr[bad].flat[0])!r} is outside the allowed range [0, π] radians")
    return arr


def sphere_amplitudes(m, x, theta, *, convention="n+ik", engine="auto"):
    """Scattering amplitudes S1(θ) and S2(θ) of homogeneous spheres.

    Parameters
    ----------
    m : complex or array_like
        Refractive index ``n + ik`` (see :func:`sphere`).
    x : float or array_like
        Size parameter, broadcast against ``m``.
    theta : float, array_like or `~astropy.units.Quantity` ['angle']
        Scattering angles in [0, π]; plain numbers are radians.
    convention : {"n+ik", "n-ik"}
    engine : {"auto", "numba", "numpy"}
        As for :func:`sphere`.

    Returns
    -------
    S1, S2 : ndarray of complex
        Shape ``broadcast(m, x).shape + theta.shape``: the angles come last.

    Notes
    -----
    .. math::

        S_1 = \\sum_n \\frac{2n+1}{n(n+1)}(a_n\\pi_n + b_n\\tau_n), \\qquad
        S_2 = \\sum_n \\frac{2n+1}{n(n+1)}(a_n\\tau_n + b_n\\pi_n),

    with π_n, τ_n from the upward recurrences of Bohren & Huffman (1983,
    eqs. 4.47) in μ = cos θ: π_n = [(2n−1)μπ_(n−1) − nπ_(n−2)]/(n−1),
    τ_n = nμπ_n − (n+1)π_(n−1).

    References
    ----------
    .. [1] Bohren, C. F. & Huffman, D. R. 1983, eqs. 4.47 and 4.74.

    Examples
    --------
    >>> import numpy as np
    >>> from redcorr.mie import sphere, sphere_amplitudes
    >>> s1, s2 = sphere_amplitudes(1.5 + 0.01j, 2.0, [0.0, np.pi])
    >>> bool(np.isclose(4 / 2.0**2 * s1[0].real, sphere(1.5 + 0.01j, 2.0).q_ext))
    True
    """
    shape, mf, xf = _broadcast(_as_index(m, convention), _as_size(x))
    th = _angles(theta)
    mu = np.array(np.cos(th), dtype=float).ravel()
    kernels = _kernels(engine)
    if kernels is not None:
        s1, s2 = kernels.amplitudes(mf, xf, mu)
    else:
        s1, s2 = _amplitudes_numpy(mf, xf, mu)
    s1[mf == 1] = s2[mf == 1] = 0  # no contrast with the medium (see :func:`sphere`)
    return s1.reshape(shape + th.shape), s2.reshape(shape + th.shape)


def sphere_phase_function(m, x, theta, *, convention="n+ik", engine="auto"):
    """Phase function of unpolarized light scattered by homogeneous spheres.

    Parameters
    ----------
    m, x, theta, convention, engine
        As for :func:`sphere_amplitudes`.

    Returns
    -------
    p : ndarray
        Phase function in sr⁻¹, normalized so that ∫ p dΩ = 1; shape
        ``broadcast(m, x).shape + theta.shape``. NaN for m = 1, which
        scatters nothing.

    Notes
    -----
    .. math::

        p(\\theta) = \\frac{|S_1|^2 + |S_2|^2}{2\\pi x^2 Q_{sca}},

    since ∫ (|S_1|^2 + |S_2|^2)/2 dΩ = π x² Q_sca (Bohren & Huffman 1983,
    eqs. 3.14 and 4.61).

    References
    ----------
    .. [1] Bohren, C. F. & Huffman, D. R. 1983, §3.4 and §4.4.
    """
    s1, s2 = sphere_amplitudes(m, x, theta, convention=convention, engine=engine)
    res = sphere(m, x, convention=convention, engine=engine)
    scale = 2 * np.pi * _as_size(x) ** 2 * res.q_sca
    extra = s1.ndim - scale.ndim
    with np.errstate(invalid="ignore"):  # NaN for m = 1: nothing is scattered
        return (np.abs(s1) ** 2 + np.abs(s2) ** 2) / scale.reshape(scale.shape + (1,) * extra)
