"""``redcorr emission-map``: column and optical-depth maps to E(B-V)/A_V maps (redcorr.maps.emission,
redcorr.io.map_files), read back by ``redcorr ebv`` and ``redcorr correct``.

The ratios are checked against the values their papers give; a converted map is checked against the
input map read by the project's own map reader and divided by that published ratio.
"""

import hashlib
import json
import subprocess
import sys
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from _synthetic_maps import car_wcs, healpix_values, image_values, smooth, write_healpix, write_image
from astropy.io import fits

import redcorr
from redcorr.cli import main
from redcorr.exceptions import InputError, OutOfRangeWarning
from redcorr.grains.emission import optical_depth_ratios
from redcorr.io import open_map
from redcorr.io.grains import default_cache, get_grain_model
from redcorr.io.map_files import PROVENANCE_KEYWORDS, read_map_values
from redcorr.maps import FLAG_BLANK, FLAG_OUTSIDE, HEALPIX_UNSEEN
from redcorr.maps.emission import PUBLISHED_RATIOS, EmissionRatio, given_ratio, published_ratio, reddening_from_emission

BSD78 = 5.8e21  # N_H/E(B-V), cm-2 mag-1: Bohlin, Savage & Drake 1978, ApJ 224, 132 (abstract)
GO09 = 2.21e21  # N_H/A_V, cm-2 mag-1: Güver & Özel 2009, MNRAS 400, 2050 (abstract; from memory)
FLOAT32 = 2e-7  # the written maps hold float32: relative rounding 2^-24 ≈ 6e-8 (IEEE 754), with a margin

# positions (l, b) in degrees, away from the poles, where bilinear HEALPix lookup is second order
POSITIONS = [(10.0, 30.0), (120.0, -45.0), (250.0, 5.0), (300.0, 60.0)]


def _sha(path):
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _ebv(capsys, spec, positions=POSITIONS, extra=()):
    """``redcorr ebv --map SPEC --json`` at galactic positions: (ebv, flag) arrays."""
    argv = ["ebv", "--map", str(spec), "--json", *extra]
    for lon, lat in positions:
        argv += ["--l", str(lon), f"--b={lat}"]
    assert main(argv) == 0
    rows = json.loads(capsys.readouterr().out)
    return np.array([np.nan if r["ebv"] is None else r["ebv"] for r in rows]), np.array([r["flag"] for r in rows])


def _input_at(path, positions=POSITIONS):
    """The input map's own values at the positions, read by redcorr's map reader (as if it held E(B-V))."""
    lon, lat = np.array(positions).T
    return open_map(path).reddening_at(lon, lat, frame="galactic")[0]


# --------------------------------------------------------------------------- the ratios and the core
def test_published_ratios_are_the_papers_values():
    # Bohlin, Savage & Drake 1978, ApJ 224, 132: N(HI + H2)/E(B-V) = 5.8e21 cm-2 mag-1
    assert published_ratio("bsd78").per_ebv == BSD78 and published_ratio("bsd78").quantity == "N_H"
    # Rachford et al. 2009, ApJS 180, 125: 5.94e21 (from memory)
    assert published_ratio("rachford09").per_ebv == 5.94e21
    # Liszt 2014, ApJ 780, 10: N(HI)/E(B-V) = 8.3e21 at low reddening (from memory)
    assert published_ratio("liszt14").per_ebv == 8.3e21 and published_ratio("liszt14").quantity == "N(HI)"
    # Güver & Özel 2009, MNRAS 400, 2050: N_H/A_V = 2.21e21 (from memory)
    assert published_ratio("guver-ozel09").per_av == GO09 and published_ratio("guver-ozel09").per_ebv is None
    assert all(r.citation and r.note for r in PUBLISHED_RATIOS.values())


