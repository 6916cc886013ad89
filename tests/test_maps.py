"""Core map lookup (redcorr.maps): arrays in, values and flags out; no files."""

import astropy_healpix
import numpy as np
import pytest
from _synthetic_maps import car_wcs, healpix_values, image_values, smooth, zea_pole_wcs
from astropy import units as u
from astropy.coordinates import FK5, SkyCoord
from astropy.wcs import WCS
from published import GALACTIC_CENTRE_B1950, NGP_J2000_DEG, NODE_L_DEG

from redcorr.exceptions import InputError
from redcorr.maps import (
    FLAG_BLANK,
    FLAG_NO_POSITION,
    FLAG_OUTSIDE,
    FLAG_PARTIAL,
    HEALPIX_UNSEEN,
    INTERPOLATIONS,
    HealpixReddeningMap,
    ImageReddeningMap,
    ImageTile,
    describe_flags,
    transform_lonlat,
)


def _random_sky(n, seed=1):
    """Uniform random directions (degrees)."""
    rng = np.random.default_rng(seed)
    return rng.uniform(0, 360, n), np.degrees(np.arcsin(rng.uniform(-1, 1, n)))


def _pixel_size_rad(nside):
    """sqrt(4π / Npix), the HEALPix pixel scale (Górski et al. 2005, ApJ 622, 759, Sect. 4)."""
    return np.sqrt(4 * np.pi / (12 * nside**2))


# --- pixel indices and centres against astropy-healpix (reference library) ---------------------


@pytest.mark.parametrize("order", ["ring", "nested"])
def test_nearest_pixel_index_matches_astropy_healpix(order):
    # Reference: astropy_healpix.lonlat_to_healpix. A map whose value is its own pixel index
    # must return exactly that index under nearest-pixel lookup.
    nside = 16
    hp_map = HealpixReddeningMap(np.arange(12 * nside**2, dtype=float), nside, order, frame="galactic")
    lon, lat = _random_sky(20000)
    got, flags = hp_map.lookup(lon, lat, frame="galactic", interpolation="nearest")
    expected = astropy_healpix.lonlat_to_healpix(lon * u.deg, lat * u.deg, nside, order=order)
    # bitwise: the map's values are the pixel indices, integers exact in float64
    np.testing.assert_array_equal(got, expected)
    assert not flags.any()


@pytest.mark.parametrize("order", ["ring", "nested"])
def test_pixel_centres_return_the_pixel_value(order):
    # Reference: astropy_healpix.healpix_to_lonlat gives the pixel centres; bilinear
    # interpolation at a centre must return that pixel's own value (weight 1 there).
    nside = 32
    values = healpix_values(nside, order)
    hp_map = HealpixReddeningMap(values, nside, order, frame="galactic")
    index = np.arange(0, 12 * nside**2, 37)
    lon, lat = astropy_healpix.healpix_to_lonlat(index, nside, order=order)
    for method in ("bilinear", "nearest"):
        got, flags = hp_map.lookup(lon.deg, lat.deg, frame="galactic", interpolation=method)
        # the centres pass through degrees and back (rounding ~1e-14 rad), so the bilinear
        # weights are 1 and 0 only to ~1e-12; values are ~1, hence atol 1e-9
        np.testing.assert_allclose(got, values[index], rtol=0, atol=1e-9)
        assert not flags.any()


# --- synthetic maps: recovery of a known function ------------------------------------------------


