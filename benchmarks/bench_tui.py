"""Benchmark: from an R_V change on the Dust screen to the redrawn band table and plot.

Target: <= 60 ms (median) from the committed change to the table and plot on screen.
The baseline, measured in the same run, is the core computation alone — what
the screen asks the core for: load_curve at the new R_V, the curve on the
plot's 240 wavenumbers, and band_summary for the demo's five KW-CAM bands
through a 5800 K blackbody.

The app runs headless (App.run_test). The time is taken from committing a
new R_V in its field (as Enter does) to the end of the next repaint of the
plot after the table holds the new rows (the plot is the last widget to
paint); every R_V is new, so nothing is served from a cache.

Run from the repository root:  python benchmarks/bench_tui.py [REPEAT]
"""

import asyncio
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import numpy as np  # noqa: E402
from astropy import units as u  # noqa: E402

from redcorr.band_summary import band_summary  # noqa: E402
from redcorr.io import load_curve  # noqa: E402
from redcorr.io.filters import load_band  # noqa: E402
from redcorr.io.spectra import load_sed  # noqa: E402

BANDS = ["kw-b", "kw-v", "kw-r", "kw-i", "kw-z"]


def core_only(r_v, bands, sed):
    curve = load_curve("f99", r_v=r_v)
    lo, hi = curve.wavenumber_limits
    curve(np.linspace(lo, min(hi, 11.0), 240) * u.um**-1)
    return band_summary(curve, bands, sed, 1.0)


async def ui_times(values):
    from redcorr.tui import RedcorrApp
    from redcorr.tui.widgets import BandGrid, CurvePlot

    app = RedcorrApp()
    out = []
    async with app.run_test(size=(140, 44)) as pilot:
        await pilot.pause()
        screen = app.screen
        plot, table = screen.query_one(CurvePlot), screen.query_one(BandGrid)
        painted = []
        original = plot.render

        def render():
            result = original()
            painted.append(time.perf_counter())
            return result

        plot.render = render
        field = screen.query_one("#r-v")
        for r_v in values:
            painted.clear()
            start = time.perf_counter()
            field.value = f"{r_v:.3f}"
            field.commit()
            while not painted or table.rows_shown[0]["A_over_EBV"] == 0 or screen.curve.r_v != round(r_v, 3):
                await asyncio.sleep(0.001)
            out.append(painted[-1] - start)
            await pilot.pause()
    return out


def main():
    repeat = int(sys.argv[1]) if len(sys.argv) > 1 else 20
    os.environ["REDCORR_CONFIG_DIR"] = tempfile.mkdtemp()
    bands = [load_band(b) for b in BANDS]
    sed = load_sed("blackbody:5800")
    values = 3.0 + 0.05 * np.arange(repeat) + 0.0123  # every R_V new
    core_only(3.1, bands, sed)  # warm imports
    core = []
    for r_v in values:
        t0 = time.perf_counter()
        core_only(round(r_v, 3), bands, sed)
        core.append(time.perf_counter() - t0)
    ui = asyncio.run(ui_times(values + 0.001))
    c, t = statistics.median(core), statistics.median(ui)
    print(f"R_V change -> redrawn table and plot, median of {repeat}: {1e3 * t:.1f} ms (target <= 60 ms)")
    print(f"core computation alone (same inputs), median: {1e3 * c:.1f} ms")
    print(f"ratio UI / core: {t / c:.2f}  (the UI adds {1e3 * (t - c):.1f} ms of layout and painting)")
    print(f"slowest UI update: {1e3 * max(ui):.1f} ms")


if __name__ == "__main__":
    main()
