"""Atomic output: write to a temporary file or folder beside the target, then rename."""

import contextlib
import os
import shutil
import tempfile
from pathlib import Path

from redcorr.exceptions import InputError

__all__ = ["atomic_folder", "atomic_path", "check_output_path"]


def check_output_path(path, *, overwrite=True, inputs=()):
    """Validate an output path before any work is done.

    Parameters
    ----------
    path : path-like
        Where the output will go.
    overwrite : bool
        If False, an existing file is refused.
    inputs : iterable of path-like
        Input files; the output may never be one of them.

    Returns
    -------
    pathlib.Path
    """
    out = Path(path)
    for src in inputs:
        if Path(src).exists() and out.exists() and os.path.samefile(out, src):
            raise InputError(f"output={str(path)!r} is an input file; redcorr never writes over its input")
    if out.exists() and not overwrite:
        raise InputError(f"output={str(path)!r} exists; choose another name or allow overwriting")
    if not out.parent.exists():
        raise InputError(f"output={str(path)!r}: folder {str(out.parent)!r} does not exist")
    return out


@contextlib.contextmanager
def atomic_path(path, suffix=None):
    """Yield a temporary path next to ``path``; rename it onto ``path`` on success.

    If the block raises (including KeyboardInterrupt), the temporary file is
    removed and ``path`` is left untouched, so no partial output is ever seen.
    The rename is atomic on POSIX file systems (``os.replace``).
    """
    target = Path(path)
    suffix = target.suffix if suffix is None else suffix
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=f".part{suffix}", dir=target.parent or ".")
    os.close(fd)
    try:
        yield Path(tmp)
        os.replace(tmp, target)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        raise


@contextlib.contextmanager
def atomic_folder(path, *, overwrite=False):
    """Yield a temporary folder beside ``path``; move it onto ``path`` on success.

    Used for Parquet datasets written by several workers. An existing
    ``path`` is refused unless ``overwrite``; then it is replaced only after
    the new folder is complete.
    """
    target = Path(path)
    if target.exists() and not overwrite:
        raise InputError(f"output={str(path)!r} exists; choose another name or allow overwriting")
    if not target.parent.exists():
        raise InputError(f"output={str(path)!r}: folder {str(target.parent)!r} does not exist")
    tmp = Path(tempfile.mkdtemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent))
    try:
        yield tmp
        if target.exists():
            old = Path(tempfile.mkdtemp(prefix=f".{target.name}.", suffix=".old", dir=target.parent))
            os.replace(target, old / target.name)
            os.replace(tmp, target)
            shutil.rmtree(old, ignore_errors=True)
        else:
            os.replace(tmp, target)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