@pytest.mark.parametrize("order", ["ring", "nested"])
def test_healpix_recovers_smooth_function_at_expected_order(order):
    # Interpolation theory (common practice, no source): the error of bilinear interpolation of a
    # smooth function falls as h², of nearest-pixel lookup as h, with h the pixel size. Doubling
    # NSIDE must cut the bilinear error ~4x and the nearest error ~2x. Bounds: max|f''| <= 1.5 and
    # max|∇f| <= 1 for this f (per radian). Within ~10° of the poles the four-neighbour scheme of
    # astropy-healpix is only first-order (measured here), so there the bilinear bound is h.
    lon, lat = _random_sky(40000)
    truth = smooth(lon, lat)
    mid = np.abs(lat) < 80
    rms, err = {}, {}
    for nside in (32, 64):
        hp_map = HealpixReddeningMap(healpix_values(nside, order), nside, order, frame="galactic")
        h = _pixel_size_rad(nside)
        for method in ("bilinear", "nearest"):
            got, flags = hp_map.lookup(lon, lat, frame="galactic", interpolation=method)
            assert not flags.any()
            rms[nside, method] = np.sqrt(np.mean((got - truth) ** 2))
            err[nside, method] = np.max(np.abs(got - truth)[mid])
        assert err[nside, "bilinear"] < 1.0 * h**2
        assert np.max(np.abs(got - truth)) < 1.0 * h  # nearest, everywhere
        assert err[nside, "nearest"] < 1.0 * h
    assert 3.0 < rms[32, "bilinear"] / rms[64, "bilinear"] < 5.0
    assert 3.0 < err[32, "bilinear"] / err[64, "bilinear"] < 5.0
    assert 1.6 < rms[32, "nearest"] / rms[64, "nearest"] < 2.5


def test_image_plate_carree_recovers_smooth_function():
    # Same expectation for images: bilinear in pixel coordinates, error ~ h² (common practice,
    # no source); positions are given in ICRS so that astropy.coordinates carries them to (l, b).
    lon, lat = _random_sky(20000, seed=3)
    lon, lat = lon[np.abs(lat) < 88], lat[np.abs(lat) < 88]
    gal = SkyCoord(lon * u.deg, lat * u.deg, frame="galactic")
    ra, dec = gal.icrs.ra.deg, gal.icrs.dec.deg
    err = {}
    for step in (2.0, 1.0):
        wcs, shape = car_wcs(step)
        image = ImageReddeningMap([ImageTile(image_values(wcs, shape), wcs)])
        assert image.tiles[0].wraps  # 360° of longitude: neighbours wrap across l = 180°
        got, flags = image.lookup(ra, dec, frame="icrs")
        assert not flags.any()
        err[step] = np.max(np.abs(got - smooth(lon, lat)))
        assert err[step] < 2 * np.radians(step) ** 2
        near, _ = image.lookup(ra, dec, frame="icrs", interpolation="nearest")
        assert np.max(np.abs(near - smooth(lon, lat))) < np.radians(step)
    assert 3.0 < err[2.0] / err[1.0] < 5.5
    seam, flag = image.lookup([179.9, -179.9], [10.0, 10.0], frame="galactic")
    assert not flag.any()
    np.testing.assert_allclose(seam, smooth(np.array([179.9, 180.1]), 10.0), atol=2 * np.radians(1.0) ** 2)


def test_partial_longitude_image_does_not_wrap():
    wcs, shape = car_wcs(10.0)
    wcs.wcs.cdelt = [-5.0, 10.0]  # 36 columns of 5°: half the sky in longitude
    tile = ImageTile(np.ones(shape), wcs)
    assert not tile.wraps
    values, flags = ImageReddeningMap([tile]).lookup([0.0, 120.0], [0.0, 0.0], frame="galactic")
    assert flags[0] == 0 and flags[1] == FLAG_OUTSIDE


def test_zenithal_hemisphere_pair_covers_the_sky():
    # Two pole-centred zenithal equal-area images (Calabretta & Greisen 2002, A&A 395, 1077,
    # Sect. 5.1.5) compose the whole sky; each answers for its own hemisphere.
    north_wcs, shape = zea_pole_wcs(True)
    south_wcs, _ = zea_pole_wcs(False)
    north = image_values(north_wcs, shape)
    south = image_values(south_wcs, shape)
    _, lat_n = north_wcs.pixel_to_world_values(*np.meshgrid(np.arange(shape[1]), np.arange(shape[0])))
    north = np.where(lat_n < 0, north + 10.0, north)  # wrong values beyond its hemisphere
    pair = ImageReddeningMap(
        [ImageTile(north, north_wcs, lat_range=(0, 90)), ImageTile(south, south_wcs, lat_range=(-90, 0))]
    )
    lon, lat = _random_sky(20000, seed=5)
    got, flags = pair.lookup(lon, lat, frame="galactic")
    away = np.abs(lat) > 3  # beyond two pixels of the seam every neighbour is in the right half
    assert not flags[away].any()
    assert np.max(np.abs(got[away] - smooth(lon, lat)[away])) < 2 * np.radians(1.0) ** 2
    assert np.all(np.isfinite(got))