def test_bsd78_round_trip():
    # Bohlin, Savage & Drake 1978: N_H = 5.8e21 cm-2 is E(B-V) = 1 mag
    out = reddening_from_emission(BSD78, published_ratio("bsd78"))
    assert out.values == pytest.approx(1.0, abs=5e-4) and f"{float(out.values):.3f}" == "1.000"
    # A_V = R_V E(B-V), R_V = 3.1 the diffuse-ISM mean (common practice, no source)
    out = reddening_from_emission(BSD78 * np.ones((2, 3)), published_ratio("bsd78"), unit="A_V", r_v=3.1)
    assert out.values.shape == (2, 3) and np.allclose(out.values, 3.1) and out.r_v == 3.1


def test_guver_ozel_gives_a_v_and_needs_r_v_for_e_b_v():
    ratio = published_ratio("guver-ozel09")
    # Güver & Özel 2009: N_H = 2.21e21 A_V
    assert reddening_from_emission(GO09, ratio, unit="A_V").values == pytest.approx(1.0)
    with pytest.raises(InputError, match=r"r_v \(R_V = A_V/E\(B-V\)\) is needed"):
        reddening_from_emission(GO09, ratio)
    # E(B-V) = A_V / R_V (definition of R_V, common practice, no source)
    assert reddening_from_emission(GO09, ratio, r_v=3.1).values == pytest.approx(1 / 3.1)


def test_r_v_is_refused_where_it_would_not_be_used():
    with pytest.raises(InputError, match=r"r_v=3.1 is not used"):
        reddening_from_emission(BSD78, published_ratio("bsd78"), r_v=3.1)
    both = EmissionRatio("model", "tau", 3e-4, 1e-4, "mag-1", "as a grain model gives", wave_um=250.0)
    assert both.r_v == pytest.approx(3.0)  # R_V = (tau/E(B-V)) / (tau/A_V), by definition
    with pytest.raises(InputError, match=r"its R_V is 3"):
        reddening_from_emission(1e-4, both, r_v=3.1)


def test_blank_infinite_and_negative_values_are_counted_never_hidden():
    # BSD78 ratio: 5.8e21 cm-2 is E(B-V) = 1; NaN and masked are blank (the map conventions, redcorr.maps)
    values = np.ma.masked_array([5.8e21, np.nan, np.inf, -1e20, 1.16e22, 0.0], mask=[0, 0, 0, 0, 1, 0])
    before = values.copy()
    out = reddening_from_emission(values, published_ratio("bsd78"))
    assert (out.blank, out.non_finite, out.negative, out.converted) == (2, 1, 1, 2)
    assert np.isnan(out.values[[1, 2, 3, 4]]).all() and out.values[[0, 5]].tolist() == [1.0, 0.0]
    kept = reddening_from_emission(values, published_ratio("bsd78"), negative="keep")
    assert kept.negative == 1 and kept.values[3] == pytest.approx(-1e20 / BSD78) and kept.converted == 3
    assert np.array_equal(values.data, before.data, equal_nan=True)  # the input is never changed
    assert out.stats() == {"min": 0.0, "median": 0.5, "max": 1.0}


def test_implausible_units_and_the_ratios_range_warn():
    with pytest.warns(OutOfRangeWarning, match="units of 1e20"):  # a map in units of 1e20 cm-2
        reddening_from_emission([58.0, 30.0], published_ratio("bsd78"))
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert reddening_from_emission([58.0], published_ratio("bsd78"), scale=1e20).values == pytest.approx(1.0)
    with pytest.warns(OutOfRangeWarning, match="optically thin"):  # far-infrared tau >> 1 is no optical depth
        reddening_from_emission([30.0], given_ratio("tau", per_ebv=1e-4, wave_um=250.0))
    # Liszt 2014: the N(HI) ratio holds at low reddening only (E(B-V) below about 0.1, from memory)
    with pytest.warns(OutOfRangeWarning, match="1 pixel"):
        out = reddening_from_emission([8.3e20, 8.3e21], published_ratio("liszt14"))
    assert out.above_limit == 1


