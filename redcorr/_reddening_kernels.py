"""numba kernels of :mod:`redcorr.photometric_reddening`: each star's posterior on the model grid.

Importing this module imports numba. The kernels are compiled once and
cached on disk (``cache=True``); :func:`fit_stars` runs over the stars of
one chunk in parallel threads (``prange``), one star at a time, with
scratch arrays the size of the grid's axes (never of the whole grid).

The grid is P[r, t, e, b]: the predicted magnitude of band b, up to the
free offset μ, at R_V node r, ln T_eff node t and E(B−V) node e. For one
star with magnitudes m_b and weights w_b = 1/σ_b² (0 for an unusable
band) the χ² minimised over μ is

    χ²(θ) = Σ w d² − (Σ w d)² / Σ w,   d_b = m_b − P_b(θ)

(see :mod:`redcorr.photometric_reddening` for why this is the marginal
likelihood). The grid is cut into blocks; a block whose smallest possible
χ² + prior penalty exceeds the best value found at the blocks' centres
by more than ``cut`` carries at most e^(−cut/2) of the best node's
weight per node and is skipped (:func:`fit_stars`, Notes). The bounds are
taken on two levels, a branch-and-bound search [1]_: coarse blocks
(:data:`SPLIT` blocks along each axis) first, then the blocks of the
coarse blocks that may matter.

With R_V free the grid's R_V nodes are coarse (0.8 apart by default) and
the R_V integral at each (T, E(B−V)) node is done in closed form, the
model linear in R_V between nodes (:func:`_sweep_rv`, :func:`_segment`;
derivation in :mod:`redcorr.photometric_reddening`); a block along R_V is
then a part of an interval between two nodes (:data:`R_SPLIT` per
interval), centred on the part's middle, so that the bound's radius holds
a quarter of the interval's change rather than all of it.

Sweeps at halved strides (:func:`fit_stars`, ``smooth``) visit only the
nodes the sweeps before did not: the sums so far are reweighted for the
finer trapezoid rule (a node's weight is the fine one times the stride)
and the new nodes added.

References
----------
.. [1] Land, A. H., & Doig, A. G. 1960, Econometrica 28, 497 (branch and
   bound: skip a region whose lower bound exceeds the best value found;
   from memory).
"""

import math

import numpy as np
from numba import njit, prange

__all__ = ["block_bounds", "block_deltas", "fit_stars", "N_OUT", "R_SPLIT", "SPLIT"]

# Columns of fit_stars' output rows.
STATS = ("mean", "std", "p2.5", "p16", "p50", "p84", "p97.5")
EBV, AV, TEFF, RV = 0, 7, 14, 21  # each: the STATS
LNT_STD = 28
CHI2 = 29
NBANDS = 30
MAP_T, MAP_E, MAP_R = 31, 32, 33
BIMODAL = 34
FITTED = 35
ROUGH = 36
N_OUT = 37

_PROBS = (0.025, 0.15865525393145707, 0.5, 0.8413447460685429, 0.975)  # 2.5 %, Φ(−1), Φ(0), Φ(1), 97.5 %
_RESCALE = 200.0  # rescale the running sums when a node beats the reference by this much χ²
SPLIT = 4  # a coarse block of the pruning holds SPLIT blocks along each axis
R_SPLIT = 2  # blocks of the pruning per R_V interval (R_V free)


@njit(cache=True)
def _block_span(k, size, n):
    lo = k * size
    hi = min(lo + size, n)
    return lo, hi, (lo + hi - 1) // 2


@njit(cache=True)
def _at(model, j, u, t, e, b):
    """The model at fraction u of R_V interval j (u = 0: node j, the only one when R_V is fixed)."""
    if u == 0.0:
        return model[j, t, e, b]
    return (1.0 - u) * model[j, t, e, b] + u * model[j + 1, t, e, b]


@njit(cache=True)
def _r_block(rb, n_r):
    """Block rb along R_V: its interval j, the fractions u0 < u1 of the interval it covers and its centre uc."""
    if n_r == 1:
        return 0, 0.0, 0.0, 0.0
    j = rb // R_SPLIT
    s = rb % R_SPLIT
    return j, s / R_SPLIT, (s + 1.0) / R_SPLIT, (s + 0.5) / R_SPLIT


