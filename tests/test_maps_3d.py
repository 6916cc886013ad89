"""Distance-resolved (3D) dust maps: lookup in distance (redcorr.maps) and the file format (redcorr.io.maps).

The maps are written from an exponential dust disk whose cumulative reddening along a sight line
is closed-form (tests/_synthetic_maps.py, `disk_cumulative`). Linear interpolation of a function
E between nodes Δ apart errs by at most Δ²/8·max|E''| on each interval (the error of linear
interpolation; e.g. Atkinson 1989, An Introduction to Numerical Analysis, 2nd ed., Sect. 3.2;
from memory). For the disk E'' = −E0·(s/h)·exp(−r·s/h), s = |sin b|, largest in size at the
interval's near end, so the bound on [d_k, d_k+1] is Δ²/8·E0·s/h·exp(−d_k·s/h)
(`disk_second_derivative_bound`); the ramp from 0 to the first distance is one more such interval.
"""

import warnings

import astropy_healpix
import numpy as np
import pytest
from _synthetic_maps import (
    DISK_E0,
    DISK_H,
    car_cube_wcs,
    car_wcs,
    disk_cube,
    disk_cumulative,
    disk_second_derivative_bound,
    distance_table,
    write_healpix,
    write_image,
)
from astropy import units as u
from astropy.coordinates import SkyCoord
from astropy.io import fits

from redcorr.exceptions import DistanceIgnoredWarning, InputError
from redcorr.io import open_map
from redcorr.maps import (
    BEYOND_WEIGHT,
    FLAG_BEYOND,
    FLAG_NO_DISTANCE,
    FLAG_NO_POSITION,
    FLAG_OUTSIDE,
    FLAG_PARTIAL,
    DistanceSamples,
    HealpixReddeningMap,
    ImageReddeningMap,
    ImageTile,
    describe_flags,
)

DISTANCES = np.arange(50.0, 1501.0, 50.0)
"""30 map distances, 50 pc apart (the benchmark's count)."""

FLOAT32 = 2e-7
"""Relative rounding of values stored as float32 in a file (2⁻²³ ≈ 1.2e-7, with margin)."""


def _interp_bound(b_deg, d_pc, distances=DISTANCES):
    """Δ²/8·max|E''| on the map interval holding each distance (see the module docstring)."""
    edges = np.concatenate([[0.0], distances])
    k = np.clip(np.searchsorted(edges, d_pc, side="right") - 1, 0, distances.size - 1)
    step = edges[k + 1] - edges[k]
    return step**2 / 8 * disk_second_derivative_bound(b_deg, edges[k])


def _disk_healpix(nside, order, distances=DISTANCES, **kwargs):
    """Full-sky galactic HEALPix map of the disk: one profile per pixel, float64."""
    lon, lat = astropy_healpix.healpix_to_lonlat(np.arange(12 * nside**2), nside, order=order)
    values = disk_cumulative(lat.deg[:, None], distances[None, :])
    return HealpixReddeningMap(values, nside, order, frame="galactic", distances_pc=distances, **kwargs), values


def _centres(nside, order, step=7):
    index = np.arange(0, 12 * nside**2, step)
    lon, lat = astropy_healpix.healpix_to_lonlat(index, nside, order=order)
    return index, lon.deg, lat.deg


def _random_sky(n, seed, lat_range=(-90, 90)):
    rng = np.random.default_rng(seed)
    lo, hi = np.sin(np.radians(lat_range))
    return rng.uniform(0, 360, n), np.degrees(np.arcsin(rng.uniform(lo, hi, n)))


# --- interpolation in distance at pixel centres (no spatial error) ----------------------------------