# --------------------------------------------------------------------------- the command on map files
def test_healpix_partial_map_converted_and_read_back(tmp_path, capsys):
    nside = 32
    pixels = np.arange(11 * nside**2)  # without base pixel 11 (b < 0, l 270-360): a partial map, PIXEL column
    n_h = healpix_values(nside, "nested")[pixels] * BSD78
    n_h[5] = np.nan
    n_h[7] = HEALPIX_UNSEEN
    src = write_healpix(tmp_path / "nh.fits", n_h, nside, "NESTED", pixels=pixels, column="NH")
    before = _sha(src)
    out = tmp_path / "ebv.fits"
    assert main(["emission-map", str(src), str(out)]) == 0
    printed = capsys.readouterr().out
    assert "bsd78" in printed and "Bohlin, Savage & Drake 1978" in printed and "Caution" in printed
    assert "converted" in printed and "blank in INPUT" in printed
    assert _sha(src) == before
    with fits.open(out) as hdul:
        table = hdul[1]
        assert (table.header["NSIDE"], table.header["ORDERING"], table.header["COORDSYS"]) == (nside, "NESTED", "G")
        assert table.columns.names == ["PIXEL", "EBV"] and np.array_equal(table.data["PIXEL"], pixels)
        ebv = table.data["EBV"]
        assert (ebv[[5, 7]] == np.float32(HEALPIX_UNSEEN)).all()  # blank in, blank out
    # value / ratio, as redcorr's reader sees both maps (Bohlin, Savage & Drake 1978)
    got, flag = _ebv(capsys, out, POSITIONS + [(300.0, -40.0)])
    np.testing.assert_allclose(got[:-1], _input_at(src) / BSD78, rtol=FLOAT32)
    assert (flag[:-1] == 0).all() and np.isnan(got[-1]) and flag[-1] == FLAG_OUTSIDE  # not in the partial map


def test_full_sky_vector_cells_keep_their_layout(tmp_path, capsys):
    nside = 16
    src = write_healpix(tmp_path / "nh.fits", healpix_values(nside, "ring") * BSD78, nside, "RING", per_row=64)
    out = tmp_path / "ebv.fits"
    assert main(["emission-map", str(src), str(out)]) == 0
    capsys.readouterr()
    with fits.open(out) as hdul:
        assert hdul[1].columns["EBV"].format == "64E" and len(hdul[1].data) == 12 * nside**2 // 64
        assert hdul[1].header["ORDERING"] == "RING"
    got, _ = _ebv(capsys, out)
    np.testing.assert_allclose(got, _input_at(src) / BSD78, rtol=FLOAT32)
    # and the values are the smooth test function the map was made of, to the bilinear error at NSIDE 16:
    # pixels sqrt(4π/3072) = 0.064 rad, the function's second derivatives ~1 per rad², so an error of
    # order h²/2 ~ 2e-3 (interpolation error bound, common practice, no source); 5e-3 with a margin
    lon, lat = np.array(POSITIONS).T
    np.testing.assert_allclose(got, smooth(lon, lat), atol=5e-3)


def test_wcs_image_to_a_v_with_its_description(tmp_path, capsys):
    wcs, shape = car_wcs(2.0)
    n_h = image_values(wcs, shape) * GO09
    n_h[45, 90] = np.nan  # the pixel at (l, b) = (-1, +1) deg, i.e. l = 359
    src = write_image(tmp_path / "nh.fits", n_h, wcs)
    out = tmp_path / "av.fits"
    argv = ["emission-map", str(src), str(out), "--ratio", "guver-ozel09", "--to", "av", "--rv", "3.1"]
    assert main(argv) == 0
    printed = capsys.readouterr().out
    assert "use --map" in printed and "av.toml" in printed
    dust = open_map(tmp_path / "av.toml")
    assert dust.unit == "A_V" and dust.r_v == 3.1
    with fits.open(out) as hdul:
        header = hdul[0].header
        assert header["CTYPE1"] == "GLON-CAR" and header["CDELT2"] == 2.0 and header["BUNIT"] == "mag"
        assert header["RCRV"] == 3.1 and header["RCQUANT"] == "A_V" and header["RCRATIO"] == GO09
    # E(B-V) = N_H / 2.21e21 / R_V (Güver & Özel 2009; R_V's definition)
    got, flag = _ebv(capsys, tmp_path / "av.toml")
    np.testing.assert_allclose(got, _input_at(src) / GO09 / 3.1, rtol=FLOAT32)
    assert (flag == 0).all()
    got, flag = _ebv(capsys, tmp_path / "av.toml", [(359.0, 1.0)], ["--interpolation", "nearest"])
    assert np.isnan(got[0]) and flag[0] == FLAG_BLANK  # masked in, masked out