@njit(cache=True)
def block_deltas(model, valid, bt, be):
    """Largest squared change of each band's model within each block, from the block's centre.

    Along T and E(B−V) a block is ``bt`` × ``be`` nodes, centred on its
    middle node. Along R_V (more than one node) each interval between
    neighbouring nodes is cut into :data:`R_SPLIT` blocks, each centred on
    its middle; the model is linear in R_V there (:func:`_sweep_rv`), so
    the largest change is at one of the block's two ends. The change is
    taken relative to a common shift: at each node, the mean change of the
    bands the locus covers there (any shift would do; see
    :func:`fit_stars`, Notes).

    Parameters
    ----------
    model : ndarray, shape (n_r, n_t, n_e, n_b)
    valid : ndarray of bool, shape (n_t, n_b)
        Whether the locus covers band b at T node t (else ``model`` there is ignored).
    bt, be : int
        Block sizes along T and E(B−V).

    Returns
    -------
    ndarray, shape (n_rb, n_tb, n_eb, n_b)
        n_rb = 1 with one R_V node, else (n_r − 1) · :data:`R_SPLIT`.
    """
    n_r, n_t, n_e, n_b = model.shape
    n_rb = 1 if n_r == 1 else (n_r - 1) * R_SPLIT
    n_tb, n_eb = -(-n_t // bt), -(-n_e // be)
    out = np.zeros((n_rb, n_tb, n_eb, n_b))
    for tb in range(n_tb):
        t0, t1, tc = _block_span(tb, bt, n_t)
        for rb in range(n_rb):
            j, u0, u1, uc = _r_block(rb, n_r)
            for eb in range(n_eb):
                e0, e1, ec = _block_span(eb, be, n_e)
                for end in range(1 if n_r == 1 else 2):
                    u = u0 if end == 0 else u1
                    for t in range(t0, t1):
                        for e in range(e0, e1):
                            shift = 0.0
                            n_valid = 0
                            for b in range(n_b):
                                if valid[t, b] and valid[tc, b]:
                                    shift += _at(model, j, u, t, e, b) - _at(model, j, uc, tc, ec, b)
                                    n_valid += 1
                            shift = shift / n_valid if n_valid > 0 else 0.0
                            for b in range(n_b):
                                if valid[t, b]:
                                    d = _at(model, j, u, t, e, b) - _at(model, j, uc, tc, ec, b) - shift
                                    out[rb, tb, eb, b] = max(out[rb, tb, eb, b], d * d)
    return out


def block_bounds(model, valid, bt, be):
    """The ``deltas`` of :func:`fit_stars`: :func:`block_deltas` at the block sizes × :data:`SPLIT`, and at them."""
    return block_deltas(model, valid, bt * SPLIT, be * SPLIT), block_deltas(model, valid, bt, be)


@njit(cache=True)
def _stats(x0, h, g, q, out, k):
    """Mean, std and the 2.5/16/50/84/97.5 % points of a density g sampled at x0 + j h (linear between nodes)."""
    n = g.size
    z = 0.0
    s1 = 0.0
    s2 = 0.0
    for j in range(n):
        x = x0 + j * h
        m = q[j] * g[j]
        z += m
        s1 += m * x
        s2 += m * x * x
    mean = s1 / z
    out[k] = mean
    out[k + 1] = math.sqrt(max(s2 / z - mean * mean, 0.0))
    if n == 1:
        for i in range(5):
            out[k + 2 + i] = x0
        return
    cum = 0.0
    j = 0
    for i in range(5):
        target = _PROBS[i] * z
        while j < n - 2 and cum + 0.5 * h * (g[j] + g[j + 1]) < target:
            cum += 0.5 * h * (g[j] + g[j + 1])
            j += 1
        # within cell j the density is linear: F(s) = g0 s + (g1 − g0) s² / (2h) = target − cum
        g0 = g[j]
        a = (g[j + 1] - g0) / (2.0 * h)
        rest = max(target - cum, 0.0)
        den = g0 + math.sqrt(max(g0 * g0 + 4.0 * a * rest, 0.0))
        s = 2.0 * rest / den if den > 0.0 else 0.0
        out[k + 2 + i] = x0 + j * h + min(max(s, 0.0), h)


@njit(cache=True)
def _bimodal(g, h, share, dip):
    """Whether a split node leaves ≥ ``share`` of the mass on each side and a dip below ``dip`` × the lower peak."""
    n = g.size
    if n < 3:
        return False
    total = 0.0
    for j in range(n - 1):
        total += 0.5 * h * (g[j] + g[j + 1])
    right_max = np.empty(n)
    right_max[n - 1] = g[n - 1]
    for j in range(n - 2, -1, -1):
        right_max[j] = max(right_max[j + 1], g[j])
    left = 0.0
    left_max = g[0]
    for j in range(1, n - 1):
        left += 0.5 * h * (g[j - 1] + g[j])
        left_max = max(left_max, g[j])
        if left >= share * total and total - left >= share * total:
            if g[j] < dip * min(left_max, right_max[j]):
                return True
    return False


@njit(cache=True)
def _bounds(m, w, idx, s0, model, pen_t, pen_e, deltas, bt, be, lower, k_r, k_t, k_e, split, split_r):
    """Lower bounds of χ² + prior penalty in blocks (sizes bt, be; deltas from :func:`block_bounds`).

    The blocks are those of indices k·split to (k + 1)·split − 1 along T and
    E(B−V) (k = k_t, k_e) and k_r·split_r to (k_r + 1)·split_r − 1 along R_V
    (:func:`_r_block`); ``lower`` receives their bounds (inf: every node
    excluded). Returns the smallest χ² + penalty at their centres.
    """
    nb = idx.size
    n_r, n_t, n_e = model.shape[0], model.shape[1], model.shape[2]
    n_rb, n_tb, n_eb = deltas.shape[0], deltas.shape[1], deltas.shape[2]
    best = np.inf
    for tb in range(k_t * split, min((k_t + 1) * split, n_tb)):
        t0, t1, tc = _block_span(tb, bt, n_t)
        pt = np.inf
        for t in range(t0, t1):
            pt = min(pt, pen_t[t])
        for eb in range(k_e * split, min((k_e + 1) * split, n_eb)):
            e0, e1, ec = _block_span(eb, be, n_e)
            pe = np.inf
            for e in range(e0, e1):
                pe = min(pe, pen_e[e])
            for rb in range(k_r * split_r, min((k_r + 1) * split_r, n_rb)):
                if pt == np.inf or pe == np.inf:
                    lower[rb, tb, eb] = np.inf
                    continue
                j, _, _, uc = _r_block(rb, n_r)
                if pen_t[tc] == np.inf or pen_e[ec] == np.inf:  # centre excluded: no bound
                    lower[rb, tb, eb] = pt + pe
                    continue
                s1 = 0.0
                s2 = 0.0
                rad = 0.0
                for k in range(nb):
                    d = m[k] - _at(model, j, uc, tc, ec, idx[k])
                    s1 += w[k] * d
                    s2 += w[k] * d * d
                    rad += w[k] * deltas[rb, tb, eb, idx[k]]
                c = max(s2 - s1 * s1 / s0, 0.0)
                best = min(best, c + pen_t[tc] + pen_e[ec])
                gap = max(math.sqrt(c) - math.sqrt(rad), 0.0)
                lower[rb, tb, eb] = gap * gap + pt + pe
    return best


@njit(cache=True)
def _sweep(m, w, idx, s0, model, pen_t, pen_e, lower, limit, bt, be, br, qt, st, se, sr, old, ref, g_re, g_t, qe, qr,
           res):  # fmt: skip
    """Accumulate the posterior over the nodes t ≡ 0 (mod st), e ≡ 0 (mod se), r ≡ 0 (mod sr) of the kept blocks.

    ``g_re`` (R_V × E(B−V)) and ``g_t`` (T) receive the marginal densities
    relative to exp(−ref/2) (a sub-grid's trapezoid weights are the fine
    ones times the stride); ``ref`` NaN means the first node's value. A
    node whose χ² + penalty exceeds ``limit`` is left out, as the nodes of
    a skipped block are. The nodes of an earlier sweep at the strides
    ``old`` (zeros: none), already in the sums, are not visited again.
    ``res`` holds χ²_min, the mode's indices (−1: no node) and its
    χ² + penalty, and is updated. Returns ``ref``.
    """
    nb = idx.size
    every = nb == model.shape[3]  # every band used: idx[k] = k
    n_r, n_t, n_e = model.shape[0], model.shape[1], model.shape[2]
    n_rb, n_tb, n_eb = lower.shape
    chi_min, tot_min = res[0], res[4]
    map_t, map_e, map_r = int(res[1]), int(res[2]), int(res[3])
    st_o, se_o, sr_o = old[0], old[1], old[2]
    for rb in range(n_rb):
        r0, r1, _ = _block_span(rb, br, n_r)
        for tb in range(n_tb):
            t0, t1, _ = _block_span(tb, bt, n_t)
            for eb in range(n_eb):
                if not lower[rb, tb, eb] <= limit:
                    continue
                e0, e1, _ = _block_span(eb, be, n_e)
                for r in range((r0 + sr - 1) // sr * sr, r1, sr):
                    q_r = qr[r] * sr
                    r_old = sr_o > 0 and r % sr_o == 0
                    for t in range((t0 + st - 1) // st * st, t1, st):
                        p_t = pen_t[t]
                        if p_t == np.inf:
                            continue
                        t_old = r_old and t % st_o == 0
                        q_t = qt[t] * st  # (strides are powers of 2: the products are exact)
                        row_sum = 0.0
                        for e in range((e0 + se - 1) // se * se, e1, se):
                            if pen_e[e] == np.inf or (t_old and e % se_o == 0):
                                continue
                            s1 = 0.0
                            s2 = 0.0
                            if every:
                                for k in range(nb):
                                    d = m[k] - model[r, t, e, k]
                                    s1 += w[k] * d
                                    s2 += w[k] * d * d
                            else:
                                for k in range(nb):
                                    d = m[k] - model[r, t, e, idx[k]]
                                    s1 += w[k] * d
                                    s2 += w[k] * d * d
                            c = max(s2 - s1 * s1 / s0, 0.0)
                            tot = c + p_t + pen_e[e]
                            if tot > limit:  # weighs < e^(−cut/2) of the best node, as a skipped block's
                                continue
                            chi_min = min(chi_min, c)
                            if tot < tot_min:
                                tot_min = tot
                                map_t, map_e, map_r = t, e, r
                            if not ref == ref:
                                ref = tot
                            if tot < ref - _RESCALE:
                                scale = math.exp(-0.5 * (ref - tot))
                                g_re *= scale
                                g_t *= scale
                                row_sum *= scale
                                ref = tot
                            f = math.exp(-0.5 * (tot - ref))
                            g_re[r, e] += f * q_t
                            row_sum += f * qe[e] * se
                        g_t[t] += row_sum * q_r
    res[0], res[1], res[2], res[3], res[4] = chi_min, map_t, map_e, map_r, tot_min
    return ref


_SQRT2 = math.sqrt(2.0)
_SQRT2PI = math.sqrt(2.0 * math.pi)
_Y_LINEAR = 1e-3  # below this curvature (χ² units over an interval) the exponent is taken linear in u


@njit(cache=True)
def _tail(x):
    """exp(x²/2) Φc(x) for x >= 0 (Φc the upper tail of the unit normal), without overflow."""
    if x < 25.0:
        return 0.5 * math.exp(0.5 * x * x) * math.erfc(x / _SQRT2)
    r = 1.0 / (x * x)  # asymptotic series (Abramowitz & Stegun 1964, eq. 7.1.23): rel. error < 1e-9 here
    return (1.0 - r * (1.0 - r * (3.0 - 15.0 * r))) / (x * _SQRT2PI)


@njit(cache=True)
def _segment_near0(c0, c1, y):
    """:func:`_segment` for a χ² whose smallest value on [0, 1] is at u = 0 (or uniform); base c0.

    The exponent is taken linear in u, with slope κ, where the curvature
    cannot matter: y < :data:`_Y_LINEAR` (κ the chord's, error <= y/8), or
    a vertex more than 1000 σ outside (κ the tangent's at u = 0; the mass
    lies within u ≲ 1/κ, where the curvature changes it by ~ 3/a² <= 3e−6;
    beyond, the truncated normal formulae lose digits).
    """
    kap = 0.5 * (c1 - c0)
    a = 0.0
    if y >= _Y_LINEAR:
        a = (c1 - c0 - y) / (2.0 * math.sqrt(y))  # −u0/σ, the vertex's distance below 0 in σ
        if a > 1000.0:
            kap = 0.5 * (c1 - c0 - y)
    if y < _Y_LINEAR or a > 1000.0:
        # exponent linear in u: ∫ u^k exp(−κu) du on [0, 1], κ >= 0
        if kap < 1e-2:  # Taylor series to κ³ (error < κ⁴/30)
            i0 = 1.0 - kap / 2.0 + kap * kap / 6.0 - kap**3 / 24.0
            i1 = 0.5 - kap / 3.0 + kap * kap / 8.0 - kap**3 / 30.0
            i2 = 1.0 / 3.0 - kap / 4.0 + kap * kap / 10.0 - kap**3 / 36.0
        else:
            ek = math.exp(-kap)
            i0 = (1.0 - ek) / kap
            i1 = (1.0 - ek * (1.0 + kap)) / kap**2
            i2 = (2.0 - ek * (kap * kap + 2.0 * kap + 2.0)) / kap**3
        return c0, i0, i1 / i0, i2 / i0
    s = 1.0 / math.sqrt(y)
    u0 = 0.5 - (c1 - c0) / (2.0 * y)  # the vertex of χ²(u), here <= 0
    a = -u0 / s
    b = (1.0 - u0) / s
    e = math.exp(-0.5 * (b - a) * (b + a))
    pa = 1.0 / _SQRT2PI
    pb = e / _SQRT2PI
    z = _tail(a) - e * _tail(b)  # (Φ(b) − Φ(a)) exp(a²/2)
    ratio = (pa - pb) / z
    mean = u0 + s * ratio
    var = s * s * max(1.0 + (a * pa - b * pb) / z - ratio * ratio, 0.0)
    return c0, s * _SQRT2PI * z, mean, var + mean * mean


@njit(cache=True)
def _segment(c0, c1, y):
    """The integral and moments over u in [0, 1] of exp(−½ χ²(u)), χ²(u) = c0 (1 − u) + c1 u − y u (1 − u).

    Returns (base, mass, mean, m2): mass = ∫ exp(−½ (χ²(u) − base)) du
    with base the smallest χ² on [0, 1] (or the smaller end), and the
    first two moments of u under that density (a normal truncated to
    [0, 1]; Johnson, Kotz & Balakrishnan 1994, Sect. 10.1; from memory).
    """
    y = max(y, 0.0)
    if y >= _Y_LINEAR:
        u0 = 0.5 - (c1 - c0) / (2.0 * y)
        if 0.0 < u0 < 1.0:
            s = 1.0 / math.sqrt(y)
            a = -u0 / s
            b = (1.0 - u0) / s
            z = 0.5 * (math.erf(b / _SQRT2) - math.erf(a / _SQRT2))
            pa = math.exp(-0.5 * a * a) / _SQRT2PI
            pb = math.exp(-0.5 * b * b) / _SQRT2PI
            ratio = (pa - pb) / z
            mean = u0 + s * ratio
            var = s * s * max(1.0 + (a * pa - b * pb) / z - ratio * ratio, 0.0)
            return c0 - y * u0 * u0, s * _SQRT2PI * z, mean, var + mean * mean
    if c0 <= c1:
        return _segment_near0(c0, c1, y)
    base, mass, mean, m2 = _segment_near0(c1, c0, y)  # u -> 1 − u
    return base, mass, 1.0 - mean, 1.0 - 2.0 * mean + m2


@njit(cache=True)
def _sweep_rv(m, w, idx, s0, model, pen_t, pen_e, lower, limit, cut, bt, be, qt, qe, st, se, old, rv, ebv, ref,
              g_e, g_t, g_r, av_hist, av_h, av_mom, res):  # fmt: skip
    """:func:`_sweep` with R_V free: at each (T, E(B−V)) node the R_V integral in closed form.

    Between R_V nodes r_j and r_j+1 the model is taken linear in R_V,
    P = P_j + u (P_j+1 − P_j), so χ² is the quadratic of :func:`_segment`
    in u, with curvature y = Δᵀ C Δ (Δ = P_j+1 − P_j, C as in
    :func:`fit_stars`, Notes) and the integral over u is a Gaussian one.
    ``g_e``, ``g_t`` receive the marginal densities of E(B−V) and ln T,
    ``g_r[j]`` the mass and first two moments of u in interval j,
    ``av_hist`` the A_V masses at 0, av_h, ... and ``av_mom`` the mass,
    Σ A_V and Σ A_V², all relative to exp(−ref/2); an interval whose
    smallest χ² + penalty exceeds ``limit`` is skipped (its weight is below
    e^(−cut/2) of the best node's). ``old``, ``res`` and the returned
    ``ref`` as in :func:`_sweep`.
    """
    nb = idx.size
    n_r, n_t, n_e = model.shape[0], model.shape[1], model.shape[2]
    n_tb, n_eb = lower.shape[1], lower.shape[2]
    n_a = av_hist.size
    keep = np.zeros(n_r - 1, np.bool_)
    h_r = rv[1] - rv[0]
    c = np.empty(n_r)
    y = np.empty(n_r - 1)
    dev = np.empty((n_r, nb))  # m − P at each R_V node
    sum_wd = np.empty(n_r)  # Σ w (m − P) at each R_V node
    chi_min, tot_min = res[0], res[4]
    map_t, map_e, map_r = int(res[1]), int(res[2]), int(res[3])
    st_o, se_o = old[0], old[1]
    for tb in range(n_tb):
        t0, t1, _ = _block_span(tb, bt, n_t)
        for eb in range(n_eb):
            r_lo, r_hi = n_r, -1  # the first and last nodes of the kept intervals
            for j in range(n_r - 1):
                keep[j] = False
                for part in range(R_SPLIT):
                    keep[j] = keep[j] or lower[j * R_SPLIT + part, tb, eb] <= limit
                if keep[j]:
                    r_lo = min(r_lo, j)
                    r_hi = j + 1
            if r_hi < 0:
                continue
            e0, e1, _ = _block_span(eb, be, n_e)
            for t in range((t0 + st - 1) // st * st, t1, st):
                p_t = pen_t[t]
                if p_t == np.inf:
                    continue
                t_old = st_o > 0 and t % st_o == 0
                if t_old and se_o == se:
                    continue
                q_t = qt[t] * st
                row_sum = 0.0
                for e in range((e0 + se - 1) // se * se, e1, se):
                    pen = p_t + pen_e[e]
                    if pen == np.inf or (t_old and e % se_o == 0):
                        continue
                    for r in range(r_lo, r_hi + 1):
                        s1 = 0.0
                        s2 = 0.0
                        for k in range(nb):
                            d = m[k] - model[r, t, e, idx[k]]
                            dev[r, k] = d
                            a = w[k] * d
                            s1 += a
                            s2 += a * d
                        c[r] = max(s2 - s1 * s1 / s0, 0.0)
                        sum_wd[r] = s1
                    for j in range(r_lo, r_hi):
                        if keep[j]:
                            sy = 0.0
                            for k in range(nb):
                                dd = dev[j, k] - dev[j + 1, k]
                                sy += w[k] * dd * dd
                            y[j] = max(sy - (sum_wd[j] - sum_wd[j + 1]) ** 2 / s0, 0.0)
                    q_e = qe[e] * se
                    ebv_e = ebv[e]
                    for j in range(n_r - 1):
                        if not keep[j]:
                            continue
                        c0, c1, yj = c[j], c[j + 1], y[j]
                        low = min(c0, c1)
                        u_min = 0.0 if c0 <= c1 else 1.0
                        if yj > 0.0:
                            u0 = 0.5 - (c1 - c0) / (2.0 * yj)
                            if 0.0 < u0 < 1.0:
                                low = c0 - yj * u0 * u0
                                u_min = u0
                        chi_min = min(chi_min, low)
                        tot = low + pen
                        if tot < tot_min:
                            tot_min = tot
                            map_t, map_e, map_r = t, e, j + (1 if u_min > 0.5 else 0)
                        if tot > limit or tot > tot_min + cut:
                            continue
                        base, mass, mu, m2 = _segment(c0, c1, yj)
                        tot = base + pen
                        if not ref == ref:
                            ref = tot
                        if tot < ref - _RESCALE:
                            scale = math.exp(-0.5 * (ref - tot))
                            g_e *= scale
                            g_t *= scale
                            g_r *= scale
                            av_hist *= scale
                            av_mom *= scale
                            row_sum *= scale
                            ref = tot
                        f = math.exp(-0.5 * (tot - ref)) * mass * h_r
                        g_e[e] += f * q_t
                        row_sum += f * q_e
                        wq = f * q_t * q_e
                        g_r[j, 0] += wq
                        g_r[j, 1] += wq * mu
                        g_r[j, 2] += wq * m2
                        r_mean = rv[j] + h_r * mu
                        r_var = max(h_r * h_r * (m2 - mu * mu), 0.0)
                        av_mom[0] += wq
                        av_mom[1] += wq * ebv_e * r_mean
                        av_mom[2] += wq * ebv_e * ebv_e * (r_var + r_mean * r_mean)
                        # A_V histogram: three points matching the interval's R_V mean and variance
                        # (Gauss-Hermite, weights 1/6, 2/3, 1/6 at mean − √3 std, mean, mean + √3 std)
                        r_sd = math.sqrt(3.0 * r_var)
                        for p in range(3):
                            share = wq * (2.0 / 3.0 if p == 1 else 1.0 / 6.0)
                            pos = ebv_e * (r_mean + (p - 1) * r_sd) / av_h
                            jj = min(max(int(pos), 0), n_a - 2)
                            frac = min(max(pos - jj, 0.0), 1.0)
                            av_hist[jj] += share * (1.0 - frac)
                            av_hist[jj + 1] += share * frac
                g_t[t] += row_sum
    res[0], res[1], res[2], res[3], res[4] = chi_min, map_t, map_e, map_r, tot_min
    return ref


@njit(cache=True)
def _rv_stats(rv, g_r, out, k):
    """Mean, std and percentiles of R_V from each interval's mass and moments of u (:func:`_sweep_rv`).

    Mean and std are exact sums of the intervals' moments. The CDF is exact
    at the nodes; within an interval it is taken as that of a normal with
    the interval's mean and std, truncated to the interval (exact when one
    Gaussian in R_V dominates the interval, approximate for a mixture).
    """
    n_j = g_r.shape[0]
    h = rv[1] - rv[0]
    z = 0.0
    s1 = 0.0
    s2 = 0.0
    for j in range(n_j):
        z += g_r[j, 0]
        s1 += g_r[j, 0] * rv[j] + h * g_r[j, 1]
        s2 += g_r[j, 0] * rv[j] ** 2 + 2.0 * rv[j] * h * g_r[j, 1] + h * h * g_r[j, 2]
    mean = s1 / z
    out[k] = mean
    out[k + 1] = math.sqrt(max(s2 / z - mean * mean, 0.0))
    cum = 0.0
    j = 0
    for i in range(5):
        target = _PROBS[i] * z
        while j < n_j - 1 and cum + g_r[j, 0] < target:
            cum += g_r[j, 0]
            j += 1
        mj = g_r[j, 0]
        frac = min(max((target - cum) / mj, 0.0), 1.0) if mj > 0.0 else 0.5
        mu = g_r[j, 1] / mj if mj > 0.0 else 0.5
        sd = math.sqrt(max(g_r[j, 2] / mj - mu * mu, 0.0)) if mj > 0.0 else 0.0
        if sd < 1e-9:
            u = mu
        else:
            f0 = 0.5 * math.erfc(-(0.0 - mu) / (sd * _SQRT2))
            f1 = 0.5 * math.erfc(-(1.0 - mu) / (sd * _SQRT2))
            lo, hi = 0.0, 1.0
            for _ in range(40):  # bisection of the truncated normal's CDF
                mid = 0.5 * (lo + hi)
                fm = 0.5 * math.erfc(-(mid - mu) / (sd * _SQRT2))
                if f1 > f0 and (fm - f0) / (f1 - f0) < frac:
                    lo = mid
                else:
                    hi = mid
            u = 0.5 * (lo + hi) if f1 > f0 else mu
        out[k + 2 + i] = rv[j] + h * min(max(u, 0.0), 1.0)


@njit(cache=True)
def _finish(row, res, rough, g_e, g_t, se, st, qe, qt, h_e, h_t, ln_t0, teff, share, dip):
    """Fill a fitted star's E(B−V) and T_eff summaries, χ², mode and bimodality (FITTED 0: no mass)."""
    q_e = qe[::se] * se
    g_es = g_e[::se].copy()
    z = 0.0
    for j in range(g_es.size):
        z += q_e[j] * g_es[j]
    if not z > 0.0:
        return
    row[FITTED] = 1.0
    row[CHI2] = res[0]
    row[MAP_T], row[MAP_E], row[MAP_R] = res[1], res[2], res[3]
    row[ROUGH] = rough
    _stats(0.0, h_e * se, g_es, q_e, row, EBV)
    q_t = qt[::st] * st
    g_ts = g_t[::st].copy()
    _stats(ln_t0, h_t * st, g_ts, q_t, row, TEFF)
    row[LNT_STD] = row[TEFF + 1]
    for k in range(2, 7):
        row[TEFF + k] = math.exp(row[TEFF + k])
    s1 = 0.0
    s2 = 0.0
    zt = 0.0
    for j in range(g_ts.size):
        tk = teff[j * st]
        s1 += q_t[j] * g_ts[j] * tk
        s2 += q_t[j] * g_ts[j] * tk * tk
        zt += q_t[j] * g_ts[j]
    row[TEFF] = s1 / zt
    row[TEFF + 1] = math.sqrt(max(s2 / zt - (s1 / zt) ** 2, 0.0))
    row[BIMODAL] = 1.0 if _bimodal(g_es, h_e * se, share, dip) else 0.0


@njit(cache=True)
def _refine_histogram(hist, factor, n, scale):
    """``hist`` on a step ``factor`` times finer (``n`` nodes), its masses × ``scale``: node j becomes node j·factor."""
    out = np.zeros(n)
    for j in range(hist.size):
        out[min(j * factor, n - 1)] += hist[j] * scale
    return out


@njit(cache=True)
def _roughness(g, step):
    """Largest change between neighbouring samples g[0], g[step], ... relative to their largest value."""
    big = 0.0
    jump = 0.0
    for j in range(0, g.size, step):
        big = max(big, g[j])
        if j >= step:
            jump = max(jump, abs(g[j] - g[j - step]))
    return jump / big if big > 0.0 else 0.0


@njit(cache=True, parallel=True)
def fit_stars(
    mag, weight, model, valid, teff, ebv, rv, qt, qe, qr, av_step, n_av, deltas, bt, be, br,
    t_mean, t_sigma, e_mean, e_sigma, e_upper, cut, share, dip, strides, smooth, out,
):
    """Posterior summaries of each star on the grid (one row of ``out`` per star).

    Parameters
    ----------
    mag, weight : ndarray, shape (n, n_b)
        Magnitudes and weights 1/σ² (0 marks an unusable band).
    model : ndarray, shape (n_r, n_t, n_e, n_b)
        Predicted magnitudes up to the free offset (float32 or float64; the
        sums are float64).
    valid : ndarray of bool, shape (n_t, n_b)
    teff, ebv, rv : ndarray
        The axes (T_eff in K on a uniform ln T grid; E(B−V) and R_V uniform),
        each of a length 1 + a multiple of its first stride.
    qt, qe, qr : ndarray
        Trapezoid weights of the axes (in ln T, E(B−V), R_V): the flat prior.
    av_step, n_av : float, int
        The A_V axis of the A_V marginal at the finest E(B−V) step: 0,
        av_step, ... (n_av nodes).
    deltas : (ndarray, ndarray)
        :func:`block_bounds` of ``model``: the coarse blocks' and the blocks'.
    bt, be, br : int
        Block sizes along T, E(B−V) and R_V (the coarse blocks': × :data:`SPLIT`).
    t_mean, t_sigma, e_mean, e_sigma, e_upper : ndarray, shape (n,)
        Gaussian priors (NaN: none) and upper bounds (inf: none).
    cut : float
        Pruning margin in χ² units.
    share, dip : float
        The bimodality test (:func:`_bimodal`).
    strides : ndarray of int, shape (3,)
        The first sweep uses every ``strides[k]``-th node along T, E(B−V) and R_V.
    smooth : float
        Resolution test: while a marginal (E(B−V), T, R_V) changes between
        neighbouring sub-grid nodes by more than ``smooth`` × its peak, the
        sweep is repeated at half the strides.
    out : ndarray, shape (n, N_OUT)
        Filled in place; NaN where there is no fit.

    Notes
    -----
    Pruning bound: χ² = dᵀCd with C = W − wwᵀ/Σw positive semi-definite, so
    √χ² is a seminorm of d and, for any node θ in a block with centre c,
    √χ²(θ) ≥ √χ²(c) − ‖v‖ with v = P(θ) − P(c) (triangle inequality).
    ‖v‖² = min over μ of Σ_b w_b (v_b − μ)² (the offset is free) ≤
    Σ_b w_b (v_b − s)² for any shift s(θ): with s the mean of v over the
    bands the locus covers at θ (so that a change common to all bands,
    much of a change of E(B−V), costs nothing), ‖v‖² ≤ Σ_b w_b δ_b², δ_b²
    the block's largest (v_b − s)² (:func:`block_deltas`, once per grid;
    rigorous for any star's weights and bands). The prior penalties are
    bounded by their smallest value over the block's axes. Coarse blocks
    whose bound exceeds the best centre + ``cut`` are skipped whole; in
    the others each block gets its own bound, and the best centre found
    on either level sets the cut.

    Resolution: a Gaussian marginal of width σ sampled every Δ changes
    between neighbours by at most ≈ (Δ/σ) e^(−½) of its peak, so
    ``smooth`` = 0.35 keeps Δ ≲ 0.58σ; a ridge sampled too coarsely makes
    the marginals jagged and fails the same test. The roughness at the
    last sweep is reported (``ROUGH``): at stride 1 a ridge thinner than a
    step across it leaves the marginals jagged (each node of the other
    axis samples it at another offset), unbiased on average but noisy.
    """
    n, n_b = mag.shape
    n_r, n_t, n_e = model.shape[0], model.shape[1], model.shape[2]
    n_rb, n_tb, n_eb = deltas[1].shape[0], deltas[1].shape[1], deltas[1].shape[2]
    h_e = ebv[1] - ebv[0]
    h_t = math.log(teff[1] / teff[0])
    ln_t0 = math.log(teff[0])
    for i in prange(n):
        row = out[i]
        row[:] = np.nan
        idx = np.empty(n_b, np.int64)
        nb = 0
        s0 = 0.0
        for b in range(n_b):
            if weight[i, b] > 0.0:
                idx[nb] = b
                nb += 1
                s0 += weight[i, b]
        row[NBANDS] = nb
        row[FITTED] = 0.0
        if nb < 2:
            continue
        idx = idx[:nb].copy()
        m = np.empty(nb)
        w = np.empty(nb)
        for k in range(nb):
            m[k] = mag[i, idx[k]]
            w[k] = weight[i, idx[k]]
        # prior penalties (χ² units), inf where excluded
        pen_t = np.zeros(n_t)
        for t in range(n_t):
            for k in range(nb):
                if not valid[t, idx[k]]:
                    pen_t[t] = np.inf
            if pen_t[t] == 0.0 and t_sigma[i] > 0.0:
                z = (teff[t] - t_mean[i]) / t_sigma[i]
                pen_t[t] = z * z
        pen_e = np.zeros(n_e)
        for e in range(n_e):
            if ebv[e] > e_upper[i]:
                pen_e[e] = np.inf
            elif e_sigma[i] > 0.0:
                z = (ebv[e] - e_mean[i]) / e_sigma[i]
                pen_e[e] = z * z
        # pass 1: a lower bound in every coarse block and the best centre, then the same in the
        # (fine) blocks of each coarse block that may matter
        coarse, fine = deltas
        c_lower = np.empty(coarse.shape[:3])
        best = _bounds(m, w, idx, s0, model, pen_t, pen_e, coarse, bt * SPLIT, be * SPLIT,
                       c_lower, 0, 0, 0, max(c_lower.shape[1], c_lower.shape[2]), c_lower.shape[0])  # fmt: skip
        lower = np.full((n_rb, n_tb, n_eb), np.inf)
        c_limit = best + cut
        for crb in range(c_lower.shape[0]):
            for ctb in range(c_lower.shape[1]):
                for ceb in range(c_lower.shape[2]):
                    if c_lower[crb, ctb, ceb] <= c_limit:
                        found = _bounds(m, w, idx, s0, model, pen_t, pen_e, fine, bt, be, lower,
                                        crb, ctb, ceb, SPLIT, 1)  # fmt: skip
                        best = min(best, found)
        limit = best + cut  # inf when no centre was allowed: then nothing is skipped
        # pass 2: sweeps of the kept blocks, each axis's stride halved until it resolves the posterior
        g_re = np.zeros((n_r, n_e))
        g_t = np.zeros(n_t)
        g_e = np.zeros(n_e)
        g_r = np.zeros(n_r)
        res = np.array([np.inf, -1.0, -1.0, -1.0, np.inf])  # χ²_min, the mode's indices, its χ² + penalty
        ref = best if best < np.inf else np.nan
        st, se, sr = strides[0], strides[1], strides[2]
        old = np.zeros(3, np.int64)  # the strides of the sweep before (zeros: none); its nodes stay in the sums
        if n_r > 1:
            g_u = np.zeros((n_r - 1, 3))
            av_mom = np.zeros(3)
            hist = np.zeros(min(int(math.ceil((n_av - 1) / se)) + 1, n_av))
            while True:
                ref = _sweep_rv(m, w, idx, s0, model, pen_t, pen_e, lower, limit, cut, bt, be, qt, qe, st, se, old,
                                rv, ebv, ref, g_e, g_t, g_u, hist, av_step * se, av_mom, res)  # fmt: skip
                rough_e = _roughness(g_e, se)
                rough_t = _roughness(g_t, st)
                rough = max(rough_e, rough_t)
                if not (st > 1 or se > 1) or (res[1] >= 0 and rough <= smooth):
                    break
                st_new = max(st // 2, 1) if res[1] < 0 or rough_t > smooth else st
                se_new = max(se // 2, 1) if res[1] < 0 or rough_e > smooth else se
                if st_new == st and se_new == se:
                    break  # the rough axis is at its grid step already
                # the sums hold the nodes so far with the trapezoid weights of their strides: reweight
                # them for the new strides (and the A_V histogram for its new step), then add the new nodes
                g_e *= st_new / st
                g_t *= se_new / se
                both = (st_new * se_new) / (st * se)
                g_u *= both
                av_mom *= both
                hist = _refine_histogram(hist, se // se_new, min(int(math.ceil((n_av - 1) / se_new)) + 1, n_av), both)
                old[0], old[1] = st, se
                st, se = st_new, se_new
            n_a = hist.size
            if res[1] < 0:
                continue
            _finish(row, res, rough, g_e, g_t, se, st, qe, qt, h_e, h_t, ln_t0, teff, share, dip)
            if not row[FITTED] == 1.0:
                continue
            _rv_stats(rv, g_u, row, RV)
            h_a = av_step * se
            qa = np.full(n_a, h_a)
            qa[0] = qa[-1] = 0.5 * h_a
            for j in range(n_a):
                hist[j] /= qa[j]
            _stats(0.0, h_a, hist, qa, row, AV)
            row[AV] = av_mom[1] / av_mom[0]
            row[AV + 1] = math.sqrt(max(av_mom[2] / av_mom[0] - row[AV] ** 2, 0.0))
            continue
        while True:
            ref = _sweep(m, w, idx, s0, model, pen_t, pen_e, lower, limit, bt, be, br, qt, st, se, sr, old, ref,
                         g_re, g_t, qe, qr, res)  # fmt: skip
            g_e[:] = 0.0
            g_r[:] = 0.0
            for r in range(0, n_r, sr):
                for e in range(0, n_e, se):
                    g_e[e] += qr[r] * sr * g_re[r, e]
                    g_r[r] += qe[e] * se * g_re[r, e]
            rough = max(_roughness(g_e, se), _roughness(g_t, st), _roughness(g_r, sr))
            coarse = st > 1 or se > 1 or sr > 1
            if not coarse or (res[1] >= 0 and rough <= smooth):
                break  # (a sweep that found no node is repeated finer: the kept blocks may lie between its nodes)
            st_new, se_new, sr_new = max(st // 2, 1), max(se // 2, 1), max(sr // 2, 1)
            g_re *= st_new / st  # reweight the nodes so far for the new strides (g_re holds their T weights)
            g_t *= (se_new * sr_new) / (se * sr)
            old[0], old[1], old[2] = st, se, sr
            st, se, sr = st_new, se_new, sr_new
        if res[1] < 0:
            continue
        _finish(row, res, rough, g_e, g_t, se, st, qe, qt, h_e, h_t, ln_t0, teff, share, dip)
        if not row[FITTED] == 1.0:
            continue
        # A_V = R_V E(B−V): each (R_V, E) node's mass shared between the two nearest A_V nodes
        h_a = av_step * se
        n_a = min(int(math.ceil((n_av - 1) / se)) + 1, n_av)
        hist = np.zeros(n_a)
        s1 = 0.0
        s2 = 0.0
        z = 0.0
        for r in range(0, n_r, sr):
            for e in range(0, n_e, se):
                mass = qr[r] * sr * qe[e] * se * g_re[r, e]
                a = rv[r] * ebv[e]
                z += mass
                s1 += mass * a
                s2 += mass * a * a
                pos = a / h_a
                j = min(int(pos), n_a - 2)
                frac = min(max(pos - j, 0.0), 1.0)
                hist[j] += mass * (1.0 - frac)
                hist[j + 1] += mass * frac
        qa = np.full(n_a, h_a)
        qa[0] = qa[-1] = 0.5 * h_a
        for j in range(n_a):
            hist[j] /= qa[j]
        _stats(0.0, h_a, hist, qa, row, AV)
        # the exact A_V moments (the histogram smooths them by one A_V step)
        row[AV] = s1 / z
        row[AV + 1] = math.sqrt(max(s2 / z - (s1 / z) ** 2, 0.0))