@pytest.mark.parametrize("order", ["ring", "nested"])
def test_pixel_centres_recover_the_disk_to_the_linear_interpolation_bound(order):
    # At a pixel centre the spatial weights are 1 and 0, so only the interpolation in distance
    # errs: bound Δ²/8·max|E''| per interval (module docstring), plus 1e-12 for the weights being
    # 1 and 0 only to ~1e-12 after the degrees round trip (test_maps.py).
    nside = 8
    hp_map, _ = _disk_healpix(nside, order)
    index, lon, lat = _centres(nside, order, step=1)
    rng = np.random.default_rng(4)
    d = rng.uniform(0.0, DISTANCES[-1], index.size)
    got, flags = hp_map.lookup(lon, lat, frame="galactic", distance=d)
    truth = disk_cumulative(lat, d)
    bound = _interp_bound(lat, d)
    assert not flags.any()
    assert np.all(np.abs(got - truth) <= bound + 1e-12)
    # the bound is not idle: the error reaches a good part of it somewhere
    assert np.max(np.abs(got - truth) / (bound + 1e-300)) > 0.3
    # at the map's own distances the stored values come back (interpolation weight 0 or 1)
    k = rng.integers(0, DISTANCES.size, index.size)
    got, _ = hp_map.lookup(lon, lat, frame="galactic", distance=DISTANCES[k])
    np.testing.assert_allclose(got, disk_cumulative(lat, DISTANCES[k]), rtol=1e-12, atol=1e-12)


def test_ramp_from_zero_to_the_first_distance():
    # Dust begins at the Sun: E(0) = 0 and E rises linearly to the first distance,
    # E(d) = E(d_1)·d/d_1 (the interpolation defined in redcorr.maps); rounding only, 1e-12.
    hp_map, values = _disk_healpix(2, "ring")
    index, lon, lat = _centres(2, "ring", step=5)
    d = np.array([0.0, 10.0, 25.0, 49.0])[:, None]
    got, flags = hp_map.lookup(lon[None, :], lat[None, :], frame="galactic", distance=d)
    assert got.shape == (4, index.size) and not flags.any()
    np.testing.assert_array_equal(got[0], 0.0)  # bitwise: weight 0 on slice 0, nothing else
    np.testing.assert_allclose(got[1:], values[index][None, :, 0] * d[1:] / DISTANCES[0], rtol=1e-12, atol=1e-15)


def test_beyond_the_last_distance_and_without_distance():
    # Beyond the map's reach the last value with FLAG_BEYOND; at the last distance itself no flag;
    # no distance at all: the whole column the map knows, flagged (redcorr.maps flag table).
    hp_map, values = _disk_healpix(2, "nested")
    before = values.copy()
    index, lon, lat = _centres(2, "nested", step=11)
    last = values[index, -1]
    for d, flag in ((DISTANCES[-1], 0), (DISTANCES[-1] + 1.0, FLAG_BEYOND), (1e6, FLAG_BEYOND)):
        got, flags = hp_map.lookup(lon, lat, frame="galactic", distance=d)
        np.testing.assert_allclose(got, last, rtol=1e-12)  # weights 1 and 0: rounding only
        assert np.all(flags == flag)
    got, errors, flags = hp_map.lookup(lon, lat, frame="galactic", return_error=True)
    np.testing.assert_allclose(got, last, rtol=1e-12)
    assert np.all(flags == FLAG_BEYOND) and np.all(errors == 0)
    np.testing.assert_array_equal(hp_map.values, before)  # the map's own array is never written
    assert describe_flags(FLAG_BEYOND | FLAG_NO_DISTANCE) == "beyond+no-distance"


def test_unusable_distances_give_nan_and_flag():
    hp_map, _ = _disk_healpix(1, "ring")
    d = [100.0, np.nan, -5.0, np.inf, 100.0]
    lon = [10.0, 10.0, 10.0, 10.0, np.nan]
    values, errors, flags = hp_map.lookup(lon, 20.0, distance=d, return_error=True)
    assert np.isfinite(values[0]) and flags[0] == 0 and errors[0] == 0
    assert np.all(np.isnan(values[1:])) and np.all(np.isnan(errors[1:]))
    assert list(flags[1:4]) == [FLAG_NO_DISTANCE] * 3
    assert flags[4] == FLAG_NO_POSITION


def test_distance_quantity_and_broadcasting():
    # A length Quantity is converted (1 kpc = 1000 pc, IAU definition of the prefix; common
    # practice); scalar in, scalar out.
    hp_map, _ = _disk_healpix(4, "ring")
    in_pc, _ = hp_map.lookup(30.0, 40.0, frame="galactic", distance=725.0)
    in_kpc, _ = hp_map.lookup(30.0, 40.0, frame="galactic", distance=0.725 * u.kpc)
    assert np.ndim(in_kpc) == 0 and in_kpc == pytest.approx(in_pc, rel=1e-12)
    grid, flags = hp_map.lookup(np.zeros((3, 1)), [10.0, 20.0], frame="galactic", distance=[[100.0], [200.0], [300.0]])
    assert grid.shape == flags.shape == (3, 2)
    with pytest.raises(InputError, match="distance has unit deg"):
        hp_map.lookup(30.0, 40.0, distance=3 * u.deg)
    with pytest.raises(InputError, match="distance shape"):
        hp_map.lookup([1.0, 2.0], [3.0, 4.0], distance=[1.0, 2.0, 3.0])


