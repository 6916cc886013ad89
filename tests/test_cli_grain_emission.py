"""``redcorr thermal``: the shell prints the core's temperatures, emission, τ ratios and fit, and warns.

The physics of :mod:`redcorr.grains.emission` is checked in the core's own tests; here the
command line must show exactly the core's numbers (the JSON carries full doubles, so equality
is exact), read its options into the right radiation field, warn about the stochastically
heated grains it leaves out, and draw its figure. Bad input is in tests/test_bad_input.py.
"""

import json

import numpy as np
import pytest

from redcorr.cli import main
from redcorr.grains.emission import (
    MBB_WAVE_RANGE_UM,
    emission_spectrum,
    fit_modified_blackbody,
    grain_temperatures,
    optical_depth_ratios,
)
from redcorr.grains.fields import DilutedBlackbody, MMP83Field
from redcorr.io.grains import default_cache, get_grain_model
from redcorr.thermal_summary import DEFAULT_GRID_UM, default_wave_um

MODEL = "mrn77"


def run_json(capsys, *argv):
    """``redcorr thermal ARGV --json``: the parsed output and the standard error."""
    assert main(["thermal", *argv, "--json"]) == 0
    out, err = capsys.readouterr()
    return json.loads(out), err


@pytest.fixture(scope="module")
def core():
    """The core's own results for MRN77 in the MMP83 field (U = 1) on the default wavelengths."""
    model = get_grain_model(MODEL)
    wave = default_wave_um(model)
    field = MMP83Field(1.0)
    emission = emission_spectrum(model, wave, field, cache=default_cache())
    return {
        "model": model,
        "wave": wave,
        "temperatures": grain_temperatures(model, field, cache=default_cache()),
        "emission": emission,
        "ratios": optical_depth_ratios(model, wave, cache=default_cache()),
        "fit": fit_modified_blackbody(emission.wave_um, emission.i_lam),
    }


def test_json_is_the_core_result(capsys, core):
    out, err = run_json(capsys, MODEL)
    assert out["model"] == MODEL and out["field"] == MMP83Field(1.0).name
    # temperatures: every radius of every component, exactly the core's (same function, same inputs)
    assert [c["component"] for c in out["temperatures"]] == [t.component for t in core["temperatures"]]
    for shown, t in zip(out["temperatures"], core["temperatures"], strict=True):
        assert [r["radius_um"] for r in shown["rows"]] == t.radius_um.tolist()
        assert [r["T_K"] for r in shown["rows"]] == t.temperature_k.tolist()
        assert [r["stochastic"] for r in shown["rows"]] == t.stochastic.tolist()
    # the emission table on the default grid: 1 um to 1 mm, 20 per decade (our choice)
    emission = core["emission"]
    assert DEFAULT_GRID_UM == (1.0, 1000.0, 61)
    assert [r["wavelength_um"] for r in out["rows"]] == emission.wave_um.tolist()
    assert emission.wave_um == pytest.approx(np.geomspace(1.0, 1000.0, 61), rel=1e-12)  # rounding only
    assert [r["lamI_per_H"] for r in out["rows"]] == emission.lam_i_lam.tolist()
    per_av, per_ebv = core["ratios"]
    assert [r["tau_over_AV"] for r in out["rows"]] == per_av.tolist()
    assert [r["tau_over_EBV"] for r in out["rows"]] == per_ebv.tolist()
    assert out["absorbed_per_H"] == emission.absorbed
    assert out["absorbed_stochastic_per_H"] == emission.absorbed_stochastic
    assert out["stochastic_fraction"] == emission.stochastic_fraction
    fit = core["fit"]
    assert (out["fit"]["T_K"], out["fit"]["beta"]) == (fit.temperature_k, fit.beta)
    assert (out["fit"]["sigma_T_K"], out["fit"]["sigma_beta"]) == (fit.sigma_temperature_k, fit.sigma_beta)
    assert out["fit"]["wave_range_um"] == list(MBB_WAVE_RANGE_UM) and out["fit"]["problems"] == []
    # the caution on stderr, with the share of the absorbed power left out
    assert 0 < emission.stochastic_fraction < 1  # MRN77's smallest grains are flagged (the core's criterion)
    assert f"they absorb {100 * emission.stochastic_fraction:.3g} % of the power" in err
    assert err.startswith("redcorr: warning: the emission leaves out the grains flagged stochastic")


