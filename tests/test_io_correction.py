"""Tests of redcorr.io.correction: the one function the CLI, the UI and Python callers build options with."""

import pytest

from redcorr._paths import project_dir
from redcorr.bandpass import Band, tophat
from redcorr.correction import Correction, CorrectionOptions, OutputOptions
from redcorr.curves import get_curve
from redcorr.exceptions import InputError, UnknownNameError
from redcorr.io.correction import correction_options

DEMO_MAP = project_dir("demo") / "brume_ebv_healpix.fits"


def test_names_become_objects_and_every_option_reaches_its_part():
    options = correction_options(
        ["kw-b", "kw-v"], law="ccm89", r_v=4.3, dust_map=str(DEMO_MAP), map_scale=0.86,
        colours=[("kw-b", "kw-v")], mag_columns={"kw-v": "V"}, spectrum="colour", solve_colour=("kw-b", "kw-v"),
        rv_error=0.2, suffix="_0", strict=True,
    )
    assert isinstance(options, CorrectionOptions)
    assert options.bands.labels == ("kw-b", "kw-v") and all(isinstance(b, Band) for b in options.bands.bands)
    assert options.bands.colours == (("kw-b", "kw-v"),) and options.bands.mag_columns == {"kw-v": "V"}
    # exact: the R_V given is the curve's, and curve_at gives the same law at another R_V
    assert options.dust.law == "ccm89" and options.dust.curve.name == "ccm89" and options.dust.curve.r_v == 4.3
    other = options.dust.curve_at(3.1)
    assert type(other) is type(options.dust.curve) and other.r_v == 3.1
    assert options.dust.rv_error == 0.2 and options.dust.nonlinear
    source = options.reddening
    assert source.kind == "map" and source.map_scale == 0.86 and source.dust_map.unit == "E(B-V)"
    assert options.spectrum.spectrum == "colour" and options.spectrum.solve_colour == ("kw-b", "kw-v")
    assert options.output == OutputOptions(suffix="_0", strict=True)


def test_objects_pass_through_with_their_own_names():
    band = tophat(0.55, 0.1, name="V55")
    curve = get_curve("f99", r_v=3.6)
    options = correction_options([band], law=curve)
    assert options.bands.bands == (band,) and options.bands.labels == ("V55",)
    assert options.dust.curve is curve and options.dust.law == "f99" and options.dust.curve_at is None
    # a curve object carries no way to other R_V: a per-row R_V is refused, as for a fixed-R_V law
    with pytest.raises(InputError, match="law='f99' has a fixed R_V of 3.6"):
        correction_options([band], law=curve, rv_column="rv")
    with pytest.raises(InputError, match="r_v=4.0 conflicts with the curve object's R_V 3.6"):
        correction_options([band], law=curve, r_v=4.0)
    corr = Correction(["V55", "ebv"], options)
    assert corr.mag_cols == ["V55"] and corr.setup()["law"] == "f99"


@pytest.mark.parametrize(
    ("options", "message"),
    [
        ({"colour": ("kw-b", "kw-v")}, r"options \['colour'\] are not known; the options are \[.*'colours'"),
        ({"r_v": 3.1, "rv_column": "rv"}, "give R_V either as a constant"),
        ({"ebv": 0.1, "ebv_column": "ebv"}, r"give one source of reddening, not \['ebv', 'ebv_column'\]"),
        ({"reddening_error": -0.1}, "reddening_error=-0.1 must be >= 0"),
        ({"ebv": "much"}, "ebv='much' is not a number"),
        ({"colours": [("kw-v", "kw-v")]}, r"colours=\('kw-v', 'kw-v'\) needs two different bands"),
        ({"spectrum": "colour", "solve_colour": ("kw-b", "kw-r")}, "solve_colour: band 'kw-r' is not one"),
        ({"spectrum": "colour"}, "spectrum='colour' needs solve_colour"),
        ({"max_iterations": 0}, "max_iterations=0 must be a whole number >= 1"),
        ({"mag_columns": {"kw-r": "R"}}, r"column mapping: band 'kw-r' is not one of the bands \['kw-b', 'kw-v'\]"),
        ({"suffix": 3}, "suffix=3 is not a string"),
    ],
)
def test_bad_options_name_the_argument_and_the_value(options, message):
    with pytest.raises(InputError, match=message):
        correction_options(["kw-b", "kw-v"], **options)


def test_unknown_names_suggest_the_known_ones():
    with pytest.raises(UnknownNameError, match="spectrum='colur'.*'colour'"):
        correction_options(["kw-v"], spectrum="colur")
    with pytest.raises(UnknownNameError, match="kw-q"):
        correction_options(["kw-q"])
    with pytest.raises(InputError, match="band=3 is neither a band name nor a Band"):
        correction_options([3])
    with pytest.raises(InputError, match=r"beyond the f99 range"):
        correction_options(["tophat:3.6:0.4"])
