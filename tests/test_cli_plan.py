"""Tests of `redcorr plan` (in-process) and the planner's use of the band extinction."""

import json

import numpy as np
import pytest
from numpy.testing import assert_allclose
from published import AB_ZERO_POINT_JY

from redcorr.cli import main
from redcorr.exceptions import OutOfRangeWarning
from redcorr.exposure import CAUTION, plan_exposure
from redcorr.extinction import band_extinction
from redcorr.io import load_curve
from redcorr.io.instrument import load_instrument
from redcorr.io.spectra import load_sed

KEYS = ["band", "A_band", "t_clear_s", "t_dust_s", "time_factor", "snr", "limiting_mag"]
BASE = ["plan", "--instrument", "demo", "--mag", "19", "--av", "2.5", "--law", "f99", "--rv", "4.3"]


def _json(capsys, argv):
    assert main(argv) == 0
    out = capsys.readouterr()
    return json.loads(out.out), out.err


def test_json_has_exactly_the_documented_keys_one_object_per_band(capsys):
    rows, err = _json(capsys, [*BASE, "--band", "kw-v", "--band", "kw-i", "--snr", "20", "--json"])
    assert sorted(r["band"] for r in rows) == ["kw-i", "kw-v"]
    for r in rows:
        assert list(r) == KEYS
        # Between the read/source-limited 10^(0.4 A) and the sky-limited 10^(0.8 A)
        # (common practice, no source; see the CCD equation); the 1e-9 margins let a pure
        # regime sit on its bound despite rounding.
        assert 10 ** (0.4 * r["A_band"]) * (1 - 1e-9) <= r["time_factor"] <= 10 ** (0.8 * r["A_band"]) * (1 + 1e-9)
        assert r["snr"] == 20  # the requested S/N, echoed exactly
    assert [r["t_dust_s"] for r in rows] == sorted(r["t_dust_s"] for r in rows)  # ranked by time needed
    assert CAUTION in err


def test_planner_takes_a_band_from_band_extinction():
    # The planner never re-derives extinction: its A_band is band_extinction's for the SED
    # through the system throughput (band_extinction is checked against independent quadrature
    # in test_extinction). The same call on the same inputs: rounding at most, 1e-12.
    from redcorr.exposure import plan_exposure

    inst = load_instrument("demo")
    curve, sed = load_curve("f99", r_v=4.3), load_sed("blackbody:5800")
    plans = plan_exposure(inst, ["kw-b", "kw-z"], 19.0, curve=curve, sed=sed, a_v=2.5, snr=10.0)
    for p in plans:
        expected = band_extinction(curve, inst.channel(p.band).band, sed, 2.5)
        assert_allclose(p.A_band, expected, rtol=1e-12)
    assert {p.band for p in plans} == {"kw-b", "kw-z"}
    assert plans[0].t_dust_s <= plans[1].t_dust_s  # ranked by time needed


def test_time_mode_reports_snr_and_depth(capsys):
    rows, _ = _json(capsys, [*BASE, "--band", "kw-r", "--time", "600", "--json"])
    (r,) = rows
    assert r["t_dust_s"] == 600  # the requested time, echoed exactly
    assert r["snr"] > 0 and r["t_clear_s"] < 600
    assert_allclose(r["time_factor"], 600 / r["t_clear_s"], rtol=1e-12)  # one division: rounding


def test_ebv_is_av_over_rv(capsys):
    a, _ = _json(capsys, [*BASE, "--band", "kw-v", "--snr", "10", "--json"])
    argv = [x for x in BASE if x not in ("--av", "2.5")] + [
        "--ebv",
        str(2.5 / 4.3),
        "--band",
        "kw-v",
        "--snr",
        "10",
        "--json",
    ]
    b, _ = _json(capsys, argv)
    # A_V = R_V E(B-V) (definition of R_V) recovers 2.5 to the last bit or two; the band
    # integral then differs by rounding only, far below 1e-9
    assert_allclose(a[0]["A_band"], b[0]["A_band"], rtol=1e-9)


def test_mag_band_carries_the_magnitude_with_the_sed_colour(capsys):
    # A flat F_nu source has the same AB magnitude in every band (AB definition, Oke & Gunn 1983).
    # The colour transferring the magnitude from kw-v to kw-b is a ratio of band integrals that
    # cancels to quadrature precision (~1e-10), hence 1e-9.
    flat, _ = _json(capsys, [*BASE, "--band", "kw-b", "--snr", "10", "--mag-band", "kw-v", "--json"])
    same, _ = _json(capsys, [*BASE, "--band", "kw-b", "--snr", "10", "--json"])
    assert_allclose(flat[0]["t_clear_s"], same[0]["t_clear_s"], rtol=1e-9)
    red, _ = _json(
        capsys, [*BASE, "--band", "kw-b", "--snr", "10", "--mag-band", "kw-v", "--sed", "blackbody:3500", "--json"]
    )
    assert red[0]["t_clear_s"] > flat[0]["t_clear_s"]  # a cool star is fainter in B than in V


