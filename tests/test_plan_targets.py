"""Tests of planning a target list (`redcorr plan --targets`, redcorr.target_plan, redcorr.io.targets)."""

import json

import numpy as np
import pandas as pd
import pytest
from numpy.testing import assert_allclose

from redcorr.bandpass import tophat
from redcorr.cli import main
from redcorr.exceptions import InputError, UnknownNameError
from redcorr.exposure import CAUTION, Channel, Instrument, plan_exposure
from redcorr.io import load_curve
from redcorr.io.instrument import load_instrument
from redcorr.io.maps import open_map
from redcorr.io.spectra import ab_vega_offsets, load_sed
from redcorr.io.targets import read_targets
from redcorr.target_plan import TARGET_FLAGS, plan_targets

DEMO = "demo/brume_targets.csv"
FIELDS = ("mag", "A_band", "t_clear_s", "t_dust_s", "time_factor", "snr", "limiting_mag")
BASE = ["plan", "--instrument", "demo", "--law", "f99", "--rv", "4.3"]


@pytest.fixture(scope="module")
def demo():
    from redcorr._paths import project_dir

    folder = project_dir("demo")
    instrument, curve = load_instrument("demo"), load_curve("f99", r_v=4.3)
    return folder, instrument, curve


def _write(tmp_path, text, name="targets.csv"):
    path = tmp_path / name
    path.write_text(text)
    return path


def _json(capsys, argv):
    assert main(argv) == 0
    out = capsys.readouterr()
    return json.loads(out.out), out.err


# --- each row is the single-target plan ---------------------------------------------------------

@pytest.mark.parametrize("goal", [dict(snr=50.0), dict(time=600.0)])
def test_each_row_equals_the_single_target_plan(demo, goal):
    folder, instrument, curve = demo
    targets = read_targets(folder / "brume_targets.csv", instrument, curve=curve,
                           reddening={"dust_map": open_map(folder / "brume_av_map.toml")})
    bands = instrument.band_names
    plan = plan_targets(instrument, bands, targets.mag, mag_band=targets.mag_band, sed=targets.sed,
                        a_v=targets.a_v, curve=curve, flags=targets.flags, names=targets.names, **goal)
    assert plan.t_dust_s.shape == (16, 5) and np.all(np.isfinite(plan.t_dust_s))
    for i in range(len(targets.names)):
        single = {p.band: p for p in plan_exposure(instrument, bands, float(targets.mag[i]), curve=curve,
                                                   sed=targets.sed[i], a_v=float(targets.a_v[i]),
                                                   mag_band=targets.mag_band[i], **goal)}
        for j, band in enumerate(bands):
            for field in FIELDS:
                # The same functions on the same inputs, vectorised over the targets (plan_channel, and
                # band_extinction on an array of A_V): measured identical; 1e-12 leaves room for a sum
                # taken in another order.
                assert_allclose(getattr(plan, field)[i, j], getattr(single[band], field), rtol=1e-12)
            assert plan.noise[i, j] == single[band].noise
        # the cheapest band is the single plan's first (ranked by time needed, or by S/N reached)
        assert bands[plan.best[i]] == min(single.values(), key=lambda p: p.t_dust_s if "snr" in goal
                                          else -p.snr).band


def test_cli_rows_equal_the_single_target_command(tmp_path, capsys):
    # One target of each spectrum kind; its row equals `redcorr plan` with --mag, --mag-band, --sed and --av
    # (JSON floats are exact round trips; 1e-12 as above).
    path = _write(tmp_path, "name,ra,dec,mag,mag_band,sed,a_v\nT1,101.2,-27.4,19.1,kw-v,blackbody:5800,2.5\n"
                            "T2,101.3,-27.5,17.3,kw-r,powerlaw:-1,1.25\n")
    many, err = _json(capsys, [*BASE, "--targets", str(path), "--snr", "40", "--json"])
    assert CAUTION in err
    for name, mag, band, sed, av in (("T1", "19.1", "kw-v", "blackbody:5800", "2.5"),
                                     ("T2", "17.3", "kw-r", "powerlaw:-1", "1.25")):
        one, _ = _json(capsys, [*BASE, "--mag", mag, "--mag-band", band, "--sed", sed, "--av", av, "--snr", "40",
                                "--json"])
        rows = {r["band"]: r for r in many["rows"] if r["name"] == name}
        for r in one:
            for key in ("A_band", "t_clear_s", "t_dust_s", "time_factor", "snr", "limiting_mag"):
                assert_allclose(rows[r["band"]][key], r[key], rtol=1e-12)


