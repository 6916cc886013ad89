"""Session-wide test settings and the fixtures several test modules share."""

import contextlib
import io

import pytest

from redcorr.cli import main


@pytest.fixture(autouse=True, scope="session")
def _private_user_dirs(tmp_path_factory):
    """Keep the grain cross-section cache and UI settings out of the user's own folders."""
    patch = pytest.MonkeyPatch()
    patch.setenv("REDCORR_CACHE_DIR", str(tmp_path_factory.mktemp("cache")))
    patch.setenv("REDCORR_CONFIG_DIR", str(tmp_path_factory.mktemp("config")))
    yield
    patch.undo()


@pytest.fixture
def private_config(tmp_path, monkeypatch):
    """A fresh, empty settings folder for one test: the TUI remembers its last settings there."""
    monkeypatch.setenv("REDCORR_CONFIG_DIR", str(tmp_path / "config"))


@pytest.fixture
def private_cache(tmp_path, monkeypatch):
    """A fresh, empty grain cross-section cache for one test, in ``tmp_path / "cache"``."""
    monkeypatch.setenv("REDCORR_CACHE_DIR", str(tmp_path / "cache"))
    return tmp_path / "cache"


@pytest.fixture(scope="session")
def demo_output(_private_user_dirs):
    """What ``redcorr demo`` prints, run once for the whole session (its grain models take seconds)."""
    out = io.StringIO()
    with contextlib.redirect_stdout(out):
        assert main(["demo"]) == 0
    return out.getvalue()


@pytest.fixture(scope="session")
def demo_sections(demo_output):
    """The sections of ``redcorr demo``'s output, by heading (the text after ``## ``), each with its heading."""
    parts = demo_output.split("\n## ")[1:]
    return {part.splitlines()[0]: "## " + part for part in parts}