# --- distance distributions ------------------------------------------------------------------------


def test_distance_samples_mean_and_spread_against_direct_sum():
    # Reference: the weighted mean Σ w_j E(d_j) and standard deviation sqrt(Σ w_j (E(d_j) − mean)²)
    # of the analytic E at the nodes, summed directly with numpy. The map interpolates E, so each
    # E(d_j) errs by at most the interpolation bound ε; the mean then errs by at most max ε (a
    # convex combination), and so does the standard deviation (Minkowski's inequality in the
    # weighted L2 norm: |‖X − X̄‖ − ‖Y − Ȳ‖| ≤ ‖X − Y‖ ≤ max|X − Y|). Pixel centres: no spatial error.
    nside = 4
    hp_map, _ = _disk_healpix(nside, "ring")
    index, lon, lat = _centres(nside, "ring", step=1)
    rng = np.random.default_rng(8)
    m = 24
    nodes = rng.uniform(0.0, 1400.0, (index.size, m))
    weights = rng.uniform(0.0, 1.0, (index.size, m))
    weights /= weights.sum(axis=1, keepdims=True)
    samples = DistanceSamples(nodes, weights)
    mean, spread, flags = hp_map.lookup(lon, lat, frame="galactic", distance=samples, return_error=True)
    e_nodes = disk_cumulative(lat[:, None], nodes)
    ref_mean = np.sum(weights * e_nodes, axis=1)
    ref_spread = np.sqrt(np.sum(weights * (e_nodes - ref_mean[:, None]) ** 2, axis=1))
    eps = np.max(_interp_bound(lat[:, None], nodes), axis=1) + 1e-12
    assert not flags.any()
    assert np.all(np.abs(mean - ref_mean) <= eps)
    assert np.all(np.abs(spread - ref_spread) <= eps)
    assert np.all(spread > 2 * eps)  # the spread is real, larger than the tolerance


def test_distance_samples_beyond_fraction_unusable_rows_and_exact_rows():
    # FLAG_BEYOND when more than BEYOND_WEIGHT (5 %) of the weight lies beyond the last distance
    # (redcorr.maps); a NaN row has no usable distance; a one-node distribution is an exact
    # distance, spread exactly 0.
    hp_map, _ = _disk_healpix(2, "ring")
    far = DISTANCES[-1] + 100.0
    below, above = BEYOND_WEIGHT - 0.01, BEYOND_WEIGHT + 0.01
    nodes = np.array([[500.0, far], [500.0, far], [np.nan, np.nan], [700.0, 700.0]])
    weights = np.array([[1 - below, below], [1 - above, above], [0.5, 0.5], [0.5, 0.5]])
    values, spread, flags = hp_map.lookup(
        np.full(4, 80.0), 30.0, frame="galactic", distance=DistanceSamples(nodes, weights), return_error=True
    )
    assert list(flags) == [0, FLAG_BEYOND, FLAG_NO_DISTANCE, 0]
    assert np.isnan(values[2]) and np.isnan(spread[2])
    assert spread[3] == 0.0  # bitwise: two equal nodes, Σ w (E − mean)² = 0
    exact, exact_flag = hp_map.lookup(80.0, 30.0, frame="galactic", distance=700.0)
    assert values[3] == pytest.approx(exact, rel=1e-12) and exact_flag == 0
    _, point_err, _ = hp_map.lookup(80.0, 30.0, frame="galactic", distance=DistanceSamples.point([700.0]),
                                    return_error=True)
    assert point_err == 0.0  # bitwise: one node
    with pytest.raises(InputError, match="distance holds 4 distance distributions for 3 positions"):
        hp_map.lookup(np.zeros(3), 0.0, distance=DistanceSamples(nodes, weights))


# --- spatial interpolation of whole profiles, frames, partial maps ----------------------------------


