"""The Dust screen's emission view (Ctrl+L): the core's temperatures and emission, computed off the UI thread.

What is drawn must be exactly what :mod:`redcorr.grains.emission` returns (the same function
with the same inputs, so equality is exact); the physics is checked in the core's own tests.
"""

import asyncio
import threading

import numpy as np
import pytest
from test_tui_layout import on_screen, tab_through
from tui_helpers import run_app, set_value, type_into, until

from redcorr.grains.emission import emission_spectrum, fit_modified_blackbody
from redcorr.grains.fields import MMP83Field
from redcorr.io.grains import default_cache, get_grain_model
from redcorr.thermal_summary import default_wave_um, stochastic_caution
from redcorr.tui import RedcorrApp
from redcorr.tui.screens import dust
from redcorr.tui.screens.dust import SPECTRUM_DEPTH
from redcorr.tui.widgets import StatusLine, XYPlot

pytestmark = pytest.mark.usefixtures("private_config")

MODEL = "mrn77"


async def pick(pilot, name):
    """Choose the law or grain model ``name`` in the picker."""
    await set_value(pilot, "#dust-picker .picker-search", name)
    await pilot.click("#dust-picker .picker-search")
    await pilot.press("enter", "enter")
    await pilot.pause()


def shown_for(screen, scale):
    """True once the emission view shows the result for U = ``scale`` (the worker has handed it over)."""
    status = screen.query_one("#dust-heat-status", StatusLine).message
    return screen.heat is not None and screen.heat[0]["field"] == MMP83Field(scale).name and "computing" not in status


def check_view(screen, scale):
    """The plots and lines of the emission view against the core, for MRN77 in MMP83 x ``scale``."""
    model = get_grain_model(MODEL)
    wave = default_wave_um(model)  # the wavelengths `redcorr thermal` shows by default
    emission = emission_spectrum(model, wave, MMP83Field(scale), cache=default_cache())
    temps = screen.query_one("#dust-heat-temps", XYPlot).series
    for i, t in enumerate(emission.temperatures):
        label, radius, temp = temps[2 * i]
        assert label.endswith(model.components[i].material.name)
        assert radius == t.radius_um.tolist() and temp == t.temperature_k.tolist()  # exact: drawn as computed
        _, radius, temp = temps[2 * i + 1]  # the radii flagged stochastic, as points
        assert radius == t.radius_um[t.stochastic].tolist() and temp == t.temperature_k[t.stochastic].tolist()
    label, x, y = screen.query_one("#dust-heat-spectrum", XYPlot).series[0]
    assert label == "all" and x == emission.wave_um.tolist()
    floor = SPECTRUM_DEPTH * emission.lam_i_lam.max()
    drawn = np.array(y)
    keep = emission.lam_i_lam >= floor
    assert drawn[keep].tolist() == emission.lam_i_lam[keep].tolist() and np.isnan(drawn[~keep]).all()
    fit = fit_modified_blackbody(emission.wave_um, emission.i_lam)
    info = str(screen.query_one("#dust-heat-info").render())
    assert f"T = {fit.temperature_k:.2f} K, β = {fit.beta:.3f}" in info
    status = screen.query_one("#dust-heat-status", StatusLine)
    assert status.has_class("-warning") and stochastic_caution(emission) in status.message  # the caution
    return emission