# --- the noise regimes, row by row ---------------------------------------------------------------

def _channel(name, **kw):
    base = dict(name=name, band=tophat(0.55, 0.1, name=name), area_m2=1.0, pixel_scale_arcsec=0.4,
                read_noise_e=0.0, dark_e_per_s=0.0, gain_e_per_adu=1e-6, sky_mag_arcsec2=35.0,
                seeing_fwhm_arcsec=1.2, aperture_radius_arcsec=1.5)
    return Channel(**{**base, **kw})


def test_time_factor_follows_the_noise_regime_row_by_row():
    # The CCD equation (Howell 2006 §4.4): source-limited t = S²/R*, so t ∝ 10^(0.4 A_band); sky-limited
    # t = S² n_pix R_sky / R*², so t ∝ 10^(0.8 A_band). A bright source on a dark sky, a faint one on a bright
    # sky; the suppressed terms add < 1e-8 (as in test_exposure), hence 1e-6.
    inst = Instrument("regimes", {"dark": _channel("dark"), "bright": _channel("bright", sky_mag_arcsec2=6.0)})
    a_v = np.array([0.0, 0.5, 1.0, 2.0, 3.0, 4.5])
    curve, sed = load_curve("ccm89"), load_sed("blackbody:6000")
    common = dict(mag_band=inst.channel("dark").band, sed=sed, a_v=a_v, curve=curve, snr=20.0)
    plan = plan_targets(inst, ["dark"], np.full(a_v.size, 5.0), **common)
    assert np.all(plan.noise == "source")
    assert_allclose(plan.time_factor[:, 0], 10 ** (0.4 * plan.A_band[:, 0]), rtol=1e-6)
    plan = plan_targets(inst, ["bright"], np.full(a_v.size, 24.0), **common)
    assert np.all(plan.noise == "sky")
    assert_allclose(plan.time_factor[:, 0], 10 ** (0.8 * plan.A_band[:, 0]), rtol=1e-6)


def test_demo_rows_lie_between_the_two_regimes(demo):
    # Any mix of noise lies between the bright-source 10^(0.4 A) and the bright-sky 10^(0.8 A) (Howell 2006
    # §4.4; common practice); 1e-9 margins let a pure regime sit on its bound despite rounding.
    folder, instrument, curve = demo
    targets = read_targets(folder / "brume_targets.csv", instrument, curve=curve, reddening={"av": 2.5})
    plan = plan_targets(instrument, instrument.band_names, targets.mag, mag_band=targets.mag_band,
                        sed=targets.sed, a_v=targets.a_v, curve=curve, snr=30.0)
    a = plan.A_band
    assert np.all(10 ** (0.4 * a) * (1 - 1e-9) <= plan.time_factor)
    assert np.all(plan.time_factor <= 10 ** (0.8 * a) * (1 + 1e-9))


# --- magnitudes, systems and spectra --------------------------------------------------------------

def test_vega_magnitudes_use_the_vega_spectrum(tmp_path, demo):
    # Definition of a Vega system (Bessell & Murphy 2012): Vega has magnitude 0 in every band, so Vega
    # at 0 Vega mag in kw-v has, in every band, the AB magnitude m_AB(Vega) = the band's AB - Vega offset.
    # Both sides are the same synthetic photometry on the packaged spectrum: 1e-9.
    _, instrument, curve = demo
    path = _write(tmp_path, "name,ra,dec,mag,mag_band,mag_system,sed\nV,101.2,-27.4,0,kw-v,vega,vega\n"
                            "A,101.2,-27.4,0,kw-v,AB,vega\n")
    targets = read_targets(path, instrument, curve=curve, reddening={"av": 1.0})
    plan = plan_targets(instrument, instrument.band_names, targets.mag, mag_band=targets.mag_band,
                        sed=targets.sed, a_v=targets.a_v, curve=curve, snr=10.0)
    offsets = ab_vega_offsets([instrument.channel(b).band for b in instrument.band_names])
    assert_allclose(plan.mag[0], [offsets[b] for b in instrument.band_names], rtol=0, atol=1e-9)
    assert_allclose(plan.mag[0] - plan.mag[1], offsets["kw-v"], rtol=0, atol=1e-12)  # one offset, added once