def test_text_output_table_ranking_av_grid_and_caution(capsys):
    assert main([*BASE, "--snr", "30", "--av-grid", "0", "2.5", "5"]) == 0
    out = capsys.readouterr().out
    assert "Ranked by time needed:" in out
    assert "against A_V" in out
    # times from a minute up carry their human form (common practice, no source: 3600 s = 1 h, 86400 s = 1 d)
    grid = out.split("against A_V:")[1]
    assert " min)" in grid and (" h)" in grid or " d)" in grid)
    assert out.rstrip().endswith(CAUTION)
    for band in ("kw-b", "kw-v", "kw-r", "kw-i", "kw-z"):
        assert band in out


def test_plots_are_png(tmp_path, capsys):
    snr_png, av_png = tmp_path / "snr.png", tmp_path / "av.png"
    assert main([*BASE, "--snr", "10", "--plot", str(snr_png), "--av-plot", str(av_png)]) == 0
    for path in (snr_png, av_png):
        assert path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert not list(tmp_path.glob("*.part*"))


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (["--time", "-5"], "argument --time: '-5' is not allowed; it must be a number > 0 s"),
        (["--time", "0"], "argument --time: '0' is not allowed; it must be a number > 0 s"),
        (["--snr", "0"], "argument --snr: '0' is not allowed"),
        (["--snr", "-2"], "argument --snr: '-2' is not allowed"),
        (["--snr", "5", "--band", "kw-q"], "band='kw-q' is not a band of instrument"),
        (["--snr", "5", "--ebv", "0.1"], None),  # --av and --ebv together: argparse usage error
        (["--snr", "5", "--limit-snr", "0"], "argument --limit-snr: '0' is not allowed"),
    ],
)
def test_bad_input_exits_2_with_one_line(capsys, extra, message):
    assert main([*BASE, *extra]) == 2
    err = capsys.readouterr().err
    if message:
        assert message in err
        assert len([line for line in err.splitlines() if not line.startswith(("usage:", " "))]) == 1


def test_missing_sky_value_in_a_user_instrument(tmp_path, capsys):
    text = (
        "[telescope]\naperture_m = 1.0\n[camera]\npixel_scale_arcsec = 0.5\nread_noise_e = 5\n"
        "dark_e_per_s = 0.0\ngain_e_per_adu = 1.0\n[site]\nseeing_fwhm_arcsec = 1.0\n"
        '[photometry]\naperture_radius_arcsec = 1.5\n[bands.v]\nfilter = "tophat:0.55:0.09"\n'
        "extinction_mag_per_airmass = 0.1\n"
    )
    path = tmp_path / "nosky.toml"
    path.write_text(text)
    assert main(["plan", "--instrument", str(path), "--mag", "18", "--av", "1", "--snr", "10"]) == 2
    assert "sky_mag_arcsec2 is missing" in capsys.readouterr().err


def test_demo_plans_the_brume_field_target(demo_output):
    assert "Exposure planning" in demo_output and CAUTION in demo_output


def test_grain_model_fixes_its_own_rv(capsys):
    argv = ["plan", "--instrument", "demo", "--mag", "19", "--av", "1", "--grain", "x", "--rv", "3.1", "--snr", "5"]
    assert main(argv) == 2
    assert "--rv=3.1 applies to a law" in capsys.readouterr().err


def test_flux_calibrated_spectrum_gives_the_ab_magnitude(tmp_path, capsys):
    # AB definition (Oke & Gunn 1983; tests/published.py): a flat F_nu = 3631 Jy 10^(-0.4 m) has AB
    # magnitude m in every band, so --calibrated with such a spectrum must plan exactly like --mag m.
    from astropy import units as u
    from astropy.table import Table

    lam = np.linspace(0.3, 1.2, 901) * u.um
    path = tmp_path / "flat18.ecsv"
    Table({"wavelength": lam, "flux": np.full(lam.size, AB_ZERO_POINT_JY * 10 ** (-0.4 * 18.0)) * u.Jy}).write(path)
    common = ["plan", "--instrument", "demo", "--av", "1", "--snr", "20", "--json", "--sed", f"file:{path}"]
    calibrated, _ = _json(capsys, [*common, "--calibrated"])
    given, _ = _json(capsys, [*common, "--mag", "18"])
    for a, b in zip(calibrated, given, strict=True):
        assert a["band"] == b["band"]
        assert_allclose(a["t_dust_s"], b["t_dust_s"], rtol=1e-4)  # linear interpolation of the table
    assert main([*common[:-2], "--sed", "flat", "--calibrated"]) == 2
    assert "--calibrated needs file:PATH" in capsys.readouterr().err


