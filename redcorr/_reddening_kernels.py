"""numba kernels of :mod:`redcorr.photometric_reddening`: each star's posterior on the model grid.

Importing this module imports numba. The kernels are compiled once and
cached on disk (``cache=True``); :func:`fit_stars` runs over the stars of
one chunk in parallel threads (``prange``), one star at a time, with
scratch arrays the size of the grid's axes (never of the whole grid).
The sweeps, the bounds and the R_V integral may fuse a multiply and an
add (``fastmath={"contract"}``, no other reordering): the R_V-free fit
~18 % faster, results changed at ~1e-11 of a posterior std. The
R_V-free fit's sums over the bands at a node are vector operations written
in LLVM's IR (:func:`_rv_sums`).

The grid is Q[t, s, b, k] at ln T_eff node t and E(B−V) node e in slot
s = slot[e] (:func:`sweep_order`: each sweep reads the nodes it visits in
memory order). With R_V fixed it holds one term (k = 0): the predicted
magnitude of band b up to the free offset μ. With R_V free it holds the four coefficients of a cubic
in x, R_V = r_c + r_h x over the range (x in [−1, 1]):
P_b(x) = Σ_k Q[t, slot[e], b, k] x^k. For one star with magnitudes m_b and
weights w_b = 1/σ_b² (0 for an unusable band) the χ² minimised over μ is

    χ² = dᵀ C d = Σ w d² − (Σ w d)² / Σ w,   d_b = m_b − P_b,   C = W − w wᵀ / Σ w

(see :mod:`redcorr.photometric_reddening` for why this is the marginal
likelihood). With R_V free, χ² at a (T, E(B−V)) node is a polynomial of
degree 6 in x whose coefficients are ten bilinear forms uᵀ C v of the
vectors m − Q_0, Q_1, Q_2, Q_3 (:func:`_rv_poly`), all summed in one pass
over the bands; the R_V integral of exp(−χ²/2) is that of its second-order
expansion about the vertex of its quadratic part, a Gaussian in x cut to
[−1, 1] (Laplace's method [1]_; :func:`_rv_node`), or a Simpson sum over
the range where the polynomial is not close enough to that Gaussian.

The grid is cut into blocks of (T, E(B−V)) nodes; a block whose smallest
possible χ² + prior penalty (over its nodes and, with R_V free, the whole
R_V range) exceeds the best value found at the blocks' centres by more than
``cut`` carries at most e^(−cut/2) of the best node's weight per node and
is skipped (:func:`fit_stars`, Notes). The bounds are taken on two levels,
a branch-and-bound search [2]_: coarse blocks (:data:`SPLIT` blocks along
each axis) first, then the blocks of the coarse blocks that may matter.

Sweeps at halved strides (:func:`fit_stars`, ``smooth``) visit only the
nodes the sweeps before did not: the sums so far are reweighted for the
finer trapezoid rule (a node's weight is the fine one times the stride)
and the new nodes added.

References
----------
.. [1] Tierney, L., & Kadane, J. B. 1986, J. Am. Stat. Assoc. 81, 82
   (Laplace's method for posterior integrals; from memory).
.. [2] Land, A. H., & Doig, A. G. 1960, Econometrica 28, 497 (branch and
   bound: skip a region whose lower bound exceeds the best value found;
   from memory).
"""

import math

import numpy as np
from llvmlite import ir
from numba import njit, prange, types
from numba.core import cgutils
from numba.extending import intrinsic

__all__ = ["block_bounds", "block_centres", "block_deltas", "fit_stars", "store_grid", "sweep_order", "N_OUT", "SPLIT"]

# Columns of fit_stars' output rows.
STATS = ("mean", "std", "p2.5", "p16", "p50", "p84", "p97.5")
EBV, AV, TEFF, RV = 0, 7, 14, 21  # each: the STATS
LNT_STD = 28
CHI2 = 29
NBANDS = 30
MAP_T = 31
BIMODAL = 32
FITTED = 33
N_OUT = 34

_PROBS = (0.025, 0.15865525393145707, 0.5, 0.8413447460685429, 0.975)  # 2.5 %, Φ(−1), Φ(0), Φ(1), 97.5 %
_RESCALE = 200.0  # rescale the running sums when a node beats the reference by this much χ²
SPLIT = 4  # a coarse block of the pruning holds SPLIT blocks along each axis
R_NODES = 129  # nodes of the R_V marginal over the range (for its percentiles)
_FAR = 6.0  # a Gaussian whose centre lies this many σ inside both ends of the range is not cut (2e−9 lost)
_LAPLACE_TOL = 0.02  # largest departure (χ² units) of χ²(x) from its expansion within 3 σ for Laplace's method
_SIMPSON = 64  # intervals of the Simpson sum over the R_V range where Laplace's method is not used


@njit(cache=True)
def _block_span(k, size, n):
    lo = k * size
    hi = min(lo + size, n)
    return lo, hi, (lo + hi - 1) // 2


