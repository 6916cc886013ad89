"""Where the project's own folders (``demo/``, ``filters/``) are found."""

import os
from pathlib import Path

from redcorr.exceptions import InputError

__all__ = ["project_dir"]

_ROOT = Path(__file__).resolve().parent.parent


def project_dir(name):
    """Path of the project folder ``name`` (``"demo"`` or ``"filters"``).

    The folders sit beside the package in a source checkout, which is how
    the README installs redcorr (``pip install -e .``). The environment
    variable ``REDCORR_<NAME>_DIR`` overrides the location.
    """
    override = os.environ.get(f"REDCORR_{name.upper()}_DIR")
    path = Path(override) if override else _ROOT / name
    if not path.is_dir():
        raise InputError(
            f"the project folder {name!r} was not found at {str(path)!r}; install redcorr from "
            f"a source checkout (pip install -e .) or set REDCORR_{name.upper()}_DIR"
        )
    return path
