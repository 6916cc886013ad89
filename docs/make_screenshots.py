"""Save an SVG screenshot of every screen of ``redcorr tui`` on the demo scenario.

Run from the repository root:  python docs/make_screenshots.py [FOLDER]
(default docs/screenshots). The app runs headless with a throw-away
configuration folder; the catalog output goes to a temporary folder. Two
more show the Dust screen in an 80x24 terminal and its emission view.
"""

import asyncio
import os
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

SIZE = (150, 46)


async def shoot(folder, scratch):
    from redcorr.tui import RedcorrApp

    app = RedcorrApp()
    async with app.run_test(size=SIZE) as pilot:

        async def set_value(selector, text):
            field = app.screen.query_one(selector)
            field.value = text
            field.commit()  # as Enter does
            await pilot.pause()

        async def save(name):
            await pilot.pause(0.3)
            app.save_screenshot(f"{name}.svg", path=str(folder))
            print(f"wrote {folder / (name + '.svg')}")

        # Dust: the Brume Cloud (scenario.toml: f99, R_V 4.3, A_V 2.5)
        await pilot.pause()
        await set_value("#r-v", "4.3")
        await set_value("#amount", "2.5")
        await save("dust")
        # Bands: the KW-CAM set plus a library filter and a synthetic band; the file tree shows filters/
        app.session.band_dir = str(ROOT / "filters")
        await pilot.press("f3")
        await pilot.pause()
        for spec in ("bessell-V", "tophat:2.2:0.3"):
            await set_value("#band-spec", spec)
            await pilot.click("#band-spec")
            await pilot.press("enter")
            await pilot.pause()
        await save("bands")
        # Catalog: the invented Brume Field catalog, corrected from its E(B-V) column
        await pilot.press("f4")
        await pilot.pause()
        await set_value("#cat-input", "demo/brume_catalog.csv")  # committed: opens it
        await pilot.pause()
        await set_value("#cat-output", str(scratch / "brume_dered.csv"))
        await pilot.press("ctrl+s")  # asks first: what will be written where
        await pilot.pause()
        await pilot.press("y")
        await pilot.pause()
        while app.screen.running:
            await pilot.pause(0.1)
        app.screen.query_one("#cat-main").scroll_end(animate=False)
        await save("catalog")
        # Plan: the demo target (plan_target.toml, with its A_V grid) with the Kittiwake instrument
        await pilot.press("f5")
        await save("plan")
        await pilot.press("f1")
        await save("help")
        await pilot.press("escape", "f2")
        await pilot.resize_terminal(80, 24)
        await save("dust_80x24")
        # Dust, emission view (Ctrl+L): the WD01 R_V = 3.1 grain model in the interstellar field
        await pilot.resize_terminal(*SIZE)
        app.screen.query_one("#dust-picker .picker-search").value = "wd01-rv3.1"
        await pilot.click("#dust-picker .picker-search")
        await pilot.press("enter", "enter")
        while app.screen.grain_pending("wd01-rv3.1"):  # its cross sections, computed once
            await pilot.pause(0.2)
        await pilot.press("ctrl+l")
        while app.screen.heat is None:
            await pilot.pause(0.2)
        await save("dust_emission")


def main():
    folder = Path(sys.argv[1]) if len(sys.argv) > 1 else ROOT / "docs" / "screenshots"
    folder.mkdir(parents=True, exist_ok=True)
    os.chdir(ROOT)
    with tempfile.TemporaryDirectory() as config, tempfile.TemporaryDirectory() as scratch:
        os.environ["REDCORR_CONFIG_DIR"] = config
        asyncio.run(shoot(folder.resolve(), Path(scratch)))


if __name__ == "__main__":
    main()