def sweep_order(n, stride):
    """The order in which the grid stores the n nodes of an axis swept first at ``stride`` (a power of 2).

    The first sweep visits the nodes k·stride, each finer sweep the nodes
    half-way between those before (:func:`fit_stars`). In plain order a
    sweep at stride 8 reads one node in eight of a row (96 bytes of every
    768 with R_V free); stored in this order (each group in increasing
    order) it reads its nodes one after another, which the processor's
    prefetching follows (the R_V-free fit ran ~25 % faster).

    Returns
    -------
    ndarray of int, shape (n,)
        The node in each slot; its inverse (``np.argsort``) is each node's slot.
    """
    node = np.arange(n)
    level = np.zeros(n, np.int64)  # 0: the first sweep's nodes, j: those added at stride / 2^j
    step = stride
    while step > 1:
        step //= 2
        level[(node % step == 0) & (level == 0) & (node % stride != 0)] = int(math.log2(stride // step))
    return np.lexsort((node, level))


@njit(cache=True, parallel=True)
def store_grid(ratios, scales, intrinsic, weights, order, dtype):
    """The grid from the law's A_b/A_V at each R_V node, filled in one pass (no temporaries).

    out[t, s, b, k] = Σ_r weights[k, r] (intrinsic[t, b] + ratios[r][b, t, e] scales[r, e]),
    e = order[s]: the magnitudes at each R_V node (A_V = scales[r, e]) and,
    with several nodes, the coefficients of the polynomial through them.

    Parameters
    ----------
    ratios : tuple of ndarray, each shape (n_b, n_t, n_e)
        A_b/A_V at each R_V node (:attr:`redcorr.coefficients.CoefficientGrid.ratio`).
    scales : ndarray, shape (n_r, n_e)
        A_V at each R_V node and E(B−V) node.
    intrinsic : ndarray, shape (n_t, n_b)
    weights : ndarray, shape (n_c, n_r)
        Each term's weights of the nodes' magnitudes (the identity with one node).
    order : ndarray of int, shape (n_e,)
        The E(B−V) node stored in each slot (:func:`sweep_order`).
    dtype : numpy.float32 or numpy.float64
        Of the grid (the sums are float64).

    Returns
    -------
    ndarray, shape (n_t, n_e, n_b, n_c)

    Notes
    -----
    The grid is allocated here, not by numpy: numpy asks the operating
    system for transparent huge pages for arrays this large, and where
    the kernel then compacts memory on first touch (Linux with THP
    ``defrag = madvise``) that took 0.1–0.15 s for a 36 MB grid in a
    long-running process, five times the fill itself (measured in
    benchmarks/bench_fit.py's rounds).
    """
    n_b, n_t, n_e = ratios[0].shape
    n_c, n_r = weights.shape
    out = np.empty((n_t, n_e, n_b, n_c), dtype)
    for t in prange(n_t):  # (rows on numba's threads)
        mags = np.empty(n_r)
        for s in range(n_e):
            e = order[s]
            for b in range(n_b):
                for r in range(n_r):
                    mags[r] = ratios[r][b, t, e] * scales[r, e] + intrinsic[t, b]
                for k in range(n_c):
                    term = mags[0] * weights[k, 0]
                    for r in range(1, n_r):
                        term += mags[r] * weights[k, r]
                    out[t, s, b, k] = term
    return out


@njit(cache=True)
def block_deltas(model, slot, valid, bt, be):
    """Largest squared change of each band's model within each block of ``bt`` × ``be`` nodes, from its centre.

    A block is centred on its middle node. The change at x is
    Σ_k x^k ΔQ_k (ΔQ_k the change of term k; one term with R_V fixed),
    taken relative to a common shift Σ_k x^k s_k, s_k the mean ΔQ_k of
    the bands the locus covers at both nodes (any shift would do; see
    :func:`fit_stars`, Notes). For |x| <= 1 its size is at most
    Σ_k |ΔQ_k − s_k|, the value used: one bound for the whole R_V range.

    Parameters
    ----------
    model : ndarray, shape (n_t, n_e, n_b, n_c)
        The grid, E(B−V) node e in slot ``slot[e]``.
    slot : ndarray of int, shape (n_e,)
    valid : ndarray of bool, shape (n_t, n_b)
        Whether the locus covers band b at T node t (else ``model`` there is ignored).
    bt, be : int
        Block sizes along T and E(B−V).

    Returns
    -------
    ndarray, shape (n_tb, n_eb, n_b)
    """
    n_t, n_e, n_b, n_c = model.shape
    n_tb, n_eb = -(-n_t // bt), -(-n_e // be)
    out = np.zeros((n_tb, n_eb, n_b))
    size = np.empty(n_b)
    for tb in range(n_tb):
        t0, t1, tc = _block_span(tb, bt, n_t)
        for eb in range(n_eb):
            e0, e1, ec = _block_span(eb, be, n_e)
            for t in range(t0, t1):
                for e in range(e0, e1):
                    size[:] = 0.0
                    for k in range(n_c):
                        shift = 0.0
                        n_valid = 0
                        for b in range(n_b):
                            if valid[t, b] and valid[tc, b]:
                                shift += model[t, slot[e], b, k] - model[tc, slot[ec], b, k]
                                n_valid += 1
                        shift = shift / n_valid if n_valid > 0 else 0.0
                        for b in range(n_b):
                            size[b] += abs(model[t, slot[e], b, k] - model[tc, slot[ec], b, k] - shift)
                    for b in range(n_b):
                        if valid[t, b]:
                            out[tb, eb, b] = max(out[tb, eb, b], size[b] * size[b])
    return out


@njit(cache=True)
def block_centres(model, slot, bt, be):
    """The grid's terms at each block's centre, block by block (the nodes the bounds start from).

    Returns
    -------
    ndarray, shape (n_tb, n_eb, n_b, n_c)
        ``model[tc, slot[ec]]`` of the block (tb, eb) (centres as in
        :func:`block_deltas`). The bounds of one star read every block's
        centre: here they lie side by side (0.6 MB for the R_V-free grid's
        blocks, against nodes spread over its 36 MB), and the R_V-free fit
        took ~4 % less time.
    """
    n_t, n_e, n_b, n_c = model.shape
    n_tb, n_eb = -(-n_t // bt), -(-n_e // be)
    out = np.empty((n_tb, n_eb, n_b, n_c), model.dtype)
    for tb in range(n_tb):
        tc = _block_span(tb, bt, n_t)[2]
        for eb in range(n_eb):
            out[tb, eb] = model[tc, slot[_block_span(eb, be, n_e)[2]]]
    return out


def block_bounds(model, slot, valid, bt, be):
    """The ``blocks`` of :func:`fit_stars`: (deltas, centres) of the blocks × :data:`SPLIT`, and of the blocks.

    Each level pairs :func:`block_deltas` with :func:`block_centres` at its
    block sizes: the coarse level's are :data:`SPLIT` times ``bt``, ``be``.
    """
    return tuple(
        (block_deltas(model, slot, valid, bt * k, be * k), block_centres(model, slot, bt * k, be * k))
        for k in (SPLIT, 1)
    )


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


_V4 = ir.VectorType(ir.DoubleType(), 4)
_I32 = ir.IntType(32)
_LANES = tuple(ir.Constant(ir.VectorType(_I32, 4), lanes) for lanes in ([0, 0, 0, 0], [1, 2, 3, 0], [2, 3, 0, 1]))


@intrinsic
def _rv_sums(typingctx, m, w, idx, model, t, s):
    """The 14 sums of :func:`_rv_poly` over the bands ``idx``, each band's four terms as one vector.

    Returns (s_0 … s_3, s00, s01, s02, s03, s11, s12, s13, s22, s23, s33):
    s_k = Σ w v_k and s_kl = Σ w v_k v_l over the bands, v = (m − Q_0,
    Q_1, Q_2, Q_3) at the node (t, s) of ``model``, a C-ordered grid of
    four terms (R_V free: float64; float32, widened as read, compiles too,
    for the R_V-fixed grid's unused branch of :func:`_bounds`). Per band,
    w v, and w v times v, times v rotated by one lane and by two, hold every
    s_k and s_kl (the last repeats two): four vector multiply-adds instead
    of fourteen scalar ones. Each sum is one lane, added over the bands in
    order as a loop would. numba asks LLVM for no such vectors itself (its
    SLP vectorizer is off by default; turned on for the whole process it
    made this fit slower), so they are written in LLVM's IR through
    numba's extension API [1]_: the R_V-free fit ~13 % faster (interleaved
    runs).

    References
    ----------
    .. [1] numba documentation, "High-level extension API",
       ``numba.extending.intrinsic`` (version 0.68).
    """
    if not (all(isinstance(a, types.Array) and a.ndim == 1 for a in (m, w, idx)) and isinstance(model, types.Array)
            and model.ndim == 4 and model.layout == "C" and model.dtype in (types.float32, types.float64)):  # fmt: skip
        return None  # (the four terms of a band must lie side by side)
    sig = types.UniTuple(types.float64, 14)(m, w, idx, model, t, s)

    def codegen(context, builder, signature, args):
        def pointer(k, *index):  # to element ``index`` of argument k
            ty = signature.args[k]
            a = context.make_array(ty)(context, builder, args[k])
            shape, strides = cgutils.unpack_tuple(builder, a.shape), cgutils.unpack_tuple(builder, a.strides)
            return cgutils.get_item_pointer2(context, builder, a.data, shape, strides, ty.layout, index)

        def element(k, i):
            return context.cast(builder, builder.load(pointer(k, i)), signature.args[k].dtype, types.float64)

        def lane(vector, j):
            return builder.extract_element(vector, ir.Constant(_I32, j))

        t_v, s_v = (context.cast(builder, args[k], signature.args[k], types.intp) for k in (4, 5))
        grid_ty = signature.args[3]
        terms_ty = ir.VectorType(context.get_data_type(grid_ty.dtype), 4)
        zero = ir.Constant(_V4, [0.0] * 4)
        sign = ir.Constant(_V4, [-1.0, 1.0, 1.0, 1.0])
        fma = ("contract",)
        acc = [cgutils.alloca_once_value(builder, zero) for _ in range(4)]  # Σ w v; Σ w v v, rotated by 1, by 2
        n = builder.extract_value(context.make_array(signature.args[2])(context, builder, args[2]).shape, 0)
        with cgutils.for_range(builder, n) as loop:
            k = loop.index
            b = context.cast(builder, builder.load(pointer(2, k)), signature.args[2].dtype, types.intp)
            ptr = builder.bitcast(pointer(3, t_v, s_v, b, ir.Constant(b.type, 0)), terms_ty.as_pointer())
            q = builder.load(ptr, align=grid_ty.dtype.bitwidth // 8)
            if terms_ty != _V4:
                q = builder.fpext(q, _V4)
            v = builder.fadd(builder.fmul(q, sign), builder.insert_element(zero, element(0, k), ir.Constant(_I32, 0)))
            w_k = builder.insert_element(zero, element(1, k), ir.Constant(_I32, 0))
            wv = builder.fmul(v, builder.shuffle_vector(w_k, w_k, _LANES[0]))
            terms = (wv,) + tuple(
                builder.fmul(wv, v if lanes is None else builder.shuffle_vector(v, v, lanes), flags=fma)
                for lanes in (None, _LANES[1], _LANES[2])
            )
            for a, term in zip(acc, terms, strict=True):
                builder.store(builder.fadd(builder.load(a), term, flags=fma), a)
        s_k, sq, r1, r2 = (builder.load(a) for a in acc)
        picks = ((s_k, 0), (s_k, 1), (s_k, 2), (s_k, 3), (sq, 0), (r1, 0), (r2, 0), (r1, 3), (sq, 1), (r1, 1),
                 (r2, 1), (sq, 2), (r1, 2), (sq, 3))  # fmt: skip
        return context.make_tuple(builder, signature.return_type, [lane(vec, j) for vec, j in picks])

    return sig, codegen


@njit(cache=True, inline="always")
def _rv_poly(m, w, idx, s0, model, t, s):
    """χ² at the node in row t, slot s as a polynomial in x (R_V free): a tuple ``a``, a[j] the coefficient of x^j.

    With v_0 = m − Q_0 and v_k = Q_k, d(x) = v_0 − x v_1 − x² v_2 − x³ v_3
    and χ²(x) = Σ_kl c_k c_l G_kl, c = (1, −x, −x², −x³), G_kl = v_kᵀ C v_l
    (the sums by :func:`_rv_sums`): a[0…6], then a[7], a[8] = G_11, G_22
    (for :func:`_rv_floor`). A tuple, not an array: the sweeps' hot loop
    then keeps no array references to count.
    """
    s_0, s_1, s_2, s_3, s00, s01, s02, s03, s11, s12, s13, s22, s23, s33 = _rv_sums(m, w, idx, model, t, s)
    r = 1.0 / s0
    g11 = s11 - s_1 * s_1 * r
    g22 = s22 - s_2 * s_2 * r
    return (
        s00 - s_0 * s_0 * r,
        -2.0 * (s01 - s_0 * s_1 * r),
        g11 - 2.0 * (s02 - s_0 * s_2 * r),
        2.0 * ((s12 - s_1 * s_2 * r) - (s03 - s_0 * s_3 * r)),
        g22 + 2.0 * (s13 - s_1 * s_3 * r),
        2.0 * (s23 - s_2 * s_3 * r),
        s33 - s_3 * s_3 * r,
        g11,
        g22,
    )


@njit(cache=True, inline="always")
def _horner(p, d1, d2, x, c):
    """One step of Horner's rule for a polynomial (p), its derivative (d1) and half its second (d2)."""
    return p * x + c, d1 * x + p, d2 * x + d1


@njit(cache=True, inline="always")
def _poly(a, x):
    """Value, first and second derivative at x of Σ_j a[j] x^j, j = 0…6 (``a`` a tuple: the steps written out)."""
    p, d1, d2 = _horner(a[6], 0.0, 0.0, x, a[5])
    p, d1, d2 = _horner(p, d1, d2, x, a[4])
    p, d1, d2 = _horner(p, d1, d2, x, a[3])
    p, d1, d2 = _horner(p, d1, d2, x, a[2])
    p, d1, d2 = _horner(p, d1, d2, x, a[1])
    p, d1, d2 = _horner(p, d1, d2, x, a[0])
    return p, d1, 2.0 * d2


@njit(cache=True, inline="always")
def _rv_vertex(a):
    """The vertex of the quadratic part a[0] + a[1] x + a[2] x² of χ²(x) (:func:`_rv_poly`), kept in [−1, 1]."""
    return min(max(-a[1] / (2.0 * a[2]), -1.0), 1.0) if a[2] > 0.0 else 0.0


@njit(cache=True, inline="always")
def _rv_floor(a):
    """A lower bound of χ²(x) of :func:`_rv_poly` on [−1, 1]: (‖v_0 − x v_1‖_min − ‖v_2‖ − ‖v_3‖)².

    √χ² is a seminorm of d(x) = v_0 − x v_1 − x² v_2 − x³ v_3, so by the
    triangle inequality (|x| <= 1) √χ²(x) >= ‖v_0 − x v_1‖ − ‖v_2‖ − ‖v_3‖,
    whose first term's smallest square on the range is that of the quadratic
    G_00 − 2 x G_01 + x² G_11 (``a[0]``, ``a[1]``, ``a[7]``).
    """
    g11 = a[7]
    x = 0.0
    if g11 > 0.0:
        x = min(max(-a[1] / (2.0 * g11), -1.0), 1.0)
    lin = min(a[0] + x * (a[1] + x * g11), a[0] - abs(a[1]) + g11)
    gap = math.sqrt(max(lin, 0.0)) - math.sqrt(max(a[8], 0.0)) - math.sqrt(max(a[6], 0.0))
    return gap * gap if gap > 0.0 else 0.0


@njit(cache=True, inline="always")
def _rv_excluded(a, room):
    """Whether :func:`_rv_floor` exceeds ``room`` (the node cannot matter), without a division.

    With q the smallest G_00 − 2 x G_01 + x² G_11 on the range and
    S = ‖v_2‖ + ‖v_3‖, the floor (√q − S)² exceeds room >= 0 exactly where
    q > (S + √room)²; for a vertex inside the range q = G_00 − G_01²/G_11,
    compared multiplied through by G_11. The three square roots do not wait
    on one another (the sweep's latency, not its arithmetic, is what
    costs), and are taken only where the quadratic's value at the range's
    end toward its vertex, an upper bound of q, does not settle it.
    """
    a0, a1, g11 = a[0], a[1], a[7]
    end = a0 - abs(a1) + g11  # q where the vertex lies outside the range, else an upper bound of it
    if not end > room:
        return False
    if room < 0.0:
        return True  # (the floor is >= 0)
    reach = math.sqrt(max(a[8], 0.0)) + math.sqrt(max(a[6], 0.0)) + math.sqrt(room)
    reach *= reach
    if abs(a1) < 2.0 * g11:  # vertex inside: q = a0 − a1²/(4 g11) > reach
        return 4.0 * g11 * (a0 - reach) > a1 * a1
    return end > reach


@njit(cache=True, fastmath={"contract"})
def _bounds(m, w, idx, s0, deltas, centres, pen_t, pen_e, bt, be, lower, k_t, k_e, split):
    """Lower bounds of χ² + prior penalty in blocks (sizes bt, be; deltas, centres: a level of :func:`block_bounds`).

    The blocks are those of indices k·split to (k + 1)·split − 1 along T and
    E(B−V) (k = k_t, k_e); ``lower`` receives their bounds (inf: every node
    excluded). With R_V free the bound holds over the whole R_V range
    (:func:`_rv_floor` at the centre) and the value found at a centre is χ²
    at the vertex of its quadratic part (:func:`_rv_vertex`; not evaluated
    where the bound shows it cannot beat the best so far). Returns the
    smallest χ² + penalty found at their centres.
    """
    nb = idx.size
    n_t, n_e = pen_t.size, pen_e.size
    n_tb, n_eb = deltas.shape[0], deltas.shape[1]
    free = centres.shape[3] > 1
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
            if pt == np.inf or pe == np.inf:
                lower[tb, eb] = np.inf
                continue
            if pen_t[tc] == np.inf or pen_e[ec] == np.inf:  # centre excluded: no bound
                lower[tb, eb] = pt + pe
                continue
            rad = 0.0
            for k in range(nb):
                rad += w[k] * deltas[tb, eb, idx[k]]
            if free:  # a lower bound, and χ² at the vertex of the quadratic part (a value reached)
                a = _rv_poly(m, w, idx, s0, centres, tb, eb)
                low = _rv_floor(a)
                c = _poly(a, _rv_vertex(a))[0] if low + pen_t[tc] + pen_e[ec] < best else np.inf  # (c >= low)
            else:
                s1 = 0.0
                s2 = 0.0
                for k in range(nb):
                    d = m[k] - centres[tb, eb, idx[k], 0]
                    s1 += w[k] * d
                    s2 += w[k] * d * d
                c = low = max(s2 - s1 * s1 / s0, 0.0)
            best = min(best, c + pen_t[tc] + pen_e[ec])
            gap = max(math.sqrt(max(low, 0.0)) - math.sqrt(rad), 0.0)
            lower[tb, eb] = gap * gap + pt + pe
    return best


@njit(cache=True, inline="always")
def _rebase(ref, tot):
    """The sweeps' reference χ² after a node at ``tot``, and the factor to rescale their sums by (1: none).

    The sums are kept relative to exp(−ref/2): ``ref`` NaN (no node yet)
    becomes ``tot``, and a node more than :data:`_RESCALE` below it becomes
    the new reference (the sums × exp(−(ref − tot)/2)), so that no weight
    overflows.
    """
    if not ref == ref:
        return tot, 1.0
    if tot < ref - _RESCALE:
        return tot, math.exp(-0.5 * (ref - tot))
    return ref, 1.0


@njit(cache=True)
def _sweep_rows(pen_t, n_tb, bt, st, old, se, rows):
    """The rows a sweep at strides (st, se) visits: ``rows[j]`` = (t, its block row, whether visited before).

    The rows t ≡ 0 (mod st) the prior allows, block row by block row. A row
    an earlier sweep visited (``old``: its strides, zeros for none) at the
    same E(B−V) stride holds all its nodes in the sums already and is left
    out. Returns the number of rows.
    """
    n_t = pen_t.size
    st_o, se_o = old[0], old[1]
    n = 0
    for tb in range(n_tb):
        t0, t1, _ = _block_span(tb, bt, n_t)
        for t in range((t0 + st - 1) // st * st, t1, st):
            t_old = st_o > 0 and t % st_o == 0
            if pen_t[t] == np.inf or (t_old and se_o == se):
                continue
            rows[n, 0], rows[n, 1], rows[n, 2] = t, tb, t_old
            n += 1
    return n


@njit(cache=True)
def _row_spans(lower, tb, limit, be, n_e, se, se_o, t_old, spans):
    """The nodes a sweep at E(B−V) stride se visits in one row: ``spans[j]`` = (first, end, step) for ``range``.

    The nodes at multiples of se in the row's kept blocks (in block row
    ``tb``, those whose bound ``lower`` is <= ``limit``), neighbouring kept
    blocks in one span. In a row an earlier sweep visited (``t_old``) at the
    stride se_o = 2 se the nodes at multiples of se_o are in the sums
    already: only the odd multiples of se are visited. Returns the number
    of spans.
    """
    n = 0
    eb = 0
    n_eb = lower.shape[1]
    while eb < n_eb:
        if not lower[tb, eb] <= limit:
            eb += 1
            continue
        e0 = _block_span(eb, be, n_e)[0]
        while eb < n_eb and lower[tb, eb] <= limit:
            eb += 1
        e1 = min(eb * be, n_e)
        first = (e0 + se - 1) // se * se
        step = se
        if t_old:
            if first % se_o == 0:
                first += se
            step = se_o
        spans[n, 0], spans[n, 1], spans[n, 2] = first, e1, step
        n += 1
    return n


@njit(cache=True)
def _scale(x, factor):
    """x *= factor in place, element by element.

    An array that ``*=`` rebinds inside a loop gets its reference counted
    (atomically) at every pass of the loop.
    """
    for j in range(x.size):
        x[j] *= factor


@njit(cache=True, fastmath={"contract"})
def _sweep(m, w, idx, s0, model, slot, pen_t, pen_e, lower, limit, bt, be, qt, qe, st, se, old, ref, g_e, g_t, res,
           rows, spans):  # fmt: skip
    """Accumulate the posterior (R_V fixed) over the nodes t ≡ 0 (mod st), e ≡ 0 (mod se) of the kept blocks.

    ``g_e`` and ``g_t`` receive the marginal densities of E(B−V) and ln T
    relative to exp(−ref/2) (a sub-grid's trapezoid weights are the fine
    ones times the stride); ``ref`` NaN means the first node's value. A
    node whose χ² + penalty exceeds ``limit`` is left out, as the nodes of
    a skipped block are. The nodes of an earlier sweep at the strides
    ``old`` (zeros: none), already in the sums, are not visited again.
    ``res`` holds χ²_min, the mode's T index (−1: no node) and its
    χ² + penalty, and is updated. Returns ``ref``. The nodes are visited row
    by row (:func:`_sweep_rows`; ``rows`` and ``spans`` are scratch arrays
    of shape (n_t, 3) and (number of block columns, 3)), each row's kept
    blocks in turn (:func:`_row_spans`), in slot order.
    """
    nb = idx.size
    every = nb == model.shape[2]  # every band used: idx[k] = k
    chi_min, map_t, tot_min = res[0], int(res[1]), res[2]
    for j in range(_sweep_rows(pen_t, lower.shape[0], bt, st, old, se, rows)):
        t, tb, t_old = rows[j, 0], rows[j, 1], rows[j, 2]
        p_t = pen_t[t]
        q_t = qt[t] * st  # (strides are powers of 2: the products are exact)
        row_sum = 0.0
        for sp in range(_row_spans(lower, tb, limit, be, model.shape[1], se, old[1], t_old, spans)):
            for e in range(spans[sp, 0], spans[sp, 1], spans[sp, 2]):
                if pen_e[e] == np.inf:
                    continue
                s = slot[e]
                s1 = 0.0
                s2 = 0.0
                if every:
                    for k in range(nb):
                        d = m[k] - model[t, s, k, 0]
                        s1 += w[k] * d
                        s2 += w[k] * d * d
                else:
                    for k in range(nb):
                        d = m[k] - model[t, s, idx[k], 0]
                        s1 += w[k] * d
                        s2 += w[k] * d * d
                c = max(s2 - s1 * s1 / s0, 0.0)
                tot = c + p_t + pen_e[e]
                if tot > limit:  # weighs < e^(−cut/2) of the best node, as a skipped block's
                    continue
                chi_min = min(chi_min, c)
                if tot < tot_min:
                    tot_min = tot
                    map_t = t
                ref, scale = _rebase(ref, tot)
                if scale != 1.0:
                    _scale(g_e, scale)
                    _scale(g_t, scale)
                    row_sum *= scale
                f = math.exp(-0.5 * (tot - ref))
                g_e[e] += f * q_t
                row_sum += f * qe[e] * se
        g_t[t] += row_sum
    res[0], res[1], res[2] = chi_min, map_t, tot_min
    return ref


@njit(cache=True, fastmath={"contract"})
def _sweep_rv(m, w, idx, s0, model, slot, pen_t, pen_e, lower, limit, cut, bt, be, qt, qe, st, se, old, r_range, ref,
              g_e, g_t, r_1, r_2, res, rows, spans):  # fmt: skip
    """:func:`_sweep` with R_V free: at each (T, E(B−V)) node the R_V integral (:func:`_rv_node`).

    ``g_e``, ``g_t`` receive the marginal densities of E(B−V) and ln T,
    ``r_1`` and ``r_2`` the same density of E(B−V) times the conditional
    mean of R_V and of R_V² (for :func:`_column_marginals`), all relative
    to exp(−ref/2). A node whose smallest χ² + penalty exceeds ``limit``,
    or the best so far by more than ``cut``, is left out, and so are the
    blocks whose bound does (taken row by row, as the best improves: the
    R_V-free fit ~2 % faster). ``old``, ``res`` and the returned ``ref`` as
    in :func:`_sweep`.
    """
    r_c = 0.5 * (r_range[0] + r_range[1])
    r_h = 0.5 * (r_range[1] - r_range[0])
    chi_min, map_t, tot_min = res[0], int(res[1]), res[2]
    for j in range(_sweep_rows(pen_t, lower.shape[0], bt, st, old, se, rows)):
        t, tb, t_old = rows[j, 0], rows[j, 1], rows[j, 2]
        p_t = pen_t[t]
        q_t = qt[t] * st
        row_sum = 0.0
        kept = min(limit, tot_min + cut)  # (a block whose bound exceeds it holds no node that counts)
        for sp in range(_row_spans(lower, tb, kept, be, model.shape[1], se, old[1], t_old, spans)):
            for e in range(spans[sp, 0], spans[sp, 1], spans[sp, 2]):
                pen = p_t + pen_e[e]
                if pen == np.inf:
                    continue
                a = _rv_poly(m, w, idx, s0, model, t, slot[e])
                if _rv_excluded(a, min(limit, tot_min + cut) - pen):  # (as a skipped block's nodes)
                    continue
                base, mass, mx, mx2 = _rv_node(a)
                chi_min = min(chi_min, base)
                tot = base + pen
                if tot < tot_min:
                    tot_min = tot
                    map_t = t
                if tot > limit or tot > tot_min + cut:
                    continue
                ref, scale = _rebase(ref, tot)
                if scale != 1.0:
                    _scale(g_e, scale)
                    _scale(g_t, scale)
                    _scale(r_1, scale)
                    _scale(r_2, scale)
                    row_sum *= scale
                f = math.exp(-0.5 * (tot - ref)) * mass
                f_t = f * q_t
                g_e[e] += f_t
                row_sum += f * qe[e] * se
                r_1[e] += f_t * (r_c + r_h * mx)  # R_V = r_c + r_h x
                r_2[e] += f_t * (r_c * r_c + r_h * (2.0 * r_c * mx + r_h * mx2))
        g_t[t] += row_sum
    res[0], res[1], res[2] = chi_min, map_t, tot_min
    return ref


_SQRT2 = math.sqrt(2.0)
_SQRT2PI = math.sqrt(2.0 * math.pi)
_Y_LINEAR = 1e-3  # below this curvature (χ² units over an interval) the exponent is taken linear in u
_TAIL_DIRECT = 25.0  # up to this x, exp(x²/2) Φc(x) from erfc directly (no underflow: erfc(25/√2) ~ 1e−138)


@njit(cache=True)
def _tail(x):
    """exp(x²/2) Φc(x) for x >= 0 (Φc the upper tail of the unit normal), without overflow."""
    if x < _TAIL_DIRECT:
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
def _rv_simpson(a):
    """(base, mass, mean, m2) of exp(−½ χ²(x)) over [−1, 1] by Simpson's rule on :data:`_SIMPSON` intervals."""
    n = _SIMPSON
    h = 2.0 / n
    base = np.inf
    for i in range(n + 1):
        base = min(base, _poly(a, -1.0 + i * h)[0])
    z = 0.0
    s1 = 0.0
    s2 = 0.0
    for i in range(n + 1):
        x = -1.0 + i * h
        q = 1.0 if i == 0 or i == n else (4.0 if i % 2 else 2.0)
        f = q * math.exp(-0.5 * (_poly(a, x)[0] - base))
        z += f
        s1 += f * x
        s2 += f * x * x
    return base, z * h / 3.0, s1 / z, s2 / z


@njit(cache=True)
def _cut_below(c, v, sd):
    """(base, mass, mean, m2) as :func:`_rv_node` gives them for exp(−½ (c + (x − v)²/sd²)) over x >= −1.

    A normal cut at one end (Johnson, Kotz & Balakrishnan 1994, Sect. 10.1;
    from memory): with α = (−1 − v)/sd and λ = φ(α)/Φc(α), the mean is
    v + sd λ and the variance sd² (1 + α λ − λ²). For α > 0 (the vertex below
    −1) base is χ² at −1 and Φc and φ are both taken × exp(α²/2)
    (:func:`_tail`); the caller keeps α below :data:`_TAIL_DIRECT`, where
    that is computed from erfc directly.
    """
    al = (-1.0 - v) / sd
    if al > 0.0:
        base = c + al * al
        z = _tail(al)
        lam = 1.0 / (_SQRT2PI * z)
    else:
        base = c
        z = 0.5 * math.erfc(al / _SQRT2)
        lam = math.exp(-0.5 * al * al) / (_SQRT2PI * z)
    mean = v + sd * lam
    var = sd * sd * max(1.0 + al * lam - lam * lam, 0.0)
    return base, sd * _SQRT2PI * z, mean, var + mean * mean


@njit(cache=True, fastmath={"contract"})
def _rv_node(a):
    """The R_V integral at one node: (base, mass, mean, m2) of exp(−½ χ²(x)) over x in [−1, 1].

    base is the smallest χ² on the range, mass = ∫ exp(−½ (χ²(x) − base)) dx
    over it, and mean, m2 the first two moments of x under that density.
    Laplace's method: χ² expanded to second order about the vertex of its
    quadratic part (kept in the range), i.e. a Newton step from there
    toward its smallest value, a Gaussian cut to the range (:func:`_segment`
    in u = (x + 1)/2; not cut at an end it lies :data:`_FAR` σ inside of,
    :func:`_cut_below` where that holds for one end only).
    Used where the terms of degree 3 to 6 about that point stay below
    :data:`_LAPLACE_TOL` (χ² units) within 3 σ (at most the range's width):
    bounded by Σ_j ρ^j Σ_i≥j C(i, j) |a_i| (|x| <= 1, ρ the reach);
    elsewhere Simpson's rule (:func:`_rv_simpson`).
    """
    x = _rv_vertex(a)
    f, g, h = _poly(a, x)
    big_h = max(h, 0.0)
    sd = math.sqrt(2.0 / big_h) if big_h > 0.0 else np.inf
    reach = min(3.0 * sd, 2.0)
    a3, a4, a5, a6 = abs(a[3]), abs(a[4]), abs(a[5]), abs(a[6])
    dev = reach * reach * reach * (a3 + 4.0 * a4 + 10.0 * a5 + 20.0 * a6 + reach * (
        a4 + 5.0 * a5 + 15.0 * a6 + reach * (a5 + 6.0 * a6 + reach * a6)))  # fmt: skip
    if dev > _LAPLACE_TOL:
        return _rv_simpson(a)
    if big_h > 0.0:
        inv_h = 1.0 / big_h
        v = x - g * inv_h
        c = f - 0.5 * g * g * inv_h  # the expansion's smallest value, at v
        low_far = v - _FAR * sd > -1.0
        high_far = v + _FAR * sd < 1.0
        if low_far and high_far:
            return c, sd * _SQRT2PI, v, v * v + sd * sd
        if high_far and -1.0 - v < _TAIL_DIRECT * sd:
            return _cut_below(c, v, sd)
        if low_far and v - 1.0 < _TAIL_DIRECT * sd:  # the mirror image x -> −x
            base, mass, mean, m2 = _cut_below(c, -v, sd)
            return base, mass, -mean, m2
    c0 = f - g * (1.0 + x) + 0.5 * big_h * (1.0 + x) ** 2
    c1 = f + g * (1.0 - x) + 0.5 * big_h * (1.0 - x) ** 2
    base, mass, mu, m2 = _segment(c0, c1, 2.0 * big_h)
    return base, 2.0 * mass, 2.0 * mu - 1.0, 4.0 * (m2 - mu) + 1.0


_NORMAL_Z = np.linspace(-4.0, 4.0, 17)  # the points of _spread, in σ, and their weights
_NORMAL_W = np.exp(-0.5 * _NORMAL_Z**2) / np.sum(np.exp(-0.5 * _NORMAL_Z**2))


@njit(cache=True)
def _spread(hist, mid, sd, mass):
    """Add to a histogram a normal distribution of ``mass`` (mean ``mid``, std ``sd``, in units of its step).

    The normal is sampled at :data:`_NORMAL_Z` (every σ/2 to ±4σ), each
    point's share divided linearly between the two nearest nodes; points
    beyond the ends go to the end nodes. The mean is kept exactly (away
    from the ends), the variance to 4 parts in 10⁴ (the tails beyond 4σ)
    plus the linear sharing's own (at most a quarter of a step squared).
    """
    n = hist.size
    for p in range(_NORMAL_Z.size):
        share = mass * _NORMAL_W[p]
        pos = min(max(mid + _NORMAL_Z[p] * sd, 0.0), n - 1.0)
        j = min(int(pos), n - 2)
        frac = pos - j
        hist[j] += share * (1.0 - frac)
        hist[j + 1] += share * frac


@njit(cache=True)
def _column_marginals(g_e, r_1, r_2, qe, se, ebv, r_range, r_hist, av_hist, av_h):
    """The R_V and A_V marginals from each E(B−V) node's sums of :func:`_sweep_rv` (every se-th node).

    At E(B−V) node e the posterior mass is g_e[e] times its trapezoid
    weight, and R_V has the mean r_1/g_e and the second moment r_2/g_e over
    the T nodes of that column (A_V = E(B−V) R_V: the same, scaled). Each
    column adds a normal of that mean and variance to ``r_hist`` (the R_V
    masses at :data:`R_NODES` nodes over ``r_range``) and to ``av_hist``
    (the A_V masses at 0, av_h, ...) by :func:`_spread`. Returns the mass,
    Σ R_V, Σ R_V², Σ A_V and Σ A_V² over the posterior (the exact moments).

    A column holds many T nodes (each with its own R_V mean and spread) in
    one normal: against a plain sum over every node with the law at R_V
    every 0.1 its 16/50/84 % points of R_V lie as close as one normal per
    node did (tests/test_fit_core.py), and the work is per column, not per
    node.
    """
    per_r = (r_hist.size - 1) / (r_range[1] - r_range[0])  # histogram nodes per unit R_V
    per_av = 1.0 / av_h
    mom = np.zeros(5)
    for e in range(0, g_e.size, se):
        if not g_e[e] > 0.0:
            continue
        mass = g_e[e] * qe[e] * se
        r_mean = r_1[e] / g_e[e]
        r_sq = r_2[e] / g_e[e]
        r_sd = math.sqrt(max(r_sq - r_mean * r_mean, 0.0))
        mom[0] += mass
        mom[1] += mass * r_mean
        mom[2] += mass * r_sq
        mom[3] += mass * ebv[e] * r_mean
        mom[4] += mass * ebv[e] * ebv[e] * r_sq
        _spread(r_hist, (r_mean - r_range[0]) * per_r, r_sd * per_r, mass)
        _spread(av_hist, ebv[e] * r_mean * per_av, ebv[e] * r_sd * per_av, mass)
    return mom


@njit(cache=True)
def _finish(row, res, g_e, g_t, se, st, qe, qt, h_e, h_t, ln_t0, teff, share, dip):
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
    row[MAP_T] = res[1]
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
def _histogram_stats(hist, x0, h, mean, second, row, k):
    """Percentiles of a histogram of masses at x0, x0 + h, ... (:func:`_spread`) and the exact mean and std."""
    n = hist.size
    while n > 2 and hist[n - 1] == 0.0 and hist[n - 2] == 0.0:
        n -= 1  # an empty end changes no percentile (the A_V histogram spans the whole grid)
    q = np.full(n, h)
    q[0] = q[-1] = 0.5 * h
    _stats(x0, h, hist[:n] / q, q, row, k)
    row[k] = mean
    row[k + 1] = math.sqrt(max(second - mean * mean, 0.0))


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
    mag, weight, model, slot, valid, teff, ebv, rv, qt, qe, av_step, n_av, blocks, bt, be,
    t_mean, t_sigma, e_mean, e_sigma, e_upper, cut, share, dip, strides, smooth, out,
):
    """Posterior summaries of each star on the grid (one row of ``out`` per star).

    Parameters
    ----------
    mag, weight : ndarray, shape (n, n_b)
        Magnitudes and weights 1/σ² (0 marks an unusable band).
    model : ndarray, shape (n_t, n_e, n_b, n_c)
        The grid (module docstring), E(B−V) node e in slot ``slot[e]``:
        n_c = 1 with R_V fixed, 4 (a cubic in R_V) with R_V free; float32
        or float64 (the sums are float64).
    slot : ndarray of int, shape (n_e,)
        The inverse of :func:`sweep_order` for the first stride along E(B−V).
    valid : ndarray of bool, shape (n_t, n_b)
    teff, ebv : ndarray
        The axes (T_eff in K on a uniform ln T grid; E(B−V) uniform), each
        of a length 1 + a multiple of its first stride.
    rv : ndarray
        R_V: one value (fixed) or the range (low, high) of the cubic (free).
    qt, qe : ndarray
        Trapezoid weights of the axes (in ln T and E(B−V)): the flat prior.
    av_step, n_av : float, int
        The A_V axis of the A_V marginal at the finest E(B−V) step (R_V
        free): 0, av_step, ... (n_av nodes).
    blocks : tuple
        :func:`block_bounds` of the grid: the coarse blocks' and the blocks'
        (deltas, centres).
    bt, be : int
        Block sizes along T and E(B−V) (the coarse blocks': × :data:`SPLIT`).
    t_mean, t_sigma, e_mean, e_sigma, e_upper : ndarray, shape (n,)
        Gaussian priors (NaN: none) and upper bounds (inf: none).
    cut : float
        Pruning margin in χ² units.
    share, dip : float
        The bimodality test (:func:`_bimodal`).
    strides : ndarray of int, shape (2,)
        The first sweep uses every ``strides[k]``-th node along T and E(B−V).
    smooth : float
        Resolution test: while a marginal (E(B−V), T) changes between
        neighbouring sub-grid nodes by more than ``smooth`` × its peak, the
        sweep is repeated at half the stride (R_V fixed: both; free: along
        the rough axis).
    out : ndarray, shape (n, N_OUT)
        Filled in place; NaN where there is no fit.

    Notes
    -----
    Pruning bound: χ² = dᵀCd with C = W − wwᵀ/Σw positive semi-definite, so
    √χ² is a seminorm of d and, for any node θ in a block with centre c at
    the same R_V, √χ²(θ) ≥ √χ²(c) − ‖v‖ with v = P(θ) − P(c) (triangle
    inequality). ‖v‖² = min over μ of Σ_b w_b (v_b − μ)² (the offset is
    free) ≤ Σ_b w_b (v_b − s)² for any shift s(θ): with s the mean of v
    over the bands the locus covers (so that a change common to all bands,
    much of a change of E(B−V), costs nothing), ‖v‖² ≤ Σ_b w_b δ_b², δ_b²
    the block's largest (v_b − s)² over its nodes and the R_V range
    (:func:`block_deltas`, once per grid; for any star's weights and
    bands). With R_V free √χ²(c) is bounded below over the range by
    :func:`_rv_floor`. The prior penalties are bounded by
    their smallest value over the block's axes. Coarse blocks whose bound
    exceeds the best centre + ``cut`` are skipped whole; in the others
    each block gets its own bound, and the best centre found on either
    level sets the cut.

    Resolution: a Gaussian marginal of width σ sampled every Δ changes
    between neighbours by at most ≈ (Δ/σ) e^(−½) of its peak, so
    ``smooth`` = 0.35 keeps Δ ≲ 0.58σ; a ridge sampled too coarsely makes
    the marginals jagged and fails the same test. At stride 1 a ridge
    thinner than a step across it leaves the marginals jagged (each node of
    the other axis samples it at another offset), unbiased on average but
    noisy.
    """
    n, n_b = mag.shape
    n_t, n_e = model.shape[0], model.shape[1]
    (c_deltas, c_centres), (deltas, centres) = blocks  # (outside the threads' loop: numba passes it arrays only)
    n_tb, n_eb = deltas.shape[0], deltas.shape[1]
    free = model.shape[3] > 1
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
        c_lower = np.empty(c_deltas.shape[:2])
        best = _bounds(m, w, idx, s0, c_deltas, c_centres, pen_t, pen_e, bt * SPLIT, be * SPLIT, c_lower, 0, 0,
                       max(c_lower.shape[0], c_lower.shape[1]))  # fmt: skip
        lower = np.full((n_tb, n_eb), np.inf)
        c_limit = best + cut
        for ctb in range(c_lower.shape[0]):
            for ceb in range(c_lower.shape[1]):
                if c_lower[ctb, ceb] <= c_limit:
                    fine_best = _bounds(m, w, idx, s0, deltas, centres, pen_t, pen_e, bt, be, lower, ctb, ceb, SPLIT)
                    best = min(best, fine_best)
        limit = best + cut  # inf when no centre was allowed: then nothing is skipped
        # pass 2: sweeps of the kept blocks, strides halved until they resolve the posterior
        g_t = np.zeros(n_t)
        g_e = np.zeros(n_e)
        res = np.array([np.inf, -1.0, np.inf])  # χ²_min, the mode's T index, its χ² + penalty
        ref = best if best < np.inf else np.nan
        st, se = strides[0], strides[1]
        old = np.zeros(2, np.int64)  # the strides of the sweep before (zeros: none); its nodes stay in the sums
        rows = np.empty((n_t, 3), np.int64)  # scratch of the sweeps: the rows they visit, and a row's spans of nodes
        spans = np.empty((n_eb, 3), np.int64)
        if free:
            r_1 = np.zeros(n_e)
            r_2 = np.zeros(n_e)
            while True:
                ref = _sweep_rv(m, w, idx, s0, model, slot, pen_t, pen_e, lower, limit, cut, bt, be, qt, qe, st, se,
                                old, rv, ref, g_e, g_t, r_1, r_2, res, rows, spans)  # fmt: skip
                rough_e = _roughness(g_e, se)
                rough_t = _roughness(g_t, st)
                if not (st > 1 or se > 1) or (res[1] >= 0 and max(rough_e, rough_t) <= smooth):
                    break
                st_new = max(st // 2, 1) if res[1] < 0 or rough_t > smooth else st
                se_new = max(se // 2, 1) if res[1] < 0 or rough_e > smooth else se
                if st_new == st and se_new == se:
                    break  # the rough axis is at its grid step already
                # the sums hold the nodes so far with the trapezoid weights of their strides: reweight
                # them for the new strides, then add the new nodes
                g_e *= st_new / st
                r_1 *= st_new / st
                r_2 *= st_new / st
                g_t *= se_new / se
                old[0], old[1] = st, se
                st, se = st_new, se_new
            if res[1] < 0:
                continue
            _finish(row, res, g_e, g_t, se, st, qe, qt, h_e, h_t, ln_t0, teff, share, dip)
            if not row[FITTED] == 1.0:
                continue
            r_hist = np.zeros(R_NODES)
            av_hist = np.zeros(min(int(math.ceil((n_av - 1) / se)) + 1, n_av))
            mom = _column_marginals(g_e, r_1, r_2, qe, se, ebv, rv, r_hist, av_hist, av_step * se)
            _histogram_stats(r_hist, rv[0], (rv[1] - rv[0]) / (R_NODES - 1), mom[1] / mom[0], mom[2] / mom[0],
                             row, RV)  # fmt: skip
            _histogram_stats(av_hist, 0.0, av_step * se, mom[3] / mom[0], mom[4] / mom[0], row, AV)
            continue
        while True:
            ref = _sweep(m, w, idx, s0, model, slot, pen_t, pen_e, lower, limit, bt, be, qt, qe, st, se, old, ref,
                         g_e, g_t, res, rows, spans)  # fmt: skip
            rough = max(_roughness(g_e, se), _roughness(g_t, st))
            if not (st > 1 or se > 1) or (res[1] >= 0 and rough <= smooth):
                break  # (a sweep that found no node is repeated finer: the kept blocks may lie between its nodes)
            st_new, se_new = max(st // 2, 1), max(se // 2, 1)
            g_e *= st_new / st  # reweight the nodes so far for the new strides
            g_t *= se_new / se
            old[0], old[1] = st, se
            st, se = st_new, se_new
        if res[1] < 0:
            continue
        _finish(row, res, g_e, g_t, se, st, qe, qt, h_e, h_t, ln_t0, teff, share, dip)
        if row[FITTED] == 1.0:
            for k in range(7):  # A_V = R_V E(B−V), R_V fixed
                row[AV + k] = rv[0] * row[EBV + k]
