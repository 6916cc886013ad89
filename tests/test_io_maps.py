"""Reading dust maps from files (redcorr.io.maps): HEALPix tables, WCS images, TOML descriptions."""

import mmap

import astropy_healpix
import numpy as np
import pytest
from _synthetic_maps import (
    car_wcs,
    healpix_values,
    image_values,
    smooth,
    write_healpix,
    write_image,
    zea_pole_wcs,
)
from astropy import units as u
from astropy.io import fits
from astropy.table import Table
from astropy.wcs import WCS

from redcorr.exceptions import InputError
from redcorr.io import open_map
from redcorr.io.maps import read_healpix_table, read_image_map
from redcorr.maps import FLAG_OUTSIDE, HealpixReddeningMap, ImageReddeningMap


def _sky(n, seed=2):
    rng = np.random.default_rng(seed)
    return rng.uniform(0, 360, n), np.degrees(np.arcsin(rng.uniform(-0.95, 0.95, n)))


def _memory_mapped(array):
    base = array
    while base is not None:
        if isinstance(base, mmap.mmap):
            return True
        base = getattr(base, "base", None)
    return False


@pytest.mark.parametrize("order", ["RING", "NESTED"])
def test_healpix_file_recovers_function_both_orderings(tmp_path, order):
    # Synthetic map from a known f(l, b); bilinear accuracy ~h² away from the poles (see
    # test_maps.py for the convergence check; common practice, no source).
    nside = 64
    path = write_healpix(tmp_path / "m.fits", healpix_values(nside, order.lower()), nside, order)
    hp_map = open_map(path)
    assert isinstance(hp_map, HealpixReddeningMap) and hp_map.order == order.lower() and hp_map.frame.name == "galactic"
    lon, lat = _sky(5000)
    got, flags = hp_map.lookup(lon, lat, frame="galactic")
    h = np.sqrt(4 * np.pi / (12 * nside**2))
    assert not flags.any() and np.max(np.abs(got - smooth(lon, lat))) < h**2


def test_healpix_file_is_memory_mapped_and_left_unchanged(tmp_path):
    nside = 32
    path = write_healpix(tmp_path / "m.fits", healpix_values(nside, "ring"), nside)
    before = path.read_bytes()
    hp_map = open_map(path)
    assert _memory_mapped(hp_map.values)
    hp_map.lookup(10.0, 20.0)
    assert path.read_bytes() == before


def test_healpix_vector_cells_and_column_choice(tmp_path):
    # HEALPix software often writes 1024 values per row; a second column is chosen by name.
    nside = 16
    values = healpix_values(nside, "ring")
    cols = [
        fits.Column(name="A_V", format="1024E", array=(3.1 * values).reshape(-1, 1024).astype(np.float32)),
        fits.Column(name="EBV", format="1024E", array=values.reshape(-1, 1024).astype(np.float32)),
    ]
    table = fits.BinTableHDU.from_columns(cols)
    for key, value in {"PIXTYPE": "HEALPIX", "ORDERING": "RING", "COORDSYS": "GALACTIC", "NSIDE": nside}.items():
        table.header[key] = value
    path = tmp_path / "v.fits"
    fits.HDUList([fits.PrimaryHDU(), table]).writeto(path)
    first = open_map(path, interpolation="nearest")
    chosen = open_map(path, column="ebv", interpolation="nearest")
    by_number = open_map(path, column=1, interpolation="nearest")
    index = astropy_healpix.lonlat_to_healpix(40 * u.deg, 20 * u.deg, nside)
    # rel 1e-6: the file stores float32 (relative rounding 6e-8)
    assert first.lookup(40.0, 20.0, "galactic")[0] == pytest.approx(3.1 * values[index], rel=1e-6)
    assert chosen.lookup(40.0, 20.0, "galactic")[0] == pytest.approx(values[index], rel=1e-6)
    assert by_number.lookup(40.0, 20.0, "galactic")[0] == pytest.approx(values[index], rel=1e-6)
    with pytest.raises(InputError, match="column='dust' is not in"):
        open_map(path, column="dust")


def test_healpix_partial_explicit_equatorial(tmp_path):
    # COORDSYS 'C' (equatorial) is read as ICRS; a partial map flags positions it lacks.
    nside = 64
    hp = astropy_healpix.HEALPix(nside, "nested", frame="icrs")
    pixels = hp.cone_search_lonlat(101.25 * u.deg, -27.4 * u.deg, 5 * u.deg)
    values = np.full(pixels.size, 0.4)
    path = write_healpix(tmp_path / "p.fits", values, nside, "NESTED", coordsys="C", pixels=pixels)
    hp_map = open_map(path)
    assert hp_map.frame.name == "icrs" and hp_map.pixels.size == pixels.size
    got, flags = hp_map.lookup([101.25, 200.0], [-27.4, 10.0])
    assert got[0] == pytest.approx(0.4, rel=1e-6) and flags[0] == 0  # 0.4 stored as float32
    assert np.isnan(got[1]) and flags[1] == FLAG_OUTSIDE