# --- frames through astropy.coordinates ------------------------------------------------------------


def test_north_galactic_pole_j2000():
    # J2000 north galactic pole and the galactic longitude of the ascending node of the galactic
    # plane on the equator (ESA 1997, The Hipparcos and Tycho Catalogues, Vol. 1, Sect. 1.5.3;
    # tests/published.py). Galactic coordinates as defined by the IAU in 1958 (Blaauw et al.
    # 1960, MNRAS 121, 123). abs 1e-4 deg: the values are quoted to 1e-5 deg, and FK5 J2000 and
    # ICRS differ by the ~20 mas frame tie (6e-6 deg).
    ra, dec = NGP_J2000_DEG
    _, b = transform_lonlat(np.array([ra]), np.array([dec]), FK5(), _galactic())
    assert b[0] == pytest.approx(90.0, abs=1e-4)
    lon, b = transform_lonlat(np.array([ra + 90.0]), np.array([0.0]), FK5(), _galactic())
    assert (lon[0], b[0]) == pytest.approx((NODE_L_DEG, 0.0), abs=1e-4)


def test_galactic_centre_direction():
    # IAU 1958 system (Blaauw et al. 1960, MNRAS 121, 123; tests/published.py): l = b = 0 lies at
    # B1950 (FK4) RA 17h42.4m, Dec -28°55', quoted to 0.1 min (0.025°) and 1 arcmin (0.017°),
    # hence the tolerances.
    from astropy.coordinates import FK4

    (hours, minutes), (degrees, arcmin) = GALACTIC_CENTRE_B1950
    ra, dec = transform_lonlat(np.array([0.0]), np.array([0.0]), _galactic(), FK4(equinox="B1950"))
    assert ra[0] == pytest.approx(15 * (hours + minutes / 60), abs=0.03)
    assert dec[0] == pytest.approx(degrees - arcmin / 60, abs=0.02)


def test_lookup_in_equatorial_frames_reaches_galactic_map():
    # A galactic map holding sin(b) must give 1 at the north galactic pole asked in J2000 RA/Dec
    # (Hipparcos Vol. 1 Sect. 1.5.3; tests/published.py) and 0 on the galactic plane. abs 1e-3:
    # bilinear interpolation error ~h² = 2.6e-4 at NSIDE 64 (first order within ~10° of the pole,
    # where sin b is flat).
    nside = 64
    hp_map = HealpixReddeningMap(healpix_values(nside, "ring", lambda lon, b: np.sin(np.radians(b))), nside, "ring")
    ngp, _ = hp_map.lookup(*NGP_J2000_DEG, frame="fk5")
    assert ngp == pytest.approx(1.0, abs=1e-3)
    node = SkyCoord((NGP_J2000_DEG[0] + 90.0) * u.deg, 0 * u.deg, frame="fk5")
    value, flag = hp_map.lookup_coord(node)
    assert value == pytest.approx(0.0, abs=1e-3) and flag == 0
    assert hp_map.lookup(0.0, 0.0, frame="galactic")[0] == pytest.approx(0.0, abs=1e-3)


def _galactic():
    from astropy.coordinates import Galactic

    return Galactic()


# --- partial maps, blanks, flags -------------------------------------------------------------------


def _cone_map(order="nested", nside=64):
    """Partial map: the pixels within 10° of (l, b) = (30°, 20°)."""
    pixels = astropy_healpix.HEALPix(nside, order).cone_search_lonlat(30 * u.deg, 20 * u.deg, 10 * u.deg)
    full = healpix_values(nside, order)
    return HealpixReddeningMap(full[pixels], nside, order, pixels=pixels), HealpixReddeningMap(full, nside, order)


