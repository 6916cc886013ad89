"""numba-compiled Mie kernels; the same formulas as the numpy path of :mod:`redcorr.mie`.

Importing this module imports numba (ImportError without it). The kernels
take validated 1-d arrays (m in the n + ik convention, x > 0) and are
compiled once and cached on disk (``cache=True``).

The formulation follows Bohren & Huffman (1983, §4.8) written with
s_n(z) = z D_n(z) - (n + 1) in place of the logarithmic derivative D_n(z);
see the docstring of :func:`redcorr.mie.sphere`.
"""

import math

import numpy as np
from numba import njit

__all__ = ["efficiencies", "amplitudes"]


@njit(cache=True)
def _n_terms(x):
    """n_stop = x + 4.05 x^(1/3) + 2 (Wiscombe 1980)."""
    return int(x + 4.05 * x ** (1.0 / 3.0) + 2.0)


@njit(cache=True)
def _start_index(w):
    """Start of the downward recurrence for |z| = w: n_stop(w) + 6 w^(1/3) + 16."""
    return _n_terms(w) + int(6.0 * w ** (1.0 / 3.0)) + 16


@njit(cache=True)
def _coefficients(m, x, a, b, sz, sx):
    """Fill a[:nstop], b[:nstop] with a_n, b_n (n = 1..nstop); return nstop.

    ``sz`` (complex) and ``sx`` (float) are work arrays of length >= nstop + 1.
    """
    nstop = _n_terms(x)
    nstart = _start_index(max(abs(m), 1.0) * x)
    z = m * x
    z2 = z * z
    x2 = x * x
    # downward recurrence s_(n-1) = -z^2 / (2n + 1 + s_n), from s = 0 at nstart,
    # in real arithmetic: |2n + 1 + s|^2 stays far from overflow (|s| ~ |z|)
    pr = -z2.real
    pi = -z2.imag
    sr = 0.0
    si = 0.0
    for n in range(nstart, 0, -1):
        wr = 2 * n + 1 + sr
        wi = si
        inv = 1.0 / (wr * wr + wi * wi)
        sr = (pr * wr + pi * wi) * inv
        si = (pi * wr - pr * wi) * inv
        if n <= nstop + 1:
            sz[n - 1] = complex(sr, si)
    t = 0.0
    for n in range(_start_index(x), nstop, -1):
        t = -x2 / (2 * n + 1 + t)
    sx[nstop] = t
    for n in range(nstop, 0, -1):
        sx[n - 1] = -x2 / (2 * n + 1 + sx[n])
    m2 = m * m
    sin_x = math.sin(x)
    psi = sin_x
    chi_prev = -sin_x
    chi = math.cos(x)
    for n in range(1, nstop + 1):
        psi_prev = psi
        psi = psi_prev * x / (sx[n] + 2 * n + 1)
        chi_new = (2 * n - 1) / x * chi - chi_prev
        chi_prev = chi
        chi = chi_new
        xi = complex(psi, -chi)
        xi_prev = complex(psi_prev, -chi_prev)
        szn = sz[n]
        sxn = sx[n]
        a[n - 1] = psi * (szn - m2 * sxn + (n + 1) * (1 - m2)) / ((szn + n + 1 + n * m2) * xi - m2 * x * xi_prev)
        b[n - 1] = psi * (szn - sxn) / ((szn + 2 * n + 1) * xi - x * xi_prev)
    return nstop


@njit(cache=True)
def _work_arrays(m, x):
    """Work arrays long enough for every element."""
    size = 2
    for i in range(x.size):
        size = max(size, _n_terms(x[i]) + 2)
    return (
        np.empty(size, dtype=np.complex128),
        np.empty(size, dtype=np.complex128),
        np.empty(size, dtype=np.complex128),
        np.empty(size, dtype=np.float64),
    )


@njit(cache=True)
def efficiencies(m, x):
    """Q_ext, Q_sca, Q_back and g of spheres (1-d arrays m, x of one length)."""
    size = x.size
    q_ext = np.empty(size)
    q_sca = np.empty(size)
    q_back = np.empty(size)
    g = np.empty(size)
    a, b, sz, sx = _work_arrays(m, x)
    for i in range(size):
        xi = x[i]
        nstop = _coefficients(m[i], xi, a, b, sz, sx)
        ext = 0.0
        sca = 0.0
        cross = 0.0
        back = 0j
        sign = -1.0
        for k in range(nstop):
            n = k + 1
            an = a[k]
            bn = b[k]
            f = 2.0 * n + 1.0
            ext += f * (an.real + bn.real)
            sca += f * (an.real * an.real + an.imag * an.imag + bn.real * bn.real + bn.imag * bn.imag)
            cross += f / (n * (n + 1.0)) * (an.real * bn.real + an.imag * bn.imag)
            if k + 1 < nstop:
                a1 = a[k + 1]
                b1 = b[k + 1]
                cross += (n * (n + 2.0) / (n + 1.0)) * (
                    an.real * a1.real + an.imag * a1.imag + bn.real * b1.real + bn.imag * b1.imag
                )
            back += sign * f * (an - bn)
            sign = -sign
        scale = 2.0 / (xi * xi)
        q_ext[i] = scale * ext
        q_sca[i] = scale * sca
        q_back[i] = (back.real * back.real + back.imag * back.imag) / (xi * xi)
        # 0/0 only for m = 1, which sphere() sets to 0 (numba would raise ZeroDivisionError)
        g[i] = 2.0 * scale * cross / q_sca[i] if q_sca[i] != 0.0 else math.nan
    return q_ext, q_sca, q_back, g


@njit(cache=True)
def amplitudes(m, x, mu):
    """S1, S2 of shape (x.size, mu.size) for 1-d arrays m, x and cosines mu."""
    s1 = np.zeros((x.size, mu.size), dtype=np.complex128)
    s2 = np.zeros((x.size, mu.size), dtype=np.complex128)
    a, b, sz, sx = _work_arrays(m, x)
    for i in range(x.size):
        nstop = _coefficients(m[i], x[i], a, b, sz, sx)
        for j in range(mu.size):
            c = mu[j]
            pi_prev = 0.0
            pi = 1.0
            t1 = 0j
            t2 = 0j
            for k in range(nstop):
                n = k + 1
                tau = n * c * pi - (n + 1) * pi_prev
                f = (2.0 * n + 1.0) / (n * (n + 1.0))
                t1 += f * (a[k] * pi + b[k] * tau)
                t2 += f * (a[k] * tau + b[k] * pi)
                pi_new = ((2 * n + 1) * c * pi - (n + 1) * pi_prev) / n
                pi_prev = pi
                pi = pi_new
            s1[i, j] = t1
            s2[i, j] = t2
    return s1, s2