def test_header_provenance(tmp_path, capsys):
    wcs, shape = car_wcs(5.0)
    src = write_image(tmp_path / "tau.fits", image_values(wcs, shape) * 1e-4, wcs)
    out = tmp_path / "ebv.fits"
    assert main(["emission-map", str(src), str(out), "--wave", "353", "--per-ebv", "1.5e-4"]) == 0
    capsys.readouterr()
    header = fits.getheader(out)
    for key in PROVENANCE_KEYWORDS:
        if key != "RCRV":  # no R_V: a ratio per E(B-V) giving E(B-V)
            assert key in header, key
    assert (header["RCSOURCE"], header["RCINQTY"], header["RCINWAVE"]) == ("tau.fits", "tau", 353.0)
    assert (header["RCRATIO"], header["RCCITE"], header["RCQUANT"]) == (1.5e-4, "given by the user", "E(B-V)")
    assert header["RCVERS"] == redcorr.__version__ and "RCRV" not in header
    assert any("emission-map" in h for h in header["HISTORY"])
    assert not (tmp_path / "ebv.toml").exists()  # an E(B-V) map needs no description


def test_published_citation_in_header_is_ascii(tmp_path, capsys):
    nside = 4
    src = write_healpix(tmp_path / "nh.fits", healpix_values(nside, "ring") * GO09, nside)
    assert main(["emission-map", str(src), str(tmp_path / "av.fits"), "--ratio", "guver-ozel09", "--to", "av"]) == 0
    assert "give --rv" in capsys.readouterr().out  # an A_V map without R_V: E(B-V) needs one later
    header = fits.getheader(tmp_path / "av.fits", 1)
    # header records are printable ASCII only (FITS Standard 4.0, IAU FITS Working Group 2016, §4.1)
    assert header["RCCITE"] == "Guver & Ozel 2009, MNRAS 400, 2050"
    assert "r_v" not in (tmp_path / "av.toml").read_text()


def test_output_whole_or_nothing_and_overwrite(tmp_path, capsys):
    # the project's output rules (redcorr.io._atomic): an existing output is kept unless --overwrite
    nside = 4
    src = write_healpix(tmp_path / "nh.fits", healpix_values(nside, "ring") * BSD78, nside)
    out = tmp_path / "ebv.fits"
    assert main(["emission-map", str(src), str(out)]) == 0
    first = _sha(out)
    assert main(["emission-map", str(src), str(out), "--ratio", "rachford09"]) == 2
    assert "exists" in capsys.readouterr().err and _sha(out) == first
    assert main(["emission-map", str(src), str(out), "--ratio", "rachford09", "--overwrite"]) == 0
    assert fits.getheader(out, 1)["RCRATNM"] == "rachford09"
    # an A_V map is two files: when its description cannot be placed, neither is
    (tmp_path / "av.toml").write_text("# someone's file\n")
    assert main(["emission-map", str(src), str(tmp_path / "av.fits"), "--to", "av", "--rv", "3.1"]) == 2
    assert not (tmp_path / "av.fits").exists() and (tmp_path / "av.toml").read_text() == "# someone's file\n"
    names = sorted(p.name for p in tmp_path.iterdir())
    assert names == ["av.toml", "ebv.fits", "nh.fits"]