def test_random_positions_in_icrs_recover_the_disk():
    # Positions in ICRS, map galactic: astropy.coordinates carries them over. The disk does not
    # vary with l, so bilinear interpolation reduces to linear interpolation in latitude between
    # the two HEALPix rings around a position (astropy-healpix interpolates in longitude along a
    # ring, then in latitude between rings, as healpy's get_interpol; from memory); its error is
    # at most Δθ²/8·max|∂²E/∂b²| with Δθ the widest ring spacing (measured from the ring centres
    # that astropy-healpix gives), ∂²E/∂b² from the analytic E by central differences. In
    # distance the bound Δ²/8·E0/h (s ≤ 1) adds. 10° < |b| < 40°: the equatorial belt of rings,
    # and away from the disk's kink at b = 0.
    nside = 32
    hp_map, _ = _disk_healpix(nside, "ring")
    lon, lat = _random_sky(4000, seed=5, lat_range=(10, 40))
    lon = np.concatenate([lon, lon])
    lat = np.concatenate([lat, -lat])
    d = np.random.default_rng(6).uniform(0, DISTANCES[-1], lon.size)
    gal = SkyCoord(lon * u.deg, lat * u.deg, frame="galactic").icrs
    got, flags = hp_map.lookup(gal.ra.deg, gal.dec.deg, frame="icrs", distance=d)
    _, ring_lat = astropy_healpix.healpix_to_lonlat(np.arange(12 * nside**2), nside)
    rings = np.unique(np.round(ring_lat.deg, 9))
    belt = rings[(rings > 8) & (rings < 42)]
    ring_step = np.radians(np.max(np.diff(belt)))
    b = np.radians(np.linspace(8, 42, 3401))
    r = np.linspace(0, DISTANCES[-1], 301)[:, None]
    e = disk_cumulative(np.degrees(b)[None, :], r)
    e_bb = np.max(np.abs(np.diff(e, 2, axis=1))) / (b[1] - b[0]) ** 2
    bound = ring_step**2 / 8 * e_bb + (DISTANCES[1] - DISTANCES[0]) ** 2 / 8 * DISK_E0 / DISK_H
    err = np.abs(got - disk_cumulative(lat, d))
    assert not flags.any()
    assert np.max(err) <= bound
    assert np.max(err) > 0.2 * bound  # the bound is not idle
    near, _ = hp_map.lookup(gal.ra.deg, gal.dec.deg, frame="icrs", interpolation="nearest", distance=d)
    assert np.max(np.abs(near - disk_cumulative(lat, d))) > np.max(err)  # nearest is coarser


def test_partial_3d_map_flags_outside_and_rim():
    # A cone of pixels: inside it the values equal the full map's (same neighbours, same weights;
    # rounding only), outside NaN + FLAG_OUTSIDE; at the rim the remaining neighbours' profiles
    # are used with renormalised weights (FLAG_PARTIAL), as in 2D.
    nside = 16
    full, values = _disk_healpix(nside, "nested")
    pixels = astropy_healpix.HEALPix(nside, "nested").cone_search_lonlat(30 * u.deg, 20 * u.deg, 15 * u.deg)
    part = HealpixReddeningMap(values[pixels], nside, "nested", pixels=pixels, distances_pc=DISTANCES)
    lon, lat = np.full(300, 30.0), np.linspace(0.0, 40.0, 300)
    got, flags = part.lookup(lon, lat, frame="galactic", distance=600.0)
    ref, _ = full.lookup(lon, lat, frame="galactic", distance=600.0)
    ok = flags == 0
    assert ok.sum() > 100 and set(np.unique(flags)) == {0, FLAG_PARTIAL, FLAG_OUTSIDE}
    np.testing.assert_allclose(got[ok], ref[ok], rtol=1e-12)
    assert np.all(np.isnan(got[flags == FLAG_OUTSIDE]))
    rim = flags == FLAG_PARTIAL
    # renormalised weights: a weighted mean of neighbours' values, so within their range; the
    # disk varies by < 0.05 mag over the ~4° of the neighbours here (its E at 600 pc, b 5-35°)
    assert np.all(np.abs(got[rim] - disk_cumulative(lat[rim], 600.0)) < 0.05)