def test_partial_map_matches_full_map_inside_and_flags_outside():
    part, full = _cone_map()
    lon = np.array([30.0, 33.0, 30.0, 200.0, 30.0])
    lat = np.array([20.0, 18.0, 29.9, -40.0, 35.0])
    got, flags = part.lookup(lon, lat, frame="galactic")
    ref, _ = full.lookup(lon, lat, frame="galactic")
    assert list(flags[:2]) == [0, 0]
    # the same four pixels and weights from partial and full storage: rounding only
    np.testing.assert_allclose(got[:2], ref[:2], rtol=1e-12)
    assert flags[2] in (0, FLAG_PARTIAL, FLAG_OUTSIDE)  # at the rim: depends on the pixel
    assert list(flags[3:]) == [FLAG_OUTSIDE, FLAG_OUTSIDE]
    assert np.all(np.isnan(got[3:]))


def test_partial_map_rim_uses_remaining_neighbours():
    part, full = _cone_map()
    lon, lat = np.full(400, 30.0), np.linspace(28.0, 32.0, 400)
    got, flags = part.lookup(lon, lat, frame="galactic")
    assert set(np.unique(flags)) == {0, FLAG_PARTIAL, FLAG_OUTSIDE}
    rim = flags == FLAG_PARTIAL
    # renormalised weights keep the value within the range of the map's values nearby
    assert np.all(np.isfinite(got[rim]))
    assert np.all(np.abs(got[rim] - smooth(lon[rim], lat[rim])) < 0.05)
    assert np.all(np.isnan(got[flags == FLAG_OUTSIDE]))


def test_unsorted_explicit_pixels_are_accepted():
    part, _ = _cone_map()
    shuffle = np.random.default_rng(0).permutation(part.pixels.size)
    again = HealpixReddeningMap(part.values[shuffle], 64, "nested", pixels=part.pixels[shuffle])
    # bitwise: the same pixels and weights, whatever order they are stored in
    np.testing.assert_array_equal(again.lookup(31.0, 21.0, "galactic")[0], part.lookup(31.0, 21.0, "galactic")[0])


def test_blank_pixels_flag_and_nan():
    nside = 8
    values = np.ones(12 * nside**2)
    hole = astropy_healpix.lonlat_to_healpix(10 * u.deg, 10 * u.deg, nside)
    values[hole] = HEALPIX_UNSEEN
    values[hole + 1] = np.nan
    hp_map = HealpixReddeningMap(values, nside, "ring")
    got, flag = hp_map.lookup(10.0, 10.0, frame="galactic", interpolation="nearest")
    assert np.isnan(got) and flag == FLAG_BLANK
    lon, lat = astropy_healpix.healpix_to_lonlat(hole + 1, nside)
    got, flag = hp_map.lookup(lon.deg, lat.deg, frame="galactic")
    assert np.isnan(got) and flag == FLAG_BLANK
    # a quarter of the way from the next pixel in the ring towards the blank one: the blank
    # pixel carries weight, so the value comes from the others, flagged partial
    lon2, _ = astropy_healpix.healpix_to_lonlat(hole + 2, nside)
    # (the other pixels all hold 1: renormalised weights give 1 to rounding, hence 1e-12)
    near, flag = hp_map.lookup(0.75 * lon2.deg + 0.25 * lon.deg, lat.deg, frame="galactic")
    assert flag == FLAG_PARTIAL and near == pytest.approx(1.0, rel=1e-12)
    centre, flag = hp_map.lookup(lon2.deg, lat.deg, frame="galactic")  # zero weight on the blank one
    assert flag == 0 and centre == pytest.approx(1.0, rel=1e-12)


def test_image_outside_and_blank():
    wcs = WCS(naxis=2)
    wcs.wcs.ctype = ["RA---TAN", "DEC--TAN"]
    wcs.wcs.crval = [101.25, -27.4]
    wcs.wcs.crpix = [5.5, 5.5]
    wcs.wcs.cdelt = [-0.1, 0.1]
    data = np.full((10, 10), 2.0)
    data[4, 4] = np.nan  # pixel (x=4, y=4) is at the reference point minus half a pixel
    tile = ImageTile(data, wcs)
    image = ImageReddeningMap([tile], unit="A_V", r_v=4.0, scale=1.5)
    x, y = 4.0, 4.0
    ra, dec = wcs.pixel_to_world_values(x, y)
    values, flags = image.lookup([ra, 101.25, 110.0], [dec, -27.2, -27.4])
    # a uniform image of 2 scaled by 1.5: weights summing to 1 give 3 to rounding (1e-12)
    assert flags[0] == FLAG_BLANK and np.isnan(values[0])
    assert flags[1] == 0 and values[1] == pytest.approx(3.0, rel=1e-12)
    assert flags[2] == FLAG_OUTSIDE and np.isnan(values[2])
    ebv, _ = image.reddening_at(101.25, -27.2)
    assert ebv == pytest.approx(3.0 / 4.0, rel=1e-12)  # E(B-V) = A_V / R_V (definition of R_V)