def test_correct_uses_the_converted_map(tmp_path, capsys):
    nside = 32
    src = write_healpix(tmp_path / "nh.fits", healpix_values(nside, "nested") * BSD78, nside, "NESTED")
    out = tmp_path / "ebv.fits"
    assert main(["emission-map", str(src), str(out)]) == 0
    lon, lat = np.array(POSITIONS).T
    catalog = pd.DataFrame({"l": lon, "b": lat, "kw_v": 15.0, "e_kw_v": 0.01})
    catalog.to_csv(tmp_path / "in.csv", index=False)
    argv = ["correct", str(tmp_path / "in.csv"), str(tmp_path / "o.csv"), "--band", "kw-v", "--map", str(out),
            "--lon-col", "l", "--lat-col", "b", "--frame", "galactic"]
    assert main(argv) == 0, capsys.readouterr().err
    used = pd.read_csv(tmp_path / "o.csv")["ebv_used"].to_numpy()
    np.testing.assert_allclose(used, _input_at(src) / BSD78, rtol=1e-5)  # the CSV keeps 6 digits


def test_read_map_values_refuses_a_distance_resolved_map(tmp_path):
    nside = 4
    values = np.repeat(healpix_values(nside, "ring")[:, None], 3, axis=1)
    src = write_healpix(tmp_path / "cube.fits", values, nside, distances=[100.0, 200.0, 300.0])
    with pytest.raises(InputError, match="distance-resolved"):
        read_map_values(src)


# --------------------------------------------------------------------------- the grain-model path
def test_grain_model_ratio_divides_the_optical_depth(tmp_path, capsys):
    wave = 250.0
    per_av, per_ebv = optical_depth_ratios(get_grain_model("wd01-rv3.1"), wave, cache=default_cache())
    per_av, per_ebv = float(np.ravel(per_av)[0]), float(np.ravel(per_ebv)[0])
    # WD01 R_V = 3.1 dust (Weingartner & Draine 2001, ApJ 548, 296): A_V/E(B-V) near 3.1; 0.3 allows for
    # the model's R_V being monochromatic at 0.44/0.55 um rather than through B and V filters
    assert per_ebv / per_av == pytest.approx(3.1, abs=0.3)
    wcs, shape = car_wcs(5.0)
    tau = image_values(wcs, shape) * per_ebv * 0.5
    src = write_image(tmp_path / "tau.fits", tau, wcs)
    out = tmp_path / "ebv.fits"
    assert main(["emission-map", str(src), str(out), "--grain", "wd01-rv3.1", "--wave", str(wave)]) == 0
    capsys.readouterr()
    # E(B-V) = tau / (tau/E(B-V)) with the model's ratio
    with fits.open(out) as hdul:
        np.testing.assert_allclose(hdul[0].data, (tau / per_ebv).astype(np.float32), rtol=FLOAT32)
        assert hdul[0].header["RCRATIO"] == pytest.approx(per_ebv)
    av = tmp_path / "av.fits"
    assert main(["emission-map", str(src), str(av), "--grain", "wd01-rv3.1", "--wave", str(wave), "--to", "av"]) == 0
    capsys.readouterr()
    dust = open_map(tmp_path / "av.toml")
    assert dust.r_v == pytest.approx(per_ebv / per_av)
    np.testing.assert_allclose(fits.getdata(av), (tau / per_av).astype(np.float32), rtol=FLOAT32)


# --------------------------------------------------------------------------- the demo
def test_make_emission_map_is_deterministic(tmp_path):
    demo = Path(__file__).resolve().parent.parent / "demo"
    subprocess.run([sys.executable, str(demo / "make_emission_map.py"), str(tmp_path)], check=True, capture_output=True)
    name = "brume_tau250_zea.fits"
    assert (tmp_path / name).read_bytes() == (demo / name).read_bytes()
    assert (demo / name).stat().st_size < 256 * 1024


def test_demo_section_compares_with_the_reddening_map(demo_sections):
    [out] = [text for title, text in demo_sections.items() if "dust emission" in title]
    assert "from_tau/map" in out and "Caution" in out and "blank" in out
    assert "redcorr emission-map demo/brume_tau250_zea.fits" in out