def test_healpix_partial_by_firstpix_lastpix(tmp_path):
    nside = 4
    values = np.arange(10, 30, dtype=float)
    path = write_healpix(tmp_path / "f.fits", values, nside, extra={"FIRSTPIX": 10, "LASTPIX": 29, "OBJECT": "PARTIAL"})
    hp_map = open_map(path, interpolation="nearest")
    lon, lat = astropy_healpix.healpix_to_lonlat([15, 100], nside)
    got, flags = hp_map.lookup(lon.deg, lat.deg, "galactic")
    # bitwise: nearest pixel, and 15 is exact in float32
    assert got[0] == 15 and flags[0] == 0 and flags[1] == FLAG_OUTSIDE


def test_image_files_plate_carree_and_hemisphere_pair(tmp_path):
    car, shape = car_wcs(2.0)
    one = write_image(tmp_path / "car.fits", image_values(car, shape), car)
    lon, lat = _sky(3000)
    car_map = open_map(one)
    assert _memory_mapped(car_map.tiles[0].data)
    got, flags = car_map.lookup(lon, lat, frame="galactic")
    assert not flags.any() and np.max(np.abs(got - smooth(lon, lat))) < 2 * np.radians(2.0) ** 2
    # Two pole-centred ZEA images: given together they answer for their own hemispheres
    # (read_image_map's default for a pole-centred zenithal image among several).
    paths = []
    for north in (True, False):
        wcs, zshape = zea_pole_wcs(north, n=91, step=2.0)
        data = image_values(wcs, zshape)
        _, lat_pix = wcs.pixel_to_world_values(*np.meshgrid(np.arange(zshape[1]), np.arange(zshape[0])))
        wrong_side = lat_pix < 0 if north else lat_pix > 0
        paths.append(write_image(tmp_path / f"zea_{north}.fits", np.where(wrong_side, -5.0, data), wcs))
    pair = open_map(paths)
    assert isinstance(pair, ImageReddeningMap) and [t.lat_range for t in pair.tiles] == [(0.0, 90.0), (-90.0, 0.0)]
    got, flags = pair.lookup(lon, lat, frame="galactic")
    away = np.abs(lat) > 5
    assert not flags[away].any()
    assert np.max(np.abs(got[away] - smooth(lon, lat)[away])) < 2 * np.radians(2.0) ** 2


def test_image_with_degenerate_third_axis(tmp_path):
    wcs = WCS(naxis=3)
    wcs.wcs.ctype = ["RA---TAN", "DEC--TAN", "FREQ"]
    wcs.wcs.crval = [10.0, 20.0, 1e9]
    wcs.wcs.crpix = [3, 3, 1]
    wcs.wcs.cdelt = [-0.1, 0.1, 1e6]
    path = tmp_path / "cube.fits"
    fits.PrimaryHDU(np.full((1, 5, 5), 0.7, dtype=np.float32), header=wcs.to_header()).writeto(path)
    value, flag = open_map(path).lookup(10.0, 20.0)
    assert value == pytest.approx(0.7, rel=1e-6) and flag == 0  # 0.7 stored as float32


def test_description_file(tmp_path):
    nside = 16
    write_healpix(tmp_path / "m.fits", healpix_values(nside, "ring"), nside, column="AV")
    desc = tmp_path / "m.toml"
    desc.write_text(
        'name = "test map"\nunit = "A_V"\nr_v = 3.1\nscale = 2.0\ninterpolation = "nearest"\nfiles = ["m.fits"]\n'
    )
    hp_map = open_map(desc)
    assert (hp_map.name, hp_map.unit, hp_map.r_v, hp_map.scale, hp_map.interpolation) == (
        "test map",
        "A_V",
        3.1,
        2.0,
        "nearest",
    )
    index = astropy_healpix.lonlat_to_healpix(40 * u.deg, 20 * u.deg, nside)
    # rel 1e-6: the file stores float32 (relative rounding 6e-8)
    expected = 2.0 * healpix_values(nside, "ring")[index]
    assert hp_map.lookup(40.0, 20.0, "galactic")[0] == pytest.approx(expected, rel=1e-6)
    assert hp_map.reddening_at(40.0, 20.0, frame="galactic")[0] == pytest.approx(expected / 3.1, rel=1e-6)
    assert open_map(desc, scale=1.0).scale == 1.0  # arguments win over the file (stored as given)