def test_two_d_map_given_a_distance_warns_and_ignores_it():
    flat = HealpixReddeningMap(np.full(12, 0.3), 1, "ring", unit="A_V", r_v=3.0)
    with pytest.warns(DistanceIgnoredWarning, match="no distances") as record:
        ebv, err, flags = flat.reddening_at([10.0, 20.0, 30.0], 5.0, distance=[100.0, np.nan, 5.0], return_error=True)
    assert len(record) == 1  # once per call, not per position
    np.testing.assert_allclose(ebv, 0.1, rtol=1e-12)  # E(B-V) = A_V / R_V = 0.3 / 3 (definition of R_V)
    assert np.all(err == 0) and not flags.any()
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        flat.lookup(10.0, 5.0)  # no distance, no warning


def test_a_v_map_divides_values_and_errors_by_r_v():
    hp_map, _ = _disk_healpix(2, "ring", unit="A_V", r_v=3.1, scale=2.0)
    samples = DistanceSamples([[100.0, 900.0]], [[0.5, 0.5]])
    a_v, a_err, _ = hp_map.lookup(10.0, 30.0, "galactic", distance=samples, return_error=True)
    ebv, ebv_err, _ = hp_map.reddening_at(10.0, 30.0, frame="galactic", distance=samples, return_error=True)
    # E(B-V) = A_V / R_V (definition of R_V); scale applies to both; rounding only
    assert (ebv, ebv_err) == pytest.approx((a_v / 3.1, a_err / 3.1), rel=1e-12)
    two, _ = _disk_healpix(2, "ring")
    base, base_err, _ = two.lookup(10.0, 30.0, "galactic", distance=samples, return_error=True)
    assert (a_v, a_err) == pytest.approx((2 * base, 2 * base_err), rel=1e-12)


@pytest.mark.parametrize("kind", ["exact", "samples"])
def test_threaded_chunks_give_the_single_thread_result(monkeypatch, kind):
    # Bitwise: every position is computed by the same arithmetic in whichever chunk or thread.
    import redcorr.maps._base as maps

    hp_map, _ = _disk_healpix(8, "ring")
    lon, lat = _random_sky(3001, seed=9)
    lon[::13] = np.nan
    rng = np.random.default_rng(10)
    d = rng.uniform(0, 2000, lon.size)
    d[::7] = np.nan
    dist = d if kind == "exact" else DistanceSamples(d[:, None] + rng.uniform(0, 50, (lon.size, 5)),
                                                     rng.uniform(0.1, 1, (lon.size, 5)))
    monkeypatch.setattr(maps, "_CHUNK", 400)
    monkeypatch.setattr(maps, "_MAX_THREADS", 1)
    one = hp_map.lookup(lon, lat, distance=dist, return_error=True)
    monkeypatch.setattr(maps, "_MAX_THREADS", 4)
    monkeypatch.setattr(maps, "_usable_cpus", lambda: 4)
    many = hp_map.lookup(lon, lat, distance=dist, return_error=True)
    for a, b in zip(one, many, strict=True):
        np.testing.assert_array_equal(a, b)
    assert {0, FLAG_BEYOND, FLAG_NO_DISTANCE, FLAG_NO_POSITION} <= set(np.unique(one[2]))


def test_image_cube_core_and_mixed_tiles():
    # A plate carrée cube: E does not vary with l, so bilinear is linear in b between pixel
    # centres Δb = 2° apart: error ≤ Δb²/8·max|∂²E/∂b²| (as above) plus the distance bound.
    wcs, shape = car_cube_wcs(2.0, DISTANCES[0], DISTANCES[1] - DISTANCES[0])
    cube = ImageReddeningMap([ImageTile(disk_cube(wcs, shape, DISTANCES), wcs, distances_pc=DISTANCES)])
    assert cube.has_distance and cube.tiles[0].wraps
    lon, lat = _random_sky(3000, seed=12, lat_range=(15, 75))
    d = np.random.default_rng(13).uniform(0, DISTANCES[-1], lon.size)
    got, flags = cube.lookup(lon, lat, frame="galactic", distance=d)
    b = np.radians(np.linspace(13, 77, 1281))
    e = disk_cumulative(np.degrees(b)[None, :], np.linspace(0, DISTANCES[-1], 301)[:, None])
    e_bb = np.max(np.abs(np.diff(e, 2, axis=1))) / (b[1] - b[0]) ** 2
    bound = np.radians(2.0) ** 2 / 8 * e_bb + _interp_bound(lat, d)
    assert not flags.any() and np.all(np.abs(got - disk_cumulative(lat, d)) <= bound)
    flat_wcs, flat_shape = car_wcs(2.0)
    with pytest.raises(InputError, match="image 'flat' has no distances .* share the same distances"):
        ImageReddeningMap([cube.tiles[0], ImageTile(np.zeros(flat_shape), flat_wcs, name="flat")])
    other = ImageTile(disk_cube(wcs, shape, DISTANCES), wcs, distances_pc=DISTANCES * 2, name="far")
    with pytest.raises(InputError, match="image 'far' has 30 distances"):
        ImageReddeningMap([cube.tiles[0], other])


