"""Session-wide test settings."""

import pytest


@pytest.fixture(autouse=True, scope="session")
def _private_user_dirs(tmp_path_factory):
    """Keep the grain cross-section cache and UI settings out of the user's own folders."""
    patch = pytest.MonkeyPatch()
    patch.setenv("REDCORR_CACHE_DIR", str(tmp_path_factory.mktemp("cache")))
    patch.setenv("REDCORR_CONFIG_DIR", str(tmp_path_factory.mktemp("config")))
    yield
    patch.undo()
