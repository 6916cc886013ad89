"""Helpers of the headless TUI tests (App.run_test driven from plain pytest, no async plugin).

The fixtures these tests use (``private_config``) are in conftest.py.
"""

import asyncio
import time

from textual import events
from textual.keys import _character_to_key

from redcorr.tui import RedcorrApp
from redcorr.tui.screens.dialogs import Confirm
from redcorr.tui.widgets import CommitInput


def run_app(script, size=(140, 44)):
    """Start a fresh app headless, let ``script(app, pilot)`` drive it, return what it returns."""

    async def go():
        app = RedcorrApp()
        async with app.run_test(size=size) as pilot:
            await pilot.pause()
            return await script(app, pilot)

    return asyncio.run(go())


async def type_keys(pilot, *keys):
    """Queue ``keys`` at once, as from a fast typist (``Pilot.press`` would wait for the app to go idle after
    every key); single characters are named as Textual names the key a terminal sends (what Pilot.press does)."""
    for key in keys:
        character = key if len(key) == 1 else None
        pilot.app.post_message(events.Key(_character_to_key(key) if character else key, character))


async def type_into(pilot, selector, text, commit=True):
    """Click the input ``selector``, clear it and type ``text`` key by key, as a user would.

    The keys are queued at once (`type_keys`); the app still handles each key,
    and each change it makes, in turn. A field whose value counts once
    committed gets Enter after the text, unless ``commit`` is False. Returns
    once the field holds ``text`` and the app is idle again.
    """
    await pilot.click(selector)
    await pilot.press("end", "ctrl+u")
    await type_keys(pilot, *text)
    field = pilot.app.screen.query_one(selector)
    await until(pilot, lambda: field.value == text, f"{text!r} typed into {selector}")
    if commit and isinstance(field, CommitInput):
        await pilot.press("enter")
    await pilot.pause()


async def set_value(pilot, selector, text):
    """Put ``text`` into the input ``selector`` at once and commit it (as Enter does)."""
    field = pilot.app.screen.query_one(selector)
    field.value = text
    if isinstance(field, CommitInput):
        field.commit()
    await pilot.pause()


async def write(pilot, answer="y"):
    """Press Ctrl+S (write) and answer the confirmation, if one is asked, with ``answer``."""
    await pilot.press("ctrl+s")
    await pilot.pause()
    if isinstance(pilot.app.screen, Confirm):
        await pilot.press(answer)
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