@pytest.mark.parametrize(
    ("distances", "match"),
    [
        ([100.0, 300.0, 200.0], r"not strictly increasing: 200.0 follows 300.0"),
        ([100.0, 100.0], r"not strictly increasing"),
        ([-100.0, 200.0], r"holds -100.0; every distance must be a finite number of pc > 0"),
        ([0.0, 200.0], r"holds 0.0"),
        ([100.0, np.nan], r"holds nan"),
        (["near", "far"], r"is not numeric"),
        ([], r"one or more distances"),
    ],
)
def test_bad_map_distances_are_refused(distances, match):
    with pytest.raises(InputError, match=match):
        HealpixReddeningMap(np.ones((12, max(len(distances), 1))), 1, "ring", distances_pc=distances)


def test_profile_length_must_match_distances():
    with pytest.raises(InputError, match=r"values has shape \(12, 3\); a map of 2 distances needs shape"):
        HealpixReddeningMap(np.ones((12, 3)), 1, "ring", distances_pc=[1.0, 2.0])
    wcs, shape = car_cube_wcs(30.0, 100.0, 100.0)
    with pytest.raises(InputError, match=r"3 distances need a cube of shape \(3, ny, nx\)"):
        ImageTile(np.ones((2, *shape)), wcs, distances_pc=[100.0, 200.0, 300.0])


# --- the file format ---------------------------------------------------------------------------------


def _disk_values(nside, order, distances=DISTANCES):
    lon, lat = astropy_healpix.healpix_to_lonlat(np.arange(12 * nside**2), nside, order=order)
    return disk_cumulative(lat.deg[:, None], distances[None, :])


@pytest.mark.parametrize("order", ["RING", "NESTED"])
def test_healpix_file_full_sky_both_orderings(tmp_path, order):
    # The file's float32 values (rounding FLOAT32 relative) interpolated in distance at pixel
    # centres: within the linear interpolation bound (module docstring).
    nside = 8
    path = write_healpix(tmp_path / "disk.fits", _disk_values(nside, order.lower()), nside, order, distances=DISTANCES)
    hp_map = open_map(path)
    assert isinstance(hp_map, HealpixReddeningMap) and hp_map.has_distance and hp_map.order == order.lower()
    np.testing.assert_array_equal(hp_map.distances_pc, DISTANCES)  # bitwise: stored as float64
    assert hp_map.describe()["distances_pc"][-1] == DISTANCES[-1]
    index, lon, lat = _centres(nside, order.lower(), step=3)
    d = np.random.default_rng(21).uniform(0, DISTANCES[-1], index.size)
    got, flags = hp_map.lookup(lon, lat, frame="galactic", distance=d)
    truth = disk_cumulative(lat, d)
    assert not flags.any()
    assert np.all(np.abs(got - truth) <= _interp_bound(lat, d) + FLOAT32 * truth + 1e-12)


def test_healpix_file_partial_sky_equatorial_kpc(tmp_path):
    # Partial sky (PIXEL column, INDXSCHM EXPLICIT), COORDSYS C (ICRS), DISTANCE in kpc (converted,
    # 1 kpc = 1000 pc) and the values as float64 (TFORM 30D): the lookup at the pixel centres and at
    # the map's distances returns the stored values (rounding only: the kpc → pc conversion).
    nside = 16
    hp = astropy_healpix.HEALPix(nside, "ring", frame="icrs")
    pixels = hp.cone_search_lonlat(101.25 * u.deg, -27.4 * u.deg, 10 * u.deg)
    values = np.random.default_rng(3).uniform(0, 1, (pixels.size, DISTANCES.size)).cumsum(axis=1)
    path = write_healpix(tmp_path / "part.fits", values, nside, "RING", coordsys="C", pixels=pixels,
                         distances=DISTANCES / 1000, distance_unit="kpc", value_format="D")
    hp_map = open_map(path)
    np.testing.assert_allclose(hp_map.distances_pc, DISTANCES, rtol=1e-12)
    lon, lat = hp.healpix_to_lonlat(pixels)
    k = np.arange(pixels.size) % DISTANCES.size
    got, flags = hp_map.lookup(lon.deg, lat.deg, frame="icrs", interpolation="nearest", distance=DISTANCES[k])
    np.testing.assert_allclose(got, values[np.arange(pixels.size), k], rtol=1e-12)
    assert not flags.any()
    outside, flag = hp_map.lookup(200.0, 40.0, distance=300.0)
    assert np.isnan(outside) and flag == FLAG_OUTSIDE