def test_emission_view_shows_the_core_numbers_and_survives_bad_values():
    async def script(app, pilot):
        screen = app.screen
        status = screen.query_one("#dust-heat-status", StatusLine)
        assert not screen.query_one("#dust-heat").display  # the curve view first
        await pilot.press("ctrl+l")
        await pilot.pause()
        assert screen.query_one("#dust-heat").display and not screen.query_one("#dust-plot").display
        assert app.focused.id == "field-u"
        assert "f99 is an extinction curve, not a grain model" in status.message  # the default law

        await pick(pilot, MODEL)
        await until(pilot, lambda: shown_for(screen, 1.0), "the emission view")
        at_one = check_view(screen, 1.0)

        await type_into(pilot, "#field-u", "2.5")
        await until(pilot, lambda: shown_for(screen, 2.5), "the emission view at U = 2.5")
        at_more = check_view(screen, 2.5)
        # a stronger field heats every grain (common practice, no source)
        assert all((b.temperature_k > a.temperature_k).all()
                   for a, b in zip(at_one.temperatures, at_more.temperatures, strict=True))

        before = screen.query_one("#dust-heat-temps", XYPlot).series
        for text, message in [("0", "scale='0' must be > 0"), ("x", "scale='x' is not a number"),
                              ("inf", "scale='inf' must be a finite number")]:
            await type_into(pilot, "#field-u", text)
            assert message in status.message and status.has_class("-error")
            assert screen.query_one("#field-u").has_class("-refused")
            assert screen.query_one("#dust-heat-temps", XYPlot).series == before  # the last good view stays
        await type_into(pilot, "#field-u", "2.5")  # back to the value shown: no new computation, no error
        assert not screen.query_one("#field-u").has_class("-refused") and not status.has_class("-error")
        check_view(screen, 2.5)

        await pick(pilot, "ccm89")  # a law: nothing to heat, and the grain model's view is cleared
        assert "ccm89 is an extinction curve, not a grain model" in status.message and screen.heat is None
        assert all(plot.series == [] for plot in screen.query("#dust-heat-plots XYPlot").results(XYPlot))
        assert str(screen.query_one("#dust-heat-info").render()) == ""

        await pilot.press("ctrl+l")  # back to the curve
        await pilot.pause()
        assert not screen.query_one("#dust-heat").display and screen.query_one("#dust-plot").display

    run_app(script)


def test_emission_is_computed_off_the_ui_thread(monkeypatch):
    """Held back in its worker, the computation leaves the screen usable (were it on the UI thread, the
    hold would freeze the app and the test would time out)."""
    gate, callers = threading.Event(), []
    real = dust.thermal_summary

    def held(*args, **kwargs):
        callers.append(threading.current_thread())
        if not gate.wait(120):
            raise RuntimeError("never released (computed on the UI thread?)")
        return real(*args, **kwargs)

    monkeypatch.setattr(dust, "thermal_summary", held)

    async def script(app, pilot):
        screen = app.screen
        status = screen.query_one("#dust-heat-status", StatusLine)
        await pick(pilot, MODEL)
        await until(pilot, lambda: screen.curve is not None and screen.curve.name == MODEL, "the grain model")
        await pilot.press("ctrl+l")
        await pilot.pause()
        assert "computing the temperatures and emission of mrn77" in status.message
        await type_into(pilot, "#amount", "1.5")  # the UI thread takes keys meanwhile
        assert screen.a_v == 1.5
        gate.set()
        await until(pilot, lambda: shown_for(screen, 1.0), "the emission view")
        assert callers and all(c is not threading.main_thread() for c in callers)
        check_view(screen, 1.0)

    run_app(script)


SIZES = [(80, 24), (200, 50)]


@pytest.mark.parametrize("size", SIZES, ids=[f"{w}x{h}" for w, h in SIZES])
def test_emission_view_controls_are_reachable_and_plots_fit(size):
    """As tests/test_tui_layout.py checks for every screen: Tab reaches each control of the emission
    view, each on screen, and both plots fit whole."""
    width, height = size

    async def script(app, pilot):
        screen = app.screen
        await pick(pilot, MODEL)
        await pilot.press("ctrl+l")
        await until(pilot, lambda: shown_for(screen, 1.0), "the emission view")
        chain, reached, hidden = await tab_through(app, pilot)
        assert screen.query_one("#field-u") in reached
        plots = []
        for plot in screen.query("#dust-heat-plots XYPlot"):
            plot.scroll_visible(animate=False, immediate=True)
            await pilot.pause()
            r = plot.region
            plots.append(r.y >= 1 and r.bottom <= height - 1 and r.x >= 0 and r.right <= width and on_screen(app, plot))
        return set(chain) - set(reached), hidden, plots

    unreached, hidden, plots = run_app(script, size=size)
    assert not unreached and not hidden and plots == [True, True]


def test_a_valid_u_is_remembered_and_a_refused_one_is_not():
    async def first():
        app = RedcorrApp()
        async with app.run_test(size=(140, 44)) as pilot:
            await pilot.pause()
            await pilot.press("ctrl+l")
            await pilot.pause()
            await type_into(pilot, "#field-u", "3.5")
            await type_into(pilot, "#field-u", "0")  # refused: U > 0
            assert app.screen.query_one("#field-u").has_class("-refused")

    async def second():
        app = RedcorrApp()
        async with app.run_test(size=(140, 44)) as pilot:
            await pilot.pause()
            return app.screen.query_one("#field-u").value

    asyncio.run(first())
    assert asyncio.run(second()) == "3.5"