def test_time_vs_av_table_starts_at_the_clear_time_and_grows(capsys):
    from redcorr.exposure import plan_exposure, time_vs_av

    inst = load_instrument("demo")
    curve, sed = load_curve("f99", r_v=4.3), load_sed("blackbody:5800")
    grid, times, a_band = time_vs_av(
        inst, ["kw-v", "kw-i"], 19.0, curve=curve, sed=sed, a_v=[0.0, 1.0, 2.5, 6.0], snr=50.0
    )
    plans = {p.band: p for p in plan_exposure(inst, ["kw-v", "kw-i"], 19.0, curve=curve, sed=sed, a_v=2.5, snr=50.0)}
    for band in ("kw-v", "kw-i"):
        # the same computation through two entry points, the table's A_b from band_extinction on
        # an array of A_V (measured identical; 1e-12, and 1e-9 where A_b enters, leave room for
        # a vectorised sum taken in another order)
        assert_allclose(times[band][0], plans[band].t_clear_s, rtol=1e-12)
        assert_allclose(times[band][2], plans[band].t_dust_s, rtol=1e-9)
        assert np.all(np.diff(times[band]) > 0) and a_band[band][0] == 0
    # In time mode the bands are ranked by the S/N they reach.
    rows, _ = _json(capsys, [*BASE, "--time", "300", "--json"])
    assert [r["snr"] for r in rows] == sorted((r["snr"] for r in rows), reverse=True)


@pytest.mark.parametrize(("mag", "warned"), [(18.0, False), (-12.0, True), (45.0, True)])
def test_an_implausible_calibrated_source_is_warned_about(tmp_path, capsys, mag, warned):
    # A flat F_nu = 3631 Jy 10^(-0.4 m) has AB magnitude m in every band (Oke & Gunn 1983); a spectrum
    # normalised to 1 in flux units is what gives magnitudes like these -12 (the issue saw -19.8).
    from astropy import units as u
    from astropy.table import Table

    lam = np.linspace(0.3, 1.2, 91) * u.um
    path = tmp_path / "spectrum.ecsv"
    Table({"wavelength": lam, "flux": np.full(lam.size, AB_ZERO_POINT_JY * 10 ** (-0.4 * mag)) * u.Jy}).write(path)
    argv = ["plan", "--instrument", "demo", "--band", "kw-v", "--av", "1", "--time", "100", "--calibrated",
            "--sed", f"file:{path}"]
    assert main(argv) == 0
    err = capsys.readouterr().err
    assert ("warning: source AB magnitude outside -5..40" in err) is warned
    if warned:
        assert f"kw-v {mag:.3g}" in err and "unit and scale" in err


def test_plan_exposure_warns_for_an_implausible_magnitude():
    instrument = load_instrument("demo")
    common = dict(curve=load_curve("f99"), sed=load_sed("flat"), a_v=1.0, time=100.0)
    with pytest.warns(OutOfRangeWarning, match="implausible for a point source"):
        plan_exposure(instrument, ["kw-v"], -6.0, **common)
    plan_exposure(instrument, ["kw-v"], -4.0, **common)  # within the span: no warning (the suite makes one an error)


def test_times_in_the_plan_table_have_a_human_form(capsys):
    assert main([*BASE, "--band", "kw-b", "--snr", "50"]) == 0
    out = capsys.readouterr().out
    row = next(line for line in out.splitlines() if line.startswith("kw-b "))
    # kw-b needs over an hour here: a time of a minute or more is followed by its form in the largest
    # unit that keeps it >= 1 (60 s, 3600 s, 86400 s; common practice, no source), 3 significant digits
    # (t_clear_s, under a minute here, has none)
    cells = row.split()
    t_clear, t_dust = float(cells[3]), float(cells[4])
    assert t_clear < 60 and t_dust >= 3600 and cells[5:7] == [f"({t_dust / 3600:.3g}", "h)"]


@pytest.mark.parametrize(
    ("seconds", "text"),
    # unit sizes: 60 s, 3600 s, 86400 s, 365.25 d (common practice, no source); 3 significant digits
    [(42.0, "42 s"), (90.0, "1.5 min"), (7200.0, "2 h"), (1.658e7, "192 d"), (3.15576e9, "100 yr")],
)
def test_human_time(seconds, text):
    from redcorr._format import human_time, time_cell

    assert human_time(seconds) == text
    assert time_cell(seconds) == (f"{seconds:.4g} ({text})" if seconds >= 60 else f"{seconds:.4g}")