def test_later_image_fills_blank_of_earlier():
    wcs, shape = car_wcs(10.0)
    first = np.full(shape, np.nan)
    second = np.full(shape, 0.5)
    image = ImageReddeningMap([ImageTile(first, wcs), ImageTile(second, wcs)])
    values, flags = image.lookup(10.0, 10.0, frame="galactic")
    assert values == pytest.approx(0.5, rel=1e-12) and flags == 0  # uniform 0.5: rounding only


def test_nan_positions_are_flagged_not_errors():
    hp_map = HealpixReddeningMap(np.ones(12), 1, "ring")
    values, flags = hp_map.lookup([np.nan, 10.0], [0.0, np.inf])
    assert np.all(np.isnan(values)) and list(flags) == [FLAG_NO_POSITION, FLAG_NO_POSITION]


@pytest.mark.parametrize("with_nan", [False, True])
def test_threaded_chunks_give_the_single_thread_result(monkeypatch, with_nan):
    # Large lookups sample chunks in threads; tiny chunks here make several of them. The result
    # (values, flags, including blank pixels and unusable positions) must not depend on it.
    # Bitwise identity is what is tested: each position is computed by the same arithmetic in
    # whichever chunk or thread it falls.
    import redcorr.maps._base as maps  # where lookup reads _CHUNK, _MAX_THREADS and _usable_cpus

    values = healpix_values(16, "ring")
    values[::7] = np.nan
    hp_map = HealpixReddeningMap(values, 16, "ring", frame="galactic")
    lon, lat = _random_sky(5003, seed=9)
    if with_nan:
        lon[::11] = np.nan
    monkeypatch.setattr(maps, "_CHUNK", 500)
    monkeypatch.setattr(maps, "_MAX_THREADS", 1)
    one = [hp_map.lookup(lon, lat, "icrs", method) for method in INTERPOLATIONS]
    monkeypatch.setattr(maps, "_MAX_THREADS", 4)
    monkeypatch.setattr(maps, "_usable_cpus", lambda: 4)
    many = [hp_map.lookup(lon, lat, "icrs", method) for method in INTERPOLATIONS]
    for (v1, f1), (v2, f2) in zip(one, many, strict=True):
        np.testing.assert_array_equal(v1, v2)
        np.testing.assert_array_equal(f1, f2)
        assert {0, FLAG_BLANK} <= set(np.unique(f1))


def test_a_position_gets_the_same_bits_alone_as_in_a_batch():
    # A catalog's rows are looked up in chunks (stream engine) or partitions (Dask) of any size;
    # a row's value must not depend on which rows come with it. The batch here mixes positions
    # whose four neighbours all have data with positions beside blank pixels (whose weights are
    # renormalised), which once made the others' sums take a different path. Bitwise identity is
    # what is tested.
    values = healpix_values(16, "ring")
    values[::7] = np.nan
    hp_map = HealpixReddeningMap(values, 16, "ring", frame="galactic")
    wcs, shape = car_wcs(2.0)
    image = image_values(wcs, shape)
    image[::5, ::3] = np.nan
    im_map = ImageReddeningMap([ImageTile(image, wcs)])
    lon, lat = _random_sky(300, seed=4)
    for dust_map in (hp_map, im_map):
        batch, flags = dust_map.lookup(lon, lat, "icrs")
        assert {0, FLAG_PARTIAL} <= set(np.unique(flags))
        alone = np.array([dust_map.lookup(lon[i], lat[i], "icrs")[0] for i in range(lon.size)])
        np.testing.assert_array_equal(batch, alone)