def test_tables_show_the_same_numbers(capsys, core):
    assert main(["thermal", MODEL]) == 0
    out, err = capsys.readouterr()
    assert "leaves out the grains flagged stochastic" in err
    blocks = out.split("## ")[1:]
    assert len(blocks) == len(core["temperatures"])
    for block, t in zip(blocks, core["temperatures"], strict=True):
        assert block.startswith(f"{t.component}: 16 of its {t.radius_um.size} radii")
        lines = [line.split() for line in block.splitlines()[3:19]]
        # every 9th-10th radius, the first and the last, rounded as printed (4 significant digits, 0.01 K)
        expected = [*range(0, t.radius_um.size, 10), t.radius_um.size - 1]
        assert [float(c[0]) for c in lines] == [float(f"{a:.4g}") for a in t.radius_um[expected]]
        assert [float(c[1]) for c in lines] == [round(float(v), 2) for v in t.temperature_k[expected]]
        assert [len(c) == 3 for c in lines] == t.stochastic[expected].tolist()  # "yes" in a third column
    table = out.split("tau_over_EBV\n")[1].split("\n")[1:62]
    emission, (per_av, per_ebv) = core["emission"], core["ratios"]
    for line, w, e, a, b in zip(table, emission.wave_um, emission.lam_i_lam, per_av, per_ebv, strict=True):
        assert line.split() == [f"{w:.4g}", f"{e:.4e}", f"{a:.4e}", f"{b:.4e}"]
    fit = core["fit"]
    assert (f"fitted to the emission at {fit.n_points} wavelengths in 70-1000 um: T = {fit.temperature_k:.2f} "
            f"± {fit.sigma_temperature_k:.2g} K, beta = {fit.beta:.3f} ± {fit.sigma_beta:.2g}") in out


def test_options_make_the_field_and_wavelengths(capsys, core):
    # the default field is MMP83 x 1: the same as --scale 1, bit for bit
    default, _ = run_json(capsys, MODEL)
    assert run_json(capsys, MODEL, "--scale", "1")[0] == default
    # --wave in another unit: the rows at those wavelengths; the fit stays that of the default grid
    out, _ = run_json(capsys, MODEL, "--wave", "1e6", "2.5e6", "--unit", "AA", "--scale", "3")
    model = core["model"]
    wave = np.array([r["wavelength_um"] for r in out["rows"]])
    assert wave == pytest.approx([100.0, 250.0], rel=1e-15)  # 1 µm = 1e4 Å (definition); rounding only
    emission = emission_spectrum(model, wave, MMP83Field(3.0), cache=default_cache())
    assert [r["lamI_per_H"] for r in out["rows"]] == emission.lam_i_lam.tolist()
    on_grid = emission_spectrum(model, core["wave"], MMP83Field(3.0), cache=default_cache())
    assert out["fit"]["T_K"] == fit_modified_blackbody(on_grid.wave_um, on_grid.i_lam).temperature_k
    # a stronger field heats every grain (common practice, no source); tau/A_V does not depend on the field
    assert all(r["T_K"] > d["T_K"] for c, dc in zip(out["temperatures"], default["temperatures"], strict=True)
               for r, d in zip(c["rows"], dc["rows"], strict=True))
    assert out["rows"][1]["tau_over_AV"] == optical_depth_ratios(model, wave[1], cache=default_cache())[0]
    # a star's diluted blackbody
    star, _ = run_json(capsys, MODEL, "--star-temp", "8000", "--dilution", "1e-14", "--wave", "250")
    temps = grain_temperatures(model, DilutedBlackbody(8000.0, 1e-14), cache=default_cache())
    assert star["field"] == DilutedBlackbody(8000.0, 1e-14).name
    assert [r["T_K"] for r in star["temperatures"][0]["rows"]] == temps[0].temperature_k.tolist()


GREY = """
name = "grey-giants"
citation = "invented for the tests: 90-110 um spheres of constant n = 1.05, k = 0.3"
[[component]]
material = "file:grey.csv"
density = 3.0
n_sizes = 8
sizes = { type = "power-law", amplitude = 1e-20, q = 3.5, a_min = 90.0, a_max = 110.0 }
"""


def test_large_grey_grains_reach_the_blackbody_temperature(tmp_path, capsys):
    """A grain that absorbs and emits with the same efficiency at every wavelength reaches
    T = T_star W^(1/4) in a diluted blackbody (energy balance; common practice, no source).

    Spheres of 90-110 um with constant optical constants are grey where a 6000 K star heats
    them (0.1-5 um) and where they emit at 600 K (2-30 um): size parameters 20-7000, so their
    Q_abs is near its geometric-optics limit, within ~1 % over those ranges (it varies slowly
    with x there, so T comes out ~1 % low; tolerance 2 %, from a trial of this very model).
    """
    (tmp_path / "grey.csv").write_text("wavelength_um,n,k\n0.05,1.05,0.3\n1000.0,1.05,0.3\n")
    (tmp_path / "grey.toml").write_text(GREY)
    t_star, t_grain = 6000.0, 600.0
    dilution = (t_grain / t_star) ** 4
    out, _ = run_json(capsys, f"grain:{tmp_path / 'grey.toml'}", "--star-temp", f"{t_star:g}",
                      "--dilution", repr(dilution), "--wave", "10", "100")
    temps = [r["T_K"] for r in out["temperatures"][0]["rows"]]
    assert not any(r["stochastic"] for r in out["temperatures"][0]["rows"])  # 100 um grains hold their heat
    assert temps == pytest.approx([t_star * dilution**0.25] * 8, rel=0.02)


def test_plot_is_written(tmp_path, capsys):
    png = tmp_path / "heat.png"
    assert main(["thermal", MODEL, "--wave", "160", "--plot", str(png)]) == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # the PNG signature (PNG specification)
    assert "lamI_per_H" in capsys.readouterr().out
    assert [p.name for p in tmp_path.iterdir()] == ["heat.png"]  # no temporary left beside it
