"""Helpers of the headless TUI tests (App.run_test driven from plain pytest, no async plugin).

The fixtures these tests use (``private_config``) are in conftest.py.
"""

import asyncio
import time

from textual import events
from textual.keys import _character_to_key

from redcorr.tui import RedcorrApp


def run_app(script, size=(140, 44)):
    """Start a fresh app headless, let ``script(app, pilot)`` drive it, return what it returns."""

    async def go():
        app = RedcorrApp()
        async with app.run_test(size=size) as pilot:
            await pilot.pause()
            return await script(app, pilot)

    return asyncio.run(go())


async def type_into(pilot, selector, text):
    """Click the input ``selector``, clear it and type ``text`` key by key, as a user would.

    The keys are queued at once, as from a fast typist (``Pilot.press`` would wait
    for the app to go idle after every key); the app still handles each key, and
    each change it makes, in turn. Returns once the field holds ``text`` and the
    app is idle again.
    """
    await pilot.click(selector)
    await pilot.press("end", "ctrl+u")
    for character in text:
        # named as Textual names the key a terminal sends for this character (what Pilot.press does)
        pilot.app.post_message(events.Key(_character_to_key(character), character))
    field = pilot.app.screen.query_one(selector)
    await until(pilot, lambda: field.value == text, f"{text!r} typed into {selector}")
    await pilot.pause()


async def set_value(pilot, selector, text):
    """Put ``text`` into the input ``selector`` at once (one change event)."""
    pilot.app.screen.query_one(selector).value = text
    await pilot.pause()


async def until(pilot, condition, what, timeout=60.0):
    """Let the app run until ``condition()`` holds (e.g. a worker thread finished).

    Checked every 10 ms of wall time; ``timeout`` only stops a test that would
    otherwise hang, generous for a loaded machine.
    """
    end = time.monotonic() + timeout
    while not condition():
        if time.monotonic() > end:
            raise AssertionError(f"timed out after {timeout:g} s waiting for {what}")
        await pilot.pause(0.01)
