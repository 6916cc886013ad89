"""The grain CLI, load_curve with grain models, and TOML model files."""

import json

import numpy as np
import pytest
from published import DRAINE03_RENORMALIZATION, WD01_CASE_A_B_C

from redcorr.cli import main
from redcorr.exceptions import InputError, UnknownNameError
from redcorr.grains import GrainCurve
from redcorr.io import load_curve, read_grain_model
from redcorr.io.grains import get_grain_model

pytestmark = pytest.mark.usefixtures("private_cache")  # tests/conftest.py


def test_grain_json(capsys):
    assert main(["grain", "mrn77", "--wave", "0.44", "0.55", "2.2", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out) == {"R_V", "rows"}
    assert [set(r) for r in out["rows"]] == [{"wavelength_um", "A_over_AV", "albedo", "g"}] * 3
    rows = out["rows"]
    # Monochromatic R_V = A(0.55)/[A(0.44) - A(0.55)] (the definitions R_V = A_V/E(B-V) and
    # E(B-V) = A_B - A_V at the B and V wavelengths; common practice, no source). The JSON
    # carries full doubles, so only the rounding of 1/(x - 1) separates the two (1e-12).
    assert out["R_V"] == pytest.approx(1 / (rows[0]["A_over_AV"] - 1), rel=1e-12)
    assert rows[1]["A_over_AV"] == pytest.approx(1.0, rel=1e-12)  # normalised at V: rounding only
    assert all(0 < r["albedo"] < 1 and -1 < r["g"] < 1 for r in rows)


def test_grain_units_and_table(capsys):
    assert main(["grain", "mrn77", "--wave", "5500", "--unit", "AA"]) == 0
    out = capsys.readouterr().out
    assert "R_V =" in out and "C_ext_per_H" in out and "0.5500" in out


def test_grain_list(capsys):
    assert main(["grain", "--list", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert [m["name"] for m in out["models"]] == ["mrn77", "wd01-rv3.1", "wd01-rv4.0", "wd01-rv5.5"]
    assert {m["name"] for m in out["materials"]} == {"silicate-d03", "graphite-d03", "silicate-ld93", "graphite-ld93"}
    assert main(["grain", "--list"]) == 0
    assert "wd01-rv5.5" in capsys.readouterr().out


def test_grain_plot(tmp_path, capsys):
    png = tmp_path / "mrn.png"
    assert main(["grain", "mrn77", "--plot", str(png)]) == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


@pytest.mark.parametrize(
    ("argv", "match"),
    [
        (["grain", "wd01-rv3"], "--wave is missing"),
        (["grain"], "MODEL is missing"),
        (["grain", "wd01-rv9", "--wave", "1"], "grain model='wd01-rv9' is not known"),
        (["grain", "mrn77", "--wave", "-1"], "not a positive wavelength"),
        (["grain", "mrn77", "--wave", "5000"], "outside the optical constants"),
        (["grain", "grain:/nonexistent/model.toml", "--wave", "1"], "does not exist"),
    ],
)
def test_grain_errors(capsys, argv, match):
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert match in err and err.count("\n") == 1


def test_curve_command_takes_grain_models(capsys):
    assert main(["curve", "mrn77", "--wave", "0.44", "0.55", "--json"]) == 0
    rows = json.loads(capsys.readouterr().out)
    assert rows[1]["A_over_AV"] == pytest.approx(1.0, rel=1e-12)  # normalised at V: rounding only
    # A/E(B-V) at B is R_V + 1 for a monochromatic R_V (definition; common practice, no source);
    # rounding only
    assert rows[0]["A_over_EBV"] == pytest.approx(rows[1]["A_over_EBV"] + 1, rel=1e-12)


def test_load_curve_names_and_r_v():
    curve = load_curve("MRN77")
    assert isinstance(curve, GrainCurve) and curve.name == "mrn77"
    # an r_v matching the model's own to 3 decimals is accepted, and the model's own value is
    # kept bitwise (the argument only checks, it never overrides)
    assert load_curve("mrn77", r_v=round(curve.r_v, 3)).r_v == curve.r_v
    with pytest.raises(InputError, match="r_v=3.1 cannot be set for grain model 'mrn77'"):
        load_curve("mrn77", r_v=3.1)
    assert load_curve("ccm89", r_v=3.1).name == "ccm89"  # laws still resolve


# The Draine (2003) R_V = 5.5 mixture written out from its published parameters
# (tests/published.py: WD01 Table 1 b_C, Draine 2003 renormalization).
_WD01_55 = f'r_v = 5.5, b_c = {WD01_CASE_A_B_C["5.5"]}, scale = {DRAINE03_RENORMALIZATION["5.5"]}'
MODEL_TOML = f"""
name = "brume-test"
citation = "written for the tests"

[[component]]
material = "silicate-d03"
sizes = {{ type = "wd01-silicate", {_WD01_55} }}

[[component]]
material = "graphite-d03"
sizes = {{ type = "wd01-carbonaceous", {_WD01_55} }}
pah = {{ ionized_fraction = 0.5 }}
"""


def test_toml_model_reproduces_named_model(tmp_path):
    path = tmp_path / "m.toml"
    path.write_text(MODEL_TOML)
    mine = read_grain_model(path)
    assert mine.name == "brume-test" and len(mine.components) == 2
    wave = np.array([0.2, 0.55, 1.0])
    # the named model must be the published mixture: the same inputs through the same code,
    # equal to rounding (1e-12)
    np.testing.assert_allclose(
        mine.optics(wave, cache=None).c_ext,
        get_grain_model("wd01-rv5.5").optics(wave, cache=None).c_ext,
        rtol=1e-12,
    )
    curve = load_curve(f"grain:{path}")
    assert curve.name == "brume-test" and curve(0.55) == pytest.approx(1.0, rel=1e-12)  # normalised at V


def test_toml_every_size_type_and_file_material(tmp_path):
    (tmp_path / "ice.csv").write_text("wavelength_um,n,k\n0.05,1.3,0.1\n1.0,1.31,0.001\n200.0,1.2,0.1\n")
    (tmp_path / "sizes.csv").write_text("a_um,dnda\n0.01,1e-10\n0.1,1e-13\n")
    path = tmp_path / "all.toml"
    path.write_text("""
[[component]]
material = "silicate-ld93"
sizes = { type = "mrn", component = "silicate" }
[[component]]
material = "graphite-ld93"
sizes = { type = "power-law", amplitude = 1e-14, q = 3.5, a_min = 0.005, a_max = 0.25 }
[[component]]
material = "file:ice.csv"
density = 1.0
sizes = { type = "power-law-cutoff", amplitude = 1e-15, q = 3.0, a_c = 0.1, a_min = 0.01 }
[[component]]
material = "silicate-d03"
sizes = { type = "log-normal", a0 = 0.05, sigma = 0.3, volume = 1e-27 }
[[component]]
material = "silicate-d03"
sizes = { type = "table", file = "sizes.csv" }
[[component]]
material = "graphite-d03"
abundance = 0.5
n_sizes = 40
pah = {}
[component.sizes]
type = "wd01-carbonaceous"
alpha = -1.54
beta = -0.165
a_t = 0.0107
a_c = 0.428
c = 9.99e-12
b_c = 6e-5
""")
    model = read_grain_model(path)
    assert model.name == "grain:all.toml" and len(model.components) == 6
    assert model.components[2].material.name == "ice.csv"
    optics = model.optics([0.55, 2.0], cache=None)
    assert np.all(optics.c_ext > 0)


@pytest.mark.parametrize(
    ("text", "error", "match"),
    [
        ("name = 'x'\n", InputError, "no \\[\\[component\\]\\]"),
        (
            "colour = 1\n[[component]]\nmaterial='silicate-d03'\nsizes={type='mrn', component='silicate'}\n",
            InputError,
            "unknown key\\(s\\) \\['colour'\\]",
        ),
        (
            "[[component]]\nmaterial='basalt'\nsizes={type='mrn', component='silicate'}\n",
            UnknownNameError,
            "component 1: material='basalt' is not known",
        ),
        (
            "[[component]]\nmaterial='silicate-d03'\nsizes={type='power-law', q=3.5}\n",
            InputError,
            "need key\\(s\\) \\['a_max', 'a_min', 'amplitude'\\]",
        ),
        (
            "[[component]]\nmaterial='file:ice.csv'\nsizes={type='mrn', component='silicate'}\n",
            InputError,
            "needs density",
        ),
        (
            "[[component]]\nmaterial='silicate-d03'\npah={}\nsizes={type='mrn', component='silicate'}\n",
            InputError,
            "only carbonaceous",
        ),
        (
            "[[component]]\nmaterial='silicate-d03'\nsizes={type='table', file='missing.csv'}\n",
            InputError,
            "size-distribution file .*missing.csv' does not exist",
        ),
        ("[[component]\n", InputError, "is not valid TOML"),
    ],
)
def test_toml_errors(tmp_path, text, error, match):
    path = tmp_path / "bad.toml"
    path.write_text(text)
    with pytest.raises(error, match=match):
        read_grain_model(path)


def test_demo_section(capsys):
    from redcorr._paths import project_dir
    from redcorr.cli._demo.s20_grains import section
    from redcorr.io._toml import load_toml

    demo_dir = project_dir("demo")
    section(load_toml(demo_dir / "scenario.toml"), demo_dir)
    out = capsys.readouterr().out
    # The invented demo dust is built to give the invented cloud's R_V of 4.3 (demo/scenario.toml).
    assert "brume-grown: R_V = 4.30" in out and "kw-z" in out
