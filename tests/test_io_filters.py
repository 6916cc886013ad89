"""Tests of redcorr.io.filters: band names, user files and the project's filters/ folder."""

import numpy as np
import pytest
from astropy import units as u
from astropy.table import Table
from numpy.testing import assert_allclose

from redcorr.exceptions import InputError, UnknownNameError
from redcorr.io.filters import list_bands, load_band, read_band_file, write_band_file

KW = ["kw-b", "kw-v", "kw-r", "kw-i", "kw-z"]


def test_list_has_project_and_speclite_bands():
    names = list_bands()
    assert names[:5] == sorted(KW)
    for name in ("bessell-V", "sdss2010-r", "twomass-Ks", "gaiadr3-G"):
        assert name in names


@pytest.mark.parametrize("name, centre", list(zip(KW, [0.44, 0.545, 0.64, 0.80, 0.90], strict=True)))
def test_kw_cam_filters_are_valid_and_documented(name, centre):
    # Centres from demo/scenario.toml (invented instrument); the tabulated curves are not
    # symmetric, so their pivots sit up to 0.006 µm from the nominal centres (measured), hence 0.01.
    band = load_band(name)
    assert band.convention == "photon"
    assert not band.truncated
    assert "Invented" in band.provenance
    assert abs(band.pivot_um - centre) < 0.01
    table = Table.read(f"filters/{name}.ecsv")
    assert table["wavelength"].unit == u.nm and "source" in table.meta


def test_names_are_case_insensitive():
    assert load_band("BESSELL-v").name == "bessell-V"
    assert load_band("KW-V").name == "kw-v"


def test_unknown_band_suggests_close_names():
    with pytest.raises(UnknownNameError, match="did you mean 'sdss2010-r'"):
        load_band("sdss-r")


def test_synthetic_specs():
    # a top-hat's width is 0.1 up to its 1e-9 edge ramps; a Gaussian's mean is its centre by
    # symmetry (rounding only); see test_bandpass
    assert_allclose(load_band("tophat:0.55:0.1").width_um, 0.1, rtol=1e-8)
    assert_allclose(load_band("gauss:0.55:0.1").mean_um, 0.55, rtol=1e-9)
    for bad in ("tophat:0.55", "tophat:a:0.1", "gauss:0.5:2", "tophat:0.5:-1"):
        with pytest.raises(InputError):
            load_band(bad)


def test_product_spec():
    band = load_band("kw-v * tophat:0.55:0.05")
    assert band.name == "kw-v * tophat:0.55:0.05"
    # inside the top-hat the product is kw-v times exactly 1: rounding only
    assert_allclose(band(0.55), load_band("kw-v")(0.55), rtol=1e-12)
    assert band(0.6) == 0.0  # exactly zero outside the top-hat


def test_ecsv_round_trip(tmp_path):
    band = load_band("gauss:0.7:0.05")
    path = tmp_path / "g.ecsv"
    write_band_file(band, path)
    back = read_band_file(path)
    # ECSV text round-trips doubles; 1e-14 allows a unit conversion on the way
    assert_allclose(back.wave_um, band.wave_um, rtol=1e-14)
    assert_allclose(back.pivot_um, band.pivot_um, rtol=1e-12)
    assert back.name == "file:g.ecsv"


def test_energy_convention_from_meta(tmp_path):
    path = tmp_path / "e.ecsv"
    t = Table({"wavelength": [400.0, 500.0, 600.0] * u.nm, "response": [0.0, 1.0, 0.0]})
    t.meta["convention"] = "energy"
    t.meta["source"] = "test"
    t.write(path)
    band = load_band(f"file:{path}")
    assert band.convention == "energy" and band.provenance == "e.ecsv: test"


def test_csv_unit_from_column_name_and_text_unit_given(tmp_path):
    csv = tmp_path / "f.csv"
    csv.write_text("wavelength_nm,response\n400,0\n500,1\n600,0\n")
    # a symmetric triangle has its mean at its peak; nm or Å → µm: rounding only
    assert_allclose(load_band(f"file:{csv}").mean_um, 0.5, rtol=1e-12)
    txt = tmp_path / "f.dat"
    txt.write_text("# a filter\n4000 0\n5000 1\n6000 0\n")
    assert_allclose(load_band(f"file:{txt}[AA]").mean_um, 0.5, rtol=1e-12)
    with pytest.raises(InputError, match=r"\[nm\]"):
        load_band(f"file:{txt}")


def test_decreasing_file_is_reversed(tmp_path):
    txt = tmp_path / "f.dat"
    txt.write_text("0.6 0\n0.5 1\n0.4 0\n")
    band = load_band(f"file:{txt}[um]")
    assert np.all(np.diff(band.wave_um) > 0)


def test_frequency_file(tmp_path):
    path = tmp_path / "nu.ecsv"
    nu = (([0.6, 0.5, 0.4] * u.um).to(u.THz, equivalencies=u.spectral()))
    Table({"wavelength": nu, "response": [0.0, 1.0, 0.0]}).write(path)
    # µm → THz → µm through astropy's spectral equivalency: rounding only
    assert_allclose(load_band(f"file:{path}").wave_um, [0.4, 0.5, 0.6], rtol=1e-12)


@pytest.mark.parametrize(
    "name, text, match",
    [
        ("bad.ecsv", "# %ECSV 1.0\n# ---\n# garbage: [\nx y\n", "could not be read"),
        ("bad.csv", "wavelength_nm,trans\n400,0\n500,1\n600,0\n", "response"),
        ("bad.csv", "wavelength_nm,response\n400,0\n500,x\n600,0\n", "numeric"),
        ("bad.dat", "0.4 0 1\n0.5 1 1\n0.6 0 1\n", "two columns"),
        ("bad.dat", "0.4 0\n0.5 oops\n", "could not be read"),
        ("neg.csv", "wavelength_nm,response\n400,0\n500,-0.2\n600,0\n", "negative"),
        ("short.csv", "wavelength_nm,response\n400,0\n500,1\n", "at least 3"),
        ("order.csv", "wavelength_nm,response\n400,0\n600,1\n500,0\n", "increase"),
        ("unit.csv", "wavelength_kg,response\n1,0\n2,1\n3,0\n", "unit"),
    ],
)
def test_malformed_filter_files(tmp_path, name, text, match):
    path = tmp_path / name
    path.write_text(text)
    with pytest.raises(InputError, match=match):
        load_band(f"file:{path}[nm]" if name.endswith(".dat") and "oops" not in text else f"file:{path}")


def test_missing_file():
    with pytest.raises(InputError, match="does not exist"):
        load_band("file:/no/such/filter.ecsv")


def test_filters_folder_override(tmp_path, monkeypatch):
    t = Table({"wavelength": [400.0, 500.0, 600.0] * u.nm, "response": [0.0, 1.0, 0.0]})
    t.write(tmp_path / "my-x.ecsv")
    monkeypatch.setenv("REDCORR_FILTERS_DIR", str(tmp_path))
    assert "my-x" in list_bands() and "kw-v" not in list_bands()
    assert_allclose(load_band("my-x").mean_um, 0.5, rtol=1e-12)  # symmetric triangle: rounding only
