"""Tests of redcorr.correction.options: frozen, checked option objects."""

import dataclasses

import pytest

from redcorr.bandpass import tophat
from redcorr.correction import (
    BandSelection,
    CorrectionOptions,
    DustOptions,
    OutputOptions,
    ReddeningSource,
    SpectrumOptions,
)
from redcorr.curves import get_curve
from redcorr.exceptions import InputError

V = tophat(0.55, 0.1, name="v")
B = tophat(0.44, 0.1, name="b")


def test_defaults_and_normalised_fields():
    bands = BandSelection([B, V], colours=[["b", "v"]])
    assert bands.labels == ("b", "v") and bands.colours == (("b", "v"),) and bands.pair(("v", "b"), "x") == (1, 0)
    assert ReddeningSource().kind == "column" and ReddeningSource(av=1).kind == "constant"
    assert ReddeningSource(av=1).av == 1.0 and isinstance(ReddeningSource(av=1).av, float)
    spectrum = SpectrumOptions(spectrum="Colour", solve_colour=["b", "v"], max_iterations=5.0)
    assert spectrum.spectrum == "colour" and spectrum.solve_colour == ("b", "v") and spectrum.max_iterations == 5
    assert SpectrumOptions().temperature == 7000.0 and OutputOptions().suffix == "_dered"
    dust = DustOptions(get_curve("ccm89"))
    assert dust.law == "ccm89" and dust.r_v_limits is not None and not dust.varying_rv


def test_options_are_frozen():
    with pytest.raises(dataclasses.FrozenInstanceError):
        OutputOptions().suffix = "_x"


@pytest.mark.parametrize(
    ("make", "message"),
    [
        (lambda: BandSelection([]), r"bands=\[\] is empty"),
        (lambda: BandSelection([V, V]), r"bands=\['v', 'v'\] lists a band twice"),
        (lambda: BandSelection([V], labels=["a", "b"]), r"labels=\['a', 'b'\] names 2 bands; there are 1"),
        (lambda: BandSelection(["kw-v"]), "bands: 'kw-v' is not a Band"),
        (lambda: BandSelection([V], colours=[("v",)]), r"colours=\('v',\) must be two band names"),
        (lambda: DustOptions("f99"), "curve='f99' is not an extinction curve"),
        (lambda: DustOptions(get_curve("f99"), rv_step=0), "rv_step=0 must be > 0"),
        (lambda: DustOptions(get_curve("f99"), rv_error=0.1), "law='f99' has a fixed R_V"),
        (lambda: ReddeningSource(dust_map="m.fits"), "dust_map='m.fits' is not a reddening map"),
        (lambda: ReddeningSource(ebv_column=3), "ebv_column=3 is not a column name"),
        (lambda: SpectrumOptions(temperature=-5), "temperature=-5 must be > 0"),
        (lambda: SpectrumOptions(tolerance=float("nan")), "tolerance=nan must be a finite number"),
        (lambda: CorrectionOptions(BandSelection([V]), "f99"), "dust='f99' is not a DustOptions"),
    ],
)
def test_bad_values_are_refused_in_one_line(make, message):
    with pytest.raises(InputError, match=message) as info:
        make()
    assert "\n" not in str(info.value)