def test_description_with_hemisphere_tables(tmp_path):
    wcs, shape = zea_pole_wcs(True, n=21, step=1.0)
    write_image(tmp_path / "n.fits", np.full(shape, 1.0), wcs)
    desc = tmp_path / "d.toml"
    desc.write_text('files = [{path = "n.fits", hemisphere = "all"}]\n')
    assert open_map(desc).tiles[0].lat_range is None
    desc.write_text('[[files]]\npath = "n.fits"\nhemisphere = "north"\n')
    assert open_map(desc).tiles[0].lat_range == (0.0, 90.0)


def test_description_bad_keys(tmp_path):
    desc = tmp_path / "d.toml"
    desc.write_text('files = ["m.fits"]\ncolour = "red"\n')
    with pytest.raises(InputError, match="unknown key 'colour'"):
        open_map(desc)
    desc.write_text('unit = "A_V"\n')
    with pytest.raises(InputError, match="'files' must list"):
        open_map(desc)
    desc.write_text('files = [{path = "m.fits", size = 3}]\n')
    with pytest.raises(InputError, match="unknown file key 'size'"):
        open_map(desc)
    desc.write_text('files = ["missing.fits"]\n')
    with pytest.raises(InputError, match="does not exist"):
        open_map(desc)


# --- bad input ------------------------------------------------------------------------------------


def test_fits_file_that_is_not_a_map(tmp_path):
    catalog = tmp_path / "catalog.fits"
    Table({"ra": [1.0, 2.0], "dec": [3.0, 4.0]}).write(catalog)
    with pytest.raises(InputError, match="is not a map"):
        open_map(catalog)
    text = tmp_path / "notes.fits"
    text.write_text("not FITS at all\n")
    with pytest.raises(InputError, match="not a readable FITS file"):
        open_map(text)
    with pytest.raises(InputError, match="does not exist"):
        open_map(tmp_path / "nothing.fits")


def test_healpix_table_length_must_match_nside(tmp_path):
    path = write_healpix(tmp_path / "short.fits", np.ones(700), 8)
    with pytest.raises(InputError, match=r"short.fits.*700 values but NSIDE=8 needs 12·NSIDE² = 768"):
        open_map(path)


def test_healpix_header_must_say_ordering_and_frame(tmp_path):
    path = write_healpix(tmp_path / "o.fits", np.ones(12), 1, order="DIAGONAL")
    with pytest.raises(InputError, match="ORDERING='DIAGONAL'"):
        open_map(path)
    path = write_healpix(tmp_path / "c.fits", np.ones(12), 1, coordsys="")
    with pytest.raises(InputError, match="COORDSYS is missing"):
        open_map(path)


def test_wcs_image_without_celestial_axes(tmp_path):
    path = tmp_path / "plain.fits"
    fits.PrimaryHDU(np.zeros((8, 8), dtype=np.float32)).writeto(path)
    with pytest.raises(InputError, match="no celestial WCS axes"):
        open_map(path)
    wcs = WCS(naxis=2)
    wcs.wcs.ctype = ["WAVE", "TIME"]
    spec = tmp_path / "spec.fits"
    fits.PrimaryHDU(np.zeros((8, 8), dtype=np.float32), header=wcs.to_header()).writeto(spec)
    with pytest.raises(InputError, match="no celestial WCS axes"):
        read_image_map([spec])


def test_positions_outside_partial_map_are_nan_and_flagged(tmp_path):
    wcs = WCS(naxis=2)
    wcs.wcs.ctype = ["RA---ZEA", "DEC--ZEA"]
    wcs.wcs.crval = [101.25, -27.4]
    wcs.wcs.crpix = [10.5, 10.5]
    wcs.wcs.cdelt = [-0.05, 0.05]
    path = write_image(tmp_path / "field.fits", np.full((20, 20), 0.6), wcs)
    values, flags = open_map(path).lookup([101.25, 0.0, 101.25], [-27.4, 0.0, 60.0])
    assert values[0] == pytest.approx(0.6, rel=1e-6) and flags[0] == 0  # 0.6 stored as float32
    assert np.all(np.isnan(values[1:])) and np.all(flags[1:] == FLAG_OUTSIDE)


def test_healpix_file_cannot_be_one_of_several_images(tmp_path):
    hp = write_healpix(tmp_path / "h.fits", np.ones(12), 1)
    car, shape = car_wcs(10.0)
    im = write_image(tmp_path / "i.fits", np.ones(shape), car)
    with pytest.raises(InputError, match="is a HEALPix table"):
        open_map([im, hp])
    with pytest.raises(InputError, match="no HEALPix table"):
        read_healpix_table(im)