def test_a_spectral_type_is_a_blackbody_of_its_teff(tmp_path, demo):
    # G2V has T_eff 5770 K in the packaged dwarfs table (Pecaut & Mamajek 2013, Table 5): the G2V row
    # is planned exactly as blackbody:5770 (the same spectrum, so the same numbers, bitwise).
    _, instrument, curve = demo
    path = _write(tmp_path, "name,ra,dec,mag,sed\nG,101.2,-27.4,18,g2v\nB,101.2,-27.4,18,blackbody:5770\n")
    targets = read_targets(path, instrument, curve=curve, mag_band="kw-v", reddening={"ebv": 0.5})
    assert targets.spectra["g2v"] == "blackbody:5770"
    assert_allclose(targets.a_v, 0.5 * 4.3, rtol=1e-15)  # A_V = R_V E(B-V), definition of R_V
    plan = plan_targets(instrument, ["kw-b", "kw-i"], targets.mag, mag_band=targets.mag_band, sed=targets.sed,
                        a_v=targets.a_v, curve=curve, snr=10.0)
    for field in FIELDS:
        assert np.array_equal(getattr(plan, field)[0], getattr(plan, field)[1])


# --- output, summary and the time limit ------------------------------------------------------------

@pytest.mark.parametrize("suffix", ["csv", "parquet"])
def test_output_file_and_summary(tmp_path, capsys, suffix):
    out = tmp_path / f"plan.{suffix}"
    argv = [*BASE, "--targets", DEMO, "--map", "demo/brume_av_map.toml", "--snr", "50", "--max-time", "3600",
            "-o", str(out)]
    assert main(argv) == 0
    text = capsys.readouterr().out
    assert "Total time per band" in text and text.rstrip().endswith(CAUTION)
    table = pd.read_csv(out) if suffix == "csv" else pd.read_parquet(out)
    assert list(table.columns) == ["name", "ra", "dec", "band", "mag", "A_V", "A_band", "t_clear_s", "t_dust_s",
                                   "time_factor", "snr", "limiting_mag", "noise", "flags", "best_band"]
    assert len(table) == 16 * 5
    summary = json.loads((tmp_path / f"plan.{suffix}.summary.json").read_text())
    over = (table["flags"] & TARGET_FLAGS["over_time"]) != 0
    assert np.array_equal(over, table["t_dust_s"] > 3600)
    for band, entry in summary["bands"].items():
        ok = (table["band"] == band) & ~over
        assert entry["targets"] == ok.sum()
        # CSV holds 6 decimals of each time (TEXT_DECIMALS); Parquet the doubles: a sum of 16 at most
        assert_allclose(entry["total_s"], table.loc[ok, "t_dust_s"].sum(), rtol=1e-9)
    missed = set(summary["missed"])
    reach = table[~over].groupby("name").size()
    assert missed == set(table["name"]) - set(reach.index)
    assert missed and all(name in text for name in missed)
    assert main(argv) == 2  # the output exists: refused without --overwrite, and left whole
    assert "exists" in capsys.readouterr().err
    assert len(pd.read_csv(out) if suffix == "csv" else pd.read_parquet(out)) == 80
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]


def test_text_table_fits_100_columns(capsys):
    assert main([*BASE, "--targets", DEMO, "--av", "2.5", "--snr", "50"]) == 0
    out = capsys.readouterr().out
    rules = [line for line in out.splitlines() if line.startswith("---")]
    # 100 characters fit a laptop terminal (common practice, no source)
    assert rules and max(len(line) for line in rules) <= 100
    assert "spectral types planned as blackbodies" in out


# --- bad input ------------------------------------------------------------------------------------

@pytest.mark.parametrize(
    ("text", "message"),
    [
        ("name,mag,mag_band\nT,18,kw-v\n", "has no position columns"),
        ("name,ra,dec,mag_band\nT,101.2,-27.4,kw-v\n", "has no magnitude column"),
        ("name,ra,dec,mag,mag_band,mag_system\nT,101.2,-27.4,18,kw-v,ST\n",
         "target 'T' (row 1): mag_system='ST' is not allowed; use AB or Vega"),
        ("name,ra,dec,mag,mag_band,sed\nT,101.2,-27.4,18,kw-v,Q9V\n",
         "target 'T' (row 1): spectral_type='Q9V' is not in the intrinsic-colour table"),
        ("name,ra,dec,mag,mag_band\nT,101.2,-27.4,18,kw-q\n", "target 'T' (row 1): "),
        ("name,ra,dec,mag\nT,101.2,-27.4,18\n", "target 'T' (row 1) has no mag_band"),
    ],
)
def test_bad_target_lists_exit_2_with_one_line(tmp_path, capsys, text, message):
    path = _write(tmp_path, text)
    assert main([*BASE, "--targets", str(path), "--av", "1", "--snr", "10", "-o", str(tmp_path / "out.csv")]) == 2
    err = capsys.readouterr().err
    assert message in err and len(err.strip().splitlines()) == 1
    assert not (tmp_path / "out.csv").exists()