def test_scalar_in_scalar_out_and_broadcasting():
    hp_map = HealpixReddeningMap(np.full(12, 0.25), 1, "ring", scale=2.0)
    value, flag = hp_map.lookup(10.0, 20.0)
    assert np.ndim(value) == 0 and value == pytest.approx(0.5, rel=1e-12) and flag == 0  # 0.25 × 2
    values, flags = hp_map.lookup(np.zeros((3, 1)), np.zeros(4) * u.deg)
    assert values.shape == flags.shape == (3, 4)


def test_describe_flags():
    assert describe_flags(0) == "ok"
    assert describe_flags(FLAG_OUTSIDE) == "outside"
    assert describe_flags(FLAG_BLANK | FLAG_PARTIAL) == "blank+partial"


# --- bad input ------------------------------------------------------------------------------------


def test_latitude_beyond_pole_is_refused():
    hp_map = HealpixReddeningMap(np.ones(12), 1, "ring")
    with pytest.raises(InputError, match=r"lat_deg=95\.0 is outside the allowed range \[-90, 90\]"):
        hp_map.lookup([10.0, 20.0], [0.0, 95.0])
    with pytest.raises(InputError, match="lat_deg"):
        hp_map.lookup(0.0, -90.5, frame="galactic")


def test_non_numeric_coordinates_are_refused():
    hp_map = HealpixReddeningMap(np.ones(12), 1, "ring")
    with pytest.raises(InputError, match="lon_deg='abc' is not numeric"):
        hp_map.lookup("abc", 10.0)
    with pytest.raises(InputError, match="lat_deg has unit m"):
        hp_map.lookup(10.0, 3 * u.m)
    with pytest.raises(InputError, match="frame='nowhere' is not known"):
        hp_map.lookup(10.0, 10.0, frame="nowhere")
    with pytest.raises(InputError, match="interpolation='cubic'"):
        hp_map.lookup(10.0, 10.0, interpolation="cubic")


def test_healpix_length_must_match_nside():
    with pytest.raises(InputError, match=r"has 700 values but NSIDE=8 needs 12·NSIDE² = 768"):
        HealpixReddeningMap(np.ones(700), 8, "ring")
    with pytest.raises(InputError, match="nside=6"):
        HealpixReddeningMap(np.ones(432), 6, "ring")
    with pytest.raises(InputError, match="pixel index 768 is outside"):
        HealpixReddeningMap(np.ones(2), 8, "ring", pixels=[3, 768])
    with pytest.raises(InputError, match="appears more than once"):
        HealpixReddeningMap(np.ones(3), 8, "ring", pixels=[3, 5, 3])


def test_image_without_celestial_axes_is_refused():
    wcs = WCS(naxis=2)
    wcs.wcs.ctype = ["WAVE", "FREQ"]
    with pytest.raises(InputError, match="no celestial axes"):
        ImageTile(np.zeros((4, 4)), wcs, name="spec")


def test_unit_and_scale_are_checked():
    with pytest.raises(InputError, match="unit='mag'"):
        HealpixReddeningMap(np.ones(12), 1, unit="mag")
    with pytest.raises(InputError, match="scale=-1"):
        HealpixReddeningMap(np.ones(12), 1, scale=-1)
    with pytest.raises(InputError, match="give r_v"):
        HealpixReddeningMap(np.ones(12), 1, unit="A_V").reddening_at(0.0, 0.0)


def test_gnomonic_image_far_side_and_all_nan_chunk():
    # A gnomonic (TAN) projection has no image of the far hemisphere (Calabretta & Greisen
    # 2002, A&A 395, 1077, Sect. 5.1.3): such positions are outside, not errors.
    wcs = WCS(naxis=2)
    wcs.wcs.ctype = ["RA---TAN", "DEC--TAN"]
    wcs.wcs.crval = [101.25, -27.4]
    wcs.wcs.crpix = [5.5, 5.5]
    wcs.wcs.cdelt = [-0.1, 0.1]
    image = ImageReddeningMap([ImageTile(np.ones((10, 10)), wcs)])
    values, flags = image.lookup([281.25, 101.25], [27.4, -27.4])
    assert np.isnan(values[0]) and flags[0] == FLAG_OUTSIDE and flags[1] == 0
    values, flags = image.lookup([np.nan, np.nan], [0.0, 0.0])
    assert list(flags) == [FLAG_NO_POSITION, FLAG_NO_POSITION]
