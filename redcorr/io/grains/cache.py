"""Computed grain cross sections on disk: one ``.npz`` per input hash, written atomically."""

import contextlib
import hashlib
import json
import os
import secrets
import zipfile
from pathlib import Path

import numpy as np

__all__ = ["GridCache", "default_cache", "CACHE_ENV"]

CACHE_ENV = "REDCORR_CACHE_DIR"
"""Environment variable that moves the cache directory (tests point it to a temporary folder)."""


class GridCache:
    """Computed cross sections on disk, keyed by a hash of every input.

    Parameters
    ----------
    directory : path-like
        Created on first write.

    Notes
    -----
    An entry is ``<sha256 of the JSON key>.npz``. It is written to a
    temporary file in the same folder and renamed with ``os.replace``, so two
    processes computing the same grid at once both succeed and a reader never
    sees a half-written file. An unreadable entry counts as a miss.
    """

    def __init__(self, directory):
        self.directory = Path(directory)

    def path(self, key):
        """The file that holds (or would hold) ``key``."""
        text = json.dumps(key, sort_keys=True, separators=(",", ":"))
        return self.directory / f"{hashlib.sha256(text.encode()).hexdigest()}.npz"

    def get(self, key):
        """The stored arrays for ``key`` as a dict, or None."""
        try:
            with np.load(self.path(key)) as data:
                return {name: data[name] for name in data.files}
        except (OSError, ValueError, EOFError, zipfile.BadZipFile):
            return None

    def put(self, key, arrays):
        """Store ``arrays`` (dict of ndarrays) under ``key``, atomically."""
        target = self.path(key)
        try:
            self.directory.mkdir(parents=True, exist_ok=True)
            tmp = self.directory / f".{target.stem[:16]}.{os.getpid()}.{secrets.token_hex(4)}.part"
            fd = os.open(tmp, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666)  # mode from the umask
        except OSError:
            return  # a read-only or missing cache folder only costs speed
        try:
            with os.fdopen(fd, "wb") as fh:
                np.savez(fh, **arrays)
            os.replace(tmp, target)
        except BaseException:
            with contextlib.suppress(FileNotFoundError):
                os.unlink(tmp)
            raise

    def clear(self):
        """Remove every entry; return how many were removed."""
        count = 0
        for entry in self.directory.glob("*.npz"):
            with contextlib.suppress(FileNotFoundError):
                entry.unlink()
                count += 1
        return count


def default_cache():
    """The cache in ``$REDCORR_CACHE_DIR`` or the user's cache directory (platformdirs).

    This is what the command line, the terminal UI and :func:`redcorr.io.load_curve`
    pass to :meth:`redcorr.grains.GrainModel.optics`; the environment
    variable is read at each call.
    """
    override = os.environ.get(CACHE_ENV)
    if override:
        return GridCache(Path(override) / "grains")
    import platformdirs  # noqa: PLC0415

    return GridCache(Path(platformdirs.user_cache_dir("redcorr")) / "grains")