def test_unknown_spectral_type_is_an_unknown_name(tmp_path, demo):
    _, instrument, curve = demo
    path = _write(tmp_path, "name,ra,dec,mag,sed\nT,101.2,-27.4,18,G2X\n")
    with pytest.raises(UnknownNameError, match=r"did you mean 'G2V'"):
        read_targets(path, instrument, curve=curve, mag_band="kw-v", reddening={"av": 1.0})


def test_a_target_outside_a_partial_map_is_flagged_not_fatal(tmp_path, capsys):
    # The demo map covers the Brume Field only (demo/make_map.py): RA 105 lies outside it.
    path = _write(tmp_path, "name,ra,dec,mag,mag_band,sed\nIN,101.25,-27.40,18,kw-v,G2V\n"
                            "OUT,105.00,-27.40,18,kw-v,G2V\nNOMAG,101.25,-27.40,,kw-v,G2V\n")
    rows, _ = _json(capsys, [*BASE, "--targets", str(path), "--map", "demo/brume_av_map.toml", "--snr", "20",
                             "--json"])
    by = {}
    for r in rows["rows"]:
        by.setdefault(r["name"], []).append(r)
    assert all(r["flags"] == 0 and r["t_dust_s"] > 0 for r in by["IN"])
    assert all(r["flags"] & TARGET_FLAGS["no_reddening"] and r["t_dust_s"] is None for r in by["OUT"])
    assert all(r["flags"] & TARGET_FLAGS["no_magnitude"] and r["best_band"] == "" for r in by["NOMAG"])
    assert rows["summary"]["no_plan"] == ["OUT", "NOMAG"]


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        (["--mag", "19"], "--mag applies to one source"),
        (["--av-grid", "0", "1"], "--av-grid applies to one source"),
        (["--av", "1", "--map", "demo/brume_av_map.toml"], "give one source of reddening"),
    ],
)
def test_single_source_options_are_refused_with_a_list(capsys, extra, message):
    assert main([*BASE, "--targets", DEMO, "--snr", "10", *extra]) == 2
    assert message in capsys.readouterr().err


def test_list_options_need_a_list(capsys):
    assert main([*BASE, "--mag", "19", "--av", "1", "--snr", "10", "--max-time", "100"]) == 2
    assert "--max-time applies to a target list" in capsys.readouterr().err


def test_unreachable_snr_is_flagged_per_target(demo):
    # S/N <= sqrt(N_source) (Howell 2006 §4.4): a source at AB 39 in a 1.3 m telescope cannot reach S/N
    # 1e5 within float range, so that row is flagged, and the bright target is still planned.
    _, instrument, curve = demo
    band = instrument.channel("kw-v").band
    with pytest.warns(Warning, match="outside AB -5..40"):
        plan = plan_targets(instrument, ["kw-v"], [12.0, 45.0], mag_band=band, sed=load_sed("flat"),
                            a_v=[1.0, 1e300], curve=curve, snr=1e5)
    assert plan.flags[0, 0] == 0 and np.isfinite(plan.t_dust_s[0, 0])
    assert plan.flags[1, 0] & TARGET_FLAGS["unreachable"] and np.isinf(plan.t_dust_s[1, 0])
    assert plan.best.tolist() == [0, -1]
    with pytest.raises(InputError, match="max_time=-1 is not allowed"):
        plan_targets(instrument, ["kw-v"], [12.0], mag_band=band, sed=load_sed("flat"), a_v=[1.0], curve=curve,
                     snr=10.0, max_time=-1)


def test_demo_plans_the_brume_target_list(demo_sections):
    section = next(text for head, text in demo_sections.items() if head.startswith("A night's target list"))
    assert "BT-01" in section and "Total" not in section.splitlines()[0]
    assert "Each target in its cheapest band" in section and CAUTION in section
