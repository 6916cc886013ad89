"""A grain model chosen on the Dust screen is computed in a worker thread on every screen: the UI stays usable."""

import threading

import pytest
from textual.widgets import DataTable
from tui_helpers import run_app, set_value, type_into, until

from redcorr._paths import project_dir
from redcorr.band_summary import band_summary
from redcorr.io import load_curve
from redcorr.io.filters import load_band
from redcorr.io.spectra import load_sed
from redcorr.tui import _cache
from redcorr.tui.widgets import BandGrid, StatusLine

pytestmark = pytest.mark.usefixtures("private_config")

MODEL = "mrn77"


@pytest.fixture(scope="module")
def grain_cache(tmp_path_factory):
    """A disk cache of this module's own, empty at first: the first test computes the model from scratch."""
    return tmp_path_factory.mktemp("grain_cache")


@pytest.fixture
def held_model(grain_cache, monkeypatch):
    """The real grain model, held back until the test lets it finish.

    Holding it makes "a key press is handled while the model computes" certain
    however fast the machine is. Were the model computed on the UI thread, the
    hold would freeze the app and the test would fail. The first test of the
    module computes it from scratch (Mie theory), the others read it from
    the module's disk cache; every test starts with no model in memory.
    """
    monkeypatch.setenv("REDCORR_CACHE_DIR", str(grain_cache))
    monkeypatch.setattr(_cache, "_grains", {})
    monkeypatch.setattr(_cache, "_computing", {})
    gate, callers = threading.Event(), []
    real = _cache.load_curve

    def held(spec, *args, **kwargs):
        callers.append(threading.current_thread())
        if not gate.wait(120):  # only a frozen UI thread waits this long
            raise RuntimeError("the grain model was never released (computed on the UI thread?)")
        return real(spec, *args, **kwargs)

    monkeypatch.setattr(_cache, "load_curve", held)
    return gate, callers


SCREENS = [
    # key, field typed into while the model computes, the text typed
    ("f2", "#amount", "1.5"),
    ("f3", "#sed", "blackbody:6000"),
    ("f4", "#cat-teff", "6500"),
    ("f5", "#plan-mag", "18.5"),
]


def check_result(screen, key):
    """The screen shows the core's numbers for the grain model once it is computed."""
    curve = load_curve(MODEL)
    if key in ("f2", "f3"):
        bands = [load_band(b) for b in screen.session.bands]
        rows = band_summary(curve, bands, load_sed(screen.session.sed), screen.a_v)
        assert screen.query_one(BandGrid).rows_shown == rows  # exact: the core's table, shown as is
    elif key == "f4":
        assert screen.query_one("#cat-mapping").mapping["kw-v"] == ("kw_v", "e_kw_v")
        assert screen.query_one("#cat-after", DataTable).row_count == 5
    else:
        assert screen.query_one("#plan-table", DataTable).row_count == 5
    assert curve.name in str(screen.query_one("#dust-info, #bands-dust, #cat-dust, #plan-dust").render())


@pytest.mark.parametrize(("key", "field", "text"), SCREENS)
def test_screen_stays_usable_while_the_grain_model_computes(held_model, key, field, text):
    gate, callers = held_model

    async def script(app, pilot):
        await pilot.press(key)
        await pilot.pause()
        screen, status = app.screen, app.screen.query_one(StatusLine)
        if key == "f2":  # choose the model in the picker
            await set_value(pilot, "#dust-picker .picker-search", MODEL)
            await pilot.click("#dust-picker .picker-search")
            await pilot.press("enter", "enter")
        else:  # as if just chosen on the Dust screen
            app.session.law = MODEL
            if key == "f4":
                await set_value(pilot, "#cat-input", str(project_dir("demo") / "brume_catalog.csv"))
                await pilot.click("#cat-open")
            else:
                screen.refresh_view()
        await pilot.pause()
        assert "computing grain model mrn77" in status.message
        # the UI thread is free: typed keys arrive and are taken while the model is held back
        await type_into(pilot, field, text)
        assert screen.query_one(field).value == text
        assert not _cache.grain_ready(MODEL)
        assert "computing grain model mrn77" in status.message
        gate.set()
        await until(pilot, lambda: "computing" not in status.message, "the grain model")
        assert not status.has_class("-error"), status.message
        assert len(callers) == 1 and callers[0] is not threading.main_thread()  # once, off the UI thread
        check_result(screen, key)

    run_app(script, size=(150, 60))
