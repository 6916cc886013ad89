"""The bands section of ``redcorr demo``."""

import tomllib
from pathlib import Path

DEMO = Path(__file__).resolve().parent.parent / "demo"


def test_demo_section_shows_kw_cam_coefficients(demo_sections):
    scn = tomllib.loads((DEMO / "scenario.toml").read_text())
    [out] = [text for title, text in demo_sections.items() if "band coefficients" in title]
    for band in scn["instrument"]["bands"]:
        assert band in out
    assert "R_V = 4.3" in out and "Brume Cloud" in out
