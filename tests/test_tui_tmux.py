"""The terminal UI in a real terminal (tmux, 80×24): pasted text and keys sent at once all arrive, in order.

The Pilot tests (test_tui_input.py) queue keys inside the app; here they come through a
terminal: tmux's paste buffer, once as a burst of keystrokes and once as a bracketed paste
(the way a terminal delivers a clipboard paste), then a key typed straight after it.
Skipped where tmux is not installed.
"""

import os
import shutil
import subprocess
import sys
import time

import pytest

TMUX = shutil.which("tmux")
pytestmark = pytest.mark.skipif(TMUX is None, reason="tmux is not installed")


def _tmux(*args):
    return subprocess.run([TMUX, *args], check=True, capture_output=True, text=True).stdout


@pytest.fixture
def tui(tmp_path):
    session = f"redcorr-test-{os.getpid()}"
    env = {**os.environ, "REDCORR_CONFIG_DIR": str(tmp_path / "config"), "TERM": "xterm-256color"}
    command = f"{sys.executable} -m redcorr tui"
    subprocess.run([TMUX, "-L", session, "new-session", "-d", "-s", session, "-x", "80", "-y", "24", command],
                   check=True, env=env)

    def tmux(*args):
        return _tmux("-L", session, *args)

    try:
        yield session, tmux
    finally:
        subprocess.run([TMUX, "-L", session, "kill-server"], capture_output=True)


def test_pasted_text_and_keys_after_it_arrive_in_order(tui):
    session, tmux = tui

    def screen(wanted):
        end = time.monotonic() + 180.0
        while True:
            text = tmux("capture-pane", "-p", "-t", session)
            if wanted in text or time.monotonic() > end:
                return text
            time.sleep(0.2)

    assert "R_V = 3.1" in screen("R_V = 3.1")  # the Dust screen, f99 at its default R_V
    tmux("send-keys", "-t", session, "C-r")  # to the R_V field (the app's key map)
    tmux("send-keys", "-t", session, "End", "C-u")  # empty it
    # a paste delivered as plain keystrokes, all at once, then Enter
    tmux("set-buffer", "-b", session, "4.3")
    tmux("paste-buffer", "-b", session, "-t", session)
    tmux("send-keys", "-t", session, "Enter")
    assert "R_V = 4.3" in screen("R_V = 4.3")
    # a bracketed paste (as terminals deliver the clipboard), a key typed straight after it, Enter
    tmux("send-keys", "-t", session, "End", "C-u")
    tmux("set-buffer", "-b", session, "5.")
    tmux("paste-buffer", "-p", "-b", session, "-t", session, ";", "send-keys", "-t", session, "5", "Enter")
    assert "R_V = 5.5" in screen("R_V = 5.5")