def test_image_cube_file_linear_axis_and_distances_table(tmp_path):
    # Plate carrée cube, (a) distance as a linear third WCS axis, in pc and in kpc, (b) non-linear
    # distances in a DISTANCES table; also through a TOML description. Same bound as the core cube test, with
    # the float32 rounding of the file.
    step = 3.0
    wcs, shape = car_cube_wcs(step, DISTANCES[0], DISTANCES[1] - DISTANCES[0])
    linear = write_image(tmp_path / "linear.fits", disk_cube(wcs, shape, DISTANCES), wcs)
    uneven = np.geomspace(20.0, 2000.0, 25)
    table = write_image(tmp_path / "table.fits", disk_cube(wcs, shape, uneven), wcs.celestial, distances=uneven)
    in_kpc = car_cube_wcs(step, DISTANCES[0] / 1000, (DISTANCES[1] - DISTANCES[0]) / 1000, unit="kpc")[0]
    kpc = write_image(tmp_path / "kpc.fits", disk_cube(wcs, shape, DISTANCES), in_kpc)  # 1 kpc = 1000 pc
    (tmp_path / "cube.toml").write_text('name = "disk cube"\nfiles = ["table.fits"]\n')
    lon, lat = _random_sky(2000, seed=14, lat_range=(20, 70))
    b = np.radians(np.linspace(17, 73, 1121))
    for path, distances in ((linear, DISTANCES), (kpc, DISTANCES), (table, uneven), (tmp_path / "cube.toml", uneven)):
        cube = open_map(path)
        assert isinstance(cube, ImageReddeningMap)
        np.testing.assert_allclose(cube.distances_pc, distances, rtol=1e-12)
        d = np.random.default_rng(15).uniform(0, distances[-1], lon.size)
        got, flags = cube.lookup(lon, lat, frame="galactic", distance=d)
        e = disk_cumulative(np.degrees(b)[None, :], np.linspace(0, distances[-1], 401)[:, None])
        e_bb = np.max(np.abs(np.diff(e, 2, axis=1))) / (b[1] - b[0]) ** 2
        truth = disk_cumulative(lat, d)
        bound = np.radians(step) ** 2 / 8 * e_bb + _interp_bound(lat, d, distances) + FLOAT32 * truth
        assert not flags.any() and np.all(np.abs(got - truth) <= bound)


def test_unaligned_table_columns_give_the_same_lookup(tmp_path):
    # A 1-byte column before the values leaves rows 121 bytes apart: the lookup then indexes the
    # table by (row, distance) instead of its faster flat view of the memory. Both must read the
    # same numbers: bitwise equal results (the same values and the same arithmetic).
    nside = 4
    values = _disk_values(nside, "ring").astype(np.float32)
    cols = [fits.Column(name="QUALITY", format="B", array=np.zeros(values.shape[0], np.uint8)),
            fits.Column(name="EBV", format=f"{DISTANCES.size}E", array=values)]
    table = fits.BinTableHDU.from_columns(cols)
    for key, value in {"PIXTYPE": "HEALPIX", "ORDERING": "RING", "COORDSYS": "G", "NSIDE": nside}.items():
        table.header[key] = value
    odd = tmp_path / "odd.fits"
    fits.HDUList([fits.PrimaryHDU(), table, distance_table(DISTANCES)]).writeto(odd)
    plain = write_healpix(tmp_path / "plain.fits", values, nside, distances=DISTANCES)
    odd_map, plain_map = open_map(odd, column="EBV"), open_map(plain)
    assert odd_map._flat is None and plain_map._flat is not None
    lon, lat = _random_sky(500, seed=30)
    d = np.random.default_rng(31).uniform(0, 2000, lon.size)
    for a, b in zip(odd_map.lookup(lon, lat, distance=d), plain_map.lookup(lon, lat, distance=d), strict=True):
        np.testing.assert_array_equal(a, b)


