"""Shared helpers of the headless TUI tests (App.run_test driven from plain pytest)."""

import asyncio

import pytest

from redcorr.tui import RedcorrApp


@pytest.fixture(autouse=True)
def private_config(tmp_path, monkeypatch):
    """Never touch the user's real configuration folder."""
    monkeypatch.setenv("REDCORR_CONFIG_DIR", str(tmp_path / "config"))


def run_app(script, size=(140, 44)):
    """Start a fresh app headless, let ``script(app, pilot)`` drive it, return what it returns."""

    async def go():
        app = RedcorrApp()
        async with app.run_test(size=size) as pilot:
            await pilot.pause()
            return await script(app, pilot)

    return asyncio.run(go())


async def type_into(pilot, selector, text):
    """Click the input ``selector``, clear it and type ``text`` key by key, as a user would."""
    await pilot.click(selector)
    await pilot.press("end", "ctrl+u", *text)
    await pilot.pause()


async def set_value(pilot, selector, text):
    """Put ``text`` into the input ``selector`` at once (one change event)."""
    pilot.app.screen.query_one(selector).value = text
    await pilot.pause()


async def until(pilot, condition, what, steps=600):
    """Let the app run until ``condition()`` holds (a worker thread finished)."""
    for _ in range(steps):
        if condition():
            return
        await pilot.pause(0.05)
    raise AssertionError(f"timed out waiting for {what}")
