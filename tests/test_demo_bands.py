"""The bands section of ``redcorr demo``."""

import tomllib
from pathlib import Path

from redcorr.cli._demo.s20_bands import section

DEMO = Path(__file__).resolve().parent.parent / "demo"


def test_demo_section_shows_kw_cam_coefficients(capsys):
    scn = tomllib.loads((DEMO / "scenario.toml").read_text())
    section(scn, DEMO)
    out = capsys.readouterr().out
    for band in scn["instrument"]["bands"]:
        assert band in out
    assert "R_V = 4.3" in out and "Brume Cloud" in out