def test_healpix_3d_file_is_memory_mapped(tmp_path):
    import mmap

    nside = 8
    path = write_healpix(tmp_path / "m.fits", _disk_values(nside, "ring"), nside, distances=DISTANCES)
    base = open_map(path).values
    while base is not None and not isinstance(base, mmap.mmap):
        base = getattr(base, "base", None)
    assert isinstance(base, mmap.mmap)


# --- bad files ---------------------------------------------------------------------------------------


def _healpix_3d(tmp_path, distances, name="bad.fits", per_row=3, unit="pc", fmt="D"):
    cols = [fits.Column(name="EBV", format=f"{per_row}E", array=np.ones((12, per_row), np.float32))]
    table = fits.BinTableHDU.from_columns(cols)
    for key, value in {"PIXTYPE": "HEALPIX", "ORDERING": "RING", "COORDSYS": "G", "NSIDE": 1}.items():
        table.header[key] = value
    path = tmp_path / name
    fits.HDUList([fits.PrimaryHDU(), table, distance_table(distances, unit, fmt)]).writeto(path)
    return path


@pytest.mark.parametrize(
    ("distances", "kwargs", "match"),
    [
        ([100.0, 300.0, 200.0], {}, r"bad.fits.*DISTANCES HDU: DISTANCE is not strictly increasing: 200.0 follows"),
        ([100.0, 200.0], {}, r"DISTANCES table has 2 distances but column 'EBV' holds 3 values per row"),
        ([-100.0, 100.0, 200.0], {}, r"DISTANCE holds -100.0; every distance must be a finite number of pc > 0"),
        (["a", "b", "c"], {"fmt": "1A"}, r"column 'DISTANCE' is not numeric"),
        ([100.0, 200.0, 300.0], {"unit": "deg"}, r"TUNIT1='deg' is not a length; distances in 'pc'"),
        ([100.0, 200.0, 300.0], {"unit": None}, r"column 'DISTANCE' has no unit \(TUNIT1\); 'pc' is needed"),
    ],
)
def test_bad_healpix_distance_tables(tmp_path, distances, kwargs, match):
    path = _healpix_3d(tmp_path, distances, **kwargs)
    with pytest.raises(InputError, match=match):
        open_map(path)


def test_cube_without_distance_axis_is_refused(tmp_path):
    wcs, shape = car_cube_wcs(30.0, 100.0, 100.0)
    header = wcs.to_header()
    del header["CUNIT3"]
    path = tmp_path / "nodist.fits"
    fits.PrimaryHDU(np.ones((4, *shape), np.float32), header=header).writeto(path)
    with pytest.raises(InputError, match=r"nodist.fits.*cube of 4 planes without a distance axis \(CUNIT3 is missing"):
        open_map(path)
    wcs.wcs.cunit = ["deg", "deg", "Hz"]
    hz = write_image(tmp_path / "hz.fits", np.ones((4, *shape)), wcs)
    with pytest.raises(InputError, match=r"CUNIT3='Hz' is not a length"):
        open_map(hz)
    down = car_cube_wcs(30.0, 400.0, -100.0)[0]
    falling = write_image(tmp_path / "down.fits", np.ones((4, *shape)), down)
    with pytest.raises(InputError, match=r"down.fits.*distance axis .* not strictly increasing: 300.0 follows 400.0"):
        open_map(falling)


def test_description_mixing_2d_and_3d_images_is_refused(tmp_path):
    wcs, shape = car_cube_wcs(30.0, 100.0, 100.0)
    write_image(tmp_path / "cube.fits", np.ones((3, *shape)), wcs)
    write_image(tmp_path / "flat.fits", np.ones(shape), wcs.celestial)
    desc = tmp_path / "mixed.toml"
    desc.write_text('files = ["cube.fits", "flat.fits"]\n')
    with pytest.raises(InputError, match=r"image 'flat.fits' has no distances .* image 'cube.fits' has 3 distances"):
        open_map(desc)
