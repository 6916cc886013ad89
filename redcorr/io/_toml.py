"""TOML reading for description files (instrument, map, grain model, demo)."""

import tomllib

from redcorr.exceptions import InputError
from redcorr.io._files import input_file

__all__ = ["load_toml"]


def load_toml(path, what="file"):
    """Parse a TOML file into a dict, with a clear error for a missing or malformed file."""
    path = input_file(path, what)
    try:
        with path.open("rb") as fh:
            return tomllib.load(fh)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{what} {str(path)!r} is not valid TOML: {exc}") from None
