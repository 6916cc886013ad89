"""Demo section: the Brume Cloud's far-infrared optical depth turned into E(B-V), beside the field's reddening map."""

import tempfile
from pathlib import Path

import numpy as np

from redcorr.cli._common import print_table
from redcorr.io.grains import default_cache, read_grain_model
from redcorr.io.map_files import read_map_values, write_reddening_map
from redcorr.io.maps import open_map
from redcorr.maps import describe_flags
from redcorr.maps.emission import CAUTION, grain_ratio, reddening_from_emission

_TAU_MAP = "brume_tau250_zea.fits"

# Positions (RA, Dec in degrees, ICRS) chosen by hand; the temperatures are those demo/make_emission_map.py invents.
_PLACES = [
    ("south-west, cool (14-16 K)", 100.90, -27.75),
    ("field centre, filament", 101.25, -27.40),
    ("north-east, warm skin", 101.60, -27.05),
    ("cloud core (9 K)", 101.385, -27.42),
    ("masked star", 101.55, -27.20),
]


def section(scn, demo_dir):
    cloud = scn["cloud"]
    source = read_map_values(demo_dir / _TAU_MAP)
    wave = float(source.header["WAVELEN"])
    model = read_grain_model(demo_dir / "brume_grains.toml")
    ratio = grain_ratio(model, wave, cache=default_cache())
    result = reddening_from_emission(source.values, ratio)
    reference = open_map(demo_dir / "brume_ebv_healpix.fits")
    ra = np.array([p[1] for p in _PLACES])
    dec = np.array([p[2] for p in _PLACES])
    with tempfile.TemporaryDirectory() as folder:
        [written] = write_reddening_map(source, result, ratio, Path(folder) / "brume_ebv_from_tau.fits")
        from_tau, flag_tau = open_map(written).reddening_at(ra, dec)
    ebv_map, flag_map = reference.reddening_at(ra, dec)
    print(f"## Reddening from dust emission: the {cloud['name']}'s {wave:g} um optical depth (invented)")
    print(
        f"demo/{_TAU_MAP}: tau_{wave:g} as the (fictional) observers derived it, one temperature per pixel "
        f"from two bands. Divided by the grown-grain model's tau/E(B-V) = {ratio.per_ebv:.3g} "
        f"({model.name}, R_V = {ratio.r_v:.2f}): {result.converted} pixels converted, {result.blank} blank."
    )
    rows = [
        {
            "position": name,
            "ebv_from_tau": float(e1),
            "ebv_map": float(e2),
            "from_tau/map": float(e1 / e2),
            "flag": describe_flags(f1 | f2),
        }
        for (name, _, _), e1, e2, f1, f2 in zip(_PLACES, from_tau, ebv_map, flag_tau, flag_map, strict=True)
    ]
    print_table(rows, list(rows[0]), formats={"from_tau/map": ".2f"})
    print(
        "Where the dust along a sight line is at nearly one temperature (south-west) the two agree. Elsewhere "
        "warm and cold dust share the sight line, and one fitted temperature misses the cold dust: E(B-V) from the "
        "optical depth falls short on the warm north-east side, and most on the cold core behind its warm "
        "envelope. Same dust, same ratio: the error is the temperature's."
    )
    print(CAUTION)
    print("The same from the shell:")
    print(f"  redcorr emission-map demo/{_TAU_MAP} ebv.fits --grain grain:demo/brume_grains.toml --wave {wave:g}")
