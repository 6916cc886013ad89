"""Remembered user settings (the terminal UI's last choices), as JSON in the config folder."""

import json
import os
from pathlib import Path

from redcorr.io._atomic import atomic_path

__all__ = ["config_dir", "load_settings", "save_settings"]

_FILE = "tui.json"


def config_dir():
    """The user's redcorr configuration folder (it may not exist yet).

    ``platformdirs.user_config_dir("redcorr")`` unless the environment
    variable ``REDCORR_CONFIG_DIR`` names another folder (tests use it).
    """
    override = os.environ.get("REDCORR_CONFIG_DIR")
    if override:
        return Path(override)
    import platformdirs  # noqa: PLC0415 - only the UI needs it

    return Path(platformdirs.user_config_dir("redcorr", appauthor=False))


def load_settings(folder=None):
    """The saved settings as a dict; ``{}`` when none are saved or the file is unreadable.

    A damaged settings file must never stop the program from starting, so
    it is ignored (and replaced on the next save).
    """
    path = Path(folder or config_dir()) / _FILE
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return {}
    return data if isinstance(data, dict) else {}


def save_settings(settings, folder=None):
    """Write ``settings`` (a JSON-serialisable dict) atomically; return the file path."""
    folder = Path(folder or config_dir())
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / _FILE
    with atomic_path(path) as tmp:
        tmp.write_text(json.dumps(settings, indent=2, sort_keys=True), encoding="utf-8")
    return path
