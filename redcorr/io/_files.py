"""The one check every input file goes through before it is opened."""

from pathlib import Path

from redcorr.exceptions import InputError

__all__ = ["input_file"]


def input_file(path, what):
    """``path`` as a Path, or an InputError naming ``what`` and the path.

    Parameters
    ----------
    path : path-like
        A file to read.
    what : str
        What the file is, for the message ("curve file", "map file", ...).

    Raises
    ------
    InputError
        If ``path`` is empty, does not exist or is a folder.
    """
    if not str(path).strip():
        raise InputError(f"{what} '' is empty; give the path of a file")
    path = Path(path)
    if path.is_dir():
        raise InputError(f"{what} {str(path)!r} is a folder; give the path of a file")
    if not path.is_file():
        raise InputError(f"{what} {str(path)!r} does not exist")
    return path
